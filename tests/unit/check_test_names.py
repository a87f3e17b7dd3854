"""Every Catch2 test name must reach CTest intact: catch_discover_tests splits
names on ';', and Catch reads a name starting with '-' as an option, so such
a test would silently run nothing. Usage: check_test_names.py TESTS_UNIT_DIR"""
import glob
import os
import re
import sys

bad = []
for path in sorted(glob.glob(os.path.join(sys.argv[1], "*_test.cpp"))):
    for name in re.findall(r'TEST_CASE\(\s*"([^"]*)"', open(path, encoding="utf-8").read()):
        if ";" in name or name.startswith("-") or "\\" in name:
            bad.append(f"{os.path.basename(path)}: {name!r}")
print("\n".join(bad) if bad else "all test names are safe")
sys.exit(1 if bad else 0)
