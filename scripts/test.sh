#!/usr/bin/env bash
# The second README command: build (if needed) and run the whole test suite.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/build.sh
ctest --test-dir "${SILLSTONE_BUILD_DIR:-build}" --output-on-failure -j "$(nproc)"
