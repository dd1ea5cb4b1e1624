"""Time and peak memory of each output path as the number of runs grows (synthetic, invented runs).

python benchmarks/output_scaling.py [--runs 10000 20000 40000] [--outputs json table csv]
                                    [--source DIR] [--folder DIR]

Each command runs in a fresh process under ``/usr/bin/time -v`` (GNU time), its
standard output sent to /dev/null (the JSON document and the terminal table) and
its CSV to a file in ``--folder``; the run files are written there by
benchmarks/make_big_file.py. ``--source`` runs another checkout of molid (for a
before/after comparison: ``git archive REV | tar -x -C DIR``). Prints one line per
command: runs, output, wall time [s], peak resident memory [MB], and the ratio of
time per run to the smallest file's.
"""

import argparse
import os
import re
import subprocess
import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from make_big_file import make_frame  # noqa: E402

_COMMANDS = {
    "json": lambda path, folder: ["identify", str(path), "--json"],
    "table": lambda path, folder: ["identify", str(path)],
    "csv": lambda path, folder: ["identify", str(path), "-o", str(folder / f"{path.stem}_out.csv"),
                                 "--force"],
    "json+csv": lambda path, folder: ["identify", str(path), "--json", "-o",
                                      str(folder / f"{path.stem}_out.csv"), "--force"],
}


def measure(arguments, source=None):
    """Run ``python -m molid ARGUMENTS`` under GNU time; give (wall seconds, peak RSS in MB, exit status)."""
    environment = dict(os.environ)
    if source:
        environment["PYTHONPATH"] = str(source)
    with tempfile.NamedTemporaryFile("r", suffix=".time") as report:
        completed = subprocess.run(
            ["/usr/bin/time", "-v", "-o", report.name, sys.executable, "-m", "molid", *arguments],
            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, env=environment,
            cwd=source or None, check=False)
        text = report.read()
    wall = re.search(r"Elapsed \(wall clock\) time \(h:mm:ss or m:ss\): (.+)", text).group(1)
    seconds = sum(float(part) * 60 ** power for power, part in enumerate(reversed(wall.split(":"))))
    peak = int(re.search(r"Maximum resident set size \(kbytes\): (\d+)", text).group(1)) / 1024
    return seconds, peak, completed.returncode


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--runs", type=int, nargs="+", default=[10_000, 20_000, 40_000])
    parser.add_argument("--outputs", nargs="+", default=["json", "table", "csv"], choices=_COMMANDS)
    parser.add_argument("--source", help="folder of the molid checkout to run (default: this one)")
    parser.add_argument("--folder", default=tempfile.gettempdir(), help="where the files go")
    args = parser.parse_args(argv)
    folder = Path(args.folder)
    print(f"{'runs':>8} {'output':<9} {'wall s':>8} {'peak MB':>8} {'s per 1k runs':>13} exit")
    for runs in args.runs:
        path = folder / f"runs_{runs}.csv"
        if not path.exists():
            make_frame(runs).to_csv(path, index=False)
        for output in args.outputs:
            seconds, peak, status = measure(_COMMANDS[output](path, folder), args.source)
            print(f"{runs:>8} {output:<9} {seconds:>8.1f} {peak:>8.0f} {seconds / runs * 1000:>13.2f} "
                  f"{status}", flush=True)


if __name__ == "__main__":
    main()
