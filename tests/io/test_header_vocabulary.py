"""Run sheets typed the way labs type them: header synonyms, unit spellings, title rows, sheets.

Each typed sheet is read to the same SI values as the canonical spelling of the same
numbers, the canonical value computed from the unit's published definition (cited beside it).
"""

import csv
import io
import sys
from pathlib import Path

import numpy as np
import openpyxl
import pytest

from molid.io.headers import header_vocabulary, parse_header
from molid.io.problems import InputError
from molid.io.reading import read_raw, read_runs
from molid.io.run_csv import to_csv
from molid.io.units import resolve_unit
from molid.pipeline.identify import identify
from molid.pipeline.streaming import identify_to_csv

ROOT = Path(__file__).resolve().parents[2]
DOCS = ROOT / "docs" / "input.md"

# 1 atm = 101 325 Pa (10th CGPM 1954, Resolution 4) and 1 Torr = 1/760 atm (NIST SP 811, 2008
# edition, B.8; from memory).
TORR = 101325 / 760
# Conventional inch of mercury and pound-force per square inch: NIST SP 811 (2008) Appendix B.8,
# 3.386 389 E+03 Pa and 6.894 757 E+03 Pa (7 significant digits; from memory).
INCH_OF_MERCURY, PSI = 3386.389, 6894.757

#: The canonical columns of one evacuated-bulb run, in SI (units written out), as the reference.
CANONICAL = {
    "run": ("run", "b1"),
    "method": ("method", "evacuated-bulb"),
    "mass_tare": ("mass_tare [kg]", "0.150000"),
    "mass_filled": ("mass_filled [kg]", "0.150905"),
    "volume": ("volume [m^3]", "0.0005"),
    "temperature": ("temperature [K]", "294.15"),
    "pressure": ("pressure [Pa]", "100800"),
    "humidity": ("humidity [1]", "0.40"),
}


def _rows(columns: dict) -> list:
    return [[header for header, _ in columns.values()], [cell for _, cell in columns.values()]]


def _csv_bytes(rows, titles=(), separator=",") -> bytes:
    stream = io.StringIO()
    writer = csv.writer(stream, delimiter=separator, lineterminator="\n")
    for title in titles:
        writer.writerow(title)
    writer.writerows(rows)
    return stream.getvalue().encode("utf-8")


def _cell(text):
    """Store a number as a spreadsheet does (a float), other text as text."""
    try:
        return float(text)
    except ValueError:
        return text


def _xlsx_path(tmp_path, sheets: dict) -> Path:
    book = openpyxl.Workbook()
    book.remove(book.active)
    for name, rows in sheets.items():
        sheet = book.create_sheet(name)
        for row in rows:
            sheet.append([_cell(cell) for cell in row])
    path = tmp_path / "runs.xlsx"
    book.save(path)
    return path


def _read(rows, fmt, tmp_path, titles=()):
    if fmt == "csv":
        return read_runs(io.BytesIO(_csv_bytes(rows, titles)))
    return read_runs(_xlsx_path(tmp_path, {"Runs": [*titles, *rows]}))


def _assert_same_values(typed, canonical, rtol):
    for name, values in canonical.values.items():
        np.testing.assert_allclose(typed.values[name], values, rtol=rtol, equal_nan=True, err_msg=name)


