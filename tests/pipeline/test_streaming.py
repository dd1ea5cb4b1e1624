"""Large files in chunks: same bytes as in memory, duplicates across chunks, safe writing."""

import subprocess
import sys

import numpy as np
import pytest

from molid.cli import main
from molid.io.problems import InputError
from molid.io.run_csv import to_csv
from molid.pipeline.identify import identify
from molid.pipeline.streaming import identify_to_csv

sys.path.insert(0, "benchmarks")
from make_big_file import make_frame  # noqa: E402


@pytest.fixture(scope="module")
def run_file(tmp_path_factory):
    """2,500 invented runs with a few bad rows and a duplicate id two chunks apart."""
    frame = make_frame(2500, seed=4).astype(str)
    frame.loc[10, "mass_filled"] = "n/a"
    frame.loc[1500, "run"] = frame.loc[3, "run"]
    frame.loc[2200, "volume"] = "-1"
    path = tmp_path_factory.mktemp("big") / "runs.csv"
    frame.to_csv(path, index=False)
    return path


@pytest.mark.parametrize("workers", [1, 2])
def test_chunked_output_equals_in_memory_output(run_file, tmp_path, workers):
    """Checks behaviour: chunks of 700 rows, in one process or two, write the in-memory path's bytes."""
    streamed = tmp_path / "streamed.csv"
    summary = identify_to_csv(run_file, streamed, chunk_rows=700, progress=False, workers=workers)
    in_memory = to_csv(identify(run_file))
    assert streamed.read_text(encoding="utf-8") == in_memory
    assert summary.runs == 2500
    assert summary.rows_with_errors == 3


def test_duplicate_found_across_chunks(run_file, tmp_path):
    """Checks behaviour: a run id reused 1,500 rows later is an error naming the first row (header = 1)."""
    summary = identify_to_csv(run_file, tmp_path / "out.csv", chunk_rows=500, progress=False,
                              workers=2)
    duplicate = [message for message in summary.errors if "duplicate" in message]
    assert duplicate == ["row 1502, column 'run': duplicate run id 'R0000003' (first used in row 5);"
                         " run ids must be unique"]


def test_rows_in_equal_rows_out(run_file, tmp_path):
    """Checks behaviour: every input row has one output row, in order, good or bad."""
    out = tmp_path / "out.csv"
    identify_to_csv(run_file, out, chunk_rows=900, progress=False)
    import pandas as pd

    written = pd.read_csv(out, dtype=str, keep_default_na=False)
    original = pd.read_csv(run_file, dtype=str, keep_default_na=False)
    assert list(written["run"]) == list(original["run"])
    assert (written["error"] != "").sum() == 3
    assert np.isfinite(pd.to_numeric(written["molar_mass_g_mol"][written["error"] == ""])).all()


def test_cli_streams_large_files(run_file, tmp_path, monkeypatch, capsys):
    """Checks behaviour: the CLI streams above one chunk of rows and prints a summary (exit 1: bad rows)."""
    monkeypatch.setattr("molid.pipeline.streaming.DEFAULT_CHUNK_ROWS", 600)
    out = tmp_path / "cli.csv"
    assert main(["identify", str(run_file), "-o", str(out)]) == 1
    text = capsys.readouterr().out
    assert "2,500 runs analysed" in text and "3 with errors" in text
    assert out.exists()


def test_failed_run_leaves_no_partial_output(tmp_path):
    """Checks behaviour: a file that cannot be used leaves neither an output nor a temporary file."""
    bad = tmp_path / "bad.csv"
    bad.write_text("run,method\nx,syringe\n", encoding="utf-8")
    out = tmp_path / "out.csv"
    with pytest.raises(InputError, match="required column"):
        identify_to_csv(bad, out, progress=False)
    assert list(tmp_path.iterdir()) == [bad]


def test_help_starts_without_heavy_imports():
    """Checks behaviour: `molid --help` imports neither pandas, pint, matplotlib nor fpdf (under 0.5 s)."""
    code = ("import sys; from molid.cli import main\n"
            "try:\n    main(['--help'])\nexcept SystemExit:\n    pass\n"
            "print(sorted(m for m in ('pandas', 'pint', 'matplotlib', 'fpdf', 'scipy') "
            "if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip().splitlines()[-1] == "[]"
