"""What a one-run ``molid identify`` imports once the user cache is warm (start-up time)."""

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
HEAVY = ("scipy", "pint", "matplotlib", "fpdf", "openpyxl", "periodictable", "pyparsing")


def test_one_run_identify_imports_nothing_it_does_not_use(tmp_path):
    """Checks behaviour: with the cache warm, one run imports no scipy, pint, matplotlib, fpdf, openpyxl.

    Nor periodictable (and its parser, pyparsing): the library's formulas and the molar mass
    of water come from the cache. The first process fills the user cache (units, the
    library's formulas, water's molar mass); the second is the everyday case.
    """
    lines = (ROOT / "sample_runs" / "qa_cylinders.csv").read_text(encoding="utf-8").splitlines()
    one = tmp_path / "one.csv"
    one.write_text("\n".join(lines[:2]) + "\n", encoding="utf-8")
    code = ("import sys\nfrom molid.cli import main\nstatus = main(['identify', sys.argv[1], '--json'])\n"
            f"print('IMPORTED', status, *[name for name in {HEAVY!r} if name in sys.modules])\n")
    environment = dict(os.environ, MOLID_CACHE_DIR=str(tmp_path / "cache"))
    runs = [subprocess.run([sys.executable, "-c", code, str(one)], capture_output=True, text=True,
                           env=environment, cwd=tmp_path, check=True).stdout for _ in range(2)]
    assert runs[0].splitlines()[-1].split()[:2] == ["IMPORTED", "0"]
    assert runs[1].splitlines()[-1].split() == ["IMPORTED", "0"]
    documents = sorted(path.name.split("-")[0] for path in (tmp_path / "cache").iterdir())
    assert documents == ["formulas", "molar", "units"]
