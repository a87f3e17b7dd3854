#!/usr/bin/env bash
# Builds sillstone with AddressSanitizer (and LeakSanitizer) and
# UndefinedBehaviorSanitizer into ./build-sanitize (or
# $SILLSTONE_SANITIZE_BUILD_DIR) and runs the whole test suite there. Any
# finding stops the program that made it, so the test fails. Run by .ci/run.
set -euo pipefail
cd "$(dirname "$0")/.."
root="$(pwd)"
export SILLSTONE_BUILD_DIR="${SILLSTONE_SANITIZE_BUILD_DIR:-build-sanitize}"

# Leak reports from third-party libraries only are suppressed, each line of
# the file saying why; our own frames are never suppressed.
export ASAN_OPTIONS="detect_leaks=1:halt_on_error=1:print_stacktrace=1:strict_string_checks=1:check_initialization_order=1"
export LSAN_OPTIONS="suppressions=$root/tests/sanitizers/lsan.supp:print_suppressions=0"
export UBSAN_OPTIONS="halt_on_error=1:print_stacktrace=1"

start=$(date +%s)
# -O1 and line tables only: quicker to build, still readable stack traces;
# assertions stay on.
bash scripts/build.sh -DSILLSTONE_SANITIZE=ON -DCMAKE_BUILD_TYPE=RelWithDebInfo \
  "-DCMAKE_CXX_FLAGS_RELWITHDEBINFO=-O1 -g1"
built=$(date +%s)
# Tests labelled not-sanitized do not run sillstone (tests/CMakeLists.txt says why).
ctest --test-dir "$SILLSTONE_BUILD_DIR" --output-on-failure -j "$(nproc)" -LE not-sanitized
done_at=$(date +%s)
echo "sanitizers: build $((built - start)) s, tests $((done_at - built)) s"
