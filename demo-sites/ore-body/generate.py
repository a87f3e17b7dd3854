#!/usr/bin/env python3
"""Deterministic generator for the sillstone "ore-body" demo data set.

The data are SYNTHETIC. The deposit, the company and every value are invented.

Scenario: the Greyhallow gold prospect of the invented explorer Corvane
Minerals. A gently dipping, lens-shaped gold lode (the "Kettle Lode") was
drilled with 36 inclined diamond holes from collars on a rough 50 m x 50 m
grid laid out along and across strike, plus 4 infill holes 25 m from their
neighbours near the centre. Core was sampled in 1 m lengths from 30-45 m
above the logged hanging wall of the lode to the end of each hole, and the
1 m assays were composited to about 2 m within the geological domains (lode
or waste). Coordinates are in the invented Greyhallow local mine grid
(metres; x = mine grid east, y = mine grid north, z = elevation as a reduced
level, RL). There is no CRS.

Usage:
    python3 demo-sites/ore-body/generate.py [OUTPUT_DIR] [--seed N]

Without OUTPUT_DIR the files are (re)written next to this script. Files
written: samples.csv (the composites), collars.csv (the drill holes) and
lode_blocks.csv (the share of each 10 x 10 x 5 m block inside the lode and
the block's true lode grade). OUTPUT_DIR is created when missing. For the
older single-file calling convention, an argument ending in ".csv" names the
samples file itself, and the other files are written beside it.

Running it twice with the same seed gives byte-identical files: only the
standard library is used, the only source of randomness is
random.Random(seed).random() (Mersenne Twister, stable across Python 3
versions for an integer seed), and normal deviates come from an explicit
Box-Muller transform instead of random.gauss()/normalvariate(). Those
deviates and the spectral field F come from demo-sites/demo_random.py,
shared by the demo-site generators.

How the values are built
------------------------
Lode geometry. In a frame centred on the lens centre C with u along strike
(azimuth 35) and v across strike (horizontal, azimuth 125, the dip
direction), the centre surface of the lode is
    zc(u, v) = LENS_RL - tan(10 deg) * v + a gentle fixed undulation
and the vertical thickness is
    t(u, v) = LENS_THICKNESS * sqrt(1 - (u/LENS_HALF_U)^2 - (v/LENS_HALF_V)^2)
(a lens, thickest in the middle, pinching out at the ellipse). A point is in
the lode when |z - zc| <= t/2.

Grades. Each 1 m assay interval gets, at its midpoint p,
    ln(au) = ln(median_domain) + field_sd_domain * F(p) + nugget_sd_domain * N(0,1)
F is ONE unit-variance stationary random field shared by both domains. It
has an exponential covariance exp(-r), where r is the anisotropic reduced
distance with practical ranges (3 x the scale) of 120 m along strike
(azimuth 35, horizontal), 60 m down the dip of the lens (azimuth 125,
dipping 10 deg) and 20 m across the lens (10 deg from vertical). In the
notation of sillstone's models that is
    exponential(range=120, azimuth=35, ratio=0.5, plunge=10, ratio2=0.1667)
F is made with the spectral (random cosine) method:
    F(p) = sqrt(2/N) * sum_i cos(k_i . s(p) + phi_i)
with s(p) the point rotated into the anisotropy axes and divided by the
scales, phi_i uniform on [0, 2 pi), and k_i = z_i / |n_i| with z_i ~ N(0, I3)
and n_i ~ N(0, 1): the 3D spectral density of exp(-r) is a multivariate
Student-t with 1 degree of freedom. No linear algebra is needed.
Assays below the 0.01 g/t detection limit are set to half the limit (0.005)
before compositing; a composite's grade is the length-weighted mean of its
assays, so compositing averages away part of the 1 m nugget.

Holes are straight (no down-hole deviation), so collars.csv alone fixes each
trace: a composite centre is collar + d * (sin az cos dip, cos az cos dip,
sin dip) with d the mid-depth of the composite and dip negative downwards.

Density. Lode 2.78 t/m3 and waste 2.70 t/m3, each with a small independent
scatter (sd 0.04 and 0.03), rounded to 0.01.
"""

import math
import os
import sys

