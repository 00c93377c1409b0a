#!/usr/bin/env bash
# Long seeded property test of the signal front end and a full train update
# (tests/signal_proptest.rs): arbitrary f32 raw signals, time steps and
# no-flow flags. Bounded: the case count is fixed and the run is killed
# after 60 s (release build: the debug build needs about 25 s of CPU, which
# a loaded shared machine stretches past 60 s of wall time). Prints how many
# cases ran.
set -euo pipefail
cd "$(dirname "$0")/../.."
# Optimised, but with the debug build's overflow checks and debug assertions,
# so an arithmetic overflow still fails the test.
export CARGO_PROFILE_RELEASE_OVERFLOW_CHECKS=true
export CARGO_PROFILE_RELEASE_DEBUG_ASSERTIONS=true
cases="${SIGNAL_LONG_PROPTEST_CASES:-4000}"
seed="${SIGNAL_PROPTEST_SEED:-$(( 0x5EED0003 ))}"
cargo test -q --release -p polytrope --test signal_proptest --no-run
start=$(date +%s)
out=$(SIGNAL_PROPTEST_CASES="$cases" SIGNAL_PROPTEST_SEED="$seed" \
  timeout 60 cargo test -q --release -p polytrope --test signal_proptest -- --nocapture 2>&1) || {
  echo "$out" | tail -40
  echo "signal long proptest FAILED or timed out (60 s)"
  exit 1
}
echo "$out" | grep "signal proptest:"
echo "signal long proptest: $(( $(date +%s) - start )) s"
