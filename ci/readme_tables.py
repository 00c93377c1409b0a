#!/usr/bin/env python3
"""Copies the device tables of ci/measurements.md into README.md.

    python3 ci/readme_tables.py [--budgets FIGURES.json]

Each table of ci/measurements.md (per call, memory, feature builds, budgets)
replaces the README table with the same header row, so the README quotes the
measurement verbatim (tests/readme_measurements.rs checks it). With
--budgets, the budget table is first regenerated from ci/budgets.toml and
the figures file (after `ci/check_budgets.py --reset`). The prose around the
tables, which quotes some figures, is still edited by hand.
"""
import subprocess
import sys


def tables(lines):
    """{header line: (start, end)} of every markdown table."""
    out, i = {}, 0
    while i < len(lines):
        if lines[i].startswith("| ") and i + 1 < len(lines) and lines[i + 1].startswith("|---"):
            j = i + 2
            while j < len(lines) and lines[j].startswith("|"):
                j += 1
            out[lines[i]] = (i, j)
            i = j
        else:
            i += 1
    return out


def main(argv):
    meas_path, readme_path = "ci/measurements.md", "README.md"
    meas = open(meas_path).read().split("\n")
    if argv[:1] == ["--budgets"]:
        md = subprocess.run(
            [sys.executable, "ci/check_budgets.py", "--markdown", argv[1], "ci/budgets.toml"],
            check=True, capture_output=True, text=True).stdout.rstrip("\n").split("\n")
        t = tables(meas)
        start, end = t[md[0]]
        meas[start:end] = md
        open(meas_path, "w").write("\n".join(meas))
    readme = open(readme_path).read().split("\n")
    src = tables(meas)
    # Replace from the bottom so earlier positions stay valid.
    targets = sorted(((s, e, h) for h, (s, e) in tables(readme).items() if h in src), reverse=True)
    for s, e, h in targets:
        a, b = src[h]
        readme[s:e] = meas[a:b]
    open(readme_path, "w").write("\n".join(readme))
    print(f"readme_tables: {len(targets)} tables copied")


if __name__ == "__main__":
    main(sys.argv[1:])
