"""Command-line golden cases, kept as data.

Each file in cases/ is one case:

    # what the case shows (comment lines start with #)
    args: inspect @bad.csv --x x --y y --value v
    exit: 2
    stderr-match: ^error: samples: .*bad\\.csv, line 3, column 'v'
    stderr-lines: 1
    stdout-match: <regex>          (any number of *-match lines; all must match)
    stdout-absent: <regex>         (must not match)
    out.csv-match: <regex>         (the file out.csv in the case folder, after the run)
    --- bad.csv
    x,y,v
    ...
    --- crlf.csv [crlf, bom]
    ...

A file section's header may end with options in brackets: `crlf` writes the
file with Windows line endings, `bom` starts it with a UTF-8 byte-order mark,
`latin1` writes it in Latin-1 instead of UTF-8.
`@name` in args is replaced by the path of the file written from the
`--- name` section (in a fresh temporary folder, which is also the working
directory); `@dir` by that folder. `{demo}` is the demo-sites folder.
Regexes are Python `re.search` with MULTILINE.
Usage: run_cases.py PATH/TO/sillstone CASES_DIR|CASE_FILE...
(CTest runs each case as its own test.)
"""
import os
import re
import shlex
import subprocess
import sys
import tempfile

ROOT = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))


def parse(path):
    case = {"files": {}, "match": [], "absent": []}
    current = None
    with open(path, encoding="utf-8") as f:
        for raw in f:
            line = raw.rstrip("\n")
            if line.startswith("--- "):
                header = line[4:].strip()
                options = set()
                m = re.match(r"^(\S+)\s*\[([^\]]*)\]$", header)
                if m:
                    header = m.group(1)
                    options = {o.strip() for o in m.group(2).split(",") if o.strip()}
                    unknown = options - {"crlf", "bom", "latin1"}
                    if unknown:
                        raise ValueError(f"{path}: unknown file option(s) {sorted(unknown)}")
                current = header
                case["files"][current] = []
                case.setdefault("file_options", {})[current] = options
                continue
            if current is not None:
                case["files"][current].append(raw)
                continue
            if not line.strip() or line.startswith("#"):
                continue
            key, _, value = line.partition(":")
            value = value.strip()
            if key.endswith("-match"):
                case["match"].append((key[:-6], value))
            elif key.endswith("-absent"):
                case["absent"].append((key[:-7], value))
            else:
                case[key] = value
    return case


def run(exe, path):
    case = parse(path)
    with tempfile.TemporaryDirectory() as tmp:
        for name, lines in case["files"].items():
            options = case.get("file_options", {}).get(name, set())
            text = "".join(lines)
            if "crlf" in options:
                text = text.replace("\n", "\r\n")
            data = text.encode("latin-1" if "latin1" in options else "utf-8")
            if "bom" in options:
                data = b"\xef\xbb\xbf" + data
            with open(os.path.join(tmp, name), "wb") as f:
                f.write(data)
        args = []
        for a in shlex.split(case["args"]):
            a = a.replace("{demo}", os.path.join(ROOT, "demo-sites"))
            if a == "@dir":
                a = tmp
            elif a.startswith("@"):
                a = os.path.join(tmp, a[1:])
            args.append(a)
        p = subprocess.run([exe] + args, capture_output=True, text=True, cwd=tmp, timeout=120)
        created = set(os.listdir(tmp)) - set(case["files"])
        streams = {"stdout": p.stdout, "stderr": p.stderr}
        for stream, _ in case["match"] + case["absent"]:
            if stream not in streams:  # a file the run wrote or should have left alone
                path = os.path.join(tmp, stream)
                streams[stream] = open(path, encoding="utf-8").read() if os.path.exists(path) else ""
    problems = []
    want_exit = int(case.get("exit", "0"))
    if p.returncode != want_exit:
        problems.append(f"exit {p.returncode}, expected {want_exit}")
    for stream, rx in case["match"]:
        if not re.search(rx, streams[stream], re.MULTILINE):
            problems.append(f"{stream} does not match /{rx}/")
    for stream, rx in case["absent"]:
        if re.search(rx, streams[stream], re.MULTILINE):
            problems.append(f"{stream} matches /{rx}/ but should not")
    if "stderr-lines" in case:
        n = len(p.stderr.splitlines())
        if n != int(case["stderr-lines"]):
            problems.append(f"stderr has {n} lines, expected {case['stderr-lines']}")
    if want_exit != 0 and created:
        problems.append(f"a refused run left files behind: {sorted(created)}")
    if problems:
        return problems + ["--- stdout:", p.stdout[-2000:], "--- stderr:", p.stderr[-2000:]]
    return []


def main():
    exe = os.path.abspath(sys.argv[1])
    paths = []
    for arg in sys.argv[2:]:
        if os.path.isdir(arg):
            paths += [os.path.join(arg, n) for n in sorted(os.listdir(arg)) if n.endswith(".case")]
        else:
            paths.append(arg)
    failed = 0
    for path in paths:
        problems = run(exe, path)
        print(("ok    " if not problems else "FAIL  ") + os.path.basename(path))
        for line in problems:
            print("      " + line)
        failed += bool(problems)
    print(f"{len(paths) - failed} passed, {failed} failed")
    return 1 if failed or not paths else 0


if __name__ == "__main__":
    sys.exit(main())
