#!/usr/bin/env python3
"""A study file and the verbs give the same answers for the same settings.

Usage: study_vs_verbs.py SILLSTONE_BINARY SOURCE_DIR

`run` and the verbs share one stage layer (src/pipeline); these checks hold
the two paths to each other on the demo sites, where they once drifted:
1. ore-body: cross-validation of a block-model study is of the samples, on
   point support; its summary equals `crossval` with the same model and
   neighbourhood, and its mean squared standardised error is near 1
   (0.5 to 2; common practice).
2. groundwater: an `also` entry that names only method = "ordinary" is
   ordinary kriging from the defaults, not the study's external drift: it
   equals `crossval --method ordinary --global`.
3. A log-offset study: the variogram table, model.json, run.json's kriging
   transform and the cross-validation all use log(value + 100); the run's
   cross-validation equals `crossval` with the run's own model.json.
4. `[variogram] lags = 12` alone gives the classes of `variogram --lags 12`.
"""
import csv
import json
import os
import shutil
import subprocess
import sys
import tempfile

KEYS = ["samples", "estimated", "mean_error", "mean_absolute_error", "rmse",
        "mean_standardised_error", "mean_squared_standardised_error", "correlation"]


def sh(args, cwd):
    run = subprocess.run(args, cwd=cwd, capture_output=True, text=True)
    if run.returncode != 0:
        raise SystemExit(f"FAIL {' '.join(args)}: exit {run.returncode}\n{run.stderr}")
    return run.stdout


def same(a, b, what):
    """Summaries of the two paths: equal to 1e-10 relative (same arithmetic)."""
    faults = []
    for k in KEYS:
        x, y = a[k], b[k]
        if (x is None) != (y is None) or (x is not None and abs(x - y) > 1e-10 * (1 + abs(y))):
            faults.append(f"{what}: {k} {x} (run) vs {y} (verb)")
    return faults


def run_study(binary, study, folder, cwd):
    sh([binary, "run", study, "-o", folder, "-q"], cwd)
    return json.load(open(os.path.join(cwd, folder, "run.json")))