# The seeded deviates, the spectral fields and the writing of the files are
# shared by the demo-site generators: demo-sites/demo_random.py and
# demo_files.py, one folder up.
sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
import demo_files
from demo_random import Rng, exponential_field_3d

DEFAULT_SEED = 20250607

# ----------------------------------------------------------- lode geometry
LENS_X, LENS_Y = 5150.0, 10250.0   # lens centre, mine grid metres
STRIKE_AZ = 35.0                   # degrees clockwise from mine grid north
DIP = 10.0                         # dip of the lens towards azimuth STRIKE_AZ + 90
LENS_RL = 250.0                    # RL of the centre surface at the lens centre
LENS_HALF_U = 200.0                # half-length along strike, m
LENS_HALF_V = 125.0                # half-width across strike (horizontal), m
LENS_THICKNESS = 48.0              # vertical thickness at the centre, m
UNDULATION = 3.0                   # amplitude of the fixed undulation, m

# ------------------------------------------------------------ drill layout
SECTIONS_U = [-175.0, -125.0, -75.0, -25.0, 25.0, 75.0, 125.0, 175.0]
PIERCE_V = [-100.0, -50.0, 0.0, 50.0, 100.0]   # planned lode intercepts
SKIP = {(0, 0), (0, 4), (7, 0), (7, 4)}        # corner holes never drilled
# Infill holes drilled later at 25 m from their neighbours, near the centre,
# to test short-range continuity along and across strike.
INFILL = [(0.0, -25.0), (0.0, 25.0), (-25.0, 25.0), (25.0, -25.0)]
NOMINAL_DIP = 65.0           # degrees below horizontal, used to site collars
COLLAR_JITTER = 8.0          # +/- m, along and across strike
HOLE_AZ = STRIKE_AZ + 270.0  # 305: drilled towards the north-west, up-dip
HOLE_AZ_SPREAD = 8.0         # +/- degrees
DIP_RANGE = (-75.0, -55.0)   # degrees, negative = down
TAIL_RANGE = (20.0, 60.0)    # metres drilled past the planned footwall
LENGTH_RANGE = (150.0, 300.0)
HW_BUFFER = (30.0, 45.0)     # sampling starts this far above the logged
                             # hanging wall (or the planned intercept)
ASSAY_LENGTH = 1.0           # m
COMPOSITE_LENGTH = 2.0       # target composite length, m

# ------------------------------------------------------------------ grades
FIELD_RANGES = (120.0, 60.0, 20.0)   # practical ranges of F, m
N_WAVES = 500
GRADE = {
    # median of the 1 m assays (g/t), sd of the field term, sd of the nugget
    "LODE": {"median": 0.90, "field_sd": 0.85, "nugget_sd": 0.50},
    "WASTE": {"median": 0.032, "field_sd": 0.60, "nugget_sd": 0.50},
}
DETECTION_LIMIT = 0.01               # g/t, fire assay (invented laboratory)
DENSITY = {"LODE": (2.78, 0.04), "WASTE": (2.70, 0.03)}

# Block model frame for lode_blocks.csv: outer edges (xmin, ymin, zmin), block
# size and counts. Blocks whose centre lies on the same nodes as
# `sillstone krige --cell 10,10,5 --extent 4990,10070,5310,10430,205,295`.
BLOCK_ORIGIN = (4990.0, 10070.0, 205.0)
BLOCK_SIZE = (10.0, 10.0, 5.0)
BLOCK_COUNT = (32, 36, 18)
BLOCK_SUBDIVISION = 5        # 5 x 5 x 5 points per block for the lode fraction
TRUE_GRADE_POINTS = (3, 3, 2)  # points per block for the true lode grade

HOLE_PREFIX = "GHD"
SAMPLES_HEADER = "hole_id,from_m,to_m,x,y,z,domain,au_gpt,density_t_m3"
COLLARS_HEADER = "hole_id,x,y,z,azimuth,dip,length_m"
BLOCKS_HEADER = "x,y,z,lode_fraction,true_au_gpt"
FILES = ("samples.csv", "collars.csv", "lode_blocks.csv")


# ------------------------------------------------------------------ geometry
def unit(az_deg, dip_deg):
    """Unit vector (east, north, up) of a line of azimuth az, dip (+ = down)."""
    a, d = math.radians(az_deg), math.radians(dip_deg)
    return (math.sin(a) * math.cos(d), math.cos(a) * math.cos(d), -math.sin(d))


