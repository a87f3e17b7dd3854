#!/usr/bin/env bash
# Builds the libFuzzer targets of tests/fuzz with Debian's clang (with
# AddressSanitizer and UndefinedBehaviorSanitizer) into ./build-fuzz (or
# $SILLSTONE_FUZZ_BUILD_DIR) and runs each for a bounded time over its
# committed seed corpus tests/fuzz/corpus/<target>/ (every seed, including
# the reproducers of past findings, runs first). New inputs go to a scratch
# corpus in the build folder; a finding is written to
# <build>/findings/<target>/ and fails the script. Run by .ci/run.
#   SILLSTONE_FUZZ_SECONDS  time per target (default 30)
#   SILLSTONE_FUZZ_TARGETS  targets to run (default: spec study value)
set -euo pipefail
cd "$(dirname "$0")/.."
root="$(pwd)"
export SILLSTONE_BUILD_DIR="${SILLSTONE_FUZZ_BUILD_DIR:-build-fuzz}"
seconds="${SILLSTONE_FUZZ_SECONDS:-30}"
targets="${SILLSTONE_FUZZ_TARGETS:-spec study value}"

start=$(date +%s)
names=""
for t in $targets; do names="$names fuzz_$t"; done
CC=clang CXX=clang++ SILLSTONE_TARGETS="$names" bash scripts/build.sh \
  -DSILLSTONE_FUZZ=ON -DSILLSTONE_BUILD_TESTS=OFF -DCMAKE_BUILD_TYPE=RelWithDebInfo \
  "-DCMAKE_CXX_FLAGS_RELWITHDEBINFO=-O1 -g1"
built=$(date +%s)

export ASAN_OPTIONS="detect_leaks=1:halt_on_error=1:print_stacktrace=1"
export UBSAN_OPTIONS="halt_on_error=1:print_stacktrace=1"
status=0
for t in $targets; do
  scratch="$SILLSTONE_BUILD_DIR/corpus/$t"
  findings="$SILLSTONE_BUILD_DIR/findings/$t"
  mkdir -p "$scratch" "$findings"
  echo "fuzz_$t: ${seconds} s over tests/fuzz/corpus/$t"
  if ! "$SILLSTONE_BUILD_DIR/tests/fuzz/fuzz_$t" -max_total_time="$seconds" -timeout=10 \
      -rss_limit_mb=2048 -print_final_stats=1 -artifact_prefix="$findings/" \
      "$scratch" "$root/tests/fuzz/corpus/$t" > "$SILLSTONE_BUILD_DIR/fuzz_$t.log" 2>&1; then
    echo "fuzz_$t: FINDING (log: $SILLSTONE_BUILD_DIR/fuzz_$t.log, inputs: $findings)"
    grep -E "ERROR|SUMMARY|fuzz_$t:|Test unit written" "$SILLSTONE_BUILD_DIR/fuzz_$t.log" | head -20 || true
    status=1
  else
    grep -E "stat::number_of_executed_units|stat::new_units_added" "$SILLSTONE_BUILD_DIR/fuzz_$t.log" |
      sed "s/^/fuzz_$t: /"
  fi
done
done_at=$(date +%s)
echo "fuzz: build $((built - start)) s, fuzzing $((done_at - built)) s"
exit $status
