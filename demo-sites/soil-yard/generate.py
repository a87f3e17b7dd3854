#!/usr/bin/env python3
"""Deterministic generator for the sillstone "soil-yard" demo data set.

The data are SYNTHETIC. The site, the company and every value are invented.

Scenario: topsoil (0-15 cm) samples from the former Kestrel Yard metal-finishing
and small-foundry works (invented) in the invented town of Wenlow Cross.
Coordinates are UTM zone 30N metres (EPSG:32630).

Usage:
    python3 demo-sites/soil-yard/generate.py [OUTPUT.csv] [--seed N]

Without OUTPUT the file samples.csv next to this script is (re)written.
Running it twice with the same seed gives byte-identical output: only the
standard library is used, the only source of randomness is
random.Random(seed).random() (Mersenne Twister, stable across Python 3
versions for an integer seed), and normal deviates come from an explicit
Box-Muller transform instead of random.gauss()/normalvariate(). Those
deviates and the spectral fields below come from demo-sites/demo_random.py,
shared by the demo-site generators.

How the values are built (per metal m, at location p, in natural-log units):

    ln(value) = ln(median_m)
              + shared_weight_m   * S(p)      common source field (unit variance)
              + specific_weight_m * E_m(p)    metal-specific field (unit variance)
              + sum over hot spots of amp[h][m] * gaussian_bump_h(p)
              - clean_fill_drop_m * clean_fill_weight(p)
              + nugget_m * N(0, 1)            independent short-scale/lab noise

S and E_m are smooth stationary Gaussian random fields made with the spectral
(random cosine) method: f(p) = sqrt(2/N) * sum_i cos(k_i . p + phi_i), with
phi_i uniform on [0, 2 pi) and wavevectors k_i drawn from the spectral density
of a Matern covariance with smoothness 1 (a bivariate Student-t with 2 degrees
of freedom: k = z / (L * sqrt(w)), z ~ N(0, I2), w ~ chi-square(2)).  With
L = 60 m the correlation is about 0.37 at 100 m and about 0.05 at 240 m.
No linear algebra is needed.
"""

import argparse
import math
import os
import sys

# The seeded deviates and the spectral fields are shared by all the demo-site
# generators: demo-sites/demo_random.py, one folder up.
sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
from demo_random import Rng, matern1_field_2d

DEFAULT_SEED = 20250310

# ---------------------------------------------------------------- site layout
# Site bounding box (EPSG:32630 metres).
X_MIN, X_MAX = 431000.0, 432200.0
Y_MIN, Y_MAX = 5712000.0, 5712900.0
# Local origin: the fields are evaluated in site-local metres so that the
# cosine arguments stay small and well conditioned.
X0, Y0 = X_MIN, Y_MIN

GRID_SPACING = 68.0        # nominal phase-1 grid spacing, metres
GRID_MARGIN = 20.0         # grid nodes stay at least this far inside the box
GRID_JITTER = 11.0         # uniform +/- jitter of each grid node, metres

# Standing warehouse on a concrete slab: not sampled (grid nodes dropped).
WAREHOUSE = (431690.0, 431830.0, 5712470.0, 5712600.0)  # xmin, xmax, ymin, ymax

MIN_SEPARATION = 7.0       # infill points keep at least this far from others

METALS = ("lead", "zinc", "copper")

# Background medians (mg/kg) and detection limits (mg/kg) - invented.
MEDIAN = {"lead": 50.0, "zinc": 110.0, "copper": 28.0}
DETECTION_LIMIT = {"lead": 5, "zinc": 10, "copper": 2}

SHARED_WEIGHT = {"lead": 0.55, "zinc": 0.50, "copper": 0.45}
SPECIFIC_WEIGHT = {"lead": 0.30, "zinc": 0.30, "copper": 0.35}
NUGGET = {"lead": 0.20, "zinc": 0.18, "copper": 0.22}

N_WAVES = 200
MATERN_SCALE_L = 60.0      # metres

# Hot spots: centre, along-axis sd, across-axis sd, axis angle (degrees
# anticlockwise from east), amplitude in ln units per metal, number of
# phase-2 infill samples, and the spread of those infill samples.
HOT_SPOTS = [
    {
        "name": "former plating shed",
        "x": 431360.0, "y": 5712650.0,
        "sd_major": 55.0, "sd_minor": 45.0, "angle": 0.0,
        "amp": {"lead": 1.8, "zinc": 3.0, "copper": 3.8},
        "n_infill": 32, "infill_sd_major": 45.0, "infill_sd_minor": 40.0,
    },
    {
        "name": "slag heap",
        "x": 431890.0, "y": 5712320.0,
        "sd_major": 75.0, "sd_minor": 50.0, "angle": 30.0,
        "amp": {"lead": 4.8, "zinc": 3.1, "copper": 1.6},
        "n_infill": 30, "infill_sd_major": 55.0, "infill_sd_minor": 40.0,
    },
    {
        "name": "drainage outfall",
        "x": 431600.0, "y": 5712070.0,
        "sd_major": 95.0, "sd_minor": 30.0, "angle": 8.0,
        "amp": {"lead": 2.4, "zinc": 2.3, "copper": 2.0},
        "n_infill": 26, "infill_sd_major": 80.0, "infill_sd_minor": 28.0,
    },
]

