#!/usr/bin/env bash
# Re-measures the on-target figures and writes them as a Markdown table.
#
#   ci/measure.sh [OUTPUT.md]        (default: ci/measurements.md)
#
# Builds ci/firmware (release: opt-level 3, LTO, one codegen unit) for
# Cortex-M4F (thumbv7em-none-eabihf, QEMU mps2-an386) and Cortex-M0
# (thumbv6m-none-eabi, QEMU microbit), runs the harness under QEMU with the
# instruction-counting plugin (ci/qemu-plugin), and reads sizes from the
# minimal firmware. Leaves the harness logs in ci/firmware/target/measure/
# (ci/checks.d/firmware.sh compares them with the f64 reference).
#
# Needs: cargo with both targets, qemu-system-arm, gcc, nm, size, python3.
# Instructions are not cycles: QEMU does not model timing.
set -euo pipefail
cd "$(dirname "$0")/.."
root=$PWD
out_md=${1:-ci/measurements.md}
fw=ci/firmware
work=$fw/target/measure
mkdir -p "$work"

echo "measure: building the instruction-count plugin"
gcc -O2 -Wall -Wextra -shared -fPIC -o "$work/libicount.so" ci/qemu-plugin/icount.c

declare -A machine=([thumbv7em-none-eabihf]="-cpu cortex-m4 -machine mps2-an386"
                    [thumbv6m-none-eabi]="-cpu cortex-m0 -machine microbit")

# run_qemu ELF TARGET TAG: runs one harness under the plugin; writes
# $work/TAG.log and $work/TAG.counts.
run_qemu() {
  local elf=$1 target=$2 tag=$3 start stop
  start=$(nm "$elf" | awk '/ T polytrope_measure_start$/{print $1}')
  stop=$(nm "$elf" | awk '/ T polytrope_measure_stop$/{print $1}')
  echo "measure: running $(basename "$elf") on QEMU ($tag)"
  rm -f "$work/$tag.counts"
  # shellcheck disable=SC2086
  timeout 300 qemu-system-arm ${machine[$target]} -nographic \
    -semihosting-config enable=on,target=native \
    -plugin "$work/libicount.so,start=0x$start,stop=0x$stop,out=$root/$work/$tag.counts" \
    -kernel "$elf" > "$work/$tag.log" 2>&1 || {
      echo "measure: $(basename "$elf") failed on $tag:" >&2; tail -5 "$work/$tag.log" >&2; exit 1; }
  grep -qx 'END ok' "$work/$tag.log" || { echo "measure: $(basename "$elf") did not finish on $tag" >&2; exit 1; }
}

for target in thumbv7em-none-eabihf thumbv6m-none-eabi; do
  echo "measure: building firmware for $target"
  # `minimal`, `controller`, `proof` and `gateway` link only if no panic
  # path of any public entry point survives (their panic handler calls an
  # undefined symbol; see ci/firmware/src/proof.rs); `gateway` adds the
  # register image.
  if ! (cd $fw && cargo build -q --release --target $target --bins); then
    echo "measure: firmware build failed for $target (a reachable panic shows as an" >&2
    echo "         undefined symbol polytrope_reachable_panic_path)" >&2
    exit 1
  fi
  run_qemu "$fw/target/$target/release/harness" $target $target
  # The whole controller scan runs in a harness of its own (the Cortex-M0
  # board's 16 KiB of RAM hold its state beside nothing else).
  run_qemu "$fw/target/$target/release/full_scan" $target $target.scan
  for bin in minimal controller empty gateway; do
    size -A "$fw/target/$target/release/$bin" > "$work/$target.$bin.size"
  done
  # The flash the scan links: code and constants reachable from the
  # controller firmware's one scan call (after checking that from the reset
  # handler the same reading reaches 99 % of the image).
  python3 ci/reach_flash.py "$fw/target/$target/release/controller" Reset --min-coverage=0.99 \
    > "$work/$target.reach_reset"
  python3 ci/reach_flash.py "$fw/target/$target/release/controller" scan_once --list \
    > "$work/$target.reach"
done

