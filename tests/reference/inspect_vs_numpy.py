"""`sillstone inspect --json` against numpy and scipy, computed at test time.

Outside references (Debian's python3-numpy and python3-scipy):
  - mean, standard deviation (ddof=1), min/max: numpy
  - quartiles: numpy.percentile, default 'linear' method (Hyndman & Fan type 7)
  - skewness: scipy.stats.skew with bias=True (the moment coefficient g1)
  - nearest-neighbour spacing: scipy.spatial.cKDTree
  - pairwise-complete covariance and correlation: numpy on the rows where both
    variables are present
  - declustered mean at a fixed cell: an independent numpy implementation of
    cell declustering (Journel 1983), 4 diagonal origin shifts
Usage: inspect_vs_numpy.py PATH/TO/sillstone
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import stats
from scipy.spatial import cKDTree

RTOL = 1e-12  # both sides compute in double precision from the same decimals
failures = []


def close(name, ours, ref, rtol=RTOL, atol=0.0):
    if ours is None or not np.isclose(ours, ref, rtol=rtol, atol=atol):
        failures.append(f"{name}: sillstone {ours!r} != reference {ref!r}")


def main():
    exe = sys.argv[1]
    rng = np.random.default_rng(20261201)
    n = 400
    # UTM-scale coordinates, lognormal values, some missing and non-detects.
    x = 431000 + rng.uniform(0, 1200, n)
    y = 5712000 + rng.uniform(0, 900, n)
    common = rng.normal(size=n)
    lead = np.exp(4 + 1.1 * common + 0.4 * rng.normal(size=n))
    zinc = np.exp(5 + 0.8 * common + 0.5 * rng.normal(size=n))
    lead_text = [f"{v:.6f}" for v in lead]
    zinc_text = [f"{v:.6f}" for v in zinc]
    lead_used = np.round(lead, 6)
    zinc_used = np.round(zinc, 6)
    for i in range(0, n, 37):  # missing lead
        lead_text[i] = "NA"
        lead_used[i] = np.nan
    for i in range(5, n, 41):  # non-detects in zinc, <DL -> DL/2 by default
        zinc_text[i] = "<20"
        zinc_used[i] = 10.0
    with tempfile.TemporaryDirectory() as tmp:
        path = os.path.join(tmp, "samples.csv")
        with open(path, "w") as f:
            f.write("east,north,lead,zinc\n")
            for i in range(n):
                f.write(f"{x[i]:.3f},{y[i]:.3f},{lead_text[i]},{zinc_text[i]}\n")
        xr, yr = np.round(x, 3), np.round(y, 3)
        cell = 150.0
        out = subprocess.run(
            [exe, "inspect", path, "--x", "east", "--y", "north", "--value", "lead,zinc",
             "--crs", "EPSG:32630", "--decluster-cell", str(cell), "--json"],
            capture_output=True, text=True, check=True)
    doc = json.loads(out.stdout)

    close("samples", doc["samples"], n)
    for k, (name, v) in enumerate([("lead", lead_used), ("zinc", zinc_used)]):
        got = doc["variables"][k]
        assert got["name"] == name
        ok = v[~np.isnan(v)]
        close(f"{name} count", got["count"], ok.size)
        close(f"{name} mean", got["mean"], np.mean(ok))
        close(f"{name} sd", got["sd"], np.std(ok, ddof=1))
        close(f"{name} cv", got["cv"], np.std(ok, ddof=1) / np.mean(ok))
        close(f"{name} min", got["min"], np.min(ok))
        close(f"{name} max", got["max"], np.max(ok))
        for key, q in (("q1", 25), ("median", 50), ("q3", 75)):
            close(f"{name} {key}", got[key], np.percentile(ok, q))
        close(f"{name} skewness", got["skewness"], stats.skew(ok, bias=True), rtol=1e-10)

        # Cell declustering at a fixed cell size, written independently here.
        px, py = xr[~np.isnan(v)], yr[~np.isnan(v)]
        w = np.zeros(ok.size)
        for s in range(4):
            shift = cell * s / 4
            ix = np.floor((px - px.min() + shift) / cell).astype(np.int64)
            iy = np.floor((py - py.min() + shift) / cell).astype(np.int64)
            keys = ix * 1_000_003 + iy
            uniq, inv, counts = np.unique(keys, return_inverse=True, return_counts=True)
            w += 1.0 / (counts[inv] * uniq.size * 4)
        close(f"{name} declustered mean", got["declustered_mean"], np.sum(w * ok), rtol=1e-10)

    # Nearest-neighbour spacing over the locations of the first variable.
    keep = ~np.isnan(lead_used)
    pts = np.column_stack([xr[keep], yr[keep]])
    d, _ = cKDTree(pts).query(pts, k=2)
    nn = d[:, 1]
    sp = doc["nearest_neighbour_spacing"]
    close("nn min", sp["min"], nn.min(), rtol=1e-9)
    close("nn median", sp["median"], np.median(nn), rtol=1e-9)
    close("nn mean", sp["mean"], nn.mean(), rtol=1e-9)
    close("nn max", sp["max"], nn.max(), rtol=1e-9)

    # Pairwise-complete covariance and correlation.
    both = ~np.isnan(lead_used) & ~np.isnan(zinc_used)
    c = np.cov(lead_used[both], zinc_used[both], ddof=1)
    r = np.corrcoef(lead_used[both], zinc_used[both])
    cov = doc["covariance_matrix"]["values"]
    cor = doc["correlation_matrix"]["values"]
    close("cov lead-zinc", cov[0][1], c[0, 1], rtol=1e-10)
    close("cov zinc-lead", cov[1][0], c[1, 0], rtol=1e-10)
    close("var lead", cov[0][0], np.var(lead_used[~np.isnan(lead_used)], ddof=1), rtol=1e-10)
    close("cor lead-zinc", cor[0][1], r[0, 1], rtol=1e-10)
    close("pairs lead-zinc", doc["covariance_matrix"]["pairs"][0][1], int(both.sum()))
    close("extent xmin", doc["extent"]["xmin"], xr.min())
    close("extent ymax", doc["extent"]["ymax"], yr.max())

    if failures:
        print("\n".join(failures))
        return 1
    print("inspect agrees with numpy/scipy on", n, "samples")
    return 0


if __name__ == "__main__":
    sys.exit(main())