# (column, header as typed, cell as typed, canonical SI cell, relative tolerance, source)
TYPED = [
    ("pressure", "Pressure, Torr", "756.06", f"{756.06 * TORR!r}", 1e-12, "1 Torr = 101325/760 Pa"),
    ("pressure", "Barometer (TORR)", "756.06", f"{756.06 * TORR!r}", 1e-12, "Torr in any case"),
    ("pressure", "P (inHg)", "29.77", f"{29.77 * INCH_OF_MERCURY!r}", 1e-6, "NIST SP 811 B.8"),
    ("pressure", "Barometric pressure, psia", "14.62", f"{14.62 * PSI!r}", 1e-6, "NIST SP 811 B.8"),
    # 1 bar = 100 kPa (BIPM SI Brochure, 9th ed. 2019, Table 8); m = 10^-3 (Table 7)
    ("pressure", "p [mbar]", "1008.0", "100800", 1e-12, "SI Brochure Table 8"),
    # T/K = t/°C + 273.15 (BIPM SI Brochure, 9th ed. 2019, 2.3.1)
    ("temperature", "Temp (°C)", "21.0", "294.15", 1e-12, "SI Brochure 2.3.1"),
    ("temperature", "Gas temp, °C", "21.0", "294.15", 1e-12, "SI Brochure 2.3.1"),
    # t/°F = 1.8 t/°C + 32 (NIST SP 811, 2008 edition, 4.2.1.1; from memory)
    ("temperature", "T (°F)", "69.8", "294.15", 1e-12, "NIST SP 811 4.2.1.1"),
    ("temperature", "Temperature [K]", "294.15", "294.15", 1e-12, "K is SI"),
    # 1 L = 1 dm³ = 10^-3 m³ (BIPM SI Brochure, 9th ed. 2019, Table 8); 1 mL = 1 cm³
    ("volume", "Bulb volume (mL)", "500", "0.0005", 1e-12, "SI Brochure Table 8"),
    ("volume", "Flask volume, ml", "500", "0.0005", 1e-12, "SI Brochure Table 8"),
    ("volume", "Syringe volume [cm3]", "500", "0.0005", 1e-12, "SI Brochure Table 8"),
    ("volume", "V (cm³)", "500", "0.0005", 1e-12, "SI Brochure Table 8"),
    ("volume", "V, L", "0.5", "0.0005", 1e-12, "SI Brochure Table 8"),
    ("volume", "Bulb volume (l)", "0.5", "0.0005", 1e-12, "SI Brochure Table 8"),
    # a percentage is 0.01 of a fraction (common practice)
    ("humidity", "RH (% RH)", "40", "0.40", 1e-12, "common practice"),
    ("humidity", "Rel. humidity, %RH", "40", "0.40", 1e-12, "common practice"),
    ("humidity", "Humidity", "40", "0.40", 1e-12, "default % (README)"),
    ("mass_tare", "Mass empty (g)", "150.0000", "0.150000", 1e-12, "SI prefix m"),
    ("mass_tare", "Tare, mg", "150000", "0.150000", 1e-12, "SI prefix m"),
    ("mass_filled", "Full mass [g]", "150.9050", "0.150905", 1e-12, "SI prefix k"),
    ("run", "Run no", "b1", "b1", 0, "text"),
    ("run", "Trial", "b1", "b1", 0, "text"),
]


@pytest.mark.parametrize("fmt", ["csv", "xlsx"])
@pytest.mark.parametrize("column, header, typed, si, rtol, source", TYPED,
                         ids=[item[1] for item in TYPED])
def test_typed_header_reads_to_the_canonical_si_values(tmp_path, fmt, column, header, typed, si, rtol,
                                                       source):
    """A header typed with a synonym and a unit as labs write it gives the canonical SI values.

    The canonical cell is the same quantity in SI computed from the unit's definition
    (sources beside TYPED: CGPM 1954 and NIST SP 811 for Torr, inHg and psi; BIPM SI Brochure
    2019 for bar, litre and degree Celsius; common practice for percent).
    """
    columns = dict(CANONICAL)
    canonical = _read(_rows({**columns, column: (columns[column][0], si)}), fmt, tmp_path)
    typed_table = _read(_rows({**columns, column: (header, typed)}), fmt, tmp_path)
    assert typed_table.ok.all() and canonical.ok.all()
    _assert_same_values(typed_table, canonical, rtol)
    assert list(typed_table.text["run"]) == list(canonical.text["run"])


