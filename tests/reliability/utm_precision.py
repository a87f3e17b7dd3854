"""UTM-scale coordinates lose no precision.

The same 300 samples are written twice: near the origin, and shifted by
(512000, 5712000) metres, a UTM zone's easting and a northing above
5,000,000. Coordinates are multiples of 1/1024 m, so the shifted values are
exact in double precision and both files describe exactly the same geometry.
`krige` (raster and table), `crossval` and `variogram` run on both with the
same settings (the grid shifted alike), and their numbers must agree:
estimates and probabilities to 1e-9 relative, variances to 1e-9 relative or
1e-12 absolute, semivariances to 1e-12 relative. Ordinary kriging is run,
and universal kriging with linear and quadratic drifts: that is where
absolute coordinates would hurt most (drift columns 1, x, y, x^2, xy, y^2
with x^2 near 3e13 beside the constant 1 make the drift system lose some
thirteen digits), so sillstone must centre (and scale) coordinates inside.
The outside reference is sillstone itself on the unshifted data, read through
Python's csv module and GDAL's Python bindings (numpy for the comparison).
Usage: utm_precision.py PATH/TO/sillstone
"""
import csv
import os
import random
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal

gdal.UseExceptions()
X0, Y0 = 512000.0, 5712000.0
REL, ABS = 1e-9, 1e-12
failures = []


def check(ok, what):
    print(("ok    " if ok else "FAIL  ") + what)
    if not ok:
        failures.append(what)


def close(a, b, rel=REL, abs_=ABS):
    a, b = np.asarray(a, float), np.asarray(b, float)
    both_nan = np.isnan(a) & np.isnan(b)
    ok = both_nan | (np.abs(a - b) <= np.maximum(abs_, rel * np.maximum(np.abs(a), np.abs(b))))
    worst = np.nanmax(np.abs(a - b) / np.maximum(np.abs(b), 1e-300)) if a.size else 0.0
    return bool(ok.all()), worst


def write(path, pts, dx, dy):
    with open(path, "w") as f:
        f.write("easting,northing,lead\n")
        for x, y, v in pts:
            f.write(f"{x + dx!r},{y + dy!r},{v!r}\n")


def run(exe, *args):
    p = subprocess.run([exe, *args], capture_output=True, text=True)
    if p.returncode != 0:
        raise SystemExit(f"sillstone {' '.join(args)} failed ({p.returncode}): {p.stderr}")
    return p


def table(path, columns):
    with open(path) as f:
        rows = list(csv.DictReader(f))
    return {c: np.array([float(r[c]) if r[c] != "" else np.nan for r in rows]) for c in columns}


