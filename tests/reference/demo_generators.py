"""Each demo site's committed data equal what its generator writes now.

Runs every demo-sites/*/generate.py into a temporary folder (given the path
of a samples.csv there; generators write their other files beside it) and
compares every file written, byte for byte, with the committed one, so the
data in the repo are always the generator's and never hand-edited.
Usage: demo_generators.py [ignored: path to sillstone]
"""
import filecmp
import glob
import os
import subprocess
import sys
import tempfile

root = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
failures = 0
generators = sorted(glob.glob(os.path.join(root, "demo-sites", "*", "generate.py")))
if not generators:
    print("no demo-site generators found")
    sys.exit(1)
for gen in generators:
    site = os.path.dirname(gen)
    with tempfile.TemporaryDirectory() as tmp:
        subprocess.run([sys.executable, gen, os.path.join(tmp, "samples.csv")], check=True,
                       capture_output=True)
        written = sorted(os.listdir(tmp))
        for name in written:
            committed = os.path.join(site, name)
            same = os.path.exists(committed) and filecmp.cmp(os.path.join(tmp, name), committed,
                                                             shallow=False)
            print(("ok      " if same else "DIFFERS ") + os.path.relpath(committed, root))
            failures += not same
    if "samples.csv" not in written:
        print("MISSING " + os.path.relpath(os.path.join(site, "samples.csv"), root))
        failures += 1
sys.exit(1 if failures else 0)
