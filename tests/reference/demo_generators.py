"""Each demo site's committed data equal what its generator writes now.

Runs every demo-sites/*/generate.py into a temporary file and compares bytes
with the committed samples.csv, so the data in the repo are always the
generator's and never hand-edited.
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
    committed = os.path.join(site, "samples.csv")
    with tempfile.TemporaryDirectory() as tmp:
        fresh = os.path.join(tmp, "samples.csv")
        subprocess.run([sys.executable, gen, fresh], check=True, capture_output=True)
        same = filecmp.cmp(fresh, committed, shallow=False)
    print(("ok    " if same else "DIFFERS ") + os.path.relpath(committed, root))
    failures += not same
sys.exit(1 if failures else 0)
