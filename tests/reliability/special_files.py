"""Outputs and inputs that are not regular files are refused, never hung on.

Everything happens in a scratch folder made with mkfifo(3) and symlink(2);
no device node is ever made or touched.

Outputs (`-o`), with and without --overwrite:
- a FIFO: exit 2, one `error:` line saying it is a FIFO; it is still a FIFO
  afterwards (a FIFO is never opened for writing: the call would wait for a
  reader, so each call runs under a timeout);
- a symbolic link to a file: exit 2, "is a symbolic link"; the link and the
  file it points to are unchanged;
- a dangling symbolic link: exit 2; no file appears where it points;
- a folder: exit 2, "is a folder".

Inputs: a FIFO with no writer given as the samples, the model file, the study
file, the mask, or the input of `fit` gives exit 2 with one `error:` line
naming it as a FIFO, within the timeout (opening it would wait for ever).

GDAL virtual paths keep working: samples read through /vsizip/ from a zip
made with Python's zipfile give the same `inspect --json` as the plain file.
Usage: special_files.py PATH/TO/sillstone
"""
import json
import os
import subprocess
import sys
import tempfile
import zipfile

failures = []
TIMEOUT = 30  # seconds; a blocked open would never end


def check(ok, what):
    print(("ok    " if ok else "FAIL  ") + what)
    if not ok:
        failures.append(what)


def run(args, cwd):
    try:
        p = subprocess.run(args, capture_output=True, text=True, cwd=cwd, timeout=TIMEOUT)
        return p.returncode, p.stdout, p.stderr
    except subprocess.TimeoutExpired:
        return None, "", "(timed out: blocked on the file)"


def refused(result, words, what):
    code, _, err = result
    lines = err.strip().splitlines()
    check(code == 2 and len(lines) == 1 and lines[0].startswith("error: ") and words in lines[0],
          f"{what}: exit 2 with one error line saying '{words}' (status {code}, stderr {err.strip()!r})")


SAMPLES = "x,y,v\n0,0,1\n10,5,2\n3,12,3\n20,2,2.5\n14,18,1.5\n7,25,3.5\n"
COLUMNS = ["--x", "x", "--y", "y", "--value", "v"]


def main():
    exe = os.path.abspath(sys.argv[1])
    with tempfile.TemporaryDirectory() as tmp:
        with open(os.path.join(tmp, "s.csv"), "w") as f:
            f.write(SAMPLES)
        krige = [exe, "krige", "s.csv", *COLUMNS, "--model", "1 spherical(range=30)", "--cell", "5"]
        fifo = os.path.join(tmp, "pipe.tif")
        os.mkfifo(fifo)
        with open(os.path.join(tmp, "real.tif"), "w") as f:
            f.write("not a raster, kept")
        os.symlink("real.tif", os.path.join(tmp, "link.tif"))
        os.symlink("nowhere.tif", os.path.join(tmp, "dangling.tif"))
        os.mkdir(os.path.join(tmp, "folder.tif"))
        os.symlink("real.tif", os.path.join(tmp, "link.csv"))

        for extra in ([], ["--overwrite"]):
            tag = "with --overwrite" if extra else "without --overwrite"
            refused(run(krige + ["-o", "pipe.tif"] + extra, tmp), "is a FIFO", f"FIFO output, {tag}")
            check(os.path.exists(fifo) and not os.path.isfile(fifo), f"FIFO output, {tag}: still a FIFO")
            refused(run(krige + ["-o", "link.tif"] + extra, tmp), "is a symbolic link", f"link output, {tag}")
            check(os.path.islink(os.path.join(tmp, "link.tif")) and
                  open(os.path.join(tmp, "real.tif")).read() == "not a raster, kept",
                  f"link output, {tag}: the link and its file are unchanged")
            refused(run(krige + ["-o", "dangling.tif"] + extra, tmp), "is a symbolic link",
                    f"dangling link output, {tag}")
            check(not os.path.exists(os.path.join(tmp, "nowhere.tif")),
                  f"dangling link output, {tag}: nothing written where it points")
            refused(run(krige + ["-o", "folder.tif"] + extra, tmp), "is a folder", f"folder output, {tag}")
            refused(run([exe, "variogram", "s.csv", *COLUMNS, "--lag", "5", "--lags", "3", "-o", "link.csv"]
                        + extra, tmp), "is a symbolic link", f"variogram table to a link, {tag}")
            check(open(os.path.join(tmp, "real.tif")).read() == "not a raster, kept",
                  f"variogram table to a link, {tag}: the file it points to is unchanged")

        # Inputs: a FIFO that no program writes to.
        inp = os.path.join(tmp, "in.csv")
        os.mkfifo(inp)
        os.mkfifo(os.path.join(tmp, "model.json"))
        os.mkfifo(os.path.join(tmp, "study.toml"))
        os.mkfifo(os.path.join(tmp, "mask.gpkg"))
        refused(run([exe, "inspect", "in.csv", *COLUMNS], tmp), "in.csv: is a FIFO", "FIFO samples")
        refused(run([exe, "krige", "s.csv", *COLUMNS, "--model", "model.json", "--cell", "5", "-o", "a.tif"], tmp),
                "model.json: is a FIFO", "FIFO model file")
        refused(run([exe, "run", "study.toml", "-o", "r"], tmp), "study.toml: is a FIFO", "FIFO study file")
        refused(run(krige + ["--mask", "mask.gpkg", "-o", "b.tif"], tmp), "mask.gpkg: is a FIFO", "FIFO mask")
        refused(run([exe, "fit", "in.csv", "--structures", "spherical"], tmp), "in.csv: is a FIFO",
                "FIFO input of fit")
        left = sorted(set(os.listdir(tmp)) - {"s.csv", "pipe.tif", "real.tif", "link.tif", "dangling.tif",
                                              "folder.tif", "link.csv", "in.csv", "model.json",
                                              "study.toml", "mask.gpkg"})
        check(left == [], f"refused runs wrote nothing ({left})")

        # GDAL virtual paths: the same samples read through /vsizip/.
        with zipfile.ZipFile(os.path.join(tmp, "s.zip"), "w") as z:
            z.write(os.path.join(tmp, "s.csv"), "s.csv")
        plain = run([exe, "inspect", "s.csv", *COLUMNS, "--json"], tmp)
        zipped = run([exe, "inspect", "/vsizip/" + os.path.join(tmp, "s.zip") + "/s.csv", *COLUMNS, "--json"], tmp)
        check(plain[0] == 0 and zipped[0] == 0, f"/vsizip/ samples are read (status {zipped[0]}, {zipped[2].strip()!r})")
        if plain[0] == 0 and zipped[0] == 0:
            a, b = json.loads(plain[1]), json.loads(zipped[1])
            for d in (a, b):
                d.pop("source", None)
            check(a == b, "/vsizip/ samples give the summary of the plain file")
    print(f"{len(failures)} failed")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
