#!/usr/bin/env python3
"""One-way layering of the library: a file may include only headers of its
own stage or of stages below it.

Usage: check_layering.py SOURCE_DIR      checks include/ and src/ of the tree
       check_layering.py --self-test     checks that the check itself catches
                                         a backwards include and an unlisted
                                         header or folder (on a scratch tree)

The stages, from the bottom, are listed in STAGES. Every public header
(include/sillstone/*.hpp) and every folder of src/ is given its stage in the
tables below; a private header (src/<folder>/*.hpp) has the stage of its
folder. An include of a header of a higher stage fails, naming the file, the
line and both stages; so does a public header or a src/ folder missing from
the tables (a new one must be placed on purpose). Only quoted or angled
includes of "sillstone/..." , "<folder>/..." and same-folder headers are
ours; every other include (standard library, GDAL, Eigen, ...) is ignored.
Entries for files that do not exist yet (the pipeline stage) are allowed.
"""
import os
import re
import sys
import tempfile

STAGES = ["core", "samples", "summary", "variogram", "models", "fitting", "kriging",
          "outputs", "report", "pipeline", "study", "cli"]

# include/sillstone/<name> -> stage
PUBLIC_HEADERS = {
    "error.hpp": "core",        # InputError, the one error policy
    "format.hpp": "core",       # format_for_file / format_for_people, the one number formatter
    "names.hpp": "core",        # name_of / parse_name (tables live with each enum's stage)
    "version.hpp": "core",
    "outputs.hpp": "core",      # temporary name + rename, interrupt clean-up: every stage writes
                                # through it (src/core/pending_output.cpp)
    "samples.hpp": "samples",
    "summary.hpp": "summary",
    "transform.hpp": "variogram",
    "normal_score.hpp": "variogram",
    "variogram.hpp": "variogram",
    "model.hpp": "models",
    "fit.hpp": "fitting",
    "grid.hpp": "kriging",
    "raster.hpp": "kriging",    # streaming raster writer of a GridSpec (src/grid/raster_writer.cpp)
    "neighbourhood.hpp": "kriging",
    "kriging.hpp": "kriging",
    "crossval.hpp": "kriging",
    "kriging_sink.hpp": "kriging",  # the sink interface; file sinks live in src/outputs
    "plots.hpp": "report",
    "report.hpp": "report",
    "pipeline.hpp": "pipeline",
    "study.hpp": "study",
}

# src/<folder> -> stage
SOURCE_FOLDERS = {
    "core": "core",
    "samples": "samples",
    "summary": "summary",
    "variogram": "variogram",
    "models": "models",
    "fitting": "fitting",
    "grid": "kriging",
    "kriging": "kriging",
    "outputs": "outputs",
    "report": "report",
    "pipeline": "pipeline",
    "study": "study",
    "cli": "cli",
}

INCLUDE = re.compile(r'^\s*#\s*include\s*[<"]([^>"]+)[>"]')
SOURCE_SUFFIXES = (".cpp", ".hpp", ".h", ".cc")


def rank(stage):
    return STAGES.index(stage)


