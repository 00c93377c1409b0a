#!/usr/bin/env python3
"""Generate the real-gas reference vectors checked by tests/real_gas_coolprop.rs.

Source: CoolProp 8.0.0 (pinned), HEOS backend (the reference-grade Helmholtz
equations of state: Setzmann-Wagner methane, Span-Wagner CO2, Span et al.
nitrogen, Leachman normal hydrogen, Lemmon et al. pseudo-pure air; GERG-2008
(Kunz-Wagner) mixing for the mixtures):

    pip install CoolProp==8.0.0
    python3 tests/reference/gen_coolprop_realgas.py states > tests/reference/coolprop_realgas_states.csv
    python3 tests/reference/gen_coolprop_realgas.py stages > tests/reference/coolprop_realgas_stages.csv
    python3 tests/reference/gen_coolprop_realgas.py components   # constants of src/gas/components.rs

CoolProp's own 'PR' backend is NOT used (its pure-fluid entropy is
inconsistent in 8.0.0). Mixture flashes impose the single-phase gas phase.

states: gas, p [Pa], T [K], Z, h - h(1 bar, 300 K) [J/kg], s - s(1 bar, 300 K)
  [J/(kg K)], cp [J/(kg K)], speed of sound [m/s], isentropic expansion
  coefficient [-], X = (T/v)(dv/dT)_p - 1, Y = -(p/v)(dv/dp)_T.
stages: gas, p1, T1, p2, T2 (T2 from a constant-polytropic-efficiency path of
  400 steps in ln p with the given efficiency), eta_path, h2-h1, h2s-h1
  (isentropic head h(p2, s1) - h1), s2-s1, Schultz n, Schultz f, Schultz head,
  Schultz efficiency, Sandberg-Colby head, Sandberg-Colby efficiency.
"""
import sys
import CoolProp
import CoolProp.CoolProp as CP

assert CoolProp.__version__ == "8.0.0", CoolProp.__version__

COMPONENTS = ["Nitrogen", "Oxygen", "Argon", "Methane", "Ethane", "Propane", "n-Butane",
              "IsoButane", "CarbonDioxide", "HydrogenSulfide", "Hydrogen", "Water"]

# gas name -> (CoolProp fluids, mole fractions). "air" is CoolProp's pseudo-pure air.
GASES = {
    "methane": (["Methane"], [1.0]),
    "lean-natural-gas": (["Methane", "Ethane", "Nitrogen", "CarbonDioxide"], [0.95, 0.03, 0.01, 0.01]),
    "natural-gas-5": (["Methane", "Ethane", "Propane", "Nitrogen", "CarbonDioxide"], [0.90, 0.05, 0.02, 0.01, 0.02]),
    "carbon-dioxide": (["CarbonDioxide"], [1.0]),
    "hydrogen": (["Hydrogen"], [1.0]),
    "nitrogen": (["Nitrogen"], [1.0]),
    "air": (["Air"], [1.0]),
    "co2-n2-o2": (["CarbonDioxide", "Nitrogen", "Oxygen"], [0.76064, 0.23581, 0.00284]),
}


def state(gas):
    fluids, x = GASES[gas]
    st = CP.AbstractState("HEOS", "&".join(fluids))
    if len(fluids) > 1:
        st.set_mole_fractions(x)
        st.specify_phase(CP.iphase_gas)
    return st


def pt(st, p, t):
    st.update(CP.PT_INPUTS, p, t)
    return st


def t_at_ph(st, p, h, t0):
    t = t0
    for _ in range(50):
        pt(st, p, t)
        dt = (h - st.hmass()) / st.cpmass()
        t += dt
        if abs(dt) < 1e-9 * t:
            break
    return t


def t_at_ps(st, p, s, t0):
    t = t0
    for _ in range(50):
        pt(st, p, t)
        dt = (s - st.smass()) * t / st.cpmass()
        t += dt
        if abs(dt) < 1e-10 * t:
            break
    return t