# North-east buffer strip landscaped with imported clean topsoil (invented):
# values are lowered there, which produces most of the non-detects.
CLEAN_FILL_X = 431850.0    # zone is x > CLEAN_FILL_X and y > CLEAN_FILL_Y
CLEAN_FILL_Y = 5712610.0
CLEAN_FILL_EDGE = 15.0     # width (m) of the smooth logistic transition
CLEAN_FILL_DROP = {"lead": 3.7, "zinc": 3.5, "copper": 4.0}   # ln units

# Field-duplicate QA pairs (index into the phase-1 grid samples) and NA rows.
N_DUPLICATES = 3
DUPLICATE_SD = 0.08        # ln-unit difference between original and duplicate
N_MISSING_LEAD = 4

PHASE1_DAYS = ["2025-03-10", "2025-03-11", "2025-03-12", "2025-03-13",
               "2025-03-14", "2025-03-17", "2025-03-18", "2025-03-19",
               "2025-03-20", "2025-03-21"]
PHASE2_DAYS = ["2025-05-12", "2025-05-13", "2025-05-14", "2025-05-15"]

HEADER = ("sample_id,easting,northing,depth_cm,lead_mg_kg,zinc_mg_kg,"
          "copper_mg_kg,sampled_on")


# ------------------------------------------------------- sources and fill
def bump(spot, x, y):
    """Anisotropic Gaussian bump, 1 at the hot-spot centre."""
    a = math.radians(spot["angle"])
    dx, dy = x - spot["x"], y - spot["y"]
    u = dx * math.cos(a) + dy * math.sin(a)
    v = -dx * math.sin(a) + dy * math.cos(a)
    q = (u / spot["sd_major"]) ** 2 + (v / spot["sd_minor"]) ** 2
    return math.exp(-0.5 * q)


def clean_fill_weight(x, y):
    """About 1 inside the NE clean-fill strip, about 0 outside."""
    def logistic(t):
        if t < -50.0:
            return 0.0
        if t > 50.0:
            return 1.0
        return 1.0 / (1.0 + math.exp(-t))
    return (logistic((x - CLEAN_FILL_X) / CLEAN_FILL_EDGE)
            * logistic((y - CLEAN_FILL_Y) / CLEAN_FILL_EDGE))


# ------------------------------------------------------------------ locations
def inside_site(x, y):
    return X_MIN + 2.0 <= x <= X_MAX - 2.0 and Y_MIN + 2.0 <= y <= Y_MAX - 2.0


def in_warehouse(x, y):
    x0, x1, y0, y1 = WAREHOUSE
    return x0 <= x <= x1 and y0 <= y <= y1


