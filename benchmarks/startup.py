"""Start-up benchmark: everyday molid commands against the time Python takes to import pandas.

Not part of the test suite. Run from the repository root:

    python benchmarks/startup.py            # 7 timed runs of each command
    python benchmarks/startup.py 15         # more runs, a steadier median
    python benchmarks/startup.py 9 --code /path/to/other/checkout   # time another version of molid

Each command runs in a fresh process, whole: interpreter start, imports, reading,
analysis and output. The yardstick is ``python -c "import pandas"`` with the same
interpreter. The commands and the yardstick run in turn (A B A B ...), so that a
machine whose speed drifts during the benchmark slows both alike, and each ratio is
the median of the per-pair ratios, of wall time and of CPU time (user + system of the
finished process, from the operating system's accounting). Timed:

- ``molid identify ONE.csv``: a file of one run (the first run of
  sample_runs/qa_cylinders.csv);
- ``molid grade SECTION.csv --key KEY.csv``: a section of 100 students (the demo
  section sample_runs/teaching_section.csv four times over, with new run ids and names);
- ``molid report TEN.csv -o report.pdf``: a PDF of 10 samples (the demo cylinders plus
  three of them again under new sample ids).

The files are written to a temporary folder and removed afterwards. The commands
run as an installed molid would: with compiled bytecode (``PYTHONDONTWRITEBYTECODE`` is
removed from their environment and ``PYTHONPYCACHEPREFIX`` points into the temporary
folder, so the repository gets no ``__pycache__``) and with molid's user cache in the
temporary folder (``MOLID_CACHE_DIR``). The first run of each command is a warm-up and
is not counted: it writes the bytecode and the user cache and fills the operating
system's file cache.

With ``--code DIR`` the commands import molid from DIR (a checkout or an unpacked
``git archive``) instead of the installed one, so that two versions can be timed on the
same machine, one after the other.
"""

import argparse
import csv
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_runs"


def _rows(path):
    with open(path, newline="", encoding="utf-8") as handle:
        return list(csv.reader(handle))


def _write(path, rows):
    with open(path, "w", newline="", encoding="utf-8") as handle:
        csv.writer(handle).writerows(rows)
    return path


def write_inputs(folder: Path) -> dict:
    """Write the one-run file, the 100-student section and the 10-sample file into a folder."""
    cylinders = _rows(SAMPLES / "qa_cylinders.csv")
    header, runs = cylinders[0], cylinders[1:]
    one = _write(folder / "one.csv", [header, runs[0]])

    section = _rows(SAMPLES / "teaching_section.csv")
    section_header, students = section[0], section[1:]
    run_column, student_column = section_header.index("run"), section_header.index("student")
    rows = []
    for copy in range(4):
        for row in students:
            row = list(row)
            row[run_column] = f"{row[run_column]}-{copy + 1}"
            row[student_column] = f"{row[student_column]} {copy + 1}"
            rows.append(row)
    rows = rows[:100]
    hundred = _write(folder / "section.csv", [section_header, *rows])

    sample_column, run_id = header.index("sample"), header.index("run")
    samples = list(dict.fromkeys(row[sample_column] for row in runs))
    extra = []
    for number, sample in enumerate(samples[:10 - len(samples)], start=1):
        for row in runs:
            if row[sample_column] == sample:
                row = list(row)
                row[sample_column] = f"{sample}-B"
                row[run_id] = f"{row[run_id]}-B{number}"
                extra.append(row)
    ten = _write(folder / "ten.csv", [header, *runs, *extra])
    return {"one": one, "section": hundred, "ten": ten}


def commands(files: dict, folder: Path) -> dict:
    """Return the timed molid commands, each run by the interpreter that runs this script."""
    molid = [sys.executable, "-m", "molid"]
    return {
        "identify, one run": [*molid, "identify", str(files["one"])],
        "grade, 100 students": [*molid, "grade", str(files["section"]), "--key",
                                str(SAMPLES / "teaching_key.csv")],
        "report, 10-sample PDF": [*molid, "report", str(files["ten"]), "-o",
                                  str(folder / "report.pdf"), "--force"],
    }


def environment(folder: Path, code: Path | None = None) -> dict:
    """Return the commands' environment: bytecode written into the folder, molid's user cache there too."""
    variables = dict(os.environ)
    variables.pop("PYTHONDONTWRITEBYTECODE", None)
    variables["PYTHONPYCACHEPREFIX"] = str(folder / "bytecode")
    variables["MOLID_CACHE_DIR"] = str(folder / "cache")
    if code is not None:
        variables["PYTHONPATH"] = os.pathsep.join([str(code), *filter(None, [os.environ.get("PYTHONPATH")])])
    return variables


def timed(command, folder: Path, code: Path | None = None) -> tuple:
    """Wall and CPU seconds of one whole command, its output thrown away; exit 0 or 1 expected.

    The command runs in the temporary folder, since ``python -m`` puts the working
    folder first on the module path: run from a checkout, it would time that checkout.
    CPU time is the finished process's user and system time, its children's included.
    """
    before = os.times()
    start = time.perf_counter()
    process = subprocess.run(command, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                             env=environment(folder, code), cwd=folder)
    elapsed = time.perf_counter() - start
    after = os.times()
    if process.returncode not in (0, 1):
        raise SystemExit(f"{' '.join(command[:4])} failed:\n{process.stderr.decode()}")
    cpu = (after.children_user - before.children_user) + (after.children_system - before.children_system)
    return elapsed, cpu


def paired(command, yardstick, runs: int, folder: Path, code: Path | None = None) -> dict:
    """Median wall and CPU times of a command and the yardstick, run in turn, and the median ratios."""
    timed(command, folder, code)
    timed(yardstick, folder, code)
    pairs = []
    for _ in range(runs):
        pairs.append((timed(command, folder, code), timed(yardstick, folder, code)))
    figures = {}
    for index, name in enumerate(("wall", "cpu")):
        figures[name] = statistics.median(one[index] for one, _ in pairs)
        figures[f"{name} pandas"] = statistics.median(other[index] for _, other in pairs)
        figures[f"{name} ratio"] = statistics.median(one[index] / other[index] for one, other in pairs)
    return figures


def main(runs: int = 7, code: Path | None = None) -> None:
    """Time each command against the pandas import and print a table of medians and ratios."""
    yardstick = [sys.executable, "-c", "import pandas"]
    with tempfile.TemporaryDirectory() as folder:
        folder = Path(folder)
        files = write_inputs(folder)
        print(f"{runs} pairs each; medians; yardstick: python -c 'import pandas'"
              + (f"; molid from {code}" if code else ""))
        print(f"{'command':<24} {'wall s':>7} {'pandas':>7} {'ratio':>6} "
              f"{'CPU s':>7} {'pandas':>7} {'ratio':>6}")
        for label, command in commands(files, folder).items():
            figures = paired(command, yardstick, runs, folder, code)
            print(f"{label:<24} {figures['wall']:7.3f} {figures['wall pandas']:7.3f} "
                  f"{figures['wall ratio']:6.2f} {figures['cpu']:7.3f} {figures['cpu pandas']:7.3f} "
                  f"{figures['cpu ratio']:6.2f}")


if __name__ == "__main__":
    options = argparse.ArgumentParser(description="Time everyday molid commands against importing pandas.")
    options.add_argument("runs", nargs="?", type=int, default=7, help="timed pairs of each command (7)")
    options.add_argument("--code", type=Path,
                         help="import molid from this folder instead of the installed one")
    arguments = options.parse_args()
    main(arguments.runs, arguments.code.resolve() if arguments.code else None)