STRIKE = unit(STRIKE_AZ, 0.0)                 # u axis (horizontal)
ACROSS = unit(STRIKE_AZ + 90.0, 0.0)          # v axis (horizontal, dip direction)


def to_lens_frame(x, y):
    dx, dy = x - LENS_X, y - LENS_Y
    return (dx * STRIKE[0] + dy * STRIKE[1], dx * ACROSS[0] + dy * ACROSS[1])


def from_lens_frame(u, v):
    return (LENS_X + u * STRIKE[0] + v * ACROSS[0],
            LENS_Y + u * STRIKE[1] + v * ACROSS[1])


def centre_rl(u, v):
    """RL of the lode's centre surface."""
    return (LENS_RL - math.tan(math.radians(DIP)) * v
            + UNDULATION * math.cos(2.0 * math.pi * u / 260.0 + 0.7)
            * math.cos(2.0 * math.pi * v / 190.0 - 0.4))


def thickness(u, v):
    q = 1.0 - (u / LENS_HALF_U) ** 2 - (v / LENS_HALF_V) ** 2
    return LENS_THICKNESS * math.sqrt(q) if q > 0.0 else 0.0


def in_lode(x, y, z):
    """True when the point (mine grid metres, RL) lies inside the Kettle Lode."""
    u, v = to_lens_frame(x, y)
    t = thickness(u, v)
    return t > 0.0 and abs(z - centre_rl(u, v)) <= 0.5 * t


def topography(x, y):
    """RL of the ground surface (gentle hill, highest to the north-west)."""
    u, v = to_lens_frame(x, y)
    return (402.0 - 0.025 * v + 2.5 * math.cos(u / 95.0 + 1.1)
            + 1.5 * math.sin(v / 70.0 - 0.3))


# ------------------------------------------------------------- random field
def grade_field(rng):
    """Unit-variance 3D field F with covariance exp(-r), spectral method.

    r is the distance after rotating a lag into the axes (strike, down-dip,
    normal to the lens) and dividing by the scales a_i / 3, a_i the practical
    ranges FIELD_RANGES; the field is evaluated in metres from the lens
    centre (LENS_X, LENS_Y, LENS_RL).
    """
    d = math.radians(DIP)
    # Axes in (east, north, up): strike; down-dip (azimuth 125, dipping
    # DIP); the normal to the lens, which completes the frame.
    a1 = STRIKE
    a2 = (ACROSS[0] * math.cos(d), ACROSS[1] * math.cos(d), -math.sin(d))
    a3 = (ACROSS[0] * math.sin(d), ACROSS[1] * math.sin(d), math.cos(d))
    return exponential_field_3d(rng, N_WAVES, (a1, a2, a3), FIELD_RANGES,
                                (LENS_X, LENS_Y, LENS_RL))


# -------------------------------------------------------------------- holes
def hole_targets():
    """Nominal lode intercepts (u, v): the grid holes, then the infill holes."""
    targets = []
    for i, u_sec in enumerate(SECTIONS_U):
        for j, v_target in enumerate(PIERCE_V):
            if (i, j) not in SKIP:
                targets.append((u_sec, v_target))
    return targets + list(INFILL)


