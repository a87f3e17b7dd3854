"""`sillstone variogram -o x.csv` against a brute-force numpy computation.

Outside reference: Debian's python3-numpy (all pairs by broadcasting, n = 500
in 2D and 400 in 3D) and python3-scipy (scipy.stats.rankdata and
scipy.stats.norm.ppf for the normal-score transform). The direction tests
are written here independently of sillstone's: from the pair's azimuth and
dip in degrees (numpy.arctan2), not from its vector projections.

Definitions checked (docs/variogram.md):
  - classes (lag_from, lag_to]; pairs at distance 0 not counted
  - Matheron: gamma = mean((z_head - z_tail)^2) / 2
  - Cressie & Hawkins (1980): 2 gamma = mean(|dz|^0.5)^4 / (0.457 + 0.494 / N)
  - covariance: mean((z_head - m_head)(z_tail - m_tail)); correlogram: that over
    sd_head sd_tail (divisor N); with a free azimuth each pair counts both ways
Tolerance: rtol 1e-10 (both sides in double precision, sums in different
orders), with an absolute floor of 1e-12 times the variance for covariances
that happen to be near zero.
Usage: variogram_vs_numpy.py PATH/TO/sillstone
"""
import csv
import json
import math
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import stats

RTOL = 1e-10
failures = []
checked = 0


def close(name, ours, ref, atol=0.0):
    global checked
    checked += 1
    if math.isnan(ref) and math.isnan(ours):
        return
    if not np.isclose(ours, ref, rtol=RTOL, atol=atol):
        failures.append(f"{name}: sillstone {ours!r} != numpy {ref!r}")


def pairs(points):
    """Every pair i < j: indices and the separation vector h = p_j - p_i."""
    i, j = np.triu_indices(len(points), k=1)
    return i, j, points[j] - points[i]


def statistic(kind, estimator, zt, zh, oriented):
    n = zt.size
    if n == 0:
        return math.nan
    if kind == "semivariance":
        dz = zh - zt
        if estimator == "cressie-hawkins":
            return np.mean(np.sqrt(np.abs(dz))) ** 4 / (0.457 + 0.494 / n) / 2
        return np.mean(dz * dz) / 2
    if not oriented:  # a free azimuth: each pair in both orientations
        zt, zh = np.concatenate([zt, zh]), np.concatenate([zh, zt])
    c = np.mean((zh - zh.mean()) * (zt - zt.mean()))
    if kind == "covariance":
        return c
    return c / (zh.std() * zt.std())


def select(h, direction, opts):
    """Membership and orientation (+1: j is the head) of each pair in a direction."""
    azimuth, dip = direction
    d = np.sqrt(np.sum(h * h, axis=1))
    horizontal = np.hypot(h[:, 0], h[:, 1])
    inside = np.ones(len(h), bool)
    sense = np.ones(len(h))
    if azimuth is not None:
        theta = np.degrees(np.arctan2(h[:, 0], h[:, 1]))  # clockwise from north
        diff = np.abs((theta - azimuth + 180) % 360 - 180)  # 0..180
        sense = np.where(diff <= 90, 1.0, -1.0)
        diff = np.where(diff <= 90, diff, 180 - diff)  # the pair taken along the azimuth
        inside &= diff <= opts["angle_tolerance"]
        inside &= horizontal * np.sin(np.radians(diff)) <= opts["bandwidth"]
        if dip is not None:
            down = -sense * h[:, 2]
            phi = np.degrees(np.arctan2(down, horizontal))
            inside &= np.abs(phi - dip) <= opts["dip_tolerance"]
            along = horizontal * np.cos(np.radians(diff))
            b = np.radians(dip)
            inside &= np.abs(along * np.sin(b) - down * np.cos(b)) <= opts["vertical_bandwidth"]
    elif dip is not None:  # dip alone: any azimuth
        phi = np.degrees(np.arctan2(np.abs(h[:, 2]), horizontal))
        inside &= np.abs(phi - dip) <= opts["dip_tolerance"]
        if dip == 90:
            inside &= horizontal <= opts["bandwidth"]
    return inside & (d > 0), sense, d


def reference(points, z, args, directions):
    opts = {"angle_tolerance": 22.5, "bandwidth": math.inf, "dip_tolerance": 22.5,
            "vertical_bandwidth": math.inf, "statistic": "semivariance",
            "estimator": "matheron"}
    for k in range(0, len(args), 2):
        key = args[k][2:].replace("-", "_")
        if key in opts:
            opts[key] = float(args[k + 1]) if key not in ("statistic", "estimator") else args[k + 1]
    kind = opts["statistic"]
    i, j, h = pairs(points)
    lag, lags = float(args[args.index("--lag") + 1]), int(args[args.index("--lags") + 1])
    rows = []
    for direction in directions:
        inside, sense, d = select(h, direction, opts)
        oriented = direction[0] is not None
        head = np.where(sense > 0, j, i)
        tail = np.where(sense > 0, i, j)
        for c in range(lags):
            lo, hi = c * lag, (c + 1) * lag
            m = inside & (d > lo) & (d <= hi)
            rows.append({"pairs": int(m.sum()),
                         "mean_distance": float(d[m].mean()) if m.any() else math.nan,
                         "value": statistic(kind, opts["estimator"], z[tail[m]], z[head[m]],
                                            oriented)})
    return rows


def run(exe, folder, sample_args, args, out="v.csv"):
    path = os.path.join(folder, out)
    if os.path.exists(path):
        os.remove(path)
    subprocess.run([exe, "variogram"] + sample_args + args + ["-o", path, "--quiet"],
                   capture_output=True, text=True, check=True)
    if out.endswith(".json"):
        with open(path) as f:
            return json.load(f)
    with open(path, newline="") as f:
        return list(csv.DictReader(f))


