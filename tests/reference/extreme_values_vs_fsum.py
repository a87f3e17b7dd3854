"""`sillstone inspect --json` on values that cancel or overflow, against exact
references computed at test time, and the refusal of such values downstream.

Outside references (Python's standard library, exact rational arithmetic):
  - mean: math.fsum (correctly rounded sum, Shewchuk) / n
  - standard deviation (divisor n - 1): statistics.stdev, which sums exact
    fractions, so it stays finite when the variance itself overflows
  - skewness g1: exact Fractions (m3 / m2^1.5), then float
Checks:
  - {1e300, -1e300, 7, 8, 1}: mean 3.2 (a plain sorted sum gave 0), sd
    7.07e299 (it was reported as undefined), with a warning naming the row;
  - large offsets ({1e16 + k}): mean within 1 ulp of fsum / n;
  - `variogram` and `krige` refuse the 1e300 value with one `error:` line
    naming the file, line and column, exit 2 (variogram said "values do not
    vary" when squares overflowed).
Usage: extreme_values_vs_fsum.py PATH/TO/sillstone
"""
import json
import math
import os
import statistics
import subprocess
import sys
import tempfile
from fractions import Fraction

failures = []


def close(name, ours, ref, rtol, atol=0.0):
    if ours is None or not math.isfinite(ours) or abs(ours - ref) > rtol * abs(ref) + atol:
        failures.append(f"{name}: sillstone {ours!r} != reference {ref!r} (rtol {rtol})")


def exact_skewness(values):
    big = Fraction(max(abs(v) for v in values))  # g1 is scale-free: keep floats in range
    f = [Fraction(v) / big for v in values]
    n = len(f)
    m = sum(f) / n
    m2 = sum((x - m) ** 2 for x in f) / n
    m3 = sum((x - m) ** 3 for x in f) / n
    return float(m3) / float(m2) ** 1.5 if float(m2) > 0 else None


def write(tmp, name, values):
    path = os.path.join(tmp, name)
    with open(path, "w") as f:
        f.write("x,y,v\n")
        for i, v in enumerate(values):
            f.write(f"{(i * 7) % 23},{(i * 11) % 19},{v!r}\n")
    return path


def inspect(exe, path):
    p = subprocess.run([exe, "inspect", path, "--x", "x", "--y", "y", "--value", "v",
                        "--crs", "EPSG:32630", "--json"], capture_output=True, text=True,
                       timeout=120)
    if p.returncode != 0:
        failures.append(f"inspect {path}: exit {p.returncode}: {p.stderr}")
        return None, p.stderr
    return json.loads(p.stdout)["variables"][0], p.stderr


def main():
    exe = os.path.abspath(sys.argv[1])
    with tempfile.TemporaryDirectory() as tmp:
        extreme = [1e300, -1e300, 7.0, 8.0, 1.0]
        path = write(tmp, "extreme.csv", extreme)
        got, err = inspect(exe, path)
        if got:
            close("extreme mean", got["mean"], math.fsum(extreme) / len(extreme), 1e-15)
            close("extreme sd", got["sd"], statistics.stdev(extreme), 1e-14)
            # g1 is -1.5e-299: zero but for the small values; an absolute tolerance
            close("extreme skewness", got["skewness"], exact_skewness(extreme), 0, 1e-12)
        if "line 2, column 'v': 1e+300 is beyond +-1e100" not in err:
            failures.append(f"inspect does not warn about line 2: {err!r}")

        offset = [1e16 + k for k in (1, 2, 3, 5, 8, 13, 21, 34)]
        path_offset = write(tmp, "offset.csv", offset)
        got, _ = inspect(exe, path_offset)
        if got:
            close("offset mean", got["mean"], math.fsum(offset) / len(offset), 2.3e-16)
            close("offset sd", got["sd"], statistics.stdev(offset), 1e-12)

        for verb in (["variogram", path, "--lag", "5", "--lags", "4"],
                     ["krige", path, "--model", "1 spherical(range=30)", "--cell", "5",
                      "-o", os.path.join(tmp, "out.tif")]):
            p = subprocess.run([exe] + verb + ["--x", "x", "--y", "y", "--value", "v",
                                               "--crs", "EPSG:32630"],
                               capture_output=True, text=True, timeout=120)
            lines = p.stderr.splitlines()
            if (p.returncode != 2 or len(lines) != 1 or not lines[0].startswith("error:")
                    or "extreme.csv, line 2, column 'v': 1e+300 is beyond +-1e100" not in lines[0]):
                failures.append(f"{verb[0]}: exit {p.returncode}, stderr {p.stderr!r}")
        if os.path.exists(os.path.join(tmp, "out.tif")):
            failures.append("a refused krige wrote out.tif")


if __name__ == "__main__":
    main()
    for f in failures:
        print("FAIL", f)
    print("ok" if not failures else f"{len(failures)} failure(s)")
    sys.exit(1 if failures else 0)
