"""Throughput benchmark: molid on a large run file against pandas' own read and write of it.

Not part of the test suite. Run from the repository root:

    python benchmarks/throughput.py            # 1,000,000 runs
    python benchmarks/throughput.py 200000     # a quicker check

It writes the file with benchmarks/make_big_file.py, then times, each in a fresh
process, (a) pandas reading the file as text and writing it back, and (b)
``molid identify FILE -o OUT.csv``, and reports wall and CPU time, runs per
second, the ratios, and each process's peak resident memory. Two pandas
references are timed: reading every cell as text (what molid does, to keep the
user's cells as typed) and pandas' defaults (type inference, number formatting).
"""

import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent

# pandas reading every cell as text (as molid does, to keep what the user typed) and
# writing it back: the stricter reference.
PANDAS_TEXT = """
import pandas as pd, sys
frame = pd.read_csv(sys.argv[1], dtype=str, keep_default_na=False)
frame.to_csv(sys.argv[2], index=False)
"""
# pandas' own defaults: type inference on reading, numbers formatted on writing.
PANDAS_DEFAULT = """
import pandas as pd, sys
pd.read_csv(sys.argv[1]).to_csv(sys.argv[2], index=False)
"""


_WRAPPER = """
import resource, subprocess, sys
code = subprocess.run(sys.argv[1:], stdout=subprocess.DEVNULL).returncode
print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss, code)
"""


def timed(command):
    """Wall seconds, CPU seconds (user + system) and peak RSS [MiB] of one command."""
    start = time.perf_counter()
    before = os.times()
    process = subprocess.run([sys.executable, "-c", _WRAPPER, *command], capture_output=True,
                             text=True)
    wall = time.perf_counter() - start
    after = os.times()
    peak_kib, code = process.stdout.split()
    if int(code) not in (0, 1):
        raise SystemExit(f"{command[:4]} failed:\n{process.stderr}")
    cpu = (after.children_user - before.children_user) + (after.children_system
                                                          - before.children_system)
    return wall, cpu, int(peak_kib) / 1024


def main():
    runs = int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000
    with tempfile.TemporaryDirectory() as folder:
        source = Path(folder) / "big.csv"
        subprocess.run([sys.executable, str(HERE / "make_big_file.py"), str(runs), str(source)],
                       check=True)
        pandas_wall, pandas_cpu, pandas_peak = timed(
            [sys.executable, "-c", PANDAS_TEXT, str(source), str(Path(folder) / "pandas.csv")])
        default_wall, _, _ = timed(
            [sys.executable, "-c", PANDAS_DEFAULT, str(source), str(Path(folder) / "default.csv")])
        molid_wall, molid_cpu, molid_peak = timed(
            [sys.executable, "-m", "molid.cli", "identify", str(source), "-o",
             str(Path(folder) / "molid.csv")])
        size = source.stat().st_size / 2**20
    report = {
        "runs": runs,
        "file_MiB": round(size, 1),
        "pandas_read_write_text_s": round(pandas_wall, 2),
        "pandas_read_write_default_s": round(default_wall, 2),
        "pandas_cpu_s": round(pandas_cpu, 2),
        "molid_s": round(molid_wall, 2),
        "molid_cpu_s": round(molid_cpu, 2),
        "molid_runs_per_s": round(runs / molid_wall),
        "ratio_wall_to_text": round(molid_wall / pandas_wall, 2),
        "ratio_wall_to_default": round(molid_wall / default_wall, 2),
        "ratio_cpu": round(molid_cpu / pandas_cpu, 2),
        "pandas_peak_rss_MiB": round(pandas_peak),
        "molid_peak_rss_MiB": round(molid_peak),
    }
    print(json.dumps(report, indent=2))


if __name__ == "__main__":
    main()
