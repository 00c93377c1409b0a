#!/usr/bin/env bash
# Every check of the project, in the order a failure is cheapest to find.
# Installs what it needs (rustup targets and components); safe to re-run.
set -euo pipefail
cd "$(dirname "$0")/.."

# Disk: a fresh CI machine may have little free space (seen as a linker
# failure). No incremental caches and line tables only for debug builds keep
# the whole run's target directories near 2 GB instead of 5 GB; each step
# prints the free space so a failure of this kind names itself.
export CARGO_INCREMENTAL=0
export CARGO_PROFILE_DEV_DEBUG=line-tables-only
export CARGO_PROFILE_TEST_DEBUG=line-tables-only

step() { printf '\n==> %s  [%s free]\n' "$*" "$(df -h --output=avail . 2>/dev/null | tail -1 | tr -d ' ')"; }

step "toolchain: targets and components"
rustup component add clippy rustfmt >/dev/null 2>&1 || true
rustup target add thumbv6m-none-eabi thumbv7em-none-eabihf riscv32imac-unknown-none-elf

step "format"
cargo fmt --all --check

step "no_std cross builds (every target x every feature set)"
for target in thumbv6m-none-eabi thumbv7em-none-eabihf riscv32imac-unknown-none-elf; do
  for features in "" "defmt" "approx-math" "defmt,approx-math" "embedded-hal,demo" "inline-math"; do
    echo "  $target [${features:-no features}]"
    cargo build -q -p polytrope --lib --release --target "$target" --no-default-features --features "$features"
  done
done

step "MSRV: the kernel for both thumb targets with rust-version from Cargo.toml"
msrv=$(sed -n 's/^rust-version *= *"\([^"]*\)".*/\1/p' Cargo.toml | head -1)
[ -n "$msrv" ] || { echo "no rust-version in Cargo.toml" >&2; exit 1; }
rustup toolchain install "$msrv" --profile minimal \
  --target thumbv6m-none-eabi --target thumbv7em-none-eabihf >/dev/null 2>&1 || true
for target in thumbv6m-none-eabi thumbv7em-none-eabihf; do
  for features in "" "defmt,approx-math,embedded-hal,demo"; do
    echo "  $msrv $target [${features:-no features}]"
    cargo "+$msrv" build -q -p polytrope --lib --release --target "$target" --no-default-features --features "$features" \
      --target-dir target/msrv
  done
done
rm -rf target/msrv  # only needed to prove the build; frees disk for what follows

step "clippy (deny warnings)"
cargo clippy -q --workspace --all-targets -- -D warnings
cargo clippy -q -p polytrope --all-targets --all-features -- -D warnings
# The firmware harness is its own workspace (ci/firmware): lint its binaries
# for both device targets too.
for target in thumbv7em-none-eabihf thumbv6m-none-eabi; do
  (cd ci/firmware && cargo clippy -q --release --target "$target" --bins -- -D warnings)
done

step "docs (deny warnings)"
RUSTDOCFLAGS="-D warnings" cargo doc -q --workspace --no-deps --all-features

step "docs as docs.rs builds them (nightly, --cfg docsrs, every feature)"
rustup toolchain install nightly --profile minimal >/dev/null 2>&1 || true
RUSTDOCFLAGS="-D warnings --cfg docsrs" cargo +nightly doc -q -p polytrope --no-deps --all-features

step "host tests (f64 reference, f32 device build, external references)"
cargo test -q --workspace
step "host tests with approximate maths"
cargo test -q -p polytrope --features approx-math,demo

for extra in ci/checks.d/*.sh; do
  [ -e "$extra" ] || continue
  step "extra check: $extra"
  bash "$extra"
done

step "all checks passed"
