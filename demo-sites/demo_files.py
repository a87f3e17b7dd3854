"""Writing a demo site's generated files: shared by the generators that write
more than one file (standard library only).

A generator's `main()` passes its file names (the samples file first), the
texts made by its `generate()`, and the output target given on its command
line: none (the generator's own folder), a folder, or a path ending in .csv
that names the samples file (the other files go beside it).
"""
import argparse
import os
import sys


def output_paths(target, here, names):
    """Map each file name to its path, and return the folder too."""
    if target is None:
        folder, samples = here, os.path.join(here, names[0])
    elif target.lower().endswith(".csv"):
        folder, samples = os.path.dirname(os.path.abspath(target)), target
    else:
        folder, samples = target, os.path.join(target, names[0])
    paths = {names[0]: samples}
    for name in names[1:]:
        paths[name] = os.path.join(folder, name)
    return paths, folder


def run(argv, here, description, names, default_seed, generate):
    """Parse the command line, generate the files and write them (ASCII,
    Unix line ends); report each on stderr. Returns the exit status."""
    parser = argparse.ArgumentParser(description=description)
    parser.add_argument("output", nargs="?", default=None,
                        help="output folder (default: the folder of this "
                             "script); a path ending in .csv names the "
                             "samples file and the others go beside it")
    parser.add_argument("--seed", type=int, default=default_seed,
                        help="random seed (default: %(default)s, the seed of "
                             "the committed files)")
    args = parser.parse_args(argv)

    files = generate(args.seed)
    paths, folder = output_paths(args.output, here, names)
    os.makedirs(folder, exist_ok=True)
    for name in names:
        with open(paths[name], "w", encoding="ascii", newline="\n") as fh:
            fh.write(files[name])
        sys.stderr.write("wrote %s\n" % paths[name])
    return 0
