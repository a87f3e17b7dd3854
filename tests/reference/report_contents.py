"""The report's units, areas and grade-tonnage text agree with outside
references and with its own numbers.

1. Map units against GDAL's Python bindings (osr): a study in EPSG:2227
   (US survey foot) and one in EPSG:32633 (metre) name the unit osr gives
   (GetLinearUnitsName); the key area where P > 0.5 equals the cells of
   estimate.tif's probability band above 0.5 (read with GDAL's Python
   bindings and numpy) times the cell area, in the CRS's units and, through
   osr's GetLinearUnits() (metres per unit), in square metres; tolerance:
   the report's rounding (whole units). A study in EPSG:4326 (degrees) is
   refused: exit 2, one "error:" line, no run folder.
2. The ore-body demo (no CRS): the units are "map units"; the tonnage
   column of the grade-tonnage table equals numpy's count of blocks.csv
   estimates at or above each cut-off times the block volume and density
   (rounded to whole tonnes); the caption's direction at each cut-off
   (more, less, about the same within 2%) is the one the table's kriged and
   sample tonnages show; the model table has every anisotropy parameter
   (azimuth, ratio, dip, plunge, ratio2).
Usage: report_contents.py PATH/TO/sillstone
"""
import csv
import html
import math
import os
import re
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal, osr

gdal.UseExceptions()
ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
failures = []


def check(ok, what):
    print(("ok    " if ok else "FAIL  ") + what)
    if not ok:
        failures.append(what)


def text_of(fragment):
    return html.unescape(re.sub(r"<[^>]+>", " ", fragment))


def write_study(folder, epsg, x0, y0):
    os.makedirs(folder)
    with open(os.path.join(folder, "samples.csv"), "w") as f:
        f.write("x,y,v\n")
        for i in range(80):  # a smooth trend plus a deterministic wobble
            x, y = (i * 37) % 1000, (i * 53) % 1000
            v = 10 + x / 100 + 3 * math.sin(i * 1.7)
            f.write(f"{x0 + x},{y0 + y},{v:.4f}\n")
    with open(os.path.join(folder, "study.toml"), "w") as f:
        f.write(f'[samples]\npath = "samples.csv"\nx = "x"\ny = "y"\nvalue = "v"\n'
                f'crs = "EPSG:{epsg}"\n\n[variogram]\nlag = 100\nlags = 8\n\n'
                '[model]\nspec = "0.5 nugget + 4 spherical(range=600)"\n\n[crossval]\nfolds = 5\n\n'
                '[grid]\ncell = 50\n\n[kriging]\nthreshold = 15\n')


def check_units(exe, tmp, epsg, x0, y0):
    folder = os.path.join(tmp, f"epsg{epsg}")
    write_study(folder, epsg, x0, y0)
    out = os.path.join(folder, "run")
    p = subprocess.run([exe, "run", os.path.join(folder, "study.toml"), "-o", out, "--quiet"],
                       capture_output=True, text=True)
    srs = osr.SpatialReference()
    srs.ImportFromEPSG(epsg)
    if srs.IsGeographic():
        lines = p.stderr.strip().splitlines()
        check(p.returncode == 2 and len(lines) == 1 and lines[0].startswith("error:"),
              f"EPSG:{epsg} (geographic) is refused with one error line: {lines}")
        check(not os.path.exists(out), f"EPSG:{epsg}: no run folder is left")
        return
    check(p.returncode == 0, f"EPSG:{epsg}: run exits 0 {p.stderr[:300] if p.returncode else ''}")
    if p.returncode:
        return
    report = open(os.path.join(out, "report.html"), encoding="utf-8").read()
    unit = srs.GetLinearUnitsName()
    m = re.search(r"distances and areas in <b>([^<]*)</b>", report)
    check(m is not None and m.group(1) == unit,
          f"EPSG:{epsg}: the report's unit {m.group(1) if m else None!r} is osr's {unit!r}")
    ds = gdal.Open(os.path.join(out, "estimate.tif"))
    band = ds.GetRasterBand(3)
    prob = band.ReadAsArray()
    valid = prob != band.GetNoDataValue()
    gt = ds.GetGeoTransform()
    area = int(np.count_nonzero(valid & (prob > 0.5))) * abs(gt[1] * gt[5])
    keys = re.findall(r'<div class="key"><b>([^<]*)</b><span>([^<]*exceeds 0.5)</span>', report)
    check(len(keys) == 1, f"EPSG:{epsg}: one key area for P > 0.5")
    if not keys:
        return
    numbers = [float(x) for x in re.findall(r"[\d.]+(?=\s*(?:m²|ft²|US ft²|ha))", keys[0][0])]
    check(abs(numbers[0] - area) <= 0.5,
          f"EPSG:{epsg}: area {numbers[0]} in the CRS's units is {area} from estimate.tif")
    if unit != "metre":
        metres = area * srs.GetLinearUnits() ** 2
        check(abs(numbers[1] - metres) <= 0.5,
              f"EPSG:{epsg}: area {numbers[1]} m² is {metres:.1f} through osr's unit length")