# The feature builds, each in a target directory of its own: approx-math
# (micromath ln/exp/pow) on both targets, inline-math (the f32 table-driven
# ln/exp inlined at every call site instead of kept out of line) on Cortex-M4F.
# `opt-s` is no feature but the release profile at opt-level "s" (what a
# user trading speed for flash would build): the same sources, smaller code.
for build in thumbv7em-none-eabihf+approx-math thumbv7em-none-eabihf+inline-math \
             thumbv6m-none-eabi+approx-math thumbv7em-none-eabihf+opt-s; do
  target=${build%+*} feature=${build#*+}
  tag=$build
  echo "measure: building firmware for $tag"
  if [ "$feature" = opt-s ]; then
    (cd $fw && CARGO_PROFILE_RELEASE_OPT_LEVEL=s CARGO_TARGET_DIR=target/$feature cargo build -q \
      --release --target $target --bin harness --bin full_scan --bin controller --bin empty)
  else
    (cd $fw && CARGO_TARGET_DIR=target/$feature cargo build -q --release --target $target \
      --features $feature --bin harness --bin full_scan --bin controller --bin empty)
  fi
  run_qemu "$fw/target/$feature/$target/release/harness" $target $tag
  run_qemu "$fw/target/$feature/$target/release/full_scan" $target $tag.scan
  for bin in controller empty; do
    size -A "$fw/target/$feature/$target/release/$bin" > "$work/$tag.$bin.size"
  done
  python3 ci/reach_flash.py "$fw/target/$feature/$target/release/controller" Reset --min-coverage=0.99 \
    > "$work/$tag.reach_reset"
  python3 ci/reach_flash.py "$fw/target/$feature/$target/release/controller" scan_once --list \
    > "$work/$tag.reach"
done

python3 - "$work" "$out_md" <<'EOF'
import sys, re, collections, json
work, out_md = sys.argv[1], sys.argv[2]
targets = [("thumbv7em-none-eabihf", "Cortex-M4F", 120), ("thumbv6m-none-eabi", "Cortex-M0", 48)]
labels_doc = {
    "full_scan": "**whole controller scan**: 12 × `Channel::update` → 4 × `SurgeMonitor::update` (protection first) → 4-stage + 3-intercooler `Train::update` (one call; `ci/firmware/src/controller.rs`)",
    "full_scan_regraded": "the same whole scan when every stage's output qualities change from the scan before (regraded: uncertain suction temperatures in every other scan; the line above is a steady scan's)",
    "full_scan_channels": "… of which the 12 channels (phase 1, measured as its own call in the same firmware)",
    "full_scan_train": "… of which the train update on their pressures (phase 3, same firmware)",
    "full_scan_monitors": "… of which the 4 surge monitors (phase 2, same firmware)",
    "compressor_stage": "one compressor stage (ideal gas with Z)",
    "compressor_stage_peng_robinson": "one compressor stage, Peng–Robinson 5-component natural gas (two states, entropy match, Schultz)",
    "intercooler": "one intercooler",
    "pump_stage": "one pump stage",
    "update_4_stages_3_intercoolers": "**full update, 4 stages + 3 intercoolers** (ideal gas, CO2 with constant k)",
    "update_4_stages_3_intercoolers_regraded": "the same update when every stage's output qualities change from the scan before (regraded: every other scan has uncertain suction temperatures; the line above is a steady scan's, whose stages keep their qualities)",
    "update_4_stages_3_intercoolers_general": "the same update when no stage can take the nominal finish (the slowest of three scans: every discharge temperature bad, the machine stopped, no temperature rise; every stage takes the general finish)",
    "update_4_stages_3_intercoolers_peng_robinson": "**full update, 4 stages + 3 intercoolers, Peng–Robinson CO2**",
    "update_demo_5_stages": "full update, demo train (Peng–Robinson CO2: 4 compressors, 3 intercoolers, aftercooler, pump)",
    "train_new_demo_5_stages": "`Train::new` of the demo train (once, at start-up)",
    "ledger_4_stages": "loss ledger after that update (`evaluate_ledger_into`, 4 stages, first-suction reference)",
    "ledger_4_stages_coolant_reference": "loss ledger, 4 stages, coolant-inlet-plus-approach reference",
    "ledger_4_stages_peng_robinson": "loss ledger, 4 stages, Peng–Robinson CO2",
    "surge_margin_update": "surge margin, one `SurgeMonitor::update` (4-point line, rate filter settled)",
    "surge_margin_update_measured_exponent": "surge margin with σ from the measured temperatures (`with_measured_exponent`, σ filter settled)",
    "signal_channel_4_20ma": "signal front end, one 4–20 mA channel `Channel::update` (scaling, plausibility, 5-sample median, low-pass)",
    "register_pack_demo": "register image, one `RegisterImage::pack` (demo train, 1 surge monitor, 1 channel)",
    "table_stage_ng_booster": "one compressor stage on a GERG-2008 property table (NG booster table in flash: two states, entropy-matched isentropic state, heads, polytropic efficiency)",
    "table_stage_co2_demo": "the same on the demo CO2 table (decoded from its blob; Cortex-M4F only, needs 61 kB RAM)",
    "compressor_stage_table_ng_booster": "one compressor stage on the NG booster table through the gas seam (`evaluate_compressor_into`: states, entropy match, Schultz)",
    "update_4_stages_3_intercoolers_table": "**full update, 4 stages + 3 intercoolers, GERG-2008 table (demo CO2 table; Cortex-M4F only)**",
}
def regions(tag):
    """Largest net count per region name and the S figures of one log."""
    log = open(f"{work}/{tag}.log").read().splitlines()
    names = {int(l.split()[1]): l.split()[2] for l in log if l.startswith("M ")}
    counts = {}
    for l in open(f"{work}/{tag}.counts"):
        m = re.match(r"region (\d+): (\d+)", l)
        counts[int(m.group(1))] = int(m.group(2))
    base = counts[[k for k, v in names.items() if v == "empty"][0]]
    per = collections.defaultdict(list)
    for k, v in names.items():
        if v != "empty":
            per[v].append(counts[k] - base)
    s = {l.split()[1]: int(l.split()[2]) for l in log if l.startswith("S ")}
    return per, s

def reach(tag):
    """Bytes reachable from the controller firmware's scan call."""
    for l in open(f"{work}/{tag}.reach"):
        m = re.match(r"reached (\d+) bytes", l)
        if m:
            return int(m.group(1))
    raise SystemExit(f"no reach figure for {tag}")

def sec(tag, bin):
    d = {}
    for l in open(f"{work}/{tag}.{bin}.size"):
        f = l.split()
        if len(f) >= 2 and f[0].startswith(".") and f[1].isdigit():
            d[f[0]] = int(f[1])
    flash = d.get(".vector_table", 0) + d.get(".text", 0) + d.get(".rodata", 0) + d.get(".data", 0)
    ram = d.get(".data", 0) + d.get(".bss", 0) + d.get(".uninit", 0)
    return flash, ram

res = {}
for t, _, _ in targets:
    per, s = regions(t)
    per2, s2 = regions(t + ".scan")
    per.update(per2)
    s.update(s2)
    res[t] = (per, s, sec(t, "minimal"), sec(t, "empty"), 0, sec(t, "controller"), sec(t, "gateway"))

# Every figure, machine-readable, for ci/check_budgets.py.
figures = {}
for t, _, _ in targets:
    per, s, mini, empty, _, ctl, _ = res[t]
    f = {k: max(v) for k, v in per.items()}
    f.update(s)
    f["flash_minimal"] = mini[0] - empty[0]
    f["flash_controller"] = ctl[0] - empty[0]
    f["flash_scan"] = reach(t)
    figures[t] = f
for at in ("thumbv7em-none-eabihf+approx-math", "thumbv7em-none-eabihf+inline-math",
           "thumbv6m-none-eabi+approx-math", "thumbv7em-none-eabihf+opt-s"):
    per, s = regions(at)
    per2, s2 = regions(at + ".scan")
    per.update(per2)
    fa = {k: max(v) for k, v in per.items()}
    fa.update(s)
    fa.update(s2)
    fa["flash_controller"] = sec(at, "controller")[0] - sec(at, "empty")[0]
    fa["flash_scan"] = reach(at)
    figures[at] = fa
json.dump(figures, open(f"{work}/figures.json", "w"), indent=1, sort_keys=True)

L = []
L.append("<!-- generated by ci/measure.sh; do not edit by hand -->")
L.append("Measured by `ci/measure.sh` (QEMU 7.2 with the instruction-count plugin in "
         "`ci/qemu-plugin`; firmware `ci/firmware`, release profile: opt-level 3, LTO, "
         "1 codegen unit; f32; default features). Instruction counts are exact and "
         "repeatable, net of the marker overhead; where a region was measured on "
         "several scans the largest count is shown. **Instructions are not cycles**: "
         "QEMU does not model timing; the µs column assumes one instruction per cycle "
         "at the stated clock, a lower bound (on Cortex-M4F `vdiv.f32`/`vsqrt.f32` take "
         "14 cycles, loads and taken branches 2 or more, flash wait states add more).")
L.append("")
hdr = "| per call | " + " | ".join(f"{n} instructions | ≈ µs at {mhz} MHz" for _, n, mhz in targets) + " |"
L.append(hdr)
L.append("|---|" + "---:|---:|" * len(targets))
for key, doc in labels_doc.items():
    row = f"| {doc} |"
    for t, _, mhz in targets:
        if key not in res[t][0]:
            row += " – | – |"
            continue
        v = max(res[t][0][key])
        row += f" {v:,} | {v / mhz:,.1f} |"
    L.append(row)
L.append("")
L.append("| memory | " + " | ".join(n for _, n, _ in targets) + " |")
L.append("|---|" + "---:|" * len(targets))
def row(doc, f):
    L.append(f"| {doc} | " + " | ".join(f(t) for t, _, _ in targets) + " |")
row("**flash the whole controller scan links**: the code and constants reachable from the scan call (`ci/reach_flash.py` on the `controller` firmware's `scan_once`), bytes",
    lambda t: f"{figures[t]['flash_scan']:,}")
row("kernel flash of the controller firmware: the scan and its start-up (building the train, channels and monitors, configuration checks, the firmware's demo configuration; text + rodata): `controller` firmware minus `empty` firmware, bytes",
    lambda t: f"{figures[t]['flash_controller']:,}")
row("**stack high-water mark of one whole controller scan**, bytes",
    lambda t: f"{res[t][1]['stack_full_scan']:,}")
row("controller state: train, 12 channels, 4 surge monitors (`size_of`), bytes",
    lambda t: f"{res[t][1]['state_full_scan']:,} (one channel {res[t][1]['state_channel']:,}, one monitor {res[t][1]['state_surge_monitor']:,})")
row("kernel flash (text + rodata): minimal firmware minus empty firmware, bytes",
    lambda t: f"{res[t][2][0] - res[t][3][0]:,}")
row("minimal firmware flash / static RAM (data + bss), bytes",
    lambda t: f"{res[t][2][0]:,} / {res[t][2][1]:,}")
row("train state, 4 stages + 3 intercoolers (`size_of`), bytes",
    lambda t: f"{res[t][1]['state_4_stages_3_intercoolers']:,}")
row("train state, demo train (5 stages), bytes",
    lambda t: f"{res[t][1]['state_demo_5_stages']:,}")
row("stack high-water mark of one update, 4 stages + 3 intercoolers, bytes",
    lambda t: f"{res[t][1]['stack_update_4_stages_3_intercoolers']:,}")
row("stack high-water mark of one loss ledger, 4 stages, bytes",
    lambda t: f"{res[t][1]['stack_ledger_4_stages']:,}")
row("stack high-water mark of one update, 4 stages + 3 intercoolers, Peng–Robinson, bytes",
    lambda t: f"{res[t][1]['stack_update_4_stages_3_intercoolers_peng_robinson']:,}")
row("stack high-water mark of one update, 4 stages + 3 intercoolers, GERG-2008 table, bytes",
    lambda t: f"{res[t][1]['stack_update_4_stages_3_intercoolers_table']:,}" if 'stack_update_4_stages_3_intercoolers_table' in res[t][1] else "–")
row("stack high-water mark of one update, demo train, bytes",
    lambda t: f"{res[t][1]['stack_update_demo_5_stages']:,}")
row("stack high-water mark of one surge-margin update, bytes",
    lambda t: f"{res[t][1]['stack_surge_margin_update']:,}")
row("stack high-water mark of one 4–20 mA channel update, bytes",
    lambda t: f"{res[t][1]['stack_signal_channel_4_20ma']:,}")
row("register image packer flash: gateway firmware minus minimal firmware, bytes",
    lambda t: f"{res[t][6][0] - res[t][2][0]:,}")
row("register image (`size_of`, demo train + 1 surge monitor + 1 channel), bytes / registers",
    lambda t: f"{res[t][1]['register_image_bytes']:,} / {res[t][1]['register_image_registers']:,}")
row("stack high-water mark of one register-image pack, bytes",
    lambda t: f"{res[t][1]['stack_register_pack']:,}")
L.append("")
L.append("Static RAM is zero because the minimal firmware keeps the train on the stack; "
         "the train state is the RAM a caller reserves (a `static` or a stack slot). "
         "The stack figure is measured by painting the free stack, running one update "
         "and finding the lowest overwritten word (it includes the 8-byte call wrapper). "
         "The minimal firmware also builds and updates a surge-margin monitor and a "
         "4–20 mA channel (invented demo settings, `ci/firmware/src/front.rs`), so the "
         "kernel flash row includes them. "
         "The whole controller scan runs in a harness of its own (`full_scan`; "
         "`ci/firmware/src/controller.rs`: 12 transmitter channels, per stage suction "
         "pressure, discharge pressure and flow-element Δp, the train fed by their "
         "filtered pressures and the other readings of the committed scan, one surge "
         "monitor per stage fed by their unfiltered values; warmed, then three measured "
         "scans). Its flash is given two ways. The flash the scan links is the code "
         "and constants reachable from the `controller` firmware's one scan call "
         "(`scan_once`), read from its disassembly by `ci/reach_flash.py` (which must "
         "reach 99 % of the image from the reset handler, or the measurement fails). "
         "The kernel flash of the controller firmware is that firmware (the "
         "configuration, an opaque value as a device's stored one would be, built "
         "once, then the scan once; no output code) minus `empty`: the scan and its "
         "start-up code, configuration checks included. The controller firmware "
         "uses the lean types of a train without pumps, a constant-k gas and "
         "configured-exponent monitors (`CompressorTrain`, `IdealGasConstantK`, "
         "`ConfiguredExponentMonitor`), which link less and give the same outputs. "
         "Panic-freedom: the minimal and controller firmwares link with a panic handler that calls an "
         "undefined symbol, so no panic path of `Train::new` / `Train::update`, "
         "`SurgeMonitor::new` / `update`, `Channel::new` / `update` or the whole scan survives, and the "
         "`proof` firmware does the same for every other public entry point (surge "
         "detection, recycle controller and outputs, orifice, flow element, low-flow "
         "cut-off, cross-checks, event log, recycle loss, the loss ledger, the gas models: Peng–Robinson construction and composition update, state functions, entropy match, polytropic methods: `ci/firmware/src/proof.rs`), and the "
         "`gateway` firmware (the minimal one plus the register image) for "
         "`RegisterImage::new` / `pack` and `decode_command`; "
         "`ci/checks.d/firmware.sh` also checks that a deliberately panicking probe fails "
         "to link.")
L.append("")
L.append("Feature builds (same harness, same scans): `approx-math` routes `ln`, `exp`, "
         "`powf` to `micromath`; `inline-math` lets LTO inline the f32 `ln`/`exp` (table-driven, `src/real/table_log_exp.rs`) at every call site "
         "(the default keeps one out-of-line copy of each; results bit-identical); `opt-level s` is "
         "no feature but the release profile built for size (`CARGO_PROFILE_RELEASE_OPT_LEVEL=s`; "
         "same sources, results bit-identical).")
L.append("")
L.append("| feature build | Cortex-M4F default | Cortex-M4F `approx-math` | Cortex-M4F `inline-math` "
         "| Cortex-M4F `opt-level s` | Cortex-M0 default | Cortex-M0 `approx-math` |")
L.append("|---|---:|---:|---:|---:|---:|---:|")
m4 = figures["thumbv7em-none-eabihf"]
fa = figures["thumbv7em-none-eabihf+approx-math"]
fi = figures["thumbv7em-none-eabihf+inline-math"]
fs = figures["thumbv7em-none-eabihf+opt-s"]
m0 = figures["thumbv6m-none-eabi"]
f0 = figures["thumbv6m-none-eabi+approx-math"]
for key, doc in [("full_scan", "whole controller scan, instructions"),
                 ("update_4_stages_3_intercoolers", "train update, 4 stages + 3 intercoolers, instructions"),
                 ("surge_margin_update", "one `SurgeMonitor::update`, instructions"),
                 ("signal_channel_4_20ma", "one `Channel::update`, instructions"),
                 ("flash_scan", "flash the whole controller scan links, bytes"),
                 ("flash_controller", "kernel flash of the controller firmware (scan and start-up), bytes"),
                 ("stack_full_scan", "stack of one whole controller scan, bytes")]:
    L.append(f"| {doc} | {m4[key]:,} | {fa[key]:,} | {fi[key]:,} | {fs[key]:,} | {m0[key]:,} | {f0[key]:,} |")
open(out_md, "w").write("\n".join(L) + "\n")
print("\n".join(L))
EOF
{ echo; echo "Budgets (\`ci/budgets.toml\`; \`ci/checks.d/firmware.sh\` fails CI when a figure exceeds its enforced budget):"; echo
  python3 ci/check_budgets.py --markdown "$work/figures.json" ci/budgets.toml; } >> "$out_md"
echo "measure: wrote $out_md"
