#!/usr/bin/env python3
"""Deterministic generator for the sillstone "groundwater" demo data set.

The data are SYNTHETIC. The aquifer, the river, the towns, the water board
and every value are invented; the coordinates are real UTM numbers but the
ground and the water levels they carry describe no real place.

Scenario: a spring round of water-level readings in the monitoring wells of
the Marrach Plain, an invented unconfined sand-and-gravel aquifer that drains
south-south-east towards the invented River Sellen. Coordinates are
WGS 84 / UTM zone 33N metres (EPSG:32633); heights are metres above the
(invented) national levelling datum.

Usage:
    python3 demo-sites/groundwater/generate.py [OUTPUT_DIR] [--seed N]

Without OUTPUT_DIR the files are (re)written next to this script. Files
written: samples.csv (the wells), elevation.asc (ground elevation, ESRI
ASCII grid) and elevation.prj (its CRS as ESRI WKT, read by GDAL beside the
.asc). OUTPUT_DIR is created when missing. For the older single-file calling
convention, an argument ending in ".csv" names the samples file itself, and
the other files are written beside it.

Running it twice with the same seed gives byte-identical files: only the
standard library is used, the only source of randomness is
random.Random(seed).random() (Mersenne Twister, stable across Python 3
versions for an integer seed), and normal deviates come from an explicit
Box-Muller transform instead of random.gauss()/normalvariate(). Those
deviates and the spectral fields come from demo-sites/demo_random.py,
shared by the demo-site generators.

How the values are built
------------------------
Let t(p) be the distance (km) of p from the centre of the well area,
measured along azimuth GRADIENT_AZ (157.5, towards the river: heads and
ground both fall that way).

Ground elevation (the raster, at each cell centre):
    ground = GROUND_CENTRE - GROUND_SLOPE * t           linear regional slope
           + GROUND_HILLS_SD * H(p)                     terraces and low hills
           + GROUND_ROUGH_SD * Q(p)                     small-scale relief
rounded to 0.01 m. A well's ground_m is the value of the raster cell that
contains it.

Hydraulic head at a well:
    head = HEAD_CENTRE - HEAD_SLOPE * t                 regional gradient
         + BETA * (ground_m - ground trend at the well) subdued copy of relief
         + RESIDUAL_SD * R(p)                           correlated residual
         + NOISE_SD * N(0, 1)                           measurement and well noise
rounded to 0.01 m. Both trends are linear in (easting, northing), so head is
exactly "linear drift + BETA x ground + stationary residual": universal
kriging with a linear drift fits the first part, and kriging with the
elevation raster as an external drift (plus a linear drift) fits it all.

H, Q and R are independent unit-variance stationary Gaussian fields made
with the spectral (random cosine) method, f(p) = sqrt(2/N) sum cos(k.p + phi),
with wavevectors drawn from the spectral density of a Matern covariance with
smoothness 1 (a bivariate Student-t with 2 degrees of freedom:
k = z / (theta sqrt(w)), z ~ N(0, I2), w ~ chi-square(2)). The scale theta
is the practical range divided by 3.99852 (the Matern nu = 1 distance at
which the correlation is 0.05). No linear algebra is needed.
"""

import math
import os
import sys

# The seeded deviates, the spectral fields and the writing of the files are
# shared by the demo-site generators: demo-sites/demo_random.py and
# demo_files.py, one folder up.
sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
import demo_files
from demo_random import Rng, matern1_field_2d

DEFAULT_SEED = 20250407

# ----------------------------------------------------------------- layout
# Wells lie in this box (EPSG:32633 metres); the raster adds RASTER_MARGIN.
WELL_X_MIN, WELL_X_MAX = 486000.0, 494000.0
WELL_Y_MIN, WELL_Y_MAX = 5423000.0, 5429000.0
CENTRE_X = 0.5 * (WELL_X_MIN + WELL_X_MAX)
CENTRE_Y = 0.5 * (WELL_Y_MIN + WELL_Y_MAX)