def path_t2(st, p1, t1, p2, eta, steps=400):
    """Discharge T of a constant-polytropic-efficiency path: dh = v dp / eta,
    trapezoidal in p over steps equal in ln p, implicit per step."""
    import math
    lr = math.log(p2 / p1)
    p, t = p1, t1
    pt(st, p, t)
    h, v = st.hmass(), 1.0 / st.rhomass()
    for i in range(1, steps + 1):
        pn = p1 * math.exp(lr * i / steps)
        tn = t * (pn / p) ** 0.3
        for _ in range(30):
            pt(st, pn, tn)
            vn = 1.0 / st.rhomass()
            target = h + 0.5 * (v + vn) * (pn - p) / eta
            dt = (target - st.hmass()) / st.cpmass()
            tn += dt
            if abs(dt) < 1e-10 * tn:
                break
        pt(st, pn, tn)
        p, t, h, v = pn, tn, st.hmass(), 1.0 / st.rhomass()
    return t


def xy(st, p, t):
    pt(st, p, t)
    rho = st.rhomass()
    drdT = st.first_partial_deriv(CP.iDmass, CP.iT, CP.iP)
    drdp = st.first_partial_deriv(CP.iDmass, CP.iP, CP.iT)
    # v = 1/rho: (T/v)(dv/dT)_p = -(T/rho) drho/dT ; -(p/v)(dv/dp)_T = (p/rho) drho/dp
    return -t / rho * drdT - 1.0, p / rho * drdp


def states():
    grid_p = [1e5, 5e5, 10e5, 20e5, 50e5, 100e5, 150e5]
    grid_t = [250.0, 300.0, 350.0, 400.0, 450.0]
    print("gas,p_pa,t_k,z,dh_j_kg,ds_j_kg_k,cp_j_kg_k,w_m_s,kappa_s,x,y")
    for gas in ["methane", "lean-natural-gas", "natural-gas-5", "carbon-dioxide", "hydrogen",
                "nitrogen", "air", "co2-n2-o2"]:
        st = state(gas)
        pt(st, 1e5, 300.0)
        h0, s0 = st.hmass(), st.smass()
        pts = [(p, t) for p in grid_p for t in grid_t]
        if gas == "carbon-dioxide":
            pts += [(p, t) for p in [200e5, 300e5, 400e5] for t in [320.0, 350.0, 400.0, 450.0]]
        for p, t in pts:
            if gas in ("carbon-dioxide", "co2-n2-o2"):
                tc = 304.1282
                if t < tc:
                    ps = CP.PropsSI("P", "T", t, "Q", 1, "CarbonDioxide")
                    if p > 0.8 * ps:
                        continue
                elif t < 330.0 and p > 0.8 * 7.3773e6 and p < 150e5:
                    continue  # the near-critical band
            if gas in ("natural-gas-5", "lean-natural-gas") and t < 260.0 and p > 60e5:
                continue  # towards the phase envelope of the heavier mixture
            pt(st, p, t)
            z, h, s, cp, w = st.compressibility_factor(), st.hmass() - h0, st.smass() - s0, st.cpmass(), st.speed_sound()
            kap = st.keyed_output(CP.iisentropic_expansion_coefficient)
            x, y = xy(st, p, t)
            print(f"{gas},{p:.6g},{t:.6g},{z:.9g},{h:.9g},{s:.9g},{cp:.9g},{w:.9g},{kap:.9g},{x:.9g},{y:.9g}")


