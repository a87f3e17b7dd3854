#!/usr/bin/env bash
# Installs sillstone's build and test dependencies from Debian 12's packages.
# Runs as root, or through sudo otherwise. Does nothing when all are present.
set -euo pipefail

packages=(
  cmake g++ make pkg-config            # build
  clang-format                         # the committed .clang-format (scripts/check-format.sh)
  libgdal-dev gdal-bin                 # samples and rasters (GDAL/OGR/OSR)
  libeigen3-dev                        # linear algebra
  libnanoflann-dev                     # k-d tree neighbour search
  libcli11-dev                         # command line
  nlohmann-json3-dev                   # JSON
  libtomlplusplus-dev                  # study files
  catch2                               # unit tests (v2)
  python3 python3-numpy python3-scipy python3-sklearn python3-gdal  # reference checks
  chromium                             # the report's browser check
  time                                 # benchmarks: CPU time and peak memory (GNU time)
  clang libclang-rt-14-dev             # fuzzing: clang-14's libFuzzer, ASan and UBSan runtimes (scripts/fuzz.sh)
)

missing=()
for p in "${packages[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
if [ ${#missing[@]} -eq 0 ]; then
  echo "sillstone: all dependencies are installed"
  exit 0
fi

sudo=""
if [ "$(id -u)" -ne 0 ]; then sudo="sudo"; fi
echo "sillstone: installing ${missing[*]}"
export DEBIAN_FRONTEND=noninteractive
$sudo apt-get update -q
$sudo apt-get install -y -q --no-install-recommends "${missing[@]}"
