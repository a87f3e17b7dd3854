"""`krige --like` with a template in another CRS than the samples, against
GDAL's Python bindings (Debian's python3-gdal), computed at test time.

Checks:
  - samples reprojected to ETRS89 / UTM 30N (EPSG:25830) with a template in
    WGS 84 (EPSG:4326): refused with exit 2, one `error:` line naming both
    CRSs, no output written;
  - the extent the message suggests equals the template's extent transformed
    by osr.CoordinateTransformation.TransformBounds (21 points per edge, the
    same densification) within 1e-6 m;
  - kriging with that --extent gives a raster whose CRS GDAL reads as
    EPSG:25830 and whose nodes cover the samples (the estimates vary);
  - a template without a CRS is refused when the samples have one.
Usage: like_crs_vs_gdal.py PATH/TO/sillstone
"""
import os
import re
import subprocess
import sys
import tempfile

from osgeo import gdal, osr

gdal.UseExceptions()
ATOL = 1e-6  # metres: both sides run PROJ in double precision
failures = []


def run(exe, args, cwd):
    return subprocess.run([exe] + args, capture_output=True, text=True, cwd=cwd, timeout=120)


def write_template(path, with_crs):
    ds = gdal.GetDriverByName("GTiff").Create(path, 40, 20, 1, gdal.GDT_Float32)
    ds.SetGeoTransform([-3.72, 0.0005, 0, 40.43, 0, -0.0005])
    if with_crs:
        srs = osr.SpatialReference()
        srs.ImportFromEPSG(4326)
        ds.SetProjection(srs.ExportToWkt())
    ds = None


def main():
    exe = os.path.abspath(sys.argv[1])
    with tempfile.TemporaryDirectory() as tmp:
        write_template(os.path.join(tmp, "dem_4326.tif"), True)
        write_template(os.path.join(tmp, "no_crs.tif"), False)
        with open(os.path.join(tmp, "wells.csv"), "w") as f:
            f.write("lon,lat,head\n")
            for i, (lon, lat) in enumerate([(-3.715, 40.425), (-3.705, 40.428), (-3.712, 40.422),
                                            (-3.703, 40.421), (-3.709, 40.427), (-3.701, 40.424),
                                            (-3.707, 40.4235), (-3.713, 40.4285)]):
                f.write(f"{lon},{lat},{100 + 3 * i % 7}\n")
        common = ["krige", "wells.csv", "--x", "lon", "--y", "lat", "--value", "head",
                  "--crs", "EPSG:4326", "--to-crs", "EPSG:25830",
                  "--model", "1 spherical(range=800)", "-o", "out.tif"]

        p = run(exe, common + ["--like", "dem_4326.tif"], tmp)
        lines = p.stderr.splitlines()
        if p.returncode != 2 or len(lines) != 1 or not lines[0].startswith("error:"):
            failures.append(f"another CRS: exit {p.returncode}, stderr {p.stderr!r}")
        for name in ("WGS 84", "ETRS89 / UTM zone 30N"):
            if name not in p.stderr:
                failures.append(f"the refusal does not name {name}: {p.stderr!r}")
        if os.path.exists(os.path.join(tmp, "out.tif")):
            failures.append("a refused run wrote out.tif")
        m = re.search(r"--extent (\S+),(\S+),(\S+),(\S+) ", p.stderr)
        if not m:
            failures.append(f"no extent suggested: {p.stderr!r}")
            return
        ours = [float(v) for v in m.groups()]
        src = osr.SpatialReference()
        src.ImportFromEPSG(4326)
        src.SetAxisMappingStrategy(osr.OAMS_TRADITIONAL_GIS_ORDER)
        dst = osr.SpatialReference()
        dst.ImportFromEPSG(25830)
        dst.SetAxisMappingStrategy(osr.OAMS_TRADITIONAL_GIS_ORDER)
        ct = osr.CoordinateTransformation(src, dst)
        ref = ct.TransformBounds(-3.72, 40.42, -3.70, 40.43, 21)
        for name, a, b in zip(("xmin", "ymin", "xmax", "ymax"), ours, ref):
            # The message prints 12 significant digits: 1e-6 m at 4.5e6 m.
            if abs(a - b) > max(ATOL, 1e-11 * abs(b)):
                failures.append(f"suggested {name} {a!r} != GDAL TransformBounds {b!r}")

        p = run(exe, common + ["--cell", "20", "--extent", ",".join(m.groups())], tmp)
        if p.returncode != 0:
            failures.append(f"the suggested extent is refused: {p.stderr!r}")
        else:
            ds = gdal.Open(os.path.join(tmp, "out.tif"))
            srs = osr.SpatialReference(wkt=ds.GetProjection())
            srs.AutoIdentifyEPSG()
            if srs.GetAuthorityCode(None) != "25830":
                failures.append(f"output CRS {srs.GetName()!r}, expected EPSG:25830")
            band = ds.GetRasterBand(1)
            lo, hi = band.ComputeRasterMinMax(False)
            if not hi > lo:
                failures.append(f"the estimates do not vary ({lo}..{hi}): the grid misses the wells")
            os.remove(os.path.join(tmp, "out.tif"))

        p = run(exe, common + ["--like", "no_crs.tif"], tmp)
        if p.returncode != 2 or "has no CRS" not in p.stderr or "ETRS89 / UTM zone 30N" not in p.stderr:
            failures.append(f"template without CRS: exit {p.returncode}, stderr {p.stderr!r}")


if __name__ == "__main__":
    main()
    for f in failures:
        print("FAIL", f)
    print("ok" if not failures else f"{len(failures)} failure(s)")
    sys.exit(1 if failures else 0)
