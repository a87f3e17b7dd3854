"""`sillstone krige` and `crossval` against dense numpy solves, scipy's
cKDTree neighbours and scikit-learn's Gaussian-process regression, all
computed at test time (Debian's python3-numpy, python3-scipy,
python3-sklearn, python3-gdal).

For every node of a small grid the reference builds the kriging system the
textbook way (the full bordered matrix, numpy.linalg.solve) from the model's
formulas as documented in docs/models.md, and compares estimate and kriging
variance with the raster sillstone wrote, read back through GDAL's Python
bindings (which also checks geotransform, CRS, nodata and band names).
Tolerance: 1e-8 relative (1e-9 absolute for variances near zero).
Simple kriging is also compared with scikit-learn's GaussianProcessRegressor
with a fixed kernel (tolerance 1e-6: its alpha jitter of 1e-10).
Usage: kriging_vs_numpy.py PATH/TO/sillstone
"""
import csv
import os
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal, osr
from scipy.spatial import cKDTree

gdal.UseExceptions()
RTOL, ATOL = 1e-8, 1e-9
failures = []
X0, Y0 = 431000.0, 5712000.0  # UTM-scale offsets: sillstone must centre internally


def spherical(h, a):
    r = np.minimum(h / a, 1.0)
    return 1.5 * r - 0.5 * r ** 3


def exponential(h, a):
    return 1.0 - np.exp(-3.0 * h / a)


def reduced(dx, dy, a, azimuth=0.0, ratio=1.0):
    """Distance in units of the range: major axis at `azimuth` clockwise from north."""
    t = np.radians(azimuth)
    along = dx * np.sin(t) + dy * np.cos(t)
    across = dx * np.cos(t) - dy * np.sin(t)
    return np.hypot(along, across / ratio) * a


MODEL_SPEC = "0.2 nugget + 1.5 spherical(range=400) + 0.5 exponential(range=900, azimuth=30, ratio=0.6)"
ISO_SPEC = "0.2 nugget + 1.5 spherical(range=400) + 0.5 exponential(range=900)"


def gamma(dx, dy, iso=False):
    h = np.hypot(dx, dy)
    g = 0.2 * (h > 0) + 1.5 * spherical(h, 400.0)
    if iso:
        return g + 0.5 * exponential(h, 900.0)
    return g + 0.5 * exponential(reduced(dx, dy, 1.0, 30.0, 0.6), 900.0)


SILL = 2.2


def cov(dx, dy, iso=False):
    return SILL - gamma(dx, dy, iso)


def solve(px, py, z, tx, ty, drift, iso=False, mean=None, disc=None, ext=None, ext0=None):
    """One system: drift is 'simple', 'ordinary', 'linear', 'quadratic' or 'external'."""
    n = len(z)
    dx = px[:, None] - px[None, :]
    dy = py[:, None] - py[None, :]
    K = cov(dx, dy, iso)
    offsets = disc if disc is not None else np.zeros((1, 2))
    k = np.mean(cov(px[:, None] - (tx + offsets[None, :, 0]), py[:, None] - (ty + offsets[None, :, 1]), iso), axis=1)
    ox, oy = offsets[:, 0], offsets[:, 1]
    c00 = np.mean(cov(ox[:, None] - ox[None, :], oy[:, None] - oy[None, :], iso))
    if drift == "simple":
        lam = np.linalg.solve(K, k)
        return mean + lam @ (z - mean), c00 - lam @ k
    s = 1000.0  # drift coordinates scaled for conditioning; the span is unchanged
    cols = [np.ones(n)]
    f0 = [1.0]
    if drift in ("linear", "quadratic"):
        cols += [px / s, py / s]
        f0 += [np.mean(tx + ox) / s, np.mean(ty + oy) / s]
    if drift == "quadratic":
        cols += [(px / s) ** 2, (py / s) ** 2, px * py / s ** 2]
        f0 += [np.mean(((tx + ox) / s) ** 2), np.mean(((ty + oy) / s) ** 2), np.mean((tx + ox) * (ty + oy) / s ** 2)]
    if drift == "external":
        cols.append(ext)
        f0.append(ext0)
    F = np.column_stack(cols)
    p = F.shape[1]
    A = np.zeros((n + p, n + p))
    A[:n, :n] = K
    A[:n, n:] = F
    A[n:, :n] = F.T
    b = np.concatenate([k, f0])
    x = np.linalg.solve(A, b)
    lam, mu = x[:n], x[n:]
    return lam @ z, c00 - lam @ k - mu @ np.asarray(f0)


