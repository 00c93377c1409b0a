#!/usr/bin/env bash
# Where the instructions of one measured region go: a per-function profile
# (and optionally a per-address annotated disassembly of one function).
# A developer tool; CI does not run it.
#
#   ci/profile.sh TARGET BIN REGION [FUNCTION]
#
#   TARGET    thumbv7em-none-eabihf or thumbv6m-none-eabi
#   BIN       a harness binary of ci/firmware (harness, full_scan)
#   REGION    a region name as printed on the harness's `M` lines
#             (e.g. update_4_stages_3_intercoolers, full_scan); the first
#             measured occurrence after warm-up (its largest-count one) is used
#   FUNCTION  optional: a substring of a symbol; prints its disassembly with
#             the executed count of every instruction
#
# Builds the firmware (release) for TARGET, runs BIN under QEMU with the
# instruction-count plugin in profile mode restricted to that region, and
# sums the per-address counts per symbol (inlined code counts to the
# function it was inlined into). The total equals the region's count before
# the marker overhead is subtracted.
#
# Needs what ci/measure.sh needs, plus llvm-objdump or arm-none-eabi-objdump
# for FUNCTION.
set -euo pipefail
cd "$(dirname "$0")/.."
root=$PWD
target=${1:?target} bin=${2:?bin} region=${3:?region} func=${4:-}
fw=ci/firmware
work=$fw/target/profile
mkdir -p "$work"
gcc -O2 -shared -fPIC -o "$work/libicount.so" ci/qemu-plugin/icount.c
(cd $fw && cargo build -q --release --target "$target" --bin "$bin")
elf=$fw/target/$target/release/$bin
case $target in
  thumbv7em-none-eabihf) machine="-cpu cortex-m4 -machine mps2-an386" ;;
  thumbv6m-none-eabi) machine="-cpu cortex-m0 -machine microbit" ;;
  *) echo "unknown target $target" >&2; exit 1 ;;
esac
start=$(nm "$elf" | awk '/ T polytrope_measure_start$/{print $1}')
stop=$(nm "$elf" | awk '/ T polytrope_measure_stop$/{print $1}')
# First pass: region indices and counts.
# shellcheck disable=SC2086
timeout 300 qemu-system-arm $machine -nographic -semihosting-config enable=on,target=native \
  -plugin "$work/libicount.so,start=0x$start,stop=0x$stop,out=$root/$work/$bin.counts" \
  -kernel "$elf" > "$work/$bin.log" 2>&1
idx=$(python3 - "$work/$bin.log" "$work/$bin.counts" "$region" <<'EOF'
import sys, re
log, counts, want = sys.argv[1:]
names = {int(l.split()[1]): l.split()[2] for l in open(log) if l.startswith("M ")}
c = {int(m.group(1)): int(m.group(2)) for m in (re.match(r"region (\d+): (\d+)", l) for l in open(counts)) if m}
cand = [k for k, v in names.items() if v == want]
if not cand:
    sys.exit(f"no region named {want}; have: {sorted(set(names.values()))}")
print(max(cand, key=lambda k: (c.get(k, 0), -k)))
EOF
)
# shellcheck disable=SC2086
timeout 300 qemu-system-arm $machine -nographic -semihosting-config enable=on,target=native \
  -plugin "$work/libicount.so,start=0x$start,stop=0x$stop,out=$root/$work/$bin.counts2,profile=$root/$work/$bin.prof,only=$idx" \
  -kernel "$elf" > /dev/null 2>&1
objdump=$(command -v llvm-objdump || ls ~/.rustup/toolchains/*/lib/rustlib/*/bin/llvm-objdump 2>/dev/null | head -1 || true)
[ -n "$objdump" ] || objdump=$(command -v arm-none-eabi-objdump || true)
python3 - "$elf" "$work/$bin.prof" "$func" "$objdump" <<'EOF'
import sys, subprocess, bisect, collections, re
elf, prof, func, objdump = sys.argv[1:]
syms = []
for l in subprocess.run(["nm", "-S", "--defined-only", "-C", elf], capture_output=True, text=True).stdout.splitlines():
    f = l.split(None, 3)
    if len(f) == 4 and f[2] in "tTwW":
        syms.append((int(f[0], 16) & ~1, int(f[1], 16), f[3]))
syms.sort()
starts = [s[0] for s in syms]
per = collections.Counter()
addr_count = {}
for l in open(prof):
    a, n = l.split()
    a, n = int(a, 16), int(n)
    addr_count[a] = n
    i = bisect.bisect_right(starts, a) - 1
    name = syms[i][2] if i >= 0 and a < syms[i][0] + max(syms[i][1], 2) else f"?{a:x}"
    per[re.sub(r"::h[0-9a-f]{16}$", "", name)] += n
total = sum(per.values())
print(f"total {total} (marker overhead included)")
for name, n in per.most_common(40):
    print(f"{n:8d} {100 * n / total:5.1f} %  {name}")
if func and objdump:
    hits = [s for s in syms if func in s[2]]
    for lo, size, name in hits[:3]:
        print(f"\n== {name}")
        out = subprocess.run([objdump, "-d", "--no-show-raw-insn", f"--start-address={lo}", f"--stop-address={lo + size}", elf],
                             capture_output=True, text=True).stdout
        for line in out.splitlines():
            m = re.match(r"\s*([0-9a-f]+):\s*(.*)", line)
            if m:
                a = int(m.group(1), 16)
                print(f"{addr_count.get(a, 0):7d}  {line.strip()}")
EOF
