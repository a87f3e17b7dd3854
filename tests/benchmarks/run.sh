#!/usr/bin/env bash
# Runs every benchmark of docs/performance.md once, peers included, and
# prints the table; the figures go to build/benchmark-results.json (or --json OUT).
#   bash tests/benchmarks/run.sh [--quick] [--only B1,B1s,B2,B3,B4,scaling] [--repeat N] [--json OUT]
#                                [--other OTHER_SILLSTONE]
# Needs a build (bash scripts/build.sh), Debian's python3-numpy, python3-scipy,
# python3-gdal and gdal-bin. Not part of ctest.
set -euo pipefail
root="$(cd "$(dirname "$0")/../.." && pwd)"
exe="$root/${SILLSTONE_BUILD_DIR:-build}/sillstone"
[ -x "$exe" ] || { echo "error: no $exe: build first (bash scripts/build.sh)" >&2; exit 1; }
exec /usr/bin/python3 "$root/tests/benchmarks/bench.py" "$exe" "$@"