def compare(name, ours, ref, rtol=RTOL, atol=ATOL):
    ours, ref = np.asarray(ours), np.asarray(ref)
    bad = ~np.isclose(ours, ref, rtol=rtol, atol=atol)
    if bad.any():
        i = np.argmax(bad)
        failures.append(f"{name}: {bad.sum()} of {bad.size} differ, e.g. {ours.flat[i]!r} vs {ref.flat[i]!r}")


def main():
    exe = sys.argv[1]
    rng = np.random.default_rng(7)
    n = 150
    px = rng.uniform(0, 1000, n)
    py = rng.uniform(0, 800, n)
    z = 10 + 0.004 * px - 0.002 * py + np.sin(px / 150) + 0.3 * rng.normal(size=n)
    px, py, z = np.round(px, 3), np.round(py, 3), np.round(z, 6)
    cell, nx, ny = 40.0, 25, 20
    xmin, ymax = -10.0, 790.0
    gx = xmin + (np.arange(nx) + 0.5) * cell
    gy = ymax - (np.arange(ny) + 0.5) * cell
    TX, TY = np.meshgrid(gx, gy)  # rows north to south
    tx, ty = TX.ravel(), TY.ravel()

    with tempfile.TemporaryDirectory() as tmp:
        samples = os.path.join(tmp, "s.csv")
        with open(samples, "w") as f:
            f.write("x,y,v\n")
            for i in range(n):
                f.write(f"{px[i] + X0:.3f},{py[i] + Y0:.3f},{z[i]:.6f}\n")
        # External drift: a smooth raster over a wider area, one value per 20 m cell.
        ext_path = os.path.join(tmp, "drift.tif")
        ecell, enx, eny = 20.0, 60, 50
        exmin, eymax = -50.0, 850.0
        ds = gdal.GetDriverByName("GTiff").Create(ext_path, enx, eny, 1, gdal.GDT_Float64)
        ds.SetGeoTransform((exmin + X0, ecell, 0, eymax + Y0, 0, -ecell))
        srs = osr.SpatialReference()
        srs.ImportFromEPSG(32630)
        ds.SetProjection(srs.ExportToWkt())
        ecx = exmin + (np.arange(enx) + 0.5) * ecell
        ecy = eymax - (np.arange(eny) + 0.5) * ecell
        EX, EY = np.meshgrid(ecx, ecy)
        evals = 50 + 0.01 * EX + 5 * np.cos(EY / 200)
        ds.GetRasterBand(1).WriteArray(evals)
        ds = None

        def ext_at(x, y):
            col = np.floor((x - exmin) / ecell).astype(int)
            row = np.floor((eymax - y) / ecell).astype(int)
            return evals[row, col]

        def krige(tag, extra):
            out = os.path.join(tmp, tag + ".tif")
            args = [exe, "krige", samples, "--x", "x", "--y", "y", "--value", "v", "--crs", "EPSG:32630",
                    "--cell", str(cell), "--extent", f"{xmin + X0},{ymax - ny * cell + Y0},{xmin + nx * cell + X0},{ymax + Y0}",
                    "-o", out, "--quiet"] + extra
            subprocess.run(args, check=True, capture_output=True, text=True)
            r = gdal.Open(out)
            gt = r.GetGeoTransform()
            compare(f"{tag} geotransform", gt, (xmin + X0, cell, 0, ymax + Y0, 0, -cell), rtol=1e-12, atol=0)
            if osr.SpatialReference(wkt=r.GetProjection()).GetAuthorityCode(None) != "32630":
                failures.append(f"{tag}: CRS is not EPSG:32630")
            if r.GetRasterBand(1).GetDescription() != "estimate" or r.GetRasterBand(2).GetDescription() != "variance":
                failures.append(f"{tag}: band descriptions")
            if r.GetRasterBand(1).GetNoDataValue() != -9999:
                failures.append(f"{tag}: nodata")
            return r.GetRasterBand(1).ReadAsArray().ravel(), r.GetRasterBand(2).ReadAsArray().ravel()

        iso_cases = {
            "ordinary, global": (["--model", MODEL_SPEC, "--global"], "ordinary", False, None),
            "simple, global": (["--model", MODEL_SPEC, "--global", "--method", "simple", "--mean", "11.5"], "simple", False, None),
            "universal linear, global": (["--model", MODEL_SPEC, "--global", "--method", "universal"], "linear", False, None),
            "universal quadratic, global": (["--model", MODEL_SPEC, "--global", "--method", "universal", "--drift", "quadratic"], "quadratic", False, None),
            "block ordinary 40x40 (3x3), global": (["--model", MODEL_SPEC, "--global", "--block", "40,40", "--discretise", "3,3"], "ordinary", False,
                                                    np.array([[(i + 0.5) / 3 * 40 - 20, (j + 0.5) / 3 * 40 - 20] for j in range(3) for i in range(3)])),
            "external drift, global": (["--model", MODEL_SPEC, "--global", "--external-drift", ext_path], "external", False, None),
        }
        for tag, (extra, drift, iso, disc) in iso_cases.items():
            est, var = krige(tag.split(",")[0].replace(" ", "_"), extra)
            ref_e, ref_v = [], []
            for t in range(tx.size):
                e, v = solve(px, py, z, tx[t], ty[t], drift, iso, mean=11.5, disc=disc,
                             ext=ext_at(px, py), ext0=ext_at(tx[t], ty[t]))
                ref_e.append(e)
                ref_v.append(v)
            compare(tag + " estimate", est, ref_e)
            compare(tag + " variance", var, ref_v)

        # Local neighbourhoods: the 16 nearest samples by scipy's cKDTree (isotropic model).
        tree = cKDTree(np.column_stack([px, py]))
        for tag, extra, drift in (("local ordinary", ["--method", "ordinary"], "ordinary"),
                                  ("local universal", ["--method", "universal"], "linear")):
            est, var = krige(tag.replace(" ", "_"), ["--model", ISO_SPEC, "--max-points", "16"] + extra)
            _, nb = tree.query(np.column_stack([tx, ty]), k=16)
            ref = np.array([solve(px[i], py[i], z[i], tx[t], ty[t], drift, True) for t, i in enumerate(nb)])
            compare(tag + " estimate", est, ref[:, 0])
            compare(tag + " variance", var, ref[:, 1])

        # Leave-one-out cross-validation, global ordinary kriging.
        cv_path = os.path.join(tmp, "cv.csv")
        subprocess.run([exe, "crossval", samples, "--x", "x", "--y", "y", "--value", "v", "--model", ISO_SPEC,
                        "--global", "-o", cv_path, "--quiet"], check=True, capture_output=True)
        with open(cv_path) as f:
            rows = list(csv.DictReader(f))
        keep = np.ones(n, bool)
        ref_e, ref_v = [], []
        for i in range(n):
            keep[:] = True
            keep[i] = False
            e, v = solve(px[keep], py[keep], z[keep], px[i], py[i], "ordinary", True)
            ref_e.append(e)
            ref_v.append(v)
        compare("crossval estimate", [float(r["estimate"]) for r in rows], ref_e)
        compare("crossval variance", [float(r["variance"]) for r in rows], ref_v)
        compare("crossval error", [float(r["error"]) for r in rows], np.array(ref_e) - z)
        compare("crossval id", [int(r["id"]) for r in rows], np.arange(n) + 2, rtol=0, atol=0)

        # Simple kriging = Gaussian-process regression with a fixed kernel and
        # a known mean (scikit-learn): exponential model, no nugget.
        from sklearn.gaussian_process import GaussianProcessRegressor
        from sklearn.gaussian_process.kernels import ConstantKernel, Matern
        kernel = ConstantKernel(1.3, "fixed") * Matern(length_scale=600.0 / 3, length_scale_bounds="fixed", nu=0.5)
        gp = GaussianProcessRegressor(kernel=kernel, alpha=1e-10, optimizer=None, normalize_y=False)
        gp.fit(np.column_stack([px, py]), z - 11.0)
        mean, sd = gp.predict(np.column_stack([tx, ty]), return_std=True)
        est, var = krige("sklearn", ["--model", "1.3 exponential(range=600)", "--global", "--method", "simple", "--mean", "11"])
        compare("simple kriging vs scikit-learn GPR, estimate", est, mean + 11.0, rtol=1e-6, atol=1e-6)
        compare("simple kriging vs scikit-learn GPR, variance", var, sd ** 2, rtol=1e-6, atol=1e-6)

    if failures:
        print("\n".join(failures))
        return 1
    print("krige and crossval agree with numpy, scipy and scikit-learn")
    return 0


if __name__ == "__main__":
    sys.exit(main())
