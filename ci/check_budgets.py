#!/usr/bin/env python3
"""Checks measured on-device figures against ci/budgets.toml.

    ci/check_budgets.py FIGURES.json [BUDGETS.toml]          check; exit 1 if over
    ci/check_budgets.py --markdown FIGURES.json [BUDGETS.toml]  print the table
    ci/check_budgets.py --self-test FIGURES.json [BUDGETS.toml] show the check
        refuses each budget's figure raised to its budget + 1 (exit 1 if not)
    ci/check_budgets.py --reset FIGURES.json [BUDGETS.toml]     rewrite each
        `max` whose target is unmet to the measured figure + 2 % (rounded up;
        a met target stays the budget); used after a measured change

FIGURES.json is written by ci/measure.sh: {target: {key: value}}.
A budget without `goal` is a guard: a figure issue 14 sets no target for,
enforced at the measured figure + 2 % so that it cannot grow unnoticed.
"""
import json
import math
import re
import sys
import tomllib

NAMES = {
    "thumbv7em-none-eabihf": "Cortex-M4F",
    "thumbv6m-none-eabi": "Cortex-M0",
    "thumbv7em-none-eabihf+approx-math": "Cortex-M4F, approx-math",
    "thumbv6m-none-eabi+approx-math": "Cortex-M0, approx-math",
}


def load(argv):
    figures = json.load(open(argv[0]))
    path = argv[1] if len(argv) > 1 else "ci/budgets.toml"
    budgets = tomllib.load(open(path, "rb"))["budget"]
    rows = []
    for b in budgets:
        value = figures.get(b["target"], {}).get(b["key"])
        rows.append((b, value))
    return rows


def markdown(rows):
    out = ["| budget (`ci/budgets.toml`) | issue 14 target | enforced budget | measured | |",
           "|---|---:|---:|---:|---|"]
    for b, v in rows:
        goal = b.get("goal")
        met = v is not None and goal is not None and v <= goal
        basis = "the target" if b["max"] == goal else f"measured + {b['margin']}"
        status = ("guard, no target" if goal is None
                  else "target met" if met else "**target not met**")
        out.append(
            f"| {b['what']}, {NAMES.get(b['target'], b['target'])} | "
            f"{'none' if goal is None else f'{goal:,}'} | "
            f"{b['max']:,} ({basis}) | {'–' if v is None else f'{v:,}'} | {status} |")
    return "\n".join(out)


def check(rows, quiet=False):
    failed = 0
    for b, v in rows:
        name = f"{b['what']} ({b['target']}, {b['key']})"
        if v is None or v > b["max"]:
            failed += 1
            if not quiet:
                why = "not measured" if v is None else f"{v:,} exceeds its budget {b['max']:,}"
                print(f"budget: FAIL: {name}: {why}")
        else:
            if not quiet:
                goal = b.get("goal")
                target = "no target" if goal is None else f"target {goal:,}"
                print(f"budget: ok: {name}: {v:,} <= {b['max']:,} ({target})")
    return failed


def reset(argv):
    """Rewrites `max` in the budget file: measured + 2 % where the target is
    unmet or there is none (a guard)."""
    rows = load(argv)
    path = argv[1] if len(argv) > 1 else "ci/budgets.toml"
    blocks = open(path).read().split("[[budget]]")
    assert len(blocks) == len(rows) + 1
    for i, (b, v) in enumerate(rows):
        if v is None:
            print(f"budget: FAIL: {b['what']} ({b['target']}, {b['key']}): not measured")
            return 1
        goal = b.get("goal")
        new = goal if goal is not None and v <= goal else math.ceil(v * 1.02)
        margin = "target" if new == goal else "2 %"
        blk = re.sub(r"(?m)^max = .*$", f"max = {new}", blocks[i + 1])
        blocks[i + 1] = re.sub(r'(?m)^margin = .*$', f'margin = "{margin}"', blk)
        print(f"budget: {b['what']} ({b['target']}): {b['max']:,} -> {new:,} (measured {v:,})")
    open(path, "w").write("[[budget]]".join(blocks))
    return 0


def main():
    args = sys.argv[1:]
    if args and args[0] == "--reset":
        return reset(args[1:])
    if args and args[0] == "--markdown":
        print(markdown(load(args[1:])))
        return 0
    if args and args[0] == "--self-test":
        rows = load(args[1:])
        for i, (b, _) in enumerate(rows):
            raised = [(bb, bb["max"] + 1 if j == i else v) for j, (bb, v) in enumerate(rows)]
            if check([raised[i]], quiet=True) != 1:
                print(f"budget: FAIL: the check passed {b['key']} above its budget")
                return 1
        print(f"budget: the check refuses each of the {len(rows)} figures raised above its budget")
        return 0
    return 1 if check(load(args)) else 0


if __name__ == "__main__":
    sys.exit(main())