def check_ore_body(exe, tmp):
    out = os.path.join(tmp, "ore")
    study = os.path.join(ROOT, "demo-sites", "ore-body", "study.toml")
    subprocess.run([exe, "run", study, "-o", out, "--quiet"], check=True, capture_output=True)
    report = open(os.path.join(out, "report.html"), encoding="utf-8").read()
    m = re.search(r"distances and areas in <b>([^<]*)</b>", report)
    check(m is not None and m.group(1) == "map units", "ore body (no CRS): 'map units'")
    model = report[report.index('<h2 id="model"'):]
    head = text_of(model[:model.index("</thead>")])
    check(all(c in head.split() for c in ("azimuth", "ratio", "dip", "plunge", "ratio2")),
          f"the model table shows every anisotropy parameter: {head.split()}")
    section = report[report.index('<h2 id="maps">Block model'):]
    table = section[section.index("<table"):section.index("</table>")]
    rows = [[text_of(c).strip() for c in re.findall(r"<td>(.*?)</td>", r)]
            for r in re.findall(r"<tr>(.*?)</tr>", table)]
    rows = [r for r in rows if r]
    est = [float(r["estimate"]) for r in csv.DictReader(open(os.path.join(out, "blocks.csv")))
           if r["estimate"] != ""]
    est = np.array(est)
    volume, density = 10 * 10 * 5, 2.78  # the demo's [grid] cell and [report] density
    for r in rows:
        cut, tonnage = float(r[0]), float(r[2])
        expected = round(np.count_nonzero(est >= cut) * volume * density)
        check(abs(tonnage - expected) <= 1, f"cut-off {cut}: tonnage {tonnage} is numpy's {expected}")
    caption = text_of(re.search(r"<figcaption>([^<]*Compared with the samples[^<]*)</figcaption>",
                                section).group(1))
    said = {}
    for kind, a, b in re.findall(r"(more|less|about the same) tonnage(?: \(within 2%\))? at "
                                 r"cut-offs? ([\d.]+)(?: to ([\d.]+))?", caption):
        for r in rows:
            c = float(r[0])
            if float(a) <= c <= float(b or a):
                said[c] = kind
    for r in rows:
        kriged, samples = float(r[2]), float(r[4])
        shown = ("about the same" if abs(kriged - samples) <= 0.02 * max(kriged, samples)
                 else "more" if kriged > samples else "less")
        check(said.get(float(r[0])) == shown,
              f"cut-off {r[0]}: caption says {said.get(float(r[0]))!r}, the table shows {shown!r} "
              f"({kriged:.0f} t against {samples:.0f} t)")


def main():
    exe = sys.argv[1]
    with tempfile.TemporaryDirectory() as tmp:
        check_units(exe, tmp, 2227, 6000000, 2000000)
        check_units(exe, tmp, 32633, 500000, 5000000)
        check_units(exe, tmp, 4326, 10, 45)
        check_ore_body(exe, tmp)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
