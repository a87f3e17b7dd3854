"""Nothing lost: an interrupted `krige` or `run` never leaves a truncated file
under the final name.

Each scenario starts a `krige` large enough to take seconds, waits until
its temporary raster exists and has grown (GDAL_CACHEMAX is set to 1 MB so
that blocks reach the disk as they are written), then sends a signal:

- SIGINT, no previous output: exit status 130, no file under the final
  name, no temporary file left in the folder;
- SIGTERM with --overwrite over a previous output: exit status 143, the
  previous file byte for byte, no temporary file left;
- SIGKILL (no clean-up possible) over a previous output, and with none:
  the previous file byte for byte, or no file; any temporary left behind is a
  hidden ".<name>.tmp-..." file, never the final name;
- SIGINT during `run --overwrite` over a complete run folder: every output
  of the previous run byte for byte (outputs are renamed together at the
  end), no temporary file left;
- SIGINT and SIGTERM during a `run` into a folder that the run created: the
  folder is removed again (docs/run.md says so).

A file at the final path must open with GDAL's Python bindings, have the
size the run asked for, and read whole (a checksum of every band). Inputs
must be unchanged (SHA-256 before and after), as they are opened read-only.
Usage: interrupt.py PATH/TO/sillstone
"""
import hashlib
import os
import random
import signal
import subprocess
import sys
import tempfile
import time

from osgeo import gdal

gdal.UseExceptions()
failures = []


def check(ok, what):
    print(("ok    " if ok else "FAIL  ") + what)
    if not ok:
        failures.append(what)


def sha(path):
    with open(path, "rb") as f:
        return hashlib.sha256(f.read()).hexdigest()


def temporaries(folder):
    return sorted(n for n in os.listdir(folder) if ".tmp-" in n)


def check_raster(path, nx, ny, bands, what):
    """The file opens, has the asked size, and every band reads whole."""
    try:
        ds = gdal.Open(path)
        ok = ds.RasterXSize == nx and ds.RasterYSize == ny and ds.RasterCount == bands
        for b in range(1, ds.RasterCount + 1):
            ds.GetRasterBand(b).Checksum()
        ds = None
    except RuntimeError as e:
        print("      " + str(e))
        ok = False
    check(ok, f"{what}: the file at the final path is a complete {nx} x {ny} raster")


def write_samples(path, n=500, seed=7):
    rng = random.Random(seed)
    with open(path, "w") as f:
        f.write("x,y,v\n")
        for _ in range(n):
            f.write(f"{rng.uniform(0, 1000)!r},{rng.uniform(0, 1000)!r},{rng.gauss(10, 2)!r}\n")


def krige_args(exe, samples, out, cell, extra=()):
    return [exe, "krige", samples, "--x", "x", "--y", "y", "--value", "v", "--crs", "EPSG:32630",
            "--model", "0.1 nugget + 1 spherical(range=300)", "--cell", str(cell),
            "--extent", "0,0,1000,1000", "--max-points", "8", "--threads", "2", "-o", out, *extra]


def start_and_signal(args, folder, final_name, sig, grown=1_000_000, timeout=300):
    """Starts `args`, waits until a temporary for final_name exists and has at
    least `grown` bytes (or the process is well under way), sends `sig`."""
    env = dict(os.environ, GDAL_CACHEMAX="1")
    p = subprocess.Popen(args, stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=env)
    stem, ext = os.path.splitext(final_name)
    start = time.monotonic()
    sent = False
    while time.monotonic() - start < timeout and p.poll() is None:
        # ".a.tmp-<pid>-<n>.tif", or nested for a run: "..estimate.tmp-...tmp-....tif"
        names = os.listdir(folder) if os.path.isdir(folder) else []  # a run makes its folder
        temps = [n for n in names if n.startswith(".") and stem + ".tmp-" in n and n.endswith(ext)]
        size = max((os.path.getsize(os.path.join(folder, n)) for n in temps if
                    os.path.exists(os.path.join(folder, n))), default=-1)
        if size >= grown:
            p.send_signal(sig)
            sent = True
            break
        time.sleep(0.02)
    if not sent and p.poll() is None:
        p.send_signal(sig)  # still computing: interrupt anyway
        sent = True
    out, err = p.communicate(timeout=timeout)
    return p.returncode, sent, err.decode(errors="replace")


