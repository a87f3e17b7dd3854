#!/usr/bin/env bash
# The first README command: install dependencies, build, and run the main job
# on the shipped demo site.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/install-deps.sh
bash scripts/build.sh
echo
echo "== Demo study: lead in topsoil around Kestrel Yard (demo-sites/soil-yard) =="
mkdir -p runs
build/sillstone run demo-sites/soil-yard/study.toml -o runs/soil-yard --overwrite
echo
echo "Open the report in a browser: $(pwd)/runs/soil-yard/report.html"