RASTER_MARGIN = 1000.0
CELL = 100.0
XLL = WELL_X_MIN - RASTER_MARGIN
YLL = WELL_Y_MIN - RASTER_MARGIN
NCOLS = int(round((WELL_X_MAX - WELL_X_MIN + 2 * RASTER_MARGIN) / CELL))
NROWS = int(round((WELL_Y_MAX - WELL_Y_MIN + 2 * RASTER_MARGIN) / CELL))
NODATA = -9999

# Monitoring network: a scatter with a minimum spacing, plus a tighter
# cluster of observation wells around the (invented) Sellenford waterworks.
N_NETWORK = 46
NETWORK_MIN_SPACING = 600.0      # m
WELL_INSET = 150.0               # wells stay this far inside the well box
WATERWORKS = (490900.0, 5426300.0)
N_WATERWORKS = 6
WATERWORKS_SD = 220.0            # m, spread of the cluster
WATERWORKS_MIN_SPACING = 120.0   # m

# ------------------------------------------------------------ the surfaces
GRADIENT_AZ = 157.5              # degrees clockwise from north, downhill
GROUND_CENTRE = 236.0            # m, ground trend at the centre of the box
GROUND_SLOPE = 2.5               # m per km along GRADIENT_AZ
GROUND_HILLS_SD = 3.0            # m
GROUND_HILLS_RANGE = 2500.0      # m, practical range of H
GROUND_ROUGH_SD = 0.8            # m
GROUND_ROUGH_RANGE = 500.0       # m, practical range of Q

HEAD_CENTRE = 226.5              # m, head trend at the centre of the box
HEAD_SLOPE = 1.5                 # m per km along GRADIENT_AZ
BETA = 0.3                       # head follows 30 % of the relief
RESIDUAL_SD = 0.45               # m
RESIDUAL_RANGE = 2000.0          # m, practical range of R
NOISE_SD = 0.06                  # m

N_WAVES = 300
MATERN1_T95 = 3.99852            # Matern nu = 1: correlation 0.05 at 3.99852 theta

# Synoptic round: wells visited in route order over four days.
ROUND_DAYS = ["2025-04-07", "2025-04-08", "2025-04-09", "2025-04-10"]
WELL_PREFIX = "MP"

SAMPLES_HEADER = "well_id,easting,northing,ground_m,head_m,measured_on"
FILES = ("samples.csv", "elevation.asc", "elevation.prj")

# WGS 84 / UTM zone 33N (EPSG:32633) in the ESRI flavour of WKT 1, the form
# GDAL expects in a .prj beside an ESRI ASCII grid.
PRJ_WKT = (
    'PROJCS["WGS_1984_UTM_Zone_33N",GEOGCS["GCS_WGS_1984",'
    'DATUM["D_WGS_1984",SPHEROID["WGS_1984",6378137.0,298.257223563]],'
    'PRIMEM["Greenwich",0.0],UNIT["Degree",0.0174532925199433]],'
    'PROJECTION["Transverse_Mercator"],PARAMETER["False_Easting",500000.0],'
    'PARAMETER["False_Northing",0.0],PARAMETER["Central_Meridian",15.0],'
    'PARAMETER["Scale_Factor",0.9996],PARAMETER["Latitude_Of_Origin",0.0],'
    'UNIT["Meter",1.0]]')


# ------------------------------------------------------------- random fields
def matern1_field(rng, practical_range):
    """Unit-variance 2D field, Matern (smoothness 1) covariance, given
    practical range (correlation 0.05). Evaluated in km from the box centre
    so that the cosine arguments stay small."""
    theta_km = practical_range / MATERN1_T95 / 1000.0
    return matern1_field_2d(rng, N_WAVES, theta_km, (CENTRE_X, CENTRE_Y),
                            unit=1000.0)


# ------------------------------------------------------------------ trends
def along_gradient_km(x, y):
    """Distance (km) from the box centre along GRADIENT_AZ."""
    a = math.radians(GRADIENT_AZ)
    return ((x - CENTRE_X) * math.sin(a) + (y - CENTRE_Y) * math.cos(a)) / 1000.0


def ground_trend(x, y):
    return GROUND_CENTRE - GROUND_SLOPE * along_gradient_km(x, y)


def head_trend(x, y):
    return HEAD_CENTRE - HEAD_SLOPE * along_gradient_km(x, y)