def plan_holes(rng):
    """Collars on a rough 50 m grid (sections across strike), one hole each.

    Each collar is set back south-east (down-dip) from its nominal intercept
    by depth / tan(65 deg), the nominal dip, and jittered; the hole is then
    drilled at the azimuth and dip it actually got, so intercepts scatter
    around the nominal grid.
    """
    holes = []
    for number, (u_t, v_t) in enumerate(hole_targets(), start=1):
        az = HOLE_AZ + rng.uniform(-HOLE_AZ_SPREAD, HOLE_AZ_SPREAD)
        dip = rng.uniform(*DIP_RANGE)
        depth = 400.0 - centre_rl(u_t, v_t)
        offset = depth / math.tan(math.radians(NOMINAL_DIP))
        u = u_t + rng.uniform(-COLLAR_JITTER, COLLAR_JITTER)
        v = v_t + offset + rng.uniform(-COLLAR_JITTER, COLLAR_JITTER)
        x, y = from_lens_frame(u, v)
        z = topography(x, y)
        hole = {"id": "%s%03d" % (HOLE_PREFIX, number),
                "x": round(x, 2), "y": round(y, 2), "z": round(z, 2),
                "az": round(az, 1), "dip": round(dip, 1)}
        # Planned intercept: where the trace crosses the lode's centre
        # surface; planned length: through a nominal footwall plus a tail.
        planned = 0.0
        while planned < LENGTH_RANGE[1]:
            px, py, pz = point_on_hole(hole, planned)
            pu, pv = to_lens_frame(px, py)
            if pz <= centre_rl(pu, pv):
                break
            planned += 1.0
        half = 0.5 * max(thickness(u_t, v_t), 10.0)
        length = ((planned + half / math.sin(math.radians(-dip)))
                  + rng.uniform(*TAIL_RANGE))
        length = min(max(length, LENGTH_RANGE[0]), LENGTH_RANGE[1])
        hole["length"] = math.floor(length * 10.0) / 10.0
        hole["planned"] = planned
        hole["buffer"] = rng.uniform(*HW_BUFFER)
        holes.append(hole)
    return holes


def point_on_hole(hole, depth):
    d = unit(hole["az"], -hole["dip"])
    return (hole["x"] + depth * d[0], hole["y"] + depth * d[1],
            hole["z"] + depth * d[2])


def first_lode_depth(hole):
    """Down-hole depth of the logged hanging wall (1 m resolution), or None."""
    depth = 0.5
    while depth < hole["length"]:
        if in_lode(*point_on_hole(hole, depth)):
            return depth - 0.5
        depth += 1.0
    return None


def assays(hole):
    """1 m sample intervals from the start of sampling: (from, to, domain).

    Sampling starts HW_BUFFER metres above the logged hanging wall (above
    the planned intercept when the hole missed the lode), rounded down to
    0.1 m, and runs to the end of the hole.
    """
    out = []
    hw = first_lode_depth(hole)
    anchor = hole["planned"] if hw is None else hw
    top = math.floor(max(anchor - hole["buffer"], 0.0) * 10.0) / 10.0
    while top < hole["length"] - 1e-9:
        bottom = min(top + ASSAY_LENGTH, hole["length"])
        if bottom - top < 0.05:
            break
        mid = point_on_hole(hole, 0.5 * (top + bottom))
        out.append((top, bottom, "LODE" if in_lode(*mid) else "WASTE"))
        top = bottom
    return out


def composite_groups(intervals):
    """Split the assays (from, to, domain, ...) into runs of one domain, then into ~2 m composites.

    Within a run the number of composites is max(1, floor(run_length / 2 m))
    and the assays are shared out as evenly as possible (earlier composites
    take the extra assay): composites are 2-3 m long, honour sample
    boundaries and domain contacts, and a run shorter than 2 m (a lode
    edge grazed by a hole) is one short composite.
    """
    runs = []
    for iv in intervals:
        if runs and runs[-1][-1][2] == iv[2]:
            runs[-1].append(iv)
        else:
            runs.append([iv])
    groups = []
    for run in runs:
        length = run[-1][1] - run[0][0]
        n = max(1, int(length / COMPOSITE_LENGTH + 1e-9))
        n = min(n, len(run))
        base, extra = divmod(len(run), n)
        k = 0
        for g in range(n):
            size = base + (1 if g < extra else 0)
            groups.append(run[k:k + size])
            k += size
    return groups


