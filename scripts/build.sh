#!/usr/bin/env bash
# Configures and builds sillstone in ./build (or $SILLSTONE_BUILD_DIR).
# Builds are serialised with a lock so that two never run at once on this
# small machine. Arguments are passed to cmake on the first configure;
# $SILLSTONE_TARGETS (space-separated) limits the build to those targets.
set -euo pipefail
cd "$(dirname "$0")/.."
build="${SILLSTONE_BUILD_DIR:-build}"
jobs="${SILLSTONE_JOBS:-$(nproc)}"
lock="${TMPDIR:-/tmp}/sillstone-build.lock"
(
  flock 9
  if [ ! -f "$build/CMakeCache.txt" ]; then
    cmake -S . -B "$build" -DCMAKE_BUILD_TYPE=RelWithDebInfo "$@"
  fi
  targets=()
  for t in ${SILLSTONE_TARGETS:-}; do targets+=(--target "$t"); done
  cmake --build "$build" --parallel "$jobs" "${targets[@]}"
) 9>"$lock"