def test_whole_sheet_typed_by_hand_equals_the_canonical_sheet(tmp_path):
    """Every column typed the lab's way at once, with two title rows, in a semicolon file.

    Canonical values from the definitions cited above TYPED (Torr, degree Celsius, litre, percent).
    """
    canonical = read_runs(io.BytesIO(_csv_bytes(_rows(CANONICAL))))
    pressure = f"{100800 / TORR:.10f}".replace(".", ",")
    typed = ("Section 4B gas bulbs; 3 Dec\n\n"
             "Run id;Method;Mass empty (g);Mass full, g;Bulb volume [cm³];Temp (°C);Pressure, Torr;"
             "RH (% RH)\n"
             f"b1;evacuated-bulb;150,0000;150,9050;500;21,0;{pressure};40\n")
    table = read_runs(io.BytesIO(typed.encode("utf-8")))
    _assert_same_values(table, canonical, 1e-9)
    assert table.row_numbers.tolist() == [4]


@pytest.mark.parametrize("fmt", ["csv", "xlsx"])
def test_title_rows_are_skipped_with_a_note_and_rows_keep_their_numbers(tmp_path, fmt):
    """Checks behaviour: two title rows above the header; a bad cell is named by its spreadsheet row."""
    rows = _rows({**CANONICAL, "mass_filled": ("Mass full, g", "150.9050")})
    rows.append(["b2", "evacuated-bulb", "0.150000", "abc", "0.0005", "294.15", "100800", "0.40"])
    titles = [["Section 4B gas bulbs, 3 Dec"], []]
    result = identify(io.BytesIO(_csv_bytes(rows, titles)) if fmt == "csv"
                      else _xlsx_path(tmp_path, {"Runs": [*titles, *rows]}), rank=False)
    assert result.table.row_numbers.tolist() == [4, 5]
    assert result.errors[0] == []
    assert any(message.startswith("row 5, column 'Mass full, g': 'abc' is not a number")
               for message in result.errors[1])
    assert "rows 1–2 above the header were skipped: 'Section 4B gas bulbs, 3 Dec'" in result.table.notes


def test_blank_first_row_and_header_found_with_its_own_separator():
    """Checks behaviour: a blank line and a comma-free title above a semicolon header are skipped."""
    text = "\nGas bulbs 3 Dec\nrun;method;mass_tare;mass_filled;volume;temperature;pressure\n" \
           "b1;evacuated-bulb;150,0000;150,9050;500;21,0;100,8\n"
    table = read_runs(io.BytesIO(text.encode("utf-8")))
    assert table.row_numbers.tolist() == [4]
    assert table.values["temperature"][0] == pytest.approx(294.15)
    assert "rows 1–2 above the header were skipped: 'Gas bulbs 3 Dec'" in table.notes


def test_no_header_within_the_search_rows_names_what_was_found(tmp_path):
    """Checks behaviour: a header below row 20 is not searched for; the message lists row 1's cells."""
    path = _xlsx_path(tmp_path, {"Runs": [["Gas bulbs"], *([[]] * 20), *_rows(CANONICAL)]})
    with pytest.raises(InputError, match="required column.*found: 'Gas bulbs'"):
        read_runs(path)


def test_second_sheet_is_read_when_only_it_has_a_header(tmp_path):
    """Checks behaviour: a cover sheet without a header is passed over for the one sheet with one."""
    path = _xlsx_path(tmp_path, {"Cover": [["Instructions: weigh twice"]],
                                 "Runs": [["Gas bulbs, 3 Dec"], *_rows(CANONICAL)],
                                 "Scratch": [["x", "y"]]})
    table = read_runs(path)
    assert table.ok.all() and table.row_numbers.tolist() == [3]
    assert any(note.startswith("sheet 'Runs' was read: the first sheet, 'Cover', has no header row")
               for note in table.notes)
    by_name, by_position = read_runs(path, sheet="runs"), read_runs(path, sheet=2)
    _assert_same_values(by_name, table, 0)
    _assert_same_values(by_position, table, 0)
    with pytest.raises(InputError, match=r"no sheet 'Day 2'; its sheets are 1 'Cover', 2 'Runs', "
                                         r"3 'Scratch'"):
        read_runs(path, sheet="Day 2")
    with pytest.raises(InputError, match="required column"):
        read_runs(path, sheet="Cover")


