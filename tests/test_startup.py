"""What everyday commands (one-run ``molid identify``, ``molid grade``) import with the user cache warm."""

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


def test_grading_imports_no_unit_or_plot_library(tmp_path):
    """Checks behaviour: with the cache warm, grading a section imports neither pint nor matplotlib nor fpdf.

    The diagnosis's gas-constant variants take their litre and calorie from the units
    cache; scipy may come in, since the section's samples have replicates.
    """
    code = ("import sys\nfrom molid.cli import main\n"
            "status = main(['grade', sys.argv[1], '--key', sys.argv[2], '-o', sys.argv[3], '--force'])\n"
            "print('IMPORTED', *[name for name in ('pint', 'matplotlib', 'fpdf') if name in sys.modules])\n")
    environment = dict(os.environ, MOLID_CACHE_DIR=str(tmp_path / "cache"))
    samples = ROOT / "sample_runs"
    arguments = [str(samples / "teaching_section.csv"), str(samples / "teaching_key.csv"),
                 str(tmp_path / "grades.csv")]
    runs = [subprocess.run([sys.executable, "-c", code, *arguments], capture_output=True, text=True,
                           env=environment, cwd=tmp_path).stdout for _ in range(2)]
    assert runs[1].splitlines()[-1].split() == ["IMPORTED"]
    assert (tmp_path / "grades.csv").read_text(encoding="utf-8").startswith("run,")


def test_a_command_that_ends_early_leaves_complete_outputs(tmp_path, capsys):
    """Checks behaviour: ``python -m molid`` ends without the interpreter's clean-up, outputs complete.

    Its file and its standard output equal those of the same command run in-process, and
    its exit statuses are the usual ones (0 done, 2 for a missing file).
    """
    from molid.cli import main

    runs = ROOT / "sample_runs" / "qa_cylinders.csv"
    environment = dict(os.environ, MOLID_CACHE_DIR=str(tmp_path / "cache"))
    command = [sys.executable, "-m", "molid", "identify", str(runs), "-o", str(tmp_path / "a.csv")]
    ended = subprocess.run(command, capture_output=True, text=True, env=environment, cwd=tmp_path)
    assert main(["identify", str(runs), "-o", str(tmp_path / "b.csv")]) == ended.returncode == 0
    assert capsys.readouterr().out == ended.stdout
    assert (tmp_path / "a.csv").read_bytes() == (tmp_path / "b.csv").read_bytes()
    missing = subprocess.run([sys.executable, "-m", "molid", "identify", str(tmp_path / "none.csv")],
                             capture_output=True, text=True, env=environment, cwd=tmp_path)
    assert missing.returncode == 2 and "no such file" in missing.stderr
