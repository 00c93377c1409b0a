#!/usr/bin/env bash
# Gateway check (run by ci/test.sh).
#  1. An independent Modbus TCP client (pymodbus from PyPI, pinned) reads the
#     register image `polytrope-host gateway` serves on 127.0.0.1 and checks
#     it against the kernel's results; exceptions, commands, a stalled
#     client, 100 clients (ci/gateway_check.py). Loopback only, bounded time.
#  2. Cross-builds polytrope-host as static binaries for 64-bit ARM
#     (aarch64-unknown-linux-musl, rust-lld with the toolchain's
#     self-contained musl) and 32-bit ARM (armv7-unknown-linux-gnueabihf,
#     static glibc, Debian's gcc-arm-linux-gnueabihf), prints their sizes,
#     and runs the 64-bit build under Debian's qemu-user: the demo, a timed
#     20,000-scan replay of the gateway's scan loop, and step 1's check
#     (without the load phase) against the emulated server.
# GATEWAY_CROSS=0 skips step 2.
set -euo pipefail
cd "$(dirname "$0")/../.."

as_root() { if [ "$(id -u)" = 0 ]; then "$@"; else sudo "$@"; fi; }

PYMODBUS_VERSION=3.11.4
if ! python3 -c "import pymodbus, sys; sys.exit(pymodbus.__version__ != '$PYMODBUS_VERSION')" 2>/dev/null; then
  echo "gateway: installing pymodbus $PYMODBUS_VERSION"
  python3 -m pip install -q --disable-pip-version-check --root-user-action=ignore "pymodbus==$PYMODBUS_VERSION"
fi
# The debug build `cargo test --workspace` already made (the server's work
# per request and per scan is small either way).
cargo build -q -p polytrope-host
timeout 180 python3 ci/gateway_check.py "$PWD/target/debug/polytrope-host"

[ "${GATEWAY_CROSS:-1}" = 0 ] && exit 0
if ! command -v qemu-aarch64 >/dev/null || ! command -v arm-linux-gnueabihf-gcc >/dev/null; then
  echo "gateway: installing qemu-user and gcc-arm-linux-gnueabihf"
  as_root apt-get update -qq
  DEBIAN_FRONTEND=noninteractive as_root apt-get install -y -qq qemu-user gcc-arm-linux-gnueabihf libc6-dev-armhf-cross >/dev/null
fi
rustup target add aarch64-unknown-linux-musl armv7-unknown-linux-gnueabihf >/dev/null
export CARGO_TARGET_AARCH64_UNKNOWN_LINUX_MUSL_LINKER=rust-lld
export CARGO_TARGET_AARCH64_UNKNOWN_LINUX_MUSL_RUSTFLAGS="-C link-self-contained=yes -C strip=symbols"
export CARGO_TARGET_ARMV7_UNKNOWN_LINUX_GNUEABIHF_LINKER=arm-linux-gnueabihf-gcc
export CARGO_TARGET_ARMV7_UNKNOWN_LINUX_GNUEABIHF_RUSTFLAGS="-C target-feature=+crt-static -C strip=symbols"
for target in aarch64-unknown-linux-musl armv7-unknown-linux-gnueabihf; do
  cargo build -q --release -p polytrope-host --target "$target"
  bin=target/$target/release/polytrope-host
  file "$bin" | grep -q "statically linked" || { echo "gateway: $target build is not static" >&2; file "$bin" >&2; exit 1; }
  echo "gateway: $target: $(stat -c %s "$bin") bytes, static, stripped"
done
arm64=target/aarch64-unknown-linux-musl/release/polytrope-host
qemu-aarch64 "$arm64" demo --scans 3 | grep -q "Staging with intercooling saves" || { echo "gateway: emulated demo failed" >&2; exit 1; }
start=$(date +%s.%N)
qemu-aarch64 "$arm64" gateway --scan-ms 20 --results 20000..20000 | grep -q '"scan_count":20000'
end=$(date +%s.%N)
python3 -c "import sys; s=float(sys.argv[2])-float(sys.argv[1]); print(f'gateway: aarch64 under qemu-user: 20,000 scans (train, surge monitor, detector, 2 channels, register image) in {s:.2f} s wall = {20000/s:,.0f} scans/s')" "$start" "$end"
timeout 180 python3 ci/gateway_check.py --quick qemu-aarch64 "$PWD/$arm64"
