#!/usr/bin/env bash
# Seeded adversarial run of the dependency rule and plausibility (issue 11;
# tests/quality_oracle.rs): every input slot of the demo train perturbed to
# bad / uncertain qualities, implausible values (underflow, subnormal,
# overflow, NaN, unit slips, spikes, near-suction readings) and small
# plausible changes. Asserts that no good output is implausible and none
# changed after its input went bad or uncertain, in the f64 and f32 builds
# with a cp(T) gas and with the Peng–Robinson demo gas. Bounded: fixed seed and
# case count, killed after 120 s. Prints the counts.
set -euo pipefail
cd "$(dirname "$0")/../.."
cases="${POLYTROPE_ORACLE_CASES:-20000}"
cargo test -q -p polytrope --features demo --test quality_oracle --no-run
start=$(date +%s)
out=$(POLYTROPE_ORACLE_CASES="$cases" \
  timeout 120 cargo test -q -p polytrope --features demo --test quality_oracle every_slot -- --nocapture --test-threads=1 2>&1) || {
  echo "$out" | tail -40
  echo "quality oracle FAILED or timed out (120 s)"
  exit 1
}
echo "$out" | grep -o "oracle[^:]*: .*"
echo "quality oracle: $(( $(date +%s) - start )) s"
