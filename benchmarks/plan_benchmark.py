"""Time `molid plan` of 10 unknowns with --simulate 1000 against its yardstick.

The yardstick is the time of `python -c "import pandas"` plus the time `molid identify` takes
for a 10,000-run file (written by make_big_file.py; 10,000 rows stay on the in-memory path).
Each command runs in a fresh process; the three run in turn, REPEATS times, and the medians
and the median of the per-round ratios are printed.

    python benchmarks/plan_benchmark.py [REPEATS]
"""

import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from make_big_file import make_frame  # noqa: E402

UNKNOWNS = ("argon, carbon dioxide, nitrous oxide, nitrogen, carbon monoxide, helium, methane, "
            "propane, sulfur hexafluoride, oxygen")


def timed(command) -> float:
    """Wall time of one command in a fresh process [s]."""
    start = time.perf_counter()
    subprocess.run(command, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    return time.perf_counter() - start


def main(repeats: int) -> None:
    """Run the three commands in turn ``repeats`` times and print the medians and the ratio."""
    with tempfile.TemporaryDirectory() as folder:
        runs = Path(folder) / "runs.csv"
        make_frame(10_000).to_csv(runs, index=False)
        commands = {
            "plan": [sys.executable, "-m", "molid", "plan", "--method", "syringe", "--unknowns", UNKNOWNS,
                     "--simulate", "1000"],
            "import pandas": [sys.executable, "-c", "import pandas"],
            "identify 10,000 runs": [sys.executable, "-m", "molid", "identify", str(runs), "-o",
                                     str(Path(folder) / "out.csv"), "--force"],
        }
        timed(commands["plan"])  # warm the user cache (units, library formulas) once
        times = {name: [] for name in commands}
        for _ in range(repeats):
            for name, command in commands.items():
                times[name].append(timed(command))
        ratios = [plan / (pandas + identify) for plan, pandas, identify in
                  zip(times["plan"], times["import pandas"], times["identify 10,000 runs"], strict=True)]
        for name, values in times.items():
            print(f"{name:<22} median {statistics.median(values):6.2f} s  "
                  f"({', '.join(f'{value:.2f}' for value in values)})")
        print(f"plan / (import pandas + identify): median {statistics.median(ratios):.2f} (target at most 3)")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 3)
