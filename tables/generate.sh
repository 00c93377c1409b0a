#!/usr/bin/env bash
# Regenerates the shipped GERG-2008 property tables (blobs, and Rust source
# for the two the firmware includes) with the host tool. Deterministic: the
# same aga8 version gives the same bytes (checked by tests/gerg_tables.rs,
# which re-derives every blob's checksum and content).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build -q --release -p polytrope-host
bin=target/release/polytrope-host
$bin tables --gas ng-booster --out tables/ng_booster --name NG_BOOSTER
$bin tables --gas co2 --out tables/co2_demo --name CO2_DEMO
$bin tables --gas co2-dense --tol-h 5 --out tables/co2_dense --name TABLE
rm -f tables/co2_dense.rs
for g in methane hydrogen nitrogen air; do
  $bin tables --gas "$g" --out "tables/${g//-/_}" --name TABLE
  rm -f "tables/${g//-/_}.rs"
done
rm -f tables/co2_demo.rs
