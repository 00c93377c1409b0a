#!/usr/bin/env bash
# On-target check (run by ci/test.sh): the kernel on emulated Cortex-M4F
# (QEMU mps2-an386) and Cortex-M0 (QEMU microbit).
#  1. builds ci/firmware for both targets; the `minimal`, `controller`,
#     `proof` and `gateway` bins link only if no panic path of any public
#     entry point survives (the train, surge monitor and channel, the whole
#     controller scan; ci/firmware/src/proof.rs for the rest; the register
#     image in `gateway`; link-time check);
#  2. runs the harness under QEMU and re-takes the instruction counts, sizes
#     and stack (ci/measure.sh; the table is printed, not committed here);
#     and fails when a figure exceeds its budget in ci/budgets.toml
#     (ci/check_budgets.py, after its self-test);
#  3. compares every printed output with the f64 reference build within
#     polytrope::tolerance (tests/firmware_outputs.rs);
#  4. proves the panic check can fail: a deliberately panicking probe must
#     NOT link.
set -euo pipefail
cd "$(dirname "$0")/../.."

as_root() { if [ "$(id -u)" = 0 ]; then "$@"; else sudo "$@"; fi; }
if ! command -v qemu-system-arm >/dev/null; then
  echo "firmware: installing qemu-system-arm"
  as_root apt-get update -qq
  DEBIAN_FRONTEND=noninteractive as_root apt-get install -y -qq qemu-system-arm >/dev/null
fi
for tool in gcc nm size python3; do
  command -v "$tool" >/dev/null || { echo "firmware: missing $tool" >&2; exit 1; }
done
rustup target add thumbv7em-none-eabihf thumbv6m-none-eabi >/dev/null 2>&1 || true
# llvm-objdump, llvm-nm and llvm-size of the toolchain, for ci/reach_flash.py
# (the flash the scan links).
rustup component add llvm-tools >/dev/null 2>&1 || true
if ! ls "$(rustc --print sysroot)"/lib/rustlib/*/bin/llvm-objdump >/dev/null 2>&1 \
   && ! command -v llvm-objdump >/dev/null; then
  echo "firmware: installing llvm (llvm-objdump) for ci/reach_flash.py"
  as_root apt-get update -qq
  DEBIAN_FRONTEND=noninteractive as_root apt-get install -y -qq llvm >/dev/null
fi

# 1 + 2: build (panic-freedom link included), run, measure.
table=$(mktemp)
trap 'rm -f "$table"' EXIT
ci/measure.sh "$table" >/dev/null
cat "$table"

# 2b: the budgets (ci/budgets.toml): a figure above its budget fails (the
# self-test first shows the check refuses each figure raised over its budget).
figures=ci/firmware/target/measure/figures.json
python3 ci/check_budgets.py --self-test "$figures" ci/budgets.toml
python3 ci/check_budgets.py "$figures" ci/budgets.toml

# 3: device outputs against the f64 reference.
logs=ci/firmware/target/measure
POLYTROPE_FIRMWARE_OUTPUTS="$PWD/$logs/thumbv7em-none-eabihf.log:$PWD/$logs/thumbv6m-none-eabi.log" \
  cargo test -q -p polytrope --features demo --test firmware_outputs -- --nocapture 2>&1 | grep -Ev '^\s*$'

# 4: the probe must fail to link, and for the intended reason.
probe_log=$(mktemp)
if (cd ci/firmware && cargo build -q --release --features probe --bin panic_probe) >"$probe_log" 2>&1; then
  echo "firmware: FAIL: the deliberately panicking probe linked; the panic check is broken" >&2
  exit 1
fi
if ! grep -q polytrope_reachable_panic_path "$probe_log"; then
  echo "firmware: FAIL: the probe failed to build for another reason:" >&2
  tail -20 "$probe_log" >&2
  exit 1
fi
rm -f "$probe_log"
echo "firmware: panic probe fails to link as it must; all firmware checks passed"
