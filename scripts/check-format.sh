#!/usr/bin/env bash
# Checks that every C++ file of src/, include/ and tests/ is formatted as the
# committed .clang-format says (clang-format --dry-run --Werror): prints each
# difference and exits non-zero when any file would change. Changes nothing.
# Format a file with `clang-format -i FILE`, or only the lines you changed
# with `git clang-format`.
set -euo pipefail
cd "$(dirname "$0")/.."
clang_format="${CLANG_FORMAT:-clang-format}"
mapfile -d '' files < <(find src include tests -type f \
  \( -name '*.cpp' -o -name '*.hpp' -o -name '*.h' -o -name '*.cc' \) -print0 | sort -z)
if [ ${#files[@]} -eq 0 ]; then
  echo "check-format: no C++ files found" >&2
  exit 1
fi
if "$clang_format" --dry-run --Werror --style=file "${files[@]}"; then
  echo "check-format: ${#files[@]} files follow .clang-format"
else
  echo "check-format: some of the ${#files[@]} files differ from .clang-format (see above)" >&2
  exit 1
fi
