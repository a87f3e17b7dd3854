"""The numpy/scipy baseline of the benchmarks: local ordinary kriging, vectorised.

The same method as `sillstone krige --method ordinary --max-points K` (and
leave-one-out `sillstone crossval`), written the plain vectorised way a
numpy user would write it: scipy's cKDTree for the K nearest samples of a
batch of targets, the full bordered ordinary-kriging matrix of every target
of the batch built with broadcasting, and one batched numpy.linalg.solve
(LAPACK gesv per system). Nothing here is shared with sillstone's C++
engine; the covariance formulas are those of docs/models.md (nugget +
spherical, isotropic: the only model the benchmarks use).

It is both the speed peer of benchmarks B1, B1s and B3 and the reference
their estimates are compared with (1e-8 relative).

Used as a module by bench.py, or standalone for a look at one case:
    baseline_numpy.py SAMPLES.csv NUGGET SILL RANGE K X0 Y0 X1 Y1 ...
"""
import time

import numpy as np
from scipy.spatial import cKDTree


class Model:
    """c0 nugget + c1 spherical(range=a): C(h) = c0 [h = 0] + c1 (1 - sph(h / a))."""

    def __init__(self, nugget, sill, range_):
        self.nugget, self.sill, self.range = float(nugget), float(sill), float(range_)

    def spec(self):
        return f"{self.nugget!r} nugget + {self.sill!r} spherical(range={self.range!r})"

    def cov(self, h):
        r = np.minimum(h / self.range, 1.0)
        c = self.sill * (1.0 - r * (1.5 - 0.5 * r * r))
        return c + self.nugget * (h == 0)

    def c0(self):
        return self.nugget + self.sill


def _solve_batch(model, pts, z, targets, idx, dist):
    """Ordinary kriging of `targets` (b, 2) from the samples `idx` (b, k)."""
    b, k = idx.shape
    p = pts[idx]  # (b, k, 2)
    d = p[:, :, None, :] - p[:, None, :, :]
    a = np.empty((b, k + 1, k + 1))
    a[:, :k, :k] = model.cov(np.sqrt((d * d).sum(axis=-1)))
    a[:, :k, k] = 1.0
    a[:, k, :k] = 1.0
    a[:, k, k] = 0.0
    kvec = model.cov(dist)
    rhs = np.empty((b, k + 1, 1))
    rhs[:, :k, 0] = kvec
    rhs[:, k, 0] = 1.0
    x = np.linalg.solve(a, rhs)[:, :, 0]
    lam, mu = x[:, :k], x[:, k]
    est = (lam * z[idx]).sum(axis=1)
    var = model.c0() - (lam * kvec).sum(axis=1) - mu
    return est, var


def krige(model, pts, z, targets, k, batch=2048):
    """Estimates and variances at `targets` (m, 2); returns (est, var, timings)."""
    t0 = time.perf_counter()
    tree = cKDTree(pts)
    t1 = time.perf_counter()
    est = np.empty(len(targets))
    var = np.empty(len(targets))
    for s in range(0, len(targets), batch):
        tb = targets[s:s + batch]
        dist, idx = tree.query(tb, k=k)
        est[s:s + batch], var[s:s + batch] = _solve_batch(model, pts, z, tb, idx, dist)
    t2 = time.perf_counter()
    return est, var, {"setup_s": t1 - t0, "per_node_s": (t2 - t1) / max(len(targets), 1)}


def leave_one_out(model, pts, z, k, batch=2048):
    """Leave-one-out: each sample kriged from its k nearest others."""
    t0 = time.perf_counter()
    tree = cKDTree(pts)
    t1 = time.perf_counter()
    est = np.empty(len(pts))
    var = np.empty(len(pts))
    for s in range(0, len(pts), batch):
        tb = pts[s:s + batch]
        dist, idx = tree.query(tb, k=k + 1)
        # Drop the sample itself (at distance 0, first; checked, not assumed).
        own = np.arange(s, s + len(tb))
        assert (idx[:, 0] == own).all(), "a duplicate location: the benchmark data have none"
        est[s:s + batch], var[s:s + batch] = _solve_batch(model, pts, z, tb, idx[:, 1:], dist[:, 1:])
    t2 = time.perf_counter()
    return est, var, {"setup_s": t1 - t0, "per_node_s": (t2 - t1) / max(len(pts), 1)}


if __name__ == "__main__":
    import sys
    path, c0, c1, a, k = sys.argv[1:6]
    data = np.loadtxt(path, delimiter=",", skiprows=1)
    xy = np.asarray([float(v) for v in sys.argv[6:]]).reshape(-1, 2)
    e, v, t = krige(Model(c0, c1, a), data[:, :2], data[:, 2], xy, int(k))
    for (x, y), ee, vv in zip(xy, e, v):
        print(f"{x} {y} {ee!r} {vv!r}")
    print(t)
