#!/usr/bin/env bash
# Installs the built tree into a scratch prefix, builds consumer.cpp against
# it with find_package(sillstone), and runs it.
set -euo pipefail
build_dir="$1"
here="$(cd "$(dirname "$0")" && pwd)"
scratch="$(mktemp -d)"
trap 'rm -rf "$scratch"' EXIT
cmake --install "$build_dir" --prefix "$scratch/prefix" > /dev/null
cmake -S "$here" -B "$scratch/build" -DCMAKE_PREFIX_PATH="$scratch/prefix" > /dev/null
cmake --build "$scratch/build" > /dev/null
"$scratch/build/consumer"
