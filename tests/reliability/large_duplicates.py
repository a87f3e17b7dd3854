"""Lists stay short: 400,000 rows at 20 locations give short messages and a
report no larger than the same study with two rows per location.

Generates (seeded) 400,000 CSV rows at 20 locations, 20,000 rows each, and
the same 20 locations with 2 rows each, then:
  - `inspect`: every stderr line is under 2,000 characters (before capping,
    2 million rows gave one 7.2 MB line);
  - `inspect --duplicates error`: exit 2, one line starting "error:", under
    500 characters;
  - `run` on both: report.html, run.json and summary.json of the large case
    are within 5,000 bytes of the small case's (the lists name a few entries
    and count the rest; the numbers themselves differ a little).
The bounds are this test's own: a capped list grows with the digits of its
counts, never with the rows.
Usage: large_duplicates.py PATH/TO/sillstone
"""
import os
import random
import subprocess
import sys
import tempfile

failures = []


def check(ok, what):
    print(("ok    " if ok else "FAIL  ") + what)
    if not ok:
        failures.append(what)


LOCATIONS = [(100.0 * i + 5, (37 * i) % 500 + 3.5) for i in range(20)]


def write_case(folder, rows_per_location):
    os.makedirs(folder)
    rng = random.Random(20261205)
    with open(os.path.join(folder, "samples.csv"), "w") as f:
        f.write("x,y,v\n")
        lines = []
        for r in range(rows_per_location * len(LOCATIONS)):
            x, y = LOCATIONS[r % len(LOCATIONS)]
            lines.append(f"{x},{y},{rng.random() + (r % len(LOCATIONS)) * 0.1:.4f}\n")
        f.write("".join(lines))
    with open(os.path.join(folder, "study.toml"), "w") as f:
        f.write('[samples]\npath = "samples.csv"\nx = "x"\ny = "y"\nvalue = "v"\n\n'
                '[variogram]\nlag = 300\nlags = 6\n\n'
                '[model]\nspec = "0.1 nugget + 1 spherical(range=800)"\n\n'
                '[grid]\ncell = 50\n\n'
                '[report]\ntitle = "duplicates"\n')
    return folder


def main():
    exe = sys.argv[1]
    with tempfile.TemporaryDirectory() as tmp:
        big = write_case(os.path.join(tmp, "big"), 20000)
        small = write_case(os.path.join(tmp, "small"), 2)
        csv = os.path.join(big, "samples.csv")
        common = [csv, "--x", "x", "--y", "y", "--value", "v"]
        p = subprocess.run([exe, "inspect"] + common, capture_output=True, text=True)
        check(p.returncode == 0, f"inspect exits 0 (got {p.returncode})")
        longest = max((len(line) for line in p.stderr.splitlines()), default=0)
        check(longest < 2000, f"inspect's longest stderr line is {longest} characters (< 2000)")
        check("and 19995 more rows" in p.stderr and "and 15 more locations" in p.stderr,
              "the duplicate warning names a few rows and locations and counts the rest")

        p = subprocess.run([exe, "inspect", "--duplicates", "error"] + common,
                           capture_output=True, text=True)
        lines = p.stderr.splitlines()
        check(p.returncode == 2, f"--duplicates error exits 2 (got {p.returncode})")
        check(len(lines) == 1 and lines[0].startswith("error:") and len(lines[0]) < 500,
              f"--duplicates error gives one short error line ({[len(x) for x in lines]} chars)")

        sizes = {}
        for name, folder in (("big", big), ("small", small)):
            out = os.path.join(folder, "run")
            p = subprocess.run([exe, "run", os.path.join(folder, "study.toml"), "-o", out, "--quiet"],
                               capture_output=True, text=True)
            check(p.returncode == 0, f"run on the {name} case exits 0"
                  + ("" if p.returncode == 0 else f" ({p.stderr.strip()[:300]})"))
            longest = max((len(line) for line in p.stderr.splitlines()), default=0)
            check(longest < 2000, f"run's longest stderr line ({name}) is {longest} characters")
            for f in ("report.html", "run.json", "summary.json"):
                path = os.path.join(out, f)
                sizes[(name, f)] = os.path.getsize(path) if os.path.exists(path) else -1
        for f in ("report.html", "run.json", "summary.json"):
            b, s = sizes[("big", f)], sizes[("small", f)]
            check(s > 0 and abs(b - s) < 5000,
                  f"{f}: {b} bytes for 400,000 rows against {s} for 40 (within 5,000)")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
