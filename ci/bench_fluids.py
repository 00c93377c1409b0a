#!/usr/bin/env python3
"""Side by side: one compressor stage's performance numbers computed with the
Python package `fluids` (pinned 1.3.1; what a user might script on a Linux
gateway instead) and with polytrope (criterion bench `compressor_stage`), in
one run, with the ratio.

    python3 ci/bench_fluids.py            (runs cargo bench; about 30 s)
    python3 ci/bench_fluids.py --no-cargo (reuses target/criterion results)

The stage is the demo's second stage (an invented scenario), read from the
committed scan table ci/firmware/src/table.rs (first scan). The same
quantities on both sides: pressure ratio, isentropic discharge temperature,
isentropic, polytropic and isothermal heads, actual work Z·cp·ΔT, both
efficiencies, polytropic exponent and gas power. `fluids.compressible`
works in J/mol; heads are converted to J/kg. This is a benchmark, not a
test: nothing asserts a time.
"""
import json
import math
import pathlib
import re
import struct
import subprocess
import sys
import timeit

import fluids
from fluids.compressible import (
    isentropic_T_rise_compression,
    isentropic_work_compression,
    isothermal_work_compression,
    polytropic_exponent,
)

PINNED = "1.3.1"
ROOT = pathlib.Path(__file__).resolve().parent.parent
R_MOLAR = 8.31446261815324  # J/(mol K), CODATA 2018
M_CO2 = 44.01e-3  # kg/mol, polytrope's built-in CARBON_DIOXIDE (Cengel & Boles A-1)
K_CO2 = 1.289  # constant k of the built-in gas (Cengel & Boles A-2a)


def demo_stage():
    """(p1, t1, p2, t2, z) of stage 2 of the first scan of the table."""
    text = (ROOT / "ci/firmware/src/table.rs").read_text()
    blocks = re.findall(r"bits:\s*\[([^\]]*)\]", text)
    bits = [int(x, 16) for x in re.findall(r"0x[0-9a-f]+", blocks[1])]
    f = [struct.unpack("<f", struct.pack("<I", b))[0] for b in bits]
    return f[0], f[1], f[2], f[3], f[5]


def stage_with_fluids(p1, t1, p2, t2, z, flow):
    ratio = p2 / p1
    t2s = isentropic_T_rise_compression(t1, p1, p2, K_CO2, eta=1.0)
    hs = isentropic_work_compression(t1, K_CO2, z, p1, p2, eta=1.0) / M_CO2
    # Polytropic exponent from the measured states; head with n as k, eta = 1.
    sigma = math.log(t2 / t1) / math.log(ratio)
    n = 1.0 / (1.0 - sigma)
    hp = isentropic_work_compression(t1, n, z, p1, p2, eta=1.0) / M_CO2
    h_iso = isothermal_work_compression(p1, p2, t1, z) / M_CO2
    cp = K_CO2 * R_MOLAR / (K_CO2 - 1.0) / M_CO2
    actual = z * cp * (t2 - t1)
    eta_p = polytropic_exponent(K_CO2, n=n)
    return dict(
        ratio=ratio, t2s=t2s, hs=hs, hp=hp, h_iso=h_iso, actual=actual,
        eta_s=hs / actual, eta_p=eta_p, n=n, power=flow * actual,
    )


def criterion_ns(name):
    est = ROOT / "target/criterion" / name / "new/estimates.json"
    return json.loads(est.read_text())["mean"]["point_estimate"]


def main():
    if fluids.__version__ != PINNED:
        sys.exit(f"fluids {fluids.__version__} installed; this script is pinned to {PINNED}")
    if "--no-cargo" not in sys.argv:
        subprocess.run(
            ["cargo", "bench", "-q", "--bench", "train_update", "--",
             "--warm-up-time", "1", "--measurement-time", "3", "compressor_stage"],
            cwd=ROOT, check=True, stdout=subprocess.DEVNULL,
        )
    p1, t1, p2, t2, z = demo_stage()
    r = stage_with_fluids(p1, t1, p2, t2, z, 11.5)
    runs = 20000
    best = min(timeit.repeat(lambda: stage_with_fluids(p1, t1, p2, t2, z, 11.5),
                             number=runs, repeat=5))
    py_ns = best / runs * 1e9
    print(f"stage 2 of the demo (invented): p1 {p1:.0f} Pa, T1 {t1:.2f} K, "
          f"p2 {p2:.0f} Pa, T2 {t2:.2f} K, Z {z}")
    print(f"fluids {fluids.__version__}: eta_s {r['eta_s']:.5f}, eta_p {r['eta_p']:.5f}, "
          f"n {r['n']:.5f}, isentropic head {r['hs']:.1f} J/kg")
    print()
    print("| one compressor stage | time per stage | fluids / polytrope |")
    print("|---|---:|---:|")
    print(f"| Python `fluids` {fluids.__version__} (Python {sys.version.split()[0]}) "
          f"| {py_ns / 1000:.2f} µs | 1 |")
    for build in ("f64", "f32"):
        ns = criterion_ns(f"compressor_stage_{build}_libm")
        print(f"| polytrope `evaluate_compressor`, {build} (criterion) | {ns:.0f} ns "
              f"| {py_ns / ns:.0f} |")


if __name__ == "__main__":
    main()