def grid_locations(rng):
    """Phase 1: jittered grid walked row by row in a serpentine order."""
    pts = []
    nx = int((X_MAX - X_MIN - 2.0 * GRID_MARGIN) // GRID_SPACING) + 1
    ny = int((Y_MAX - Y_MIN - 2.0 * GRID_MARGIN) // GRID_SPACING) + 1
    # centre the grid in the box
    first_x = X_MIN + 0.5 * (X_MAX - X_MIN - (nx - 1) * GRID_SPACING)
    first_y = Y_MIN + 0.5 * (Y_MAX - Y_MIN - (ny - 1) * GRID_SPACING)
    for j in range(ny):
        cols = range(nx) if j % 2 == 0 else range(nx - 1, -1, -1)
        for i in cols:
            gx = first_x + i * GRID_SPACING
            gy = first_y + j * GRID_SPACING
            x = gx + rng.uniform(-GRID_JITTER, GRID_JITTER)
            y = gy + rng.uniform(-GRID_JITTER, GRID_JITTER)
            if not inside_site(x, y) or in_warehouse(x, y):
                continue
            pts.append((x, y))
    return pts


def infill_locations(rng, existing):
    """Phase 2: extra samples clustered around each hot spot."""
    pts = []
    for spot in HOT_SPOTS:
        a = math.radians(spot["angle"])
        placed = 0
        tries = 0
        while placed < spot["n_infill"] and tries < 10000:
            tries += 1
            u = rng.normal() * spot["infill_sd_major"]
            v = rng.normal() * spot["infill_sd_minor"]
            x = spot["x"] + u * math.cos(a) - v * math.sin(a)
            y = spot["y"] + u * math.sin(a) + v * math.cos(a)
            if not inside_site(x, y) or in_warehouse(x, y):
                continue
            ok = True
            for (px, py) in existing + pts:
                if (px - x) ** 2 + (py - y) ** 2 < MIN_SEPARATION ** 2:
                    ok = False
                    break
            if ok:
                pts.append((x, y))
                placed += 1
    return pts


# --------------------------------------------------------------- formatting
def fmt_value(v):
    """Laboratory style: one decimal below 100 mg/kg, whole numbers above."""
    if v < 100.0:
        return "%.1f" % v
    return "%.0f" % v


def fmt_nondetect(metal, rng):
    dl = DETECTION_LIMIT[metal]
    return ("<%d" if rng.uniform() < 0.5 else "< %d") % dl


def fmt_metal(metal, v, rng):
    if v < DETECTION_LIMIT[metal]:
        return fmt_nondetect(metal, rng)
    return fmt_value(v)


# --------------------------------------------------------------------- main
def generate(seed):
    rng = Rng(seed)

    # Fields in site-local metres: scale MATERN_SCALE_L, origin (X0, Y0).
    shared = matern1_field_2d(rng, N_WAVES, MATERN_SCALE_L, (X0, Y0))
    specific = {m: matern1_field_2d(rng, N_WAVES, MATERN_SCALE_L, (X0, Y0))
                for m in METALS}

    grid = grid_locations(rng)
    infill = infill_locations(rng, grid)

    def log_values(x, y):
        s = shared(x, y)
        cf = clean_fill_weight(x, y)
        out = {}
        for m in METALS:
            v = math.log(MEDIAN[m])
            v += SHARED_WEIGHT[m] * s
            v += SPECIFIC_WEIGHT[m] * specific[m](x, y)
            for spot in HOT_SPOTS:
                v += spot["amp"][m] * bump(spot, x, y)
            v -= CLEAN_FILL_DROP[m] * cf
            v += NUGGET[m] * rng.normal()
            out[m] = v
        return out

    records = []   # dicts: x, y, logs, date, kind
    per_day1 = -(-len(grid) // len(PHASE1_DAYS))
    for n, (x, y) in enumerate(grid):
        records.append({"x": x, "y": y, "logs": log_values(x, y),
                        "date": PHASE1_DAYS[n // per_day1], "kind": "grid"})
    per_day2 = -(-len(infill) // len(PHASE2_DAYS))
    for n, (x, y) in enumerate(infill):
        records.append({"x": x, "y": y, "logs": log_values(x, y),
                        "date": PHASE2_DAYS[n // per_day2], "kind": "infill"})

    def all_detected(rec):
        return all(math.exp(rec["logs"][m]) >= 2.0 * DETECTION_LIMIT[m]
                   for m in METALS)

    # Field duplicates: three phase-1 samples, spread over the walk, whose
    # values are all comfortably above the detection limits.
    dup_indices = []
    for k in range(N_DUPLICATES):
        start = int(len(grid) * (k + 0.5) / N_DUPLICATES)
        i = start
        while not all_detected(records[i]) or i in dup_indices:
            i += 1
        dup_indices.append(i)

    # Rows with a missing lead result (blank or "NA"): other phase-1
    # samples, detected, and not part of a duplicate pair.
    missing = {}
    styles = ["", "NA", "", "NA"]
    while len(missing) < N_MISSING_LEAD:
        i = rng.index(len(grid))
        if i in missing or i in dup_indices or not all_detected(records[i]):
            continue
        missing[i] = styles[len(missing)]

    rows = []
    for n, rec in enumerate(records):
        rows.append((rec, None, missing.get(n)))
        if n in dup_indices:
            dup_logs = {m: rec["logs"][m] + DUPLICATE_SD * rng.normal()
                        for m in METALS}
            rows.append((rec, dup_logs, None))

    lines = [HEADER]
    for seq, (rec, dup_logs, lead_missing) in enumerate(rows, start=1):
        logs = dup_logs if dup_logs is not None else rec["logs"]
        fields = ["KY-%04d" % seq, "%.2f" % rec["x"], "%.2f" % rec["y"], "0-15"]
        for m in METALS:
            if m == "lead" and lead_missing is not None:
                fields.append(lead_missing)
            else:
                fields.append(fmt_metal(m, math.exp(logs[m]), rng))
        fields.append(rec["date"])
        lines.append(",".join(fields))
    return "\n".join(lines) + "\n"


def main(argv=None):
    here = os.path.dirname(os.path.abspath(__file__))
    parser = argparse.ArgumentParser(
        description="Write the synthetic soil-yard demo samples as CSV.")
    parser.add_argument("output", nargs="?",
                        default=os.path.join(here, "samples.csv"),
                        help="output CSV path (default: samples.csv next to "
                             "this script)")
    parser.add_argument("--seed", type=int, default=DEFAULT_SEED,
                        help="random seed (default: %(default)s, the seed of "
                             "the committed samples.csv)")
    args = parser.parse_args(argv)

    text = generate(args.seed)
    with open(args.output, "w", encoding="ascii", newline="\n") as fh:
        fh.write(text)
    n_rows = text.count("\n") - 1
    sys.stderr.write("wrote %d data rows to %s\n" % (n_rows, args.output))
    return 0


if __name__ == "__main__":
    sys.exit(main())
