"""The provenance block at the end of a report: the files with their SHA-256, the library, options."""

import hashlib
import html
import io
import sys
from pathlib import Path

from molid.cli import main
from molid.reports import write_report

ROOT = Path(__file__).resolve().parents[2]
RUNS = ROOT / "sample_runs" / "qa_cylinders.csv"
PROFILE = ROOT / "sample_runs" / "qa_lab_profile.toml"


def _digest(path):
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()


def test_the_report_ends_with_its_provenance(tmp_path, capsys):
    """The HTML report's last block names each input with hashlib's SHA-256 of its bytes.

    Checks behaviour apart from the digests: the block comes after the last page's
    signature lines, with the molid version and the options that were set.
    """
    out = tmp_path / "report.html"
    assert main(["report", str(RUNS), "--profile", str(PROFILE), "-o", str(out), "--top", "4"]) == 0
    text = html.unescape(out.read_text(encoding="utf-8"))
    block = text[text.rindex("Provenance"):]
    assert text.rindex("Analysed by") < text.rindex("Provenance")
    assert f"run sheet {RUNS}: SHA-256 {_digest(RUNS)}" in block
    assert f"profile {PROFILE}: SHA-256 {_digest(PROFILE)}" in block
    assert "candidate library (canonical CSV): SHA-256 " in block
    assert "report, created " in block and "options: top=4" in block


def test_a_report_made_in_python_records_its_files_too(tmp_path):
    """write_report with paths and no record: the run sheet and profile named with hashlib's digests."""
    out = tmp_path / "report.html"
    write_report(str(RUNS), out, profile=str(PROFILE))
    block = html.unescape(out.read_text(encoding="utf-8"))
    block = block[block.rindex("Provenance"):]
    assert f"run sheet {RUNS}: SHA-256 {_digest(RUNS)}" in block
    assert f"profile {PROFILE}: SHA-256 {_digest(PROFILE)}" in block


def test_a_report_of_standard_input_records_the_bytes_read(tmp_path, capsys, monkeypatch):
    """Standard input: the report names it with hashlib's digest of the bytes molid read."""
    data = RUNS.read_bytes()
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(data), encoding="utf-8"))
    out = tmp_path / "report.html"
    assert main(["report", "-", "-o", str(out)]) == 0
    text = html.unescape(out.read_text(encoding="utf-8"))
    assert f"run sheet standard input: SHA-256 {hashlib.sha256(data).hexdigest()}" in text
    assert "Sample CYL-2231" in text  # the analysis read the same bytes