# ------------------------------------------------------------------ raster
def make_raster(hills, rough):
    """Ground elevation at every cell centre, rows north to south."""
    rows = []
    for r in range(NROWS):
        y = YLL + (NROWS - r - 0.5) * CELL
        row = []
        for c in range(NCOLS):
            x = XLL + (c + 0.5) * CELL
            z = (ground_trend(x, y) + GROUND_HILLS_SD * hills(x, y)
                 + GROUND_ROUGH_SD * rough(x, y))
            row.append(round(z, 2))
        rows.append(row)
    return rows


def raster_text(rows):
    lines = ["ncols %d" % NCOLS, "nrows %d" % NROWS,
             "xllcorner %.1f" % XLL, "yllcorner %.1f" % YLL,
             "cellsize %.1f" % CELL, "NODATA_value %d" % NODATA]
    for row in rows:
        lines.append(" ".join("%.2f" % v for v in row))
    return "\n".join(lines) + "\n"


def cell_value(rows, x, y):
    """Value of the raster cell containing (x, y)."""
    c = int(math.floor((x - XLL) / CELL))
    r = int(math.floor((YLL + NROWS * CELL - y) / CELL))
    return rows[r][c]


# ------------------------------------------------------------------- wells
def well_locations(rng):
    """Network wells (minimum spacing), then the waterworks cluster."""
    pts = []
    x0, x1 = WELL_X_MIN + WELL_INSET, WELL_X_MAX - WELL_INSET
    y0, y1 = WELL_Y_MIN + WELL_INSET, WELL_Y_MAX - WELL_INSET
    tries = 0
    while len(pts) < N_NETWORK and tries < 100000:
        tries += 1
        x, y = rng.uniform(x0, x1), rng.uniform(y0, y1)
        if all((px - x) ** 2 + (py - y) ** 2 >= NETWORK_MIN_SPACING ** 2
               for px, py in pts):
            pts.append((x, y))
    cluster = []
    tries = 0
    while len(cluster) < N_WATERWORKS and tries < 100000:
        tries += 1
        x = WATERWORKS[0] + WATERWORKS_SD * rng.normal()
        y = WATERWORKS[1] + WATERWORKS_SD * rng.normal()
        if all((px - x) ** 2 + (py - y) ** 2 >= WATERWORKS_MIN_SPACING ** 2
               for px, py in pts + cluster):
            cluster.append((x, y))
    return pts + cluster


def route_order(pts):
    """Visiting order of the synoptic round: west to east in north-south
    strips 2 km wide, alternately walked north and south."""
    def key(p):
        strip = int((p[0] - WELL_X_MIN) // 2000.0)
        return (strip, p[1] if strip % 2 == 0 else -p[1])
    return sorted(pts, key=key)


# --------------------------------------------------------------------- main
def generate(seed):
    rng = Rng(seed)
    hills = matern1_field(rng, GROUND_HILLS_RANGE)
    rough = matern1_field(rng, GROUND_ROUGH_RANGE)
    residual = matern1_field(rng, RESIDUAL_RANGE)
    raster = make_raster(hills, rough)

    wells = route_order(well_locations(rng))
    per_day = -(-len(wells) // len(ROUND_DAYS))
    lines = [SAMPLES_HEADER]
    for n, (x, y) in enumerate(wells):
        x, y = round(x, 1), round(y, 1)
        ground = cell_value(raster, x, y)
        head = (head_trend(x, y) + BETA * (ground - ground_trend(x, y))
                + RESIDUAL_SD * residual(x, y) + NOISE_SD * rng.normal())
        lines.append(",".join([
            "%s-%03d" % (WELL_PREFIX, n + 1), "%.1f" % x, "%.1f" % y,
            "%.2f" % ground, "%.2f" % head, ROUND_DAYS[n // per_day]]))

    return {"samples.csv": "\n".join(lines) + "\n",
            "elevation.asc": raster_text(raster),
            "elevation.prj": PRJ_WKT + "\n"}


def main(argv=None):
    return demo_files.run(
        argv, os.path.dirname(os.path.abspath(__file__)),
        "Write the synthetic groundwater demo data (samples.csv, "
                "elevation.asc, elevation.prj).",
        FILES, DEFAULT_SEED, generate)


if __name__ == "__main__":
    sys.exit(main())
