"""Reference values for examples-host/tests/stage_cli.rs from `fluids`.

Pinned: fluids==1.3.1 (pip install fluids==1.3.1), Python 3.11.
Run: python3 examples-host/tests/reference/stage_fluids.py
The printed numbers are copied into the constants of stage_cli.rs; CI does
not run this script.

Case: air, 100 kPa, 300 K -> 900 kPa (the Cengel & Boles compressor-work
example), ideal gas Z = 1, k = 1.4, molar mass 28.97 kg/kmol (the same
constants as polytrope's built-in air). `fluids.compressible` works per mole
(R = 8.31446261815324 J/(mol K)); dividing by the molar mass in kg/mol gives
J/kg.
"""
import fluids
from fluids.compressible import (
    isentropic_T_rise_compression,
    isentropic_work_compression,
    isothermal_work_compression,
)

assert fluids.__version__ == "1.3.1", fluids.__version__

MW = 28.97e-3  # kg/mol
T1, P1, P2, K = 300.0, 100e3, 900e3, 1.4

single = isentropic_work_compression(T1=T1, k=K, Z=1, P1=P1, P2=P2, eta=1) / MW
iso = isothermal_work_compression(P1=P1, P2=P2, T=T1, Z=1) / MW
t2s = isentropic_T_rise_compression(T1=T1, P1=P1, P2=P2, k=K, eta=1)
for n in (2, 3, 4):
    p_stage = P1 * (P2 / P1) ** (1.0 / n)
    staged = n * isentropic_work_compression(T1=T1, k=K, Z=1, P1=P1, P2=p_stage, eta=1) / MW
    t2s_stage = isentropic_T_rise_compression(T1=T1, P1=P1, P2=p_stage, k=K, eta=1)
    print(f"stages={n} staged_J_per_kg={staged!r} stage_T2s_K={t2s_stage!r} first_interstage_Pa={p_stage!r}")
print(f"single_J_per_kg={single!r}")
print(f"isothermal_J_per_kg={iso!r}")
print(f"T2s_K={t2s!r}")