def main():
    binary, source = os.path.abspath(sys.argv[1]), sys.argv[2]
    scratch = tempfile.mkdtemp(prefix="sillstone-study-verbs-")
    shutil.copytree(os.path.join(source, "demo-sites"), os.path.join(scratch, "demo-sites"))
    faults = []
    try:
        # 1. The ore body: blocks are kriged, samples cross-validated as points.
        ore = "demo-sites/ore-body"
        r = run_study(binary, f"{ore}/study.toml", "ore", scratch)
        if r["resolved"].get("crossval_support") != "points":
            faults.append(f"ore-body: crossval support {r['resolved'].get('crossval_support')}")
        verb = json.loads(sh([binary, "crossval", f"{ore}/samples.csv", "--x", "x", "--y", "y",
                              "--z", "z", "--value", "au_gpt", "--where", "domain = 'LODE'",
                              "--model", "ore/model.json", "--folds", "5", "--max-points", "24",
                              "--min-points", "6", "--radius", "150", "--json", "-q"], scratch))
        faults += same(r["crossval"]["study"], verb, "ore-body cross-validation")
        msse = r["crossval"]["study"]["mean_squared_standardised_error"]
        if not 0.5 <= msse <= 2:
            faults.append(f"ore-body: mean squared standardised error {msse}, not near 1")
        print(f"ore-body: point-support cross-validation, MSSE {msse:.4f}")

        # 2. Groundwater: the "ordinary" alternative starts from the defaults.
        gw = "demo-sites/groundwater"
        r = run_study(binary, f"{gw}/study.toml", "gw", scratch)
        also = {a["label"]: a["summary"] for a in r["crossval"]["also"]}
        verb = json.loads(sh([binary, "crossval", f"{gw}/samples.csv", "--x", "easting", "--y",
                              "northing", "--value", "head_m", "--crs", "EPSG:32633", "--model",
                              "gw/model.json", "--method", "ordinary", "--global", "--json", "-q"],
                             scratch))
        faults += same(also["ordinary"], verb, "groundwater 'also' ordinary")
        print(f"groundwater: 'ordinary' RMSE {also['ordinary']['rmse']:.4g}, "
              f"study RMSE {r['crossval']['study']['rmse']:.4g}")

        # 3. A log-offset study on the soil survey.
        soil = "demo-sites/soil-yard"
        with open(os.path.join(scratch, soil, "offset.toml"), "w") as f:
            f.write('[samples]\npath = "samples.csv"\nvalue = "lead_mg_kg"\nx = "easting"\n'
                    'y = "northing"\ncrs = "EPSG:32630"\n'
                    '[variogram]\ntransform = "log"\nlog_offset = 100\nlag = 40\nlags = 12\n'
                    '[model]\nauto = true\n[neighbourhood]\nmax_points = 24\nmin_points = 4\n'
                    '[grid]\ncell = 20\n')
        r = run_study(binary, f"{soil}/offset.toml", "offset", scratch)
        rows = list(csv.DictReader(open(os.path.join(scratch, "offset", "variogram.csv"))))
        if {(x["transform"], float(x["log_offset"])) for x in rows} != {("log", 100.0)}:
            faults.append("log offset: variogram.csv does not record log with offset 100")
        t = json.load(open(os.path.join(scratch, "offset", "model.json")))["transform"]
        if t != {"kind": "log", "offset": 100}:
            faults.append(f"log offset: model.json transform {t}")
        if r["resolved"]["kriging_transform"] != "log(value + 100)":
            faults.append(f"log offset: kriging transform {r['resolved']['kriging_transform']}")
        verb = json.loads(sh([binary, "crossval", f"{soil}/samples.csv", "--x", "easting", "--y",
                              "northing", "--value", "lead_mg_kg", "--crs", "EPSG:32630",
                              "--model", "offset/model.json", "--max-points", "24",
                              "--min-points", "4", "--json", "-q"], scratch))
        faults += same(r["crossval"]["study"], verb, "log-offset cross-validation")
        print(f"log offset: MSSE {r['crossval']['study']['mean_squared_standardised_error']:.4f}")

        # 4. `lags = 12` alone in a study, `--lags 12` alone on the command line.
        with open(os.path.join(scratch, soil, "lags.toml"), "w") as f:
            f.write('[samples]\npath = "samples.csv"\nvalue = "lead_mg_kg"\nx = "easting"\n'
                    'y = "northing"\ncrs = "EPSG:32630"\n[variogram]\nlags = 12\n'
                    '[model]\nspec = "0.2 nugget + 1 spherical(range=300)"\n'
                    '[grid]\ncell = 20\n')
        run_study(binary, f"{soil}/lags.toml", "lags", scratch)
        sh([binary, "variogram", f"{soil}/samples.csv", "--x", "easting", "--y", "northing",
            "--value", "lead_mg_kg", "--crs", "EPSG:32630", "--lags", "12", "-o", "lags.csv",
            "-q"], scratch)
        # The same classes and pairs; values to 1e-12 relative (the run also
        # computes the variogram surface, which sums the pairs in another order).
        a = list(csv.reader(open(os.path.join(scratch, "lags", "variogram.csv"))))
        b = list(csv.reader(open(os.path.join(scratch, "lags.csv"))))
        def close(x, y):
            try:
                return abs(float(x) - float(y)) <= 1e-12 * (1 + abs(float(y)))
            except ValueError:
                return x == y
        if len(a) != 13 or len(a) != len(b) or not all(
                len(p) == len(q) and all(close(x, y) for x, y in zip(p, q))
                for p, q in zip(a, b)):
            faults.append("lags = 12: the study's variogram.csv differs from `variogram --lags 12`")
    finally:
        shutil.rmtree(scratch)
    for f in faults:
        print("FAIL", f)
    return 1 if faults else 0


if __name__ == "__main__":
    sys.exit(main())