def compare(label, got, want, variance):
    if len(got) != len(want):
        failures.append(f"{label}: {len(got)} rows, numpy has {len(want)}")
        return
    for k, (g, w) in enumerate(zip(got, want)):
        if int(g["pairs"]) != w["pairs"]:
            failures.append(f"{label} row {k}: pairs {g['pairs']} != {w['pairs']}")
            continue
        value_key = [key for key in g if key not in
                     ("azimuth", "dip", "lag_from", "lag_to", "mean_distance", "pairs")][0]
        as_float = lambda s: math.nan if s in ("", None) else float(s)
        close(f"{label} row {k} mean_distance", as_float(g["mean_distance"]), w["mean_distance"])
        close(f"{label} row {k} {value_key}", as_float(g[value_key]), w["value"],
              atol=1e-12 * variance)


def main():
    exe = sys.argv[1]
    rng = np.random.default_rng(20261202)
    with tempfile.TemporaryDirectory() as folder:
        # --- 2D, UTM-scale coordinates, skewed values --------------------------------
        n = 500
        x = 431000 + rng.uniform(0, 1500, n)
        y = 5712000 + rng.uniform(0, 1200, n)
        z = np.exp(3 + 0.8 * rng.normal(size=n) + np.sin(x / 200.0))
        samples = os.path.join(folder, "s2.csv")
        with open(samples, "w") as f:
            f.write("x,y,v\n")
            for k in range(n):
                f.write(f"{x[k]!r},{y[k]!r},{z[k]!r}\n")
        pts = np.column_stack([x, y, np.zeros(n)])
        sample_args = [samples, "--x", "x", "--y", "y", "--value", "v", "--crs", "EPSG:32630"]
        omni = [(None, None)]
        four = [(a, None) for a in (0, 45, 90, 135)]
        two = [(a, None) for a in (30, 120)]
        lags = ["--lag", "40", "--lags", "15"]
        settings = [
            ("omnidirectional", lags, omni),
            ("four directions", lags + ["--azimuths", "0,45,90,135"], four),
            ("two directions, bandwidth",
             lags + ["--azimuths", "30,120", "--angle-tolerance", "15", "--bandwidth", "60"], two),
        ]
        variance = float(np.var(z))
        for label, args, directions in settings:
            for extra in (["--statistic", "semivariance"],
                          ["--estimator", "cressie-hawkins"],
                          ["--statistic", "covariance"],
                          ["--statistic", "correlogram"]):
                got = run(exe, folder, sample_args, args + extra)
                want = reference(pts, z, args + extra, directions)
                compare(f"2D {label} {' '.join(extra)}", got, want, variance)

        # --max-distance alone: 15 classes of D / 15.
        got = run(exe, folder, sample_args, ["--max-distance", "600"])
        compare("2D --max-distance 600", got,
                reference(pts, z, ["--lag", "40", "--lags", "15"], omni), variance)

        # Transforms: log, and normal scores from scipy's ranks and quantiles.
        got = run(exe, folder, sample_args, lags + ["--transform", "log"])
        compare("2D log", got, reference(pts, np.log(z), lags, omni), variance)
        scores = stats.norm.ppf((stats.rankdata(z, method="average") - 0.5) / n)
        doc = run(exe, folder, sample_args,
                  lags + ["--azimuths", "0,90", "--transform", "normal-score"], out="v.json")
        compare("2D normal-score", doc["rows"],
                reference(pts, scores, lags, [(0, None), (90, None)]), 1.0)
        table = doc["normal_score_table"]
        order = np.argsort(z)
        close("normal-score table values", table["values"][17], z[order][17])
        for k in (0, 17, 250, n - 1):
            close(f"normal-score table score {k}", table["scores"][k], scores[order][k])

        # --- 3D: dips, the vertical, bandwidths ----------------------------------------
        n = 400
        x = rng.uniform(0, 600, n)
        y = rng.uniform(0, 600, n)
        e = -rng.uniform(0, 150, n)
        z = rng.normal(size=n) + e / 50
        samples = os.path.join(folder, "s3.csv")
        with open(samples, "w") as f:
            f.write("x,y,elev,v\n")
            for k in range(n):
                f.write(f"{x[k]!r},{y[k]!r},{e[k]!r},{z[k]!r}\n")
        pts = np.column_stack([x, y, e])
        sample_args = [samples, "--x", "x", "--y", "y", "--z", "elev", "--value", "v"]
        lags = ["--lag", "20", "--lags", "10"]
        variance = float(np.var(z))
        settings = [
            ("3D omnidirectional", lags, omni),
            ("3D azimuths and dips",
             lags + ["--azimuths", "0,90", "--dips", "0,30,90", "--dip-tolerance", "20",
                     "--vertical-bandwidth", "15", "--bandwidth", "40"],
             [(0, 0), (0, 30), (90, 0), (90, 30), (None, 90)]),
            ("3D dips alone", lags + ["--dips", "0,45"], [(None, 0), (None, 45)]),
        ]
        for label, args, directions in settings:
            for extra in (["--statistic", "semivariance"], ["--statistic", "correlogram"]):
                got = run(exe, folder, sample_args, args + extra)
                want = reference(pts, z, args + extra, directions)
                compare(f"{label} {' '.join(extra)}", got, want, variance)

    if failures:
        print("\n".join(failures[:40]))
        print(f"{len(failures)} of {checked} checks failed")
        return 1
    print(f"variogram agrees with numpy/scipy: {checked} checks")
    return 0


if __name__ == "__main__":
    sys.exit(main())
