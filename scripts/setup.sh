#!/usr/bin/env bash
# The first README command: install dependencies, build, and run the main job
# on the shipped demo site.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/install-deps.sh
bash scripts/build.sh
echo
echo "== Demo: the soil survey around Kestrel Yard (demo-sites/soil-yard) =="
build/sillstone inspect demo-sites/soil-yard/samples.csv --x easting --y northing \
  --value lead_mg_kg,zinc_mg_kg,copper_mg_kg --crs EPSG:32630