# --------------------------------------------------------------------- main
def generate(seed):
    rng = Rng(seed)
    field = grade_field(rng)
    holes = plan_holes(rng)

    sample_lines = [SAMPLES_HEADER]
    for hole in holes:
        samples = []                               # (from, to, domain, au)
        for top, bottom, domain in assays(hole):
            p = point_on_hole(hole, 0.5 * (top + bottom))
            g = GRADE[domain]
            ln_au = (math.log(g["median"]) + g["field_sd"] * field(*p)
                     + g["nugget_sd"] * rng.normal())
            au = round(math.exp(ln_au), 2)         # laboratory reports 0.01
            if au < DETECTION_LIMIT:
                au = 0.5 * DETECTION_LIMIT          # half the limit
            samples.append((top, bottom, domain, au))
        for group in composite_groups(samples):
            top, bottom, domain = group[0][0], group[-1][1], group[0][2]
            total = sum((iv[1] - iv[0]) * iv[3] for iv in group)
            au = total / (bottom - top)
            mean, sd = DENSITY[domain]
            density = mean + sd * rng.normal()
            x, y, z = point_on_hole(hole, 0.5 * (top + bottom))
            sample_lines.append(",".join([
                hole["id"], "%.1f" % top, "%.1f" % bottom,
                "%.2f" % x, "%.2f" % y, "%.2f" % z, domain,
                "%.3f" % au, "%.2f" % density]))

    collar_lines = [COLLARS_HEADER]
    for hole in holes:
        collar_lines.append(",".join([
            hole["id"], "%.2f" % hole["x"], "%.2f" % hole["y"],
            "%.2f" % hole["z"], "%.1f" % hole["az"], "%.1f" % hole["dip"],
            "%.1f" % hole["length"]]))

    return {"samples.csv": "\n".join(sample_lines) + "\n",
            "collars.csv": "\n".join(collar_lines) + "\n",
            "lode_blocks.csv": lode_blocks(field)}


def lode_blocks(field):
    """Blocks of the block-model frame that hold some lode, with the fraction
    of lode and the true mean grade of the lode part.

    The fraction is the share of BLOCK_SUBDIVISION^3 regularly spaced points
    of the block that fall inside the lode. The true grade is the mean, over
    the points of a TRUE_GRADE_POINTS grid in the block that fall inside the
    lode, of the expected lode grade given the field:
    median * exp(field_sd * F + nugget_sd^2 / 2) (the nugget has no spatial
    structure, so only its mean enters a block's grade). It is blank when
    none of those points is in the lode. Rows are ordered x fastest, then y,
    then z (ascending), like sillstone's block tables; blocks without lode
    are left out.
    """
    n = BLOCK_SUBDIVISION
    g = GRADE["LODE"]
    tx, ty, tz = TRUE_GRADE_POINTS
    lines = [BLOCKS_HEADER]
    for k in range(BLOCK_COUNT[2]):
        for j in range(BLOCK_COUNT[1]):
            for i in range(BLOCK_COUNT[0]):
                x0 = BLOCK_ORIGIN[0] + i * BLOCK_SIZE[0]
                y0 = BLOCK_ORIGIN[1] + j * BLOCK_SIZE[1]
                z0 = BLOCK_ORIGIN[2] + k * BLOCK_SIZE[2]
                inside = 0
                for a in range(n):
                    for b in range(n):
                        for c in range(n):
                            if in_lode(x0 + (a + 0.5) / n * BLOCK_SIZE[0],
                                       y0 + (b + 0.5) / n * BLOCK_SIZE[1],
                                       z0 + (c + 0.5) / n * BLOCK_SIZE[2]):
                                inside += 1
                if not inside:
                    continue
                grades = []
                for a in range(tx):
                    for b in range(ty):
                        for c in range(tz):
                            p = (x0 + (a + 0.5) / tx * BLOCK_SIZE[0],
                                 y0 + (b + 0.5) / ty * BLOCK_SIZE[1],
                                 z0 + (c + 0.5) / tz * BLOCK_SIZE[2])
                            if in_lode(*p):
                                grades.append(g["median"] * math.exp(
                                    g["field_sd"] * field(*p)
                                    + 0.5 * g["nugget_sd"] ** 2))
                true = ("%.3f" % (sum(grades) / len(grades))) if grades else ""
                lines.append("%.0f,%.0f,%.1f,%.3f,%s" % (
                    x0 + 0.5 * BLOCK_SIZE[0], y0 + 0.5 * BLOCK_SIZE[1],
                    z0 + 0.5 * BLOCK_SIZE[2], inside / float(n ** 3), true))
    return "\n".join(lines) + "\n"


def main(argv=None):
    return demo_files.run(
        argv, os.path.dirname(os.path.abspath(__file__)),
        "Write the synthetic ore-body demo data (samples.csv, "
                "collars.csv, lode_blocks.csv).",
        FILES, DEFAULT_SEED, generate)


if __name__ == "__main__":
    sys.exit(main())