def stage_row(gas, p1, t1, p2, eta):
    import math
    st = state(gas)
    t2 = path_t2(st, p1, t1, p2, eta)
    pt(st, p1, t1)
    h1, s1, v1 = st.hmass(), st.smass(), 1 / st.rhomass()
    pt(st, p2, t2)
    h2, s2, v2 = st.hmass(), st.smass(), 1 / st.rhomass()
    t2s = t_at_ps(st, p2, s1, t1 * (p2 / p1) ** 0.25)
    pt(st, p2, t2s)
    h2s, v2s = st.hmass(), 1 / st.rhomass()
    lr = math.log(p2 / p1)
    n = lr / math.log(v1 / v2)
    ns = lr / math.log(v1 / v2s)
    f = (h2s - h1) / (ns / (ns - 1) * (p2 * v2s - p1 * v1))
    hp = f * n / (n - 1) * (p2 * v2 - p1 * v1)
    hsc = (h2 - h1) - 0.5 * (t1 + t2) * (s2 - s1)
    dh = h2 - h1
    print(f"{gas},{p1:.6g},{t1:.6g},{p2:.6g},{t2:.9g},{eta:.6g},{dh:.9g},{h2s - h1:.9g},{s2 - s1:.9g},"
          f"{n:.9g},{f:.9g},{hp:.9g},{hp / dh:.9g},{hsc:.9g},{hsc / dh:.9g}")


def stages():
    print("gas,p1_pa,t1_k,p2_pa,t2_k,eta_path,dh_j_kg,dhs_j_kg,ds_j_kg_k,schultz_n,schultz_f,"
          "schultz_head,schultz_eta,sc_head,sc_eta")
    cases = [
        ("methane", 3e5, 300.0, 9e5, 0.80), ("methane", 20e5, 290.0, 50e5, 0.78),
        ("methane", 45e5, 305.0, 70e5, 0.80), ("methane", 70e5, 310.0, 150e5, 0.80),
        ("lean-natural-gas", 3e5, 300.0, 9e5, 0.80), ("lean-natural-gas", 45e5, 305.0, 70e5, 0.80),
        ("lean-natural-gas", 70e5, 310.0, 150e5, 0.78),
        ("natural-gas-5", 10e5, 300.0, 25e5, 0.80), ("natural-gas-5", 40e5, 305.0, 80e5, 0.78),
        ("carbon-dioxide", 1.05e5, 303.15, 3.2e5, 0.80), ("carbon-dioxide", 9e5, 310.0, 26e5, 0.78),
        ("carbon-dioxide", 25.6e5, 312.0, 66e5, 0.76), ("carbon-dioxide", 80e5, 320.0, 200e5, 0.75),
        ("carbon-dioxide", 100e5, 350.0, 300e5, 0.75),
        ("hydrogen", 20e5, 300.0, 60e5, 0.80), ("hydrogen", 100e5, 300.0, 300e5, 0.80),
        ("nitrogen", 1e5, 300.0, 4e5, 0.82), ("nitrogen", 10e5, 300.0, 30e5, 0.80),
        ("air", 1e5, 293.15, 4e5, 0.82), ("air", 10e5, 300.0, 30e5, 0.80),
        ("co2-n2-o2", 1.839e5, 291.5, 5.902e5, 0.80),
    ]
    for c in cases:
        stage_row(*c)


def components():
    import numpy as np
    temps = np.linspace(230.0, 650.0, 43)
    for c in COMPONENTS:
        st = CP.AbstractState("HEOS", c)
        cp = []
        for t in temps:
            st.update(CP.DmolarT_INPUTS, 1e-3, t)
            cp.append(st.cp0molar())
        cp = np.array(cp)
        co = np.polyfit(temps, cp, 3, w=1 / cp)[::-1]
        fit = co[0] + co[1] * temps + co[2] * temps ** 2 + co[3] * temps ** 3
        print(f"{c}: M={st.molar_mass() * 1e3:.6f} Tc={st.T_critical():.6f} pc={st.p_critical():.1f} "
              f"omega={st.acentric_factor():.6g} cp0=[{co[0]:.7e}, {co[1]:.7e}, {co[2]:.7e}, {co[3]:.7e}] "
              f"max fit error {np.max(np.abs(fit / cp - 1)):.1e}")


if __name__ == "__main__":
    {"states": states, "stages": stages, "components": components}[sys.argv[1]]()
