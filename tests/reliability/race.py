"""Two programs writing the same new output: one wins, the other is refused.

Two `krige` processes with different models are started together, many
times, each time towards the same new output path and without --overwrite.
Both pass the early "does it exist?" check (the output appears only when a
krige is complete, after about half a second of work), so the name is
contested when they publish it. Each time:

- exactly one exits 0 and the other exits 2 with one `error:` line that says
  the output exists;
- the file under the final name is whole and byte for byte the winner's:
  the output of the same krige run alone beforehand (runs repeat byte for
  byte, tests/reliability/determinism.py);
- no temporary file is left in the folder.

At least one of the rounds must have been a real race (the loser refused
when publishing, its message saying another program wrote the output while it
ran), or the test has not exercised what it is for.
Usage: race.py PATH/TO/sillstone [ROUNDS]
"""
import hashlib
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


def sha(path):
    with open(path, "rb") as f:
        return hashlib.sha256(f.read()).hexdigest()


def write_samples(path, n=300, seed=11):
    rng = random.Random(seed)
    with open(path, "w") as f:
        f.write("x,y,v\n")
        for _ in range(n):
            f.write(f"{rng.uniform(0, 1000)!r},{rng.uniform(0, 1000)!r},{rng.gauss(10, 2)!r}\n")


MODELS = {"a": "0.1 nugget + 1 spherical(range=300)", "b": "0.3 nugget + 1 exponential(range=500)"}


def krige(exe, samples, model, out):
    return [exe, "krige", samples, "--x", "x", "--y", "y", "--value", "v", "--crs", "EPSG:32630",
            "--model", MODELS[model], "--cell", "4", "--extent", "0,0,1000,1000", "--max-points", "12",
            "--threads", "1", "--quiet", "-o", out]


def main():
    exe = os.path.abspath(sys.argv[1])
    rounds = int(sys.argv[2]) if len(sys.argv) > 2 else 12
    real_races = 0
    with tempfile.TemporaryDirectory() as tmp:
        samples = os.path.join(tmp, "samples.csv")
        write_samples(samples)
        reference = {}
        for m in MODELS:
            path = os.path.join(tmp, f"alone-{m}.tif")
            subprocess.run(krige(exe, samples, m, path), check=True, capture_output=True)
            reference[m] = sha(path)
        check(reference["a"] != reference["b"], "the two writers' outputs differ, so the file tells who won")

        for r in range(rounds):
            folder = os.path.join(tmp, f"round-{r}")
            os.mkdir(folder)
            out = os.path.join(folder, "map.tif")
            procs = {m: subprocess.Popen(krige(exe, samples, m, out), stdout=subprocess.PIPE,
                                         stderr=subprocess.PIPE, text=True) for m in MODELS}
            done = {m: p.communicate(timeout=300) + (p.returncode,) for m, p in procs.items()}
            winners = [m for m, (_, _, code) in done.items() if code == 0]
            losers = [m for m, (_, _, code) in done.items() if code != 0]
            tag = f"round {r}"
            if len(winners) != 1:
                check(False, f"{tag}: exactly one writer succeeded (exit statuses "
                             f"{ {m: d[2] for m, d in done.items()} })")
                continue
            winner, loser = winners[0], losers[0]
            _, err, code = done[loser]
            lines = err.strip().splitlines()
            check(code == 2 and len(lines) == 1 and lines[0].startswith("error: output: ")
                  and "exists already" in lines[0],
                  f"{tag}: the other exited 2 with one error line (status {code}, stderr {err.strip()!r})")
            real_races += "another program wrote it" in err
            check(os.path.exists(out) and sha(out) == reference[winner],
                  f"{tag}: the output is whole and the winner's ({winner}), byte for byte")
            left = sorted(set(os.listdir(folder)) - {"map.tif"})
            check(left == [], f"{tag}: nothing else is left in the folder ({left})")
        check(real_races > 0, f"at least one round was a real race, refused when publishing "
                              f"({real_races} of {rounds})")
    print(f"{len(failures)} failed")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