def main():
    exe = os.path.abspath(sys.argv[1])
    rng = random.Random(20261202)
    pts = []
    for _ in range(300):
        x = rng.randrange(0, 2000 * 1024) / 1024
        y = rng.randrange(0, 2000 * 1024) / 1024
        v = 50 + 30 * np.sin(x / 300) * np.cos(y / 400) + rng.gauss(0, 5)
        pts.append((x, y, float(v)))
    model = "4 nugget + 300 spherical(range=700) + 100 exponential(range=1500, azimuth=40, ratio=0.5)"
    with tempfile.TemporaryDirectory() as tmp:
        near, utm = os.path.join(tmp, "near.csv"), os.path.join(tmp, "utm.csv")
        write(near, pts, 0, 0)
        write(utm, pts, X0, Y0)
        common = ["--x", "easting", "--y", "northing", "--value", "lead", "--crs", "EPSG:32630",
                  "--model", model, "--threads", "2"]

        def extent(dx, dy):
            return f"{0 + dx!r},{0 + dy!r},{2000 + dx!r},{2000 + dy!r}"

        # Rasters, with a threshold (three bands).
        for name, src, dx, dy in (("near", near, 0, 0), ("utm", utm, X0, Y0)):
            run(exe, "krige", src, *common, "--cell", "20", "--extent", extent(dx, dy), "--threshold", "60",
                "-o", os.path.join(tmp, name + ".tif"))
        a, b = gdal.Open(os.path.join(tmp, "near.tif")), gdal.Open(os.path.join(tmp, "utm.tif"))
        gt_a, gt_b = a.GetGeoTransform(), b.GetGeoTransform()
        check(gt_b[0] == gt_a[0] + X0 and gt_b[3] == gt_a[3] + Y0 and gt_a[1] == gt_b[1],
              "raster: the UTM grid is the near grid shifted by the offsets")
        for band, name, rel, abs_ in ((1, "estimate", REL, ABS), (2, "variance", REL, ABS),
                                      (3, "probability", REL, 1e-12)):
            ra = a.GetRasterBand(band).ReadAsArray().astype(float)
            rb = b.GetRasterBand(band).ReadAsArray().astype(float)
            ok, worst = close(rb, ra, rel, abs_)
            check(ok and ra.size == 100 * 100, f"raster {name}: UTM equals near (worst relative {worst:.2e})")

        # Tables (point kriging written as a table): ordinary, then universal
        # kriging with a linear and a quadratic drift.
        cols = ["estimate", "variance", "slope_of_regression", "kriging_efficiency"]
        for method in (["--method", "ordinary"], ["--method", "universal", "--drift", "linear"],
                       ["--method", "universal", "--drift", "quadratic", "--max-points", "40"]):
            label = " ".join(method[1:4:2])
            for name, src, dx, dy in (("near", near, 0, 0), ("utm", utm, X0, Y0)):
                run(exe, "krige", src, *common, *method, "--cell", "50", "--extent", extent(dx, dy),
                    "--overwrite", "-o", os.path.join(tmp, name + "_grid.csv"))
            ta = table(os.path.join(tmp, "near_grid.csv"), cols + ["x", "y"])
            tb = table(os.path.join(tmp, "utm_grid.csv"), cols + ["x", "y"])
            check(np.array_equal(tb["x"], ta["x"] + X0) and np.array_equal(tb["y"], ta["y"] + Y0),
                  f"table ({label}): node coordinates are the near ones shifted, exactly")
            check(np.isfinite(ta["estimate"]).sum() == ta["estimate"].size,
                  f"table ({label}): every node estimated")
            for c in cols:
                ok, worst = close(tb[c], ta[c])
                check(ok, f"table ({label}) {c}: UTM equals near (worst relative {worst:.2e})")

        # Cross-validation.
        cvcols = ["estimate", "variance", "error", "standardised_error"]
        for name, src in (("near", near), ("utm", utm)):
            run(exe, "crossval", src, *common, "-o", os.path.join(tmp, name + "_cv.csv"))
        ca = table(os.path.join(tmp, "near_cv.csv"), cvcols)
        cb = table(os.path.join(tmp, "utm_cv.csv"), cvcols)
        for c in cvcols:
            ok, worst = close(cb[c], ca[c], REL, 1e-9 if c == "error" else ABS)
            check(ok, f"crossval {c}: UTM equals near (worst relative {worst:.2e})")

        # Variogram: pair distances are differences of exact coordinates.
        for name, src in (("near", near), ("utm", utm)):
            run(exe, "variogram", src, "--x", "easting", "--y", "northing", "--value", "lead",
                "--crs", "EPSG:32630", "--lag", "50", "--lags", "20", "--azimuths", "0,45,90,135",
                "-o", os.path.join(tmp, name + "_v.csv"))
        va = table(os.path.join(tmp, "near_v.csv"), ["mean_distance", "pairs", "semivariance"])
        vb = table(os.path.join(tmp, "utm_v.csv"), ["mean_distance", "pairs", "semivariance"])
        check(np.array_equal(va["pairs"], vb["pairs"]), "variogram: the same pairs in every class")
        for c in ("mean_distance", "semivariance"):
            ok, worst = close(vb[c], va[c], 1e-12, 0)
            check(ok, f"variogram {c}: UTM equals near (worst relative {worst:.2e})")

    print(f"{len(failures)} failed")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
