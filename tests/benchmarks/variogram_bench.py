"""Benchmark (not a test): `sillstone variogram` on 50,000 samples against a
chunked brute-force numpy computation of the same lag classes.

50,000 samples uniform on a 10 km square, 20 omnidirectional classes to
half the extent (W = 250 m, D = 5 km): about 0.5 billion pairs counted out
of 1.25 billion. Prints the wall time of each, their ratio, the peak
resident memory of each (getrusage), the thread count, and checks that both
give the same pair counts and semivariances (rtol 1e-9).

Run:  cmake --build build --target benchmark-variogram
  or: /usr/bin/python3 tests/benchmarks/variogram_bench.py build/sillstone [--threads N]
"""
import argparse
import csv
import os
import resource
import subprocess
import tempfile
import time

import numpy as np

N, SIDE, LAG, LAGS = 50_000, 10_000.0, 250.0, 20


def brute_force(x, y, z, chunk=200):
    """Matheron semivariance by class over all pairs i < j, `chunk` rows at a time."""
    count = np.zeros(LAGS + 1, np.int64)
    sum_d = np.zeros(LAGS + 1)
    sum_sq = np.zeros(LAGS + 1)
    reach = LAG * LAGS
    for start in range(0, len(x), chunk):
        stop = min(start + chunk, len(x))
        xs, ys, zs = x[start:stop, None], y[start:stop, None], z[start:stop, None]
        dx, dy = x[None, start:] - xs, y[None, start:] - ys
        d = np.sqrt(dx * dx + dy * dy)
        upper = np.arange(start, len(x))[None, :] > np.arange(start, stop)[:, None]
        keep = upper & (d > 0) & (d <= reach)
        dk = d[keep]
        k = np.ceil(dk / LAG).astype(np.int64) - 1  # class (k W, (k+1) W]
        dz = (z[None, start:] - zs)[keep]
        count += np.bincount(k, minlength=LAGS + 1)[: LAGS + 1]
        sum_d += np.bincount(k, weights=dk, minlength=LAGS + 1)[: LAGS + 1]
        sum_sq += np.bincount(k, weights=dz * dz, minlength=LAGS + 1)[: LAGS + 1]
    return count[:LAGS], sum_d[:LAGS] / count[:LAGS], sum_sq[:LAGS] / (2 * count[:LAGS])


def main():
    parser = argparse.ArgumentParser()
    parser.add_argument("sillstone")
    parser.add_argument("--threads", type=int, default=0)
    a = parser.parse_args()
    rng = np.random.default_rng(50_000)
    x = rng.uniform(0, SIDE, N)
    y = rng.uniform(0, SIDE, N)
    z = np.sin(x / 1500) + np.cos(y / 2200) + 0.3 * rng.normal(size=N)

    with tempfile.TemporaryDirectory() as folder:
        samples = os.path.join(folder, "s.csv")
        with open(samples, "w") as f:
            f.write("x,y,v\n")
            for k in range(N):
                f.write(f"{x[k]!r},{y[k]!r},{z[k]!r}\n")
        out = os.path.join(folder, "v.csv")
        command = [a.sillstone, "variogram", samples, "--x", "x", "--y", "y", "--value", "v",
                   "--lag", str(LAG), "--lags", str(LAGS), "--threads", str(a.threads),
                   "-o", out, "--quiet"]
        started = time.perf_counter()
        child = subprocess.Popen(command, stderr=subprocess.DEVNULL)
        _, status, usage = os.wait4(child.pid, 0)
        ours = time.perf_counter() - started
        if status != 0:
            raise SystemExit(f"sillstone failed with status {status}")
        with open(out, newline="") as f:
            rows = list(csv.DictReader(f))

    started = time.perf_counter()
    count, mean_d, gamma = brute_force(x, y, z)
    theirs = time.perf_counter() - started
    numpy_rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss

    pairs = np.array([int(r["pairs"]) for r in rows])
    values = np.array([float(r["semivariance"]) for r in rows])
    same = np.array_equal(pairs, count) and np.allclose(values, gamma, rtol=1e-9, atol=0)
    print(f"samples {N}, classes {LAGS} x {LAG:g} m to {LAG * LAGS:g} m, "
          f"pairs counted {int(count.sum())}")
    threads = a.threads or os.cpu_count()
    print(f"sillstone : {ours:8.2f} s wall (reading the CSV included), {threads} thread(s), "
          f"peak RSS {usage.ru_maxrss / 1024:.0f} MiB")
    print(f"numpy     : {theirs:8.2f} s wall (1 thread, chunks of 200 rows), "
          f"peak RSS {numpy_rss / 1024:.0f} MiB")
    print(f"ratio     : numpy / sillstone = {theirs / ours:.1f}")
    print("results   : " + ("identical pair counts, semivariances within 1e-9"
                            if same else "DIFFER"))
    return 0 if same else 1


if __name__ == "__main__":
    raise SystemExit(main())
