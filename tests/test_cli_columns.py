"""`molid columns` and `--sheet`: how headers were understood, exit codes, the sheet read."""

import csv
import io
import json

import openpyxl
import pytest

from molid.cli import main

TITLE = "Section 4B gas bulbs, 3 Dec"
HEADER = ["Trial", "Method", "Mass empty (g)", "Mass full, g", "Bulb volume [mL]", "Temp (°C)",
          "Pressure, Torr", "u(T) [K]", "Temp2", "Notes"]
RUNS = [["b1", "evacuated-bulb", 150.0, 150.905, 500, 21.0, 756.06, 0.2, 3, "fine"],
        ["b2", "evacuated-bulb", 150.0, "abc", 500, 21.0, 756.06, 0.2, 3, ""]]


@pytest.fixture()
def workbook(tmp_path):
    """Write a cover sheet, then the runs under a title and a blank row (header in row 3)."""
    book = openpyxl.Workbook()
    book.active.title = "Cover"
    book.active.append(["Fill in the second sheet"])
    runs = book.create_sheet("Runs")
    for row in ([TITLE], [], HEADER, *RUNS):
        runs.append(row)
    path = tmp_path / "section.xlsx"
    book.save(path)
    return path


@pytest.fixture()
def semicolon_file(tmp_path):
    stream = io.StringIO()
    writer = csv.writer(stream, delimiter=";", lineterminator="\n")
    writer.writerows([[TITLE], [], HEADER, *[[str(cell).replace(".", ",") for cell in row]
                                             for row in RUNS]])
    path = tmp_path / "section.csv"
    path.write_text(stream.getvalue(), encoding="utf-8")
    return path


def test_columns_says_how_each_header_was_read(semicolon_file, capsys):
    """Checks behaviour: synonyms, units with their SI conversion, uncertainty sources, unused columns.

    The conversions printed are checked against 1 Torr = 101325/760 Pa (CGPM 1954 atmosphere;
    NIST SP 811, 2008, B.8; from memory) and T/K = t/°C + 273.15 (BIPM SI Brochure 2019, 2.3.1).
    """
    assert main(["columns", str(semicolon_file)]) == 0
    out = capsys.readouterr().out
    assert out.startswith(f"{semicolon_file}: header in row 3, data from row 4")
    assert "'Trial' -> run (by synonym)" in out
    assert "'Mass empty (g)' -> mass_tare (by synonym): input: tare reading" in out
    assert f"1 Torr = {101325 / 760:.6g} Pa" in out
    assert "x °C = (x + 273.15) K" in out
    assert "default uncertainty: column 'u(T) [K]'" in out
    assert "default uncertainty: profile (default profile) [pressure]" in out
    assert "'Notes' -> -: free text, kept as typed" in out
    assert "Unused columns: 'Temp2'" in out
    assert f"rows 1–2 above the header were skipped: '{TITLE}'" in out


def test_columns_with_a_profile_names_its_rule(semicolon_file, tmp_path, capsys):
    """Checks behaviour: --profile changes where a default uncertainty comes from."""
    profile = tmp_path / "lab.toml"
    profile.write_text('[pressure]\nunit = "Pa"\nstandard = 20\n', encoding="utf-8")
    assert main(["columns", str(semicolon_file), "--profile", str(profile)]) == 0
    assert f"profile ({profile}) [pressure]: standard 20 [Pa]" in capsys.readouterr().out


def test_columns_finds_the_sheet_with_the_runs(workbook, capsys):
    """Checks behaviour: the cover sheet is passed over with a note; --sheet picks by name or position."""
    assert main(["columns", str(workbook)]) == 0
    out = capsys.readouterr().out
    assert out.startswith(f"{workbook}, sheet 'Runs': header in row 3")
    assert "sheet 'Runs' was read: the first sheet, 'Cover', has no header row" in out
    assert main(["columns", str(workbook), "--sheet", "2"]) == 0
    assert "sheet 'Runs'" in capsys.readouterr().out


@pytest.mark.parametrize("arguments, message", [
    (["--sheet", "Day 2"], "no sheet 'Day 2'; its sheets are 1 'Cover', 2 'Runs'"),
    (["--sheet", "Cover"], "required column(s) missing"),
])
def test_columns_exits_2_when_the_file_cannot_be_read(workbook, capsys, arguments, message):
    """Checks behaviour: exit 2 and the reason on stderr, no traceback."""
    assert main(["columns", str(workbook), *arguments]) == 2
    err = capsys.readouterr().err
    assert message in err and "Traceback" not in err


def test_columns_exits_2_for_two_headers_of_one_input(tmp_path, capsys):
    """Checks behaviour: two synonyms of one input stop the file, naming both headers."""
    path = tmp_path / "twice.csv"
    path.write_text("run,method,volume,Temp,Temperature,pressure\nb1,syringe,50,21,21,100\n",
                    encoding="utf-8")
    assert main(["columns", str(path)]) == 2
    assert "columns 'Temp' and 'Temperature' both mean 'temperature'" in capsys.readouterr().err


def test_identify_reads_the_sheet_asked_for_with_spreadsheet_rows(workbook, capsys):
    """Checks behaviour: identify --sheet names the bad row by its row in the sheet (title rows counted)."""
    assert main(["identify", str(workbook), "--sheet", "Runs", "--json"]) == 1
    document = json.loads(capsys.readouterr().out)
    first, bad = document["results"]
    assert first["error"] is None and first["molar_mass"]["value"] > 0
    assert bad["error"].startswith("row 5, column 'Mass full, g'")
    assert main(["identify", str(workbook), "--sheet", "Nope"]) == 2
    assert "its sheets are 1 'Cover', 2 'Runs'" in capsys.readouterr().err


def test_sheet_on_a_csv_file_exits_2(semicolon_file, capsys):
    """Checks behaviour: --sheet on a text file is refused rather than ignored."""
    assert main(["identify", str(semicolon_file), "--sheet", "Runs"]) == 2
    assert "not an .xlsx workbook" in capsys.readouterr().err


def test_grade_and_report_read_the_sheet_asked_for(workbook, tmp_path, capsys):
    """Checks behaviour: grade and report take --sheet; the report may not overwrite the workbook."""
    assert main(["grade", str(workbook), "--sheet", "Runs", "--json"]) == 1
    grading = json.loads(capsys.readouterr().out)
    assert "row 5" in json.dumps(grading)
    report = tmp_path / "report.html"
    assert main(["report", str(workbook), "--sheet", "Runs", "-o", str(report)]) == 1
    assert "row 5, column" in report.read_text(encoding="utf-8").replace("&#x27;", "'")
    assert main(["report", str(workbook), "--sheet", "Runs", "-o", str(workbook), "--force"]) == 2
