#!/usr/bin/env bash
# Configures and builds sillstone in ./build (or $SILLSTONE_BUILD_DIR).
# Builds are serialised with a lock so that two never run at once on this
# small machine.
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
  cmake --build "$build" --parallel "$jobs"
) 9>"$lock"