def main():
    exe = os.path.abspath(sys.argv[1])
    with tempfile.TemporaryDirectory() as tmp:
        samples = os.path.join(tmp, "samples.csv")
        write_samples(samples)
        before = sha(samples)
        big_cell = 0.5  # 2000 x 2000 nodes: seconds on two cores, a minute under the sanitizers

        # 1. SIGINT, nothing there before.
        out = os.path.join(tmp, "a.tif")
        code, sent, err = start_and_signal(krige_args(exe, samples, out, big_cell), tmp, "a.tif", signal.SIGINT)
        check(sent, "SIGINT: the krige was still running when interrupted")
        check(code == 130, f"SIGINT: exit status 130 (got {code}; stderr {err.strip()[-200:]!r})")
        check(not os.path.exists(out), "SIGINT: no file under the final name")
        check(temporaries(tmp) == [], f"SIGINT: no temporary file left ({temporaries(tmp)})")

        # 2. SIGTERM over a previous, complete output.
        out = os.path.join(tmp, "b.tif")
        subprocess.run(krige_args(exe, samples, out, 20), check=True, capture_output=True)
        previous = sha(out)
        code, sent, err = start_and_signal(krige_args(exe, samples, out, big_cell, ["--overwrite"]), tmp,
                                           "b.tif", signal.SIGTERM)
        check(sent, "SIGTERM: the krige was still running when interrupted")
        check(code == 143, f"SIGTERM: exit status 143 (got {code}; stderr {err.strip()[-200:]!r})")
        check(os.path.exists(out) and sha(out) == previous, "SIGTERM: the previous file is intact, byte for byte")
        check_raster(out, 50, 50, 2, "SIGTERM")
        check(temporaries(tmp) == [], f"SIGTERM: no temporary file left ({temporaries(tmp)})")

        # 3. SIGKILL in the middle of writing, over a previous output and over nothing.
        out = os.path.join(tmp, "c.tif")
        subprocess.run(krige_args(exe, samples, out, 20), check=True, capture_output=True)
        previous = sha(out)
        code, sent, err = start_and_signal(krige_args(exe, samples, out, big_cell, ["--overwrite"]), tmp,
                                           "c.tif", signal.SIGKILL)
        check(sent and code == -signal.SIGKILL, f"SIGKILL: the krige was killed while writing (status {code})")
        check(os.path.exists(out) and sha(out) == previous, "SIGKILL: the previous file is intact, byte for byte")
        check_raster(out, 50, 50, 2, "SIGKILL")
        left = temporaries(tmp)
        check(all(n.startswith(".c.tmp-") for n in left),
              f"SIGKILL: whatever is left is a hidden temporary, not the final name ({left})")
        for n in left:
            os.remove(os.path.join(tmp, n))
        out = os.path.join(tmp, "d.tif")
        code, sent, err = start_and_signal(krige_args(exe, samples, out, big_cell), tmp, "d.tif", signal.SIGKILL)
        check(sent and code == -signal.SIGKILL, f"SIGKILL, no previous file: killed while writing (status {code})")
        check(not os.path.exists(out), "SIGKILL, no previous file: nothing under the final name")
        for n in temporaries(tmp):
            os.remove(os.path.join(tmp, n))

        # 4. SIGINT during `run --overwrite` over a complete run folder.
        study = os.path.join(tmp, "study.toml")
        with open(study, "w") as f:
            f.write('[samples]\npath = "samples.csv"\nvalue = "v"\nx = "x"\ny = "y"\ncrs = "EPSG:32630"\n'
                    '[variogram]\nlag = 50\nlags = 8\n[model]\nspec = "0.1 nugget + 1 spherical(range=300)"\n'
                    '[neighbourhood]\nmax_points = 8\n[grid]\ncell = 25\n[output]\ndir = "run"\n')
        subprocess.run([exe, "run", study, "--quiet"], check=True, capture_output=True)
        folder = os.path.join(tmp, "run")
        previous = {n: sha(os.path.join(folder, n)) for n in os.listdir(folder)}
        with open(study, "a") as f:
            f.write("[kriging]\nthreads = 2\n")
        with open(study) as f:
            text = f.read().replace("cell = 25", "cell = 0.5")
        with open(study, "w") as f:
            f.write(text)
        code, sent, err = start_and_signal([exe, "run", study, "--overwrite", "--quiet"], folder,
                                           "estimate.tif", signal.SIGINT)
        check(sent and code == 130, f"run, SIGINT: exit status 130 (got {code}; stderr {err.strip()[-200:]!r})")
        now = {n: sha(os.path.join(folder, n)) for n in os.listdir(folder)}
        check(now == previous, "run, SIGINT: every output of the previous run is intact, byte for byte")

        # 5. SIGINT and SIGTERM during a `run` into a folder it creates: the folder goes again.
        for sig, status in ((signal.SIGINT, 130), (signal.SIGTERM, 143)):
            fresh = os.path.join(tmp, f"fresh-run-{sig.name}")
            code, sent, err = start_and_signal([exe, "run", study, "-o", fresh, "--quiet"], fresh,
                                               "estimate.tif", sig)
            check(sent and code == status,
                  f"new run folder, {sig.name}: exit status {status} (got {code}; stderr {err.strip()[-200:]!r})")
            check(not os.path.exists(fresh), f"new run folder, {sig.name}: the folder the run created is removed")

        check(sha(samples) == before, "the samples file was not modified")

    print(f"{len(failures)} failed")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