def check(root):
    """Returns the list of faults (strings) of the tree at `root`."""
    faults = []
    for table, what in ((PUBLIC_HEADERS, "header"), (SOURCE_FOLDERS, "folder")):
        for name, stage in table.items():
            if stage not in STAGES:
                faults.append(f"check_layering.py: {what} {name}: unknown stage '{stage}'")
    public_dir = os.path.join(root, "include", "sillstone")
    src_dir = os.path.join(root, "src")
    files = []  # (path relative to root, stage, own src folder or None)
    for name in sorted(os.listdir(public_dir)):
        if not name.endswith(SOURCE_SUFFIXES):
            continue
        if name not in PUBLIC_HEADERS:
            faults.append(f"include/sillstone/{name}: public header missing from the stage "
                          "table of tests/architecture/check_layering.py")
            continue
        files.append((f"include/sillstone/{name}", PUBLIC_HEADERS[name], None))
    for folder in sorted(os.listdir(src_dir)):
        if not os.path.isdir(os.path.join(src_dir, folder)):
            continue
        if folder not in SOURCE_FOLDERS:
            faults.append(f"src/{folder}/: folder missing from the stage table of "
                          "tests/architecture/check_layering.py")
            continue
        for dirpath, _, names in os.walk(os.path.join(src_dir, folder)):
            for name in sorted(names):
                if name.endswith(SOURCE_SUFFIXES):
                    rel = os.path.relpath(os.path.join(dirpath, name), root)
                    files.append((rel.replace(os.sep, "/"), SOURCE_FOLDERS[folder], folder))

    for rel, stage, folder in files:
        with open(os.path.join(root, rel), encoding="utf-8") as f:
            for number, line in enumerate(f, 1):
                m = INCLUDE.match(line)
                if not m:
                    continue
                target = m.group(1)
                parts = target.split("/")
                if parts[0] == "sillstone" and len(parts) == 2:
                    if parts[1] not in PUBLIC_HEADERS:
                        faults.append(f"{rel}:{number}: includes {target}, a public header "
                                      "missing from the stage table")
                        continue
                    to_stage = PUBLIC_HEADERS[parts[1]]
                elif len(parts) == 2 and os.path.isfile(os.path.join(src_dir, target)):
                    if parts[0] not in SOURCE_FOLDERS:
                        continue  # reported above as an unlisted folder
                    to_stage = SOURCE_FOLDERS[parts[0]]
                elif len(parts) == 1 and folder and os.path.isfile(
                        os.path.join(src_dir, folder, target)):
                    continue  # a private header of the file's own folder
                else:
                    continue  # not ours: standard library or a dependency
                if rank(to_stage) > rank(stage):
                    faults.append(f"{rel}:{number}: backwards include of {target}: stage "
                                  f"'{stage}' must not include stage '{to_stage}'")
    return faults


def self_test():
    """The check on a scratch tree with known faults must report each one."""
    with tempfile.TemporaryDirectory() as root:
        def put(rel, text):
            path = os.path.join(root, rel)
            os.makedirs(os.path.dirname(path), exist_ok=True)
            with open(path, "w", encoding="utf-8") as f:
                f.write(text)
        put("include/sillstone/samples.hpp", '#pragma once\n#include <vector>\n')
        put("include/sillstone/report.hpp", '#pragma once\n#include "sillstone/samples.hpp"\n')
        put("include/sillstone/unlisted.hpp", '#pragma once\n')
        put("src/samples/loader.cpp", '#include "sillstone/samples.hpp"\n\n'
                                      '#include "sillstone/report.hpp"\n')
        put("src/samples/detail.hpp", '#pragma once\n')
        put("src/kriging/engine.cpp", '#include "samples/detail.hpp"\n#include "detail.hpp"\n'
                                      '#include <gdal.h>\n')
        put("src/kriging/detail.hpp", '#include "report/svg.hpp"\n')
        put("src/report/svg.hpp", '#pragma once\n')
        put("src/newstage/thing.cpp", '\n')
        got = check(root)
    expected = [
        "include/sillstone/unlisted.hpp: public header missing",
        "src/newstage/: folder missing",
        "src/samples/loader.cpp:3: backwards include of sillstone/report.hpp: stage 'samples' "
        "must not include stage 'report'",
        "src/kriging/detail.hpp:1: backwards include of report/svg.hpp: stage 'kriging' "
        "must not include stage 'report'",
    ]
    missing = [e for e in expected if not any(g.startswith(e) for g in got)]
    if missing or len(got) != len(expected):
        print("check_layering.py --self-test: expected faults\n  " + "\n  ".join(expected) +
              "\ngot\n  " + "\n  ".join(got))
        return 1
    print("check_layering.py --self-test: the 4 planted faults were reported, nothing else")
    return 0


def main(argv):
    if len(argv) == 2 and argv[1] == "--self-test":
        return self_test()
    if len(argv) != 2:
        print(__doc__)
        return 2
    faults = check(argv[1])
    for fault in faults:
        print(fault)
    if faults:
        print(f"{len(faults)} layering fault(s)")
        return 1
    print("layering: every include goes to the file's own stage or below")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
