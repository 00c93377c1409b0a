#!/usr/bin/env python3
"""Generate tests/reference/coolprop_tables.csv, the states that
tests/coolprop_tables.rs compares the shipped GERG-2008 property tables
(tables/*.bin) with.

Source: CoolProp 8.0.0 (pinned), HEOS backend (reference-grade Helmholtz
equations: Span & Wagner 1996 for CO2, Leachman et al. 2009 for normal
hydrogen, Span et al. 2000 for nitrogen, Lemmon et al. 2000 for pseudo-pure
air, GERG-2008 mixing for the natural gas with the pure-fluid reference
equations of its components):

    pip install CoolProp==8.0.0
    python3 tests/reference/gen_coolprop_tables.py > tests/reference/coolprop_tables.csv

Every state lies inside its table's envelope and away from CO2's critical
point and saturation line. The natural gas is the invented booster gas of
tables/ng_booster.bin (mole fractions below, as in examples-host's
`gerg_table::preset`). Mixture flashes get the phase imposed (single-phase
gas or supercritical), which CoolProp needs for speed.

Columns: table file, p [Pa], T [K], Z, h [J/kg], s [J/(kg K)].
Enthalpy and entropy have CoolProp's reference state; the test compares
differences from the first row of each table.
"""

import sys

import CoolProp
import CoolProp.CoolProp as CP

PINNED = "8.0.0"

NG = [
    ("Methane", 0.93),
    ("Ethane", 0.035),
    ("Propane", 0.01),
    ("n-Butane", 0.003),
    ("IsoButane", 0.002),
    ("Nitrogen", 0.01),
    ("CarbonDioxide", 0.01),
]

BAR = 1e5
GAS_GRID = [
    (p * BAR, t)
    for p in (1.0, 5.0, 20.0, 50.0, 100.0, 150.0, 200.0, 250.0)
    for t in (250.0, 300.0, 350.0, 400.0, 450.0)
]
CO2_DEMO_GRID = [
    (p * BAR, t)
    for p, ts in (
        (1.0, (300.0, 350.0, 400.0, 450.0)),
        (5.0, (300.0, 350.0, 400.0, 450.0)),
        (20.0, (300.0, 350.0, 400.0, 450.0)),
        (50.0, (320.0, 350.0, 400.0, 450.0)),
        (66.0, (320.0, 350.0, 400.0, 450.0)),
        (100.0, (320.0, 350.0, 400.0, 450.0)),
        (150.0, (330.0, 350.0, 400.0, 450.0)),
    )
    for t in ts
]
CO2_DENSE_GRID = [
    (p * BAR, t)
    for p in (100.0, 150.0, 200.0, 300.0, 400.0)
    for t in (320.0, 340.0, 380.0, 420.0, 470.0)
]


def states(name, fluid, grid, fractions=None, phase=None):
    st = CoolProp.AbstractState("HEOS", fluid)
    if fractions is not None:
        st.set_mole_fractions(fractions)
    for p, t in grid:
        if phase is not None:
            st.specify_phase(phase)
        st.update(CoolProp.PT_INPUTS, p, t)
        z = st.compressibility_factor()
        h = st.hmass()
        s = st.smass()
        print(f"{name},{p:.1f},{t:.2f},{z:.9f},{h:.4f},{s:.6f}")


def main():
    if CoolProp.__version__ != PINNED:
        sys.exit(f"CoolProp {PINNED} required, found {CoolProp.__version__}")
    print("table,p_pa,t_k,z,h_j_per_kg,s_j_per_kg_k")
    ng_names = "&".join(n for n, _ in NG)
    states("ng_booster", ng_names, GAS_GRID, [x for _, x in NG], CoolProp.iphase_supercritical_gas)
    states("co2_demo", "CarbonDioxide", CO2_DEMO_GRID)
    states("co2_dense", "CarbonDioxide", CO2_DENSE_GRID)
    states("methane", "Methane", GAS_GRID)
    states("hydrogen", "Hydrogen", GAS_GRID)
    states("nitrogen", "Nitrogen", GAS_GRID)
    states("air", "Air", GAS_GRID)


if __name__ == "__main__":
    main()