def test_first_sheet_stays_when_two_other_sheets_have_headers(tmp_path):
    """Checks behaviour: no guessing between two candidate sheets; the first sheet is read and refused."""
    path = _xlsx_path(tmp_path, {"Cover": [["Instructions"]], "Day 1": _rows(CANONICAL),
                                 "Day 2": _rows(CANONICAL)})
    with pytest.raises(InputError, match="found: 'Instructions'"):
        read_runs(path)


def test_a_sheet_asked_of_a_csv_file_is_an_error():
    """Checks behaviour: --sheet on a text file stops it rather than being ignored."""
    with pytest.raises(InputError, match="not an .xlsx workbook"):
        read_runs(io.BytesIO(_csv_bytes(_rows(CANONICAL))), sheet="Runs")


@pytest.mark.parametrize("first, second", [("Temp", "Temperature"), ("T (°C)", "Gas temp, °C"),
                                           ("RH", "Humidity"), ("temperature", "temperature")])
def test_two_headers_meaning_one_input_stop_the_file(first, second):
    """Checks behaviour: a synonym never lets two columns mean one input silently; both are named."""
    column = parse_header(first).name
    rows = _rows({name: item for name, item in CANONICAL.items() if name != column})
    rows[0] += [first, second]
    rows[1] += ["21", "22"]
    with pytest.raises(InputError) as raised:
        read_runs(io.BytesIO(_csv_bytes(rows)))
    assert f"columns '{first}' and '{second}' both mean" in str(raised.value)


def test_unused_column_is_noted_once_and_kept_as_typed():
    """Checks behaviour: an unknown header is named in one note and its cells reach the CSV output."""
    rows = _rows(CANONICAL)
    rows[0] += ["Temp2", "Flask colour", "Notes", "operator"]
    rows[1] += ["=21,5", "amber", "fine", "K. Ames"]
    result = identify(io.BytesIO(_csv_bytes(rows, separator=";")), rank=False)
    unused = [note for note in result.table.notes if "not used" in note]
    assert len(unused) == 1
    assert unused[0].startswith("columns 'Temp2', 'Flask colour' were not used")
    output = list(csv.reader(io.StringIO(to_csv(result))))
    assert {"Temp2", "Flask colour", "Notes", "operator"} <= set(output[0])
    assert output[1][output[0].index("Flask colour")] == "amber"
    single = read_runs(io.BytesIO(_csv_bytes([rows[0][:-3], rows[1][:-3]])))
    assert any(note.startswith("column 'Temp2' was not used") for note in single.notes)


def test_an_expanded_uncertainty_header_is_not_read_as_a_standard_one():
    """Checks behaviour: u(T) is a standard uncertainty (GUM 2.3.1); U(T), an expanded one, is not read."""
    assert parse_header("u(T) [K]").name == "u_temperature"
    assert parse_header("u(Temp), K").unit == "K"
    assert parse_header("U(T) [K]").name != "u_temperature"


def test_matching_ignores_case_and_separators():
    """Checks behaviour: case, spaces, hyphens, dots and underscores do not matter in a header's name."""
    for header in ("REL-HUMIDITY", "rel_humidity", "Rel.Humidity", " rel . humidity "):
        assert parse_header(header).name == "humidity"
    for header in ("GAS TEMP", "gas-temp", "Gas_temp"):
        assert parse_header(header).name == "temperature"


def test_the_synonyms_asked_for_are_in_the_table():
    """Checks behaviour: the synonyms labs use resolve to their columns (the new method's names too)."""
    expected = {
        "temperature": ["Temp", "T", "Temperature", "Gas temp"],
        "humidity": ["RH", "Humidity", "Rel. humidity"],
        "pressure": ["Barometer", "Barometric pressure", "P", "p", "Pressure"],
        "mass_tare": ["Mass empty", "Empty mass", "Tare"],
        "mass_filled": ["Mass full", "Full mass", "Filled mass"],
        "volume": ["Bulb volume", "Flask volume", "Syringe volume", "V"],
        "air_temperature": ["Room temp", "Balance room temperature", "Air temp"],
        "run": ["Run id", "Run no", "Trial"],
        "source_before": ["Lighter before", "Source before", "Mass before"],
        "source_after": ["Lighter after", "Source after", "Mass after"],
        "water_column": ["Water column", "Water height", "Height of water"],
    }
    for column, headers in expected.items():
        for header in headers:
            assert parse_header(header).name == column, header


