"""Reference numbers for tests/surge_coordinates.rs (worked coordinate check).

Pinned: Python 3.11, fluids==1.3.1 (pip install fluids==1.3.1).
Run: python3 tests/surge_coordinates_reference.py

An invented map point (demo data, not a real machine): natural gas,
M = 19.5 kg/kmol, Z = 0.93, suction 30 bar(a) and 35 degC, actual suction
flow 1.2 m3/s at pressure ratio 1.8, polytropic exponent n = 1.35. Suction
flow element: ISO 5167-2 orifice, D = 0.30 m, d = 0.18 m, flange taps,
viscosity 1.1e-5 Pa s, k = 1.28.

Independent routes used here:
- fluids.flow_meter.differential_pressure_meter_solver (ISO 5167-2,
  Reader-Harris/Gallagher C, orifice expansibility) gives the orifice dp;
  the flow number is then dp / p1.
- differential_pressure_meter_C_epsilon at that dp gives C and epsilon, from
  which the element coefficient C_elem = C eps E A sqrt(2) (m2) follows.
- fluids.compressible.isentropic_work_compression with k = n, eta = 1 gives
  the polytropic work in J/mol; divided by Z R T1 it is the head number.
"""
import math

import fluids
from fluids.compressible import isentropic_work_compression
from fluids.flow_meter import (
    differential_pressure_meter_C_epsilon,
    differential_pressure_meter_solver,
)

assert fluids.__version__ == "1.3.1", fluids.__version__

R = 8.31446261815324  # J/(mol K)
M, Z, P1, T1, Q, RATIO, N = 19.5, 0.93, 30e5, 308.15, 1.2, 1.8, 1.35
D, D2, MU, K = 0.30, 0.18, 1.1e-5, 1.28

rho = P1 * M / 1000.0 / (Z * R * T1)
m = rho * Q
p2 = differential_pressure_meter_solver(
    D, rho, MU, k=K, D2=D2, P1=P1, m=m, meter_type="ISO 5167 orifice", taps="flange"
)
dp = P1 - p2
C, eps = differential_pressure_meter_C_epsilon(
    D, D2, m, P1, p2, rho, MU, K, meter_type="ISO 5167 orifice", taps="flange"
)
beta = D2 / D
E = 1.0 / math.sqrt(1.0 - beta**4)
A = math.pi / 4.0 * D2**2
c_elem = C * eps * E * A * math.sqrt(2.0)
w_mol = isentropic_work_compression(T1, N, Z, P1, P1 * RATIO, eta=1.0)
Y = w_mol / (Z * R * T1)
print(f"density_kg_m3 = {rho:.10e}")
print(f"orifice_dp_pa = {dp:.10e}")
print(f"discharge_coefficient = {C:.10e}")
print(f"expansibility = {eps:.10e}")
print(f"element_coefficient_m2 = {c_elem:.10e}")
print(f"flow_number = {dp / P1:.10e}")
print(f"head_number = {Y:.10e}")
