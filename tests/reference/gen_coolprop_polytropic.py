#!/usr/bin/env python3
"""Generate tests/reference/coolprop_polytropic.csv: real-gas polytropic
compression paths for the head-exponent invariance test in
tests/surge_exponent.rs.

Source: CoolProp 8.0.0 (pinned), HEOS backend (the reference equations of
state; mixtures with CoolProp's GERG-2008-type departure functions):

    pip install CoolProp==8.0.0
    python3 tests/reference/gen_coolprop_polytropic.py > tests/reference/coolprop_polytropic.csv

Each row is one compression of a real gas from a suction state (p1, T1) to
a pressure ratio r along a constant-efficiency polytropic path, integrated
in ln p with 200 classical Runge-Kutta steps of

    dh/dp = v(p, h) / eta_p          (definition of polytropic efficiency)

with v from CoolProp's (h, p) flash. The polytropic head is the path
integral hp = integral of v dp = eta_p (h2 - h1). The similarity head number
is Y = hp / (p1 v1) = hp / (Z1 R T1), the group the surge line is drawn in
(src/surge/coordinates.rs); it is computed here without the kernel's
formula. Every state on the path is checked to be single-phase gas (pure
fluids: at least 10 K above the saturation temperature at that pressure).

The gases and suction states are an invented test scenario, chosen to span
the isentropic exponent k of compressor duties:
- air (the map gas of the test), 1 bar, 20 degC, k about 1.40;
- carbon dioxide, 10 bar, 310 K, k about 1.30 (real-gas Z about 0.95);
- methane, 30 bar, 300 K, k about 1.33;
- a hydrogen-rich gas (80 % H2, 20 % CH4 by mole), 20 bar, 310 K;
- propane, 2 bar, 320 K, k about 1.13 (heavy gas);
- n-butane, 1.2 bar, 330 K, k about 1.09 (heavy gas).
Polytropic efficiencies 0.70 and 0.85, pressure ratios 2, 3 and 4.

Columns: case, CoolProp fluid, eta_p, ratio, p1 [Pa], T1 [K], Z1, k1
(CoolProp's isentropic expansion coefficient at suction), p2 [Pa], T2 [K],
Z2, hp [J/kg], Y (head number).
"""

import math

import CoolProp
import CoolProp.CoolProp as CP

PINNED = "8.0.0"
assert CoolProp.__version__ == PINNED, CoolProp.__version__

CASES = [
    ("air", "HEOS", "Air", None, 1.0e5, 293.15),
    ("co2", "HEOS", "CarbonDioxide", None, 10.0e5, 310.0),
    ("methane", "HEOS", "Methane", None, 30.0e5, 300.0),
    ("hydrogen-rich", "HEOS", "Hydrogen&Methane", [0.8, 0.2], 20.0e5, 310.0),
    ("propane", "HEOS", "Propane", None, 2.0e5, 320.0),
    ("n-butane", "HEOS", "n-Butane", None, 1.2e5, 330.0),
]
EFFICIENCIES = [0.70, 0.85]
RATIOS = [2.0, 3.0, 4.0]
STEPS = 200


def state(backend, fluid, fractions):
    st = CP.AbstractState(backend, fluid)
    if fractions is not None:
        st.set_mole_fractions(fractions)
    return st


def check_gas(st, fluid, fractions):
    if fractions is None:
        tsat = CP.PropsSI("T", "P", st.p(), "Q", 1, fluid) if st.p() < st.p_critical() else 0.0
        assert st.T() > tsat + 10.0, (fluid, st.p(), st.T(), tsat)


def volume_ph(st, p, h, fractions):
    if fractions is not None:
        st.specify_phase(CP.iphase_gas)
    st.update(CP.HmassP_INPUTS, h, p)
    return 1.0 / st.rhomass()


def path(st, fluid, fractions, p1, t1, eta, ratio):
    if fractions is not None:
        st.specify_phase(CP.iphase_gas)
    st.update(CP.PT_INPUTS, p1, t1)
    h1 = st.hmass()
    z1 = st.keyed_output(CP.iZ)
    k1 = st.keyed_output(CP.iisentropic_expansion_coefficient)
    v1 = 1.0 / st.rhomass()
    check_gas(st, fluid, fractions)
    # dh/dlnp = p v / eta
    f = lambda lnp, h: math.exp(lnp) * volume_ph(st, math.exp(lnp), h, fractions) / eta
    lnp, h = math.log(p1), h1
    dl = math.log(ratio) / STEPS
    for _ in range(STEPS):
        a = f(lnp, h)
        b = f(lnp + dl / 2, h + dl / 2 * a)
        c = f(lnp + dl / 2, h + dl / 2 * b)
        d = f(lnp + dl, h + dl * c)
        h += dl / 6 * (a + 2 * b + 2 * c + d)
        lnp += dl
        volume_ph(st, math.exp(lnp), h, fractions)
        check_gas(st, fluid, fractions)
    p2 = p1 * ratio
    volume_ph(st, p2, h, fractions)
    t2 = st.T()
    z2 = st.keyed_output(CP.iZ)
    hp = eta * (h - h1)
    y = hp / (p1 * v1)
    return z1, k1, p2, t2, z2, hp, y


def main():
    print("case,fluid,eta_p,ratio,p1_pa,t1_k,z1,k1,p2_pa,t2_k,z2,hp_j_per_kg,head_number")
    for name, backend, fluid, fractions, p1, t1 in CASES:
        st = state(backend, fluid, fractions)
        for eta in EFFICIENCIES:
            for r in RATIOS:
                z1, k1, p2, t2, z2, hp, y = path(st, fluid, fractions, p1, t1, eta, r)
                print(
                    f"{name},{fluid},{eta:.2f},{r:.1f},{p1:.1f},{t1:.2f},{z1:.8f},{k1:.6f},"
                    f"{p2:.1f},{t2:.6f},{z2:.8f},{hp:.6f},{y:.10f}"
                )


if __name__ == "__main__":
    main()