@pytest.mark.parametrize("kind, small, large", [("mass", "mg", "Mg"), ("volume", "mL", "ML")])
def test_unit_case_is_kept_where_it_changes_the_unit(kind, small, large):
    """A megagram is not a milligram, a megalitre not a millilitre: M = 10^6, m = 10^-3.

    Source: SI prefixes, BIPM SI Brochure, 9th ed. 2019, Table 7.
    """
    assert resolve_unit(kind, large).scale == pytest.approx(resolve_unit(kind, small).scale * 1e9)


def test_unknown_unit_lists_the_accepted_units_of_its_column():
    """Checks behaviour: an unknown unit stops the file, naming the column and the units accepted."""
    rows = _rows({**CANONICAL, "pressure": ("Pressure, psig", "0")})
    with pytest.raises(InputError) as raised:
        read_runs(io.BytesIO(_csv_bytes(rows)))
    message = str(raised.value)
    assert "column 'Pressure, psig': unknown unit 'psig'" in message
    assert "Torr" in message and "inHg" in message


def test_streaming_finds_the_header_below_title_rows(tmp_path):
    """Checks behaviour: a large file with title rows streams to the in-memory bytes, rows numbered alike."""
    good = ["evacuated-bulb", "150.0000", "150.9050", "500", "21.0", "100.8"]
    lines = ["Section 4B gas bulbs; 3 Dec", "Instructor: R. Okafor",
             "Trial;Method;Tare;Full mass;V (mL);Temp (°C);Pressure, kPa"]
    lines += [";".join([f"b{index}", *good]) for index in range(1, 1201)]
    lines[3 + 700] = ";".join(["b701", *good[:2], "n/a", *good[3:]])
    path = tmp_path / "titled.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    summary = identify_to_csv(path, tmp_path / "out.csv", chunk_rows=500, progress=False, workers=1)
    assert (tmp_path / "out.csv").read_text(encoding="utf-8") == to_csv(identify(path))
    assert summary.runs == 1200 and summary.errors[0].startswith("row 704, column 'Full mass'")
    assert summary.notes[0].startswith("rows 1–2 above the header were skipped: "
                                       "'Section 4B gas bulbs; 3 Dec'; 'Instructor: R. Okafor'")


def test_a_frame_from_read_raw_keeps_its_header_row_notes_and_name(tmp_path):
    """Checks behaviour: the cells of a sheet read once read again as the same runs (rows, notes, name)."""
    path = _xlsx_path(tmp_path, {"Runs": [["Gas bulbs"], *_rows(CANONICAL)]})
    raw = read_raw(path)[0]
    again, direct = read_runs(raw), read_runs(path)
    assert again.row_numbers.tolist() == direct.row_numbers.tolist() == [3]
    assert again.notes == direct.notes and again.source == direct.source == str(path)


def synonyms_markdown() -> str:
    """Generate the synonyms table of docs/input.md from molid/data/header_synonyms.toml."""
    vocabulary = header_vocabulary()
    lines = ["| column | meaning | also read as |", "|---|---|---|"]
    for column, meaning in vocabulary.meanings.items():
        also = ", ".join(f"`{word}`" for word in vocabulary.listed[column]) or "–"
        lines.append(f"| `{column}` | {meaning} | {also} |")
    return "\n".join(lines) + "\n"


def test_docs_list_every_synonym():
    """Checks behaviour: docs/input.md holds the synonyms table generated from the data file.

    Run ``python tests/io/test_header_vocabulary.py`` to print the table to paste.
    """
    text = DOCS.read_text(encoding="utf-8")
    assert synonyms_markdown() in text, "docs/input.md is out of date; paste:\n" + synonyms_markdown()
    missing = [word for words in header_vocabulary().listed.values() for word in words
               if f"`{word}`" not in text]
    assert missing == []


if __name__ == "__main__":  # pragma: no cover - prints the table for docs/input.md
    sys.stdout.write(synonyms_markdown())
