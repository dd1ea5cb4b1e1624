r"""Hostile and careless run files: every path reads them by one contract, none ends in an internal error.

The files are generated here: six good runs, each spoiled in turn by one of the
things people and programs do to delimited text (an unquoted decimal comma, a
stray separator, a quote never closed, a short row, a trailing separator on every
row, a cell holding a line break, blank and separator-only lines), in three
separators, two line endings and three positions (136 files); then encodings, binary files,
workbooks and their limits. Each file goes through ``molid.cli.main`` and the
contract is checked: no exit 3 and no traceback, every good row analysed, every
bad row reported by its spreadsheet row number (header = row 1), nothing blank that
was not empty. The large-file reader is run on the same files in chunks of four rows
and must write the same bytes, or stop with the same message.

Outside facts the cases rest on, by source:

- CSV quoting: a cell in double quotes may hold the separator, line breaks and doubled
  quotes (RFC 4180, section 2; common CSV practice);
- byte-order marks EF BB BF, FF FE, FE FF, FF FE 00 00 (the Unicode Standard, chapter
  23.8, "Specials", and chapter 3.10 for the encoding forms);
- the five bytes Windows-1252 leaves undefined, 0x81, 0x8D, 0x8F, 0x90, 0x9D (the
  Windows-1252 code chart; from memory, and as Python's cp1252 codec implements it);
- an .xlsx workbook is a zip archive holding ``xl/workbook.xml`` (ECMA-376 Office Open
  XML, part 2, Open Packaging Conventions; zip local headers start ``PK\x03\x04``,
  PKWARE APPNOTE 4.3.7); a compound file (.xls, or an encrypted .xlsx) starts
  D0 CF 11 E0 A1 B1 1A E1 ([MS-CFB] 2.2, from memory).

Everything else here checks molid's own behaviour.
"""

import io
import json
import math
import random
import zipfile

import openpyxl
import pandas as pd
import pytest

from molid.cli import main
from molid.io.problems import InputError
from molid.io.run_csv import to_csv
from molid.pipeline.identify import identify
from molid.pipeline.streaming import identify_to_csv

COLUMNS = ["run", "sample", "method", "mass_tare", "mass_filled", "volume", "temperature", "pressure",
           "humidity", "notes"]
# Invented runs (demo values): two bulbs, two syringes of a gas lighter than air, an air-tare bulb.
RUNS = [
    ["h1", "S1", "evacuated-bulb", "150.0000", "150.5870", "500", "21.0", "100.8", "40", "first bulb"],
    ["h2", "S1", "evacuated-bulb", "150.0010", "150.5885", "500", "21.2", "100.8", "41", "second"],
    ["h3", "S2", "syringe", "50.0000", "49.9990", "100", "21.0", "100.8", "40", "light gas"],
    ["h4", "S2", "syringe", "50.0002", "49.9993", "100", "21.1", "100.7", "42", "again"],
    ["h5", "", "air-tare-bulb", "150.0000", "150.3000", "500", "21.5", "100.9", "45", "air tare"],
    ["h6", "S3", "evacuated-bulb", "150.0000", "150.9000", "500", "20.0", "101.0", "50", "last one"],
]


def _cli(args, capsys):
    """Run the command line; return its exit status, standard output and standard error."""
    code = main([str(arg) for arg in args])
    captured = capsys.readouterr()
    assert code != 3, captured.err
    assert "Traceback" not in captured.err and "internal error" not in captured.err
    return code, captured.out, captured.err


def _results(path, capsys):
    """Identify a file through the command line with --json; return the exit status and document."""
    code, out, err = _cli(["identify", path, "--json"], capsys)
    assert code in (0, 1), err
    return code, json.loads(out)


def _check_rows(document, expected):
    """Check every good row was analysed, every bad row reported by its row number and what was wrong."""
    by_row = {result["row"]: result for result in document["results"]}
    assert sorted(by_row) == sorted(expected)
    for row, (run, status, fragment) in expected.items():
        result = by_row[row]
        if status == "good":
            assert result["error"] is None, result["error"]
            assert math.isfinite(result["molar_mass"]["value"])
            assert result["run"] == run
        else:
            assert result["molar_mass"] is None
            assert f"row {row}," in result["error"] and fragment in result["error"], result["error"]


def _same_in_chunks(path):
    """Check the large-file reader writes what the in-memory path writes, or stops with the same message."""
    try:
        expected = to_csv(identify(path))
    except InputError as problem:
        expected = f"stopped: {problem}"
    for chunk_rows in (4,):
        out = path.with_name(f"{path.stem}_chunks_{chunk_rows}.csv")
        try:
            identify_to_csv(path, out, chunk_rows=chunk_rows, progress=False, workers=1)
            written = out.read_bytes().decode("utf-8")  # as written: a cell may hold a lone CR
        except InputError as problem:
            written = f"stopped: {problem}"
        assert written == expected


# --- one spoiled row in each generated file ------------------------------------------------

def _extra_cell(cells, separator):
    """Put a stray separator in the middle of the row."""
    return [separator.join(cells[:4] + ["x"] + cells[4:])], 0, "error", "cells where the header has"


def _decimal_comma(cells, separator):
    """Write an unquoted decimal comma (a comma-separated file only)."""
    cells[4] = cells[4].replace(".", ",")
    return [separator.join(cells)], 0, "error", "decimal comma"


def _unclosed_quote(cells, separator):
    """Open the last cell with a quote never closed: the rows below must still be read."""
    cells[-1] = '"' + cells[-1]
    return [separator.join(cells)], 0, "error", "never closed"


def _short_required(cells, separator):
    """Leave the last three cells out: the pressure is missing, so the row stops; said so."""
    return [separator.join(cells[:-3])], 0, "error", "the cell is empty"


def _short_unread(cells, separator):
    """Leave only the notes out: the row is analysed (a note says so)."""
    return [separator.join(cells[:-1])], 0, "good", None


def _line_break_in_cell(cells, separator):
    """Quote a cell holding a line break: one spreadsheet row on two lines of text."""
    cells[-1] = f'"{cells[-1]}\nsecond line"'
    return [separator.join(cells)], 0, "good", None


def _blank_line_before(cells, separator):
    """Put a blank line above the row: it keeps its number, the row moves down one."""
    return ["", separator.join(cells)], 1, "good", None


def _separators_only_before(cells, separator):
    """Put a line of separators only above the row: a blank row."""
    return [separator * (len(cells) - 1), separator.join(cells)], 1, "good", None


def _spaces_after_separators(cells, separator):
    """Put spaces after each separator, which CSV readers skip."""
    return [(separator + " ").join(cells)], 0, "good", None


def _doubled_quotes(cells, separator):
    """Quote a cell with doubled quotes (RFC 4180, 2.7) and the separator inside."""
    cells[-1] = f'"a ""{separator}"" inside"'
    return [separator.join(cells)], 0, "good", None


def _quote_inside_cell(cells, separator):
    """Put a quote inside a cell that does not start with one: a literal quote."""
    cells[-1] = '5" tube'
    return [separator.join(cells)], 0, "good", None


def _not_a_number_text(cells, separator):
    """Type 'NA' in a measured column: not a number, never an empty cell."""
    cells[4] = "NA"
    return [separator.join(cells)], 0, "error", "'NA' is not a number"


SPOILERS = [_extra_cell, _decimal_comma, _unclosed_quote, _short_required, _short_unread,
            _line_break_in_cell, _blank_line_before, _separators_only_before,
            _spaces_after_separators, _doubled_quotes, _quote_inside_cell, _not_a_number_text]
SEPARATORS = {"comma": ",", "semicolon": ";", "tab": "\t"}
# Line feeds at the first, a middle and the last row; CR LF at a middle row (its own case in the
# reader: a CR that is not a cell's end).
PLACES = [("\n", 0), ("\n", 2), ("\n", 5), ("\r\n", 2)]
CASES = [(spoiler, separator, ending, position)
         for spoiler in SPOILERS for separator in SEPARATORS for ending, position in PLACES
         if not (spoiler is _decimal_comma and separator != "comma")]


def _build(spoiler, separator, ending, position):
    """Write the six runs with one spoiled; return the text and each row's expected outcome."""
    mark = SEPARATORS[separator]
    lines, expected, row = [mark.join(COLUMNS)], {}, 2
    for index, cells in enumerate(RUNS):
        if index == position:
            text, before, status, fragment = spoiler(list(cells), mark)
            lines.extend(text)
            row += before
            expected[row] = (cells[0], status, fragment)
        else:
            lines.append(mark.join(cells))
            expected[row] = (cells[0], "good", None)
        row += 1
    return ending.join(lines) + ending, expected


@pytest.mark.parametrize("spoiler, separator, ending, position", CASES,
                         ids=[f"{case[0].__name__[1:]}-{case[1]}-{len(case[2])}-{case[3]}" for case in CASES])
def test_one_spoiled_row_is_its_own_problem(tmp_path, capsys, spoiler, separator, ending, position):
    """Checks behaviour: the spoiled row is reported by its row number; every other row is analysed."""
    text, expected = _build(spoiler, separator, ending, position)
    path = tmp_path / "runs.csv"
    path.write_bytes(text.encode("utf-8"))
    code, document = _results(path, capsys)
    _check_rows(document, expected)
    assert code == (1 if any(status != "good" for _, status, _ in expected.values()) else 0)
    if ending == "\n" and position == 2:
        _same_in_chunks(path)


def test_a_short_row_says_which_cells_were_read_as_empty(tmp_path, capsys):
    """Checks behaviour: a row missing cells at its end gets a warning naming the columns read as empty."""
    text, _ = _build(_short_required, "comma", "\n", 2)
    path = tmp_path / "short.csv"
    path.write_text(text, encoding="utf-8")
    _, document = _results(path, capsys)
    warnings = next(result["warnings"] for result in document["results"] if result["row"] == 4)
    assert any("7 cells where the header has 10" in warning and "'pressure'" in warning
               for warning in warnings)


def test_a_malformed_line_is_shown_as_written(tmp_path, capsys):
    """Checks behaviour: the message quotes the line, so nothing the user wrote is lost from view."""
    text, _ = _build(_decimal_comma, "comma", "\n", 3)
    path = tmp_path / "comma.csv"
    path.write_text(text, encoding="utf-8")
    _, document = _results(path, capsys)
    error = next(result["error"] for result in document["results"] if result["row"] == 5)
    assert "'49,9993' looks like a number with a decimal comma" in error
    assert "The row reads: h4,S2,syringe,50.0002,49,9993" in error


@pytest.mark.parametrize("header_too", [False, True], ids=["rows-only", "header-and-rows"])
@pytest.mark.parametrize("separator", sorted(SEPARATORS))
def test_a_trailing_separator_on_every_row_shifts_nothing(tmp_path, capsys, header_too, separator):
    """Checks behaviour: rows ending with a separator keep their columns; a note says it was dropped."""
    mark = SEPARATORS[separator]
    lines = [mark.join(COLUMNS) + (mark if header_too else "")]
    lines += [mark.join(cells) + mark for cells in RUNS]
    path = tmp_path / "trailing.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    code, document = _results(path, capsys)
    assert code == 0
    _check_rows(document, {row: (cells[0], "good", None) for row, cells in enumerate(RUNS, start=2)})
    assert any("after their last cell" in note for note in document["notes"])
    _same_in_chunks(path)


def test_a_trailing_separator_does_not_hide_a_stray_one(tmp_path, capsys):
    """Checks behaviour: with a separator after every row, a row with one more still stops alone."""
    lines = [",".join(COLUMNS)] + [",".join(cells) + "," for cells in RUNS]
    lines[3] = ",".join(RUNS[2][:4] + ["x"] + RUNS[2][4:]) + ","
    path = tmp_path / "trailing_and_stray.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    _, document = _results(path, capsys)
    expected = {row: (cells[0], "good", None) for row, cells in enumerate(RUNS, start=2)}
    expected[4] = ("h3", "error", "cells where the header has")
    _check_rows(document, expected)


def test_two_unclosed_quotes_far_apart(tmp_path, capsys):
    """Checks behaviour: two quotes never closed are two row problems, not one cell spanning the rows."""
    lines = [",".join(COLUMNS)] + [",".join(cells) for cells in RUNS]
    lines[2] = lines[2].replace("second", '"second')
    lines[5] = lines[5].replace("air tare", '"air tare')
    path = tmp_path / "quotes.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    _, document = _results(path, capsys)
    expected = {row: (cells[0], "good", None) for row, cells in enumerate(RUNS, start=2)}
    expected[3] = ("h2", "error", "never closed")
    expected[6] = ("h5", "error", "never closed")
    _check_rows(document, expected)
    _same_in_chunks(path)


def test_random_damage_never_ends_in_an_internal_error(tmp_path, capsys):
    """Checks behaviour: 20 files damaged at random (quotes, separators, line breaks, bytes) exit 0-2."""
    rng = random.Random(17)
    base = ("\n".join([",".join(COLUMNS)] + [",".join(cells) for cells in RUNS]) + "\n").encode()
    pieces = [b",", b";", b"\t", b'"', b"\n", b"\r", b" ", b"\xc3", b"\xe9", b"\x81", b"\xef\xbb\xbf",
              b"NA", b"1e999", b"[", b"]", b"\xe2\x88\x92"]
    for trial in range(20):
        data = bytearray(base)
        for _ in range(rng.randint(1, 5)):
            position = rng.randrange(len(data) + 1)
            data[position:position + rng.randint(0, 2)] = rng.choice(pieces)
        path = tmp_path / f"damaged_{trial}.csv"
        path.write_bytes(bytes(data))
        code, _, err = _cli(["identify", path, "--json"], capsys)
        assert code in (0, 1, 2)
        assert code != 2 or err.startswith("molid: ") and len(err) < 2000


# --- the header ----------------------------------------------------------------------------

def test_a_duplicated_header_names_both_columns_in_every_path(tmp_path, capsys):
    """Checks behaviour: 'pressure' twice stops the file, in CSV, streamed CSV and .xlsx alike."""
    header = COLUMNS + ["pressure"]
    text = "\n".join([",".join(header)] + [",".join(cells + ["99.0"]) for cells in RUNS]) + "\n"
    path = tmp_path / "twice.csv"
    path.write_text(text, encoding="utf-8")
    code, _, err = _cli(["identify", path], capsys)
    assert code == 2 and "columns 'pressure' and 'pressure'" in err
    _same_in_chunks(path)
    book = tmp_path / "twice.xlsx"
    _workbook(book, [header] + [cells + ["99.0"] for cells in RUNS])
    code, _, err = _cli(["identify", book], capsys)
    assert code == 2 and "columns 'pressure' and 'pressure'" in err


def test_a_line_break_inside_a_quoted_header_is_one_header(tmp_path, capsys):
    """Checks behaviour: a wrapped header cell is joined into one name (noted), never a data row."""
    header = ",".join(COLUMNS).replace("temperature", '"temperature\n[degC]"')
    path = tmp_path / "wrapped.csv"
    path.write_text("\n".join([header] + [",".join(cells) for cells in RUNS]) + "\n", encoding="utf-8")
    code, document = _results(path, capsys)
    assert code == 0
    _check_rows(document, {row: (cells[0], "good", None) for row, cells in enumerate(RUNS, start=2)})
    assert any("read as 'temperature [degC]'" in note for note in document["notes"])
    _same_in_chunks(path)
    book = tmp_path / "wrapped.xlsx"
    _workbook(book, [[name.replace("temperature", "temperature\n[degC]") for name in COLUMNS]] + RUNS)
    code, document = _results(book, capsys)
    assert code == 0 and len(document["results"]) == len(RUNS)


def test_the_separator_guess_is_not_fooled_by_commas_in_a_title_or_the_units(tmp_path, capsys):
    """Checks behaviour: a semicolon file whose title and units hold commas is split by semicolons."""
    lines = ["Bulb runs, 3 Dec, section 4",
             "run;meth;Tare, g;Filled mass, g;Volume, mL;Temp, °C;Pressure, kPa",
             "g1;evacuated-bulb;150,0000;150,5870;500;21,0;100,8"]
    path = tmp_path / "semicolons.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    code, _, err = _cli(["identify", path], capsys)
    assert code == 2 and "missing: method" in err and "'meth', 'Tare, g'" in err
    fixed = path.with_name("fixed.csv")
    fixed.write_text("\n".join([lines[0], lines[1].replace("meth", "method"), lines[2]]) + "\n",
                     encoding="utf-8")
    code, document = _results(fixed, capsys)
    assert code == 0 and document["results"][0]["row"] == 3


# --- text that is not an empty cell stays text ---------------------------------------------

MISSING_LOOKING = ["NA", "None", "null", "N/A", "nan", "NaN", "#N/A", "n/a", "NULL", "<NA>"]


def test_missing_looking_text_stays_text_in_csv(tmp_path, capsys):
    """Checks behaviour: run ids and notes reading NA, None, null, … arrive and leave as typed."""
    rows = [[word, "", "syringe", "50.0000", "49.9990", "100", "21.0", "100.8", "40", word]
            for word in MISSING_LOOKING]
    path = tmp_path / "words.csv"
    path.write_text("\n".join([",".join(COLUMNS)] + [",".join(row) for row in rows]) + "\n",
                    encoding="utf-8")
    code, document = _results(path, capsys)
    assert code == 0
    assert [result["run"] for result in document["results"]] == MISSING_LOOKING
    out = tmp_path / "out.csv"
    _cli(["identify", path, "-o", out], capsys)
    written = pd.read_csv(out, dtype=str, keep_default_na=False)
    assert list(written["notes"]) == MISSING_LOOKING and list(written["run"]) == MISSING_LOOKING


def test_missing_looking_text_stays_text_in_xlsx(tmp_path, capsys):
    """Checks behaviour: in a workbook too, NA, None, null, N/A, nan and #N/A are text, not blanks."""
    rows = [[word, "", "syringe", 50.0, 49.999, 100, 21.0, 100.8, 40, word] for word in MISSING_LOOKING]
    book = tmp_path / "words.xlsx"
    _workbook(book, [COLUMNS] + rows)
    code, document = _results(book, capsys)
    assert code == 0
    assert [result["run"] for result in document["results"]] == MISSING_LOOKING
    out = tmp_path / "out.csv"
    _cli(["identify", book, "-o", out], capsys)
    written = pd.read_csv(out, dtype=str, keep_default_na=False)
    assert list(written["notes"]) == MISSING_LOOKING
    assert list(written["mass_filled"]) == ["49.999"] * len(MISSING_LOOKING)


def test_a_word_in_a_measured_workbook_cell_is_named_not_blanked(tmp_path, capsys):
    """Checks behaviour: 'NA' or '#N/A' in a number column of a workbook is 'not a number', not 'empty'."""
    rows = [list(cells) for cells in RUNS]
    rows[1][4], rows[3][7] = "NA", "#N/A"
    book = tmp_path / "words.xlsx"
    _workbook(book, [COLUMNS] + rows)
    _, document = _results(book, capsys)
    expected = {row: (cells[0], "good", None) for row, cells in enumerate(RUNS, start=2)}
    expected[3] = ("h2", "error", "'NA' is not a number")
    expected[5] = ("h4", "error", "'#N/A' is not a number")
    _check_rows(document, expected)


# --- encodings -----------------------------------------------------------------------------

ENCODINGS = {
    "utf-8": lambda text: text.encode("utf-8"),
    "utf-8 with mark": lambda text: b"\xef\xbb\xbf" + text.encode("utf-8"),
    "utf-16 little-endian with mark": lambda text: b"\xff\xfe" + text.encode("utf-16-le"),
    "utf-16 big-endian with mark": lambda text: b"\xfe\xff" + text.encode("utf-16-be"),
    "utf-16 without mark": lambda text: text.encode("utf-16-le"),
    "utf-32 with mark": lambda text: b"\xff\xfe\x00\x00" + text.encode("utf-32-le"),
    "windows-1252": lambda text: text.encode("cp1252"),
}


@pytest.mark.parametrize("encoding", sorted(ENCODINGS))
def test_encodings_are_detected_and_text_arrives_as_written(tmp_path, capsys, encoding):
    """Checks behaviour: names, units and notes with accents arrive as written, whatever the encoding."""
    header = ",".join(COLUMNS).replace("temperature", "temperature [°C]")
    rows = [",".join(cells[:-1] + [f"café {cells[0]}"]) for cells in RUNS]
    path = tmp_path / "encoded.csv"
    path.write_bytes(ENCODINGS[encoding]("\r\n".join([header] + rows) + "\r\n"))
    out = tmp_path / "out.csv"
    code, _, _ = _cli(["identify", path, "-o", out], capsys)
    assert code == 0
    written = pd.read_csv(out, dtype=str, keep_default_na=False)
    assert list(written["notes"]) == [f"café {cells[0]}" for cells in RUNS]
    assert "temperature [°C]" in written.columns
    _same_in_chunks(path)


UNDEFINED_IN_1252 = [0x81, 0x8D, 0x8F, 0x90, 0x9D]


@pytest.mark.parametrize("byte", UNDEFINED_IN_1252, ids=[f"0x{byte:02X}" for byte in UNDEFINED_IN_1252])
def test_bytes_no_encoding_defines_name_their_row(tmp_path, capsys, byte):
    """Checks behaviour: undefined Windows-1252 bytes stop the file naming the byte and its row, both paths.

    A quoted note holding a line break comes first, so the row (a spreadsheet's) is not the line.
    """
    lines = [",".join(COLUMNS)] + [",".join(cells) for cells in RUNS]
    lines[1] = lines[1].replace("first bulb", '"first\nbulb"')
    data = ("\n".join(lines) + "\n").encode("cp1252").replace(b"air tare", b"air \xe9" + bytes([byte]))
    path = tmp_path / "undefined.csv"
    path.write_bytes(data)
    code, _, err = _cli(["identify", path], capsys)
    assert code == 2 and f"row 6 holds byte 0x{byte:02X}" in err and "Windows-1252" in err
    with pytest.raises(InputError, match=f"row 6 holds byte 0x{byte:02X}"):
        identify_to_csv(path, tmp_path / "streamed.csv", chunk_rows=2, progress=False, workers=1)
    assert not (tmp_path / "streamed.csv").exists()


def test_a_file_in_windows_1252_is_read_with_a_note_naming_the_first_row(tmp_path, capsys):
    """Checks behaviour: a file that is not UTF-8 but is Windows-1252 is read, with a note naming the row."""
    lines = [",".join(COLUMNS)] + [",".join(cells) for cells in RUNS]
    lines[4] = lines[4].replace("again", "Æ again")
    path = tmp_path / "latin.csv"
    path.write_bytes(("\n".join(lines) + "\n").encode("cp1252"))
    code, document = _results(path, capsys)
    assert code == 0
    assert any("row 5 holds byte 0xC6" in note and "Windows-1252" in note for note in document["notes"])
    _same_in_chunks(path)


@pytest.mark.parametrize("damage", ["nul in a cell", "random bytes", "utf-16 cut short"])
def test_binary_and_broken_text_get_one_short_message(tmp_path, capsys, damage):
    """Checks behaviour: a file that is not text stops with one short message naming the row, no dump."""
    text = "\n".join([",".join(COLUMNS)] + [",".join(cells) for cells in RUNS]) + "\n"
    if damage == "nul in a cell":
        data, fragment = text.replace("light gas", "light\x00gas").encode(), "row 4 holds a NUL byte"
    elif damage == "random bytes":
        rng = random.Random(3)
        data, fragment = bytes(rng.randrange(256) for _ in range(5000)), "not a text file"
    else:
        data, fragment = (b"\xff\xfe" + text.encode("utf-16-le"))[:-1], "says it is UTF-16"
    path = tmp_path / "broken.csv"
    path.write_bytes(data)
    code, _, err = _cli(["identify", path], capsys)
    assert code == 2 and fragment in err and len(err) < 400
    _same_in_chunks(path)


# --- standard input ------------------------------------------------------------------------

def test_standard_input_follows_the_same_contract(tmp_path, capsys, monkeypatch):
    """Checks behaviour: a spoiled file on standard input gives the rows and messages the path gives."""
    text, expected = _build(_unclosed_quote, "semicolon", "\r\n", 2)
    path = tmp_path / "runs.csv"
    path.write_bytes(text.encode("utf-16"))
    _, from_path = _results(path, capsys)
    monkeypatch.setattr("sys.stdin", io.TextIOWrapper(io.BytesIO(text.encode("utf-16"))))
    _, from_stdin = _results("-", capsys)
    _check_rows(from_stdin, expected)
    assert from_stdin["results"] == from_path["results"]


# --- the large-file path through the command line ------------------------------------------

@pytest.mark.parametrize("workers", [1, 2])
def test_the_command_line_streams_spoiled_files_with_the_same_messages(tmp_path, capsys, monkeypatch,
                                                                       workers):
    """Checks behaviour: above one chunk, the CLI streams; the bad rows, notes and bytes are the same."""
    text, _ = _build(_extra_cell, "comma", "\n", 2)
    lines = text.splitlines()
    lines[6] = lines[6].rsplit(",", 1)[0]  # and a row without its notes cell: a note
    path = tmp_path / "runs.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    in_memory = tmp_path / "in_memory.csv"
    code, _, _ = _cli(["identify", path, "--json", "-o", in_memory], capsys)
    monkeypatch.setattr("molid.pipeline.streaming.DEFAULT_CHUNK_ROWS", 2)
    monkeypatch.setattr("molid.pipeline.streaming._worker_count", lambda requested: workers)
    streamed = tmp_path / "streamed.csv"
    streamed_code, out, _ = _cli(["identify", path, "-o", streamed], capsys)
    assert "6 runs analysed" in out and "row 4, the whole row: it has 11 cells" in out
    assert "fewer cells than the header" in out
    assert streamed_code == code == 1
    assert streamed.read_bytes() == in_memory.read_bytes()


# --- workbooks -----------------------------------------------------------------------------

def _workbook(path, rows):
    """Write rows to a workbook, numbers as numbers (as a spreadsheet stores what is typed)."""
    book = openpyxl.Workbook()
    sheet = book.active
    for row in rows:
        sheet.append([_typed(cell) for cell in row])
    book.save(path)


def _typed(cell):
    if isinstance(cell, str):
        try:
            return float(cell) if cell.strip() and cell.strip()[0] in "0123456789.-" else cell
        except ValueError:
            return cell
    return cell


def _with_part(source, target, part, change):
    """Copy a workbook, changing one of its XML parts."""
    with zipfile.ZipFile(source) as archive:
        parts = {name: archive.read(name) for name in archive.namelist()}
    parts[part] = change(parts[part].decode("utf-8")).encode("utf-8")
    with zipfile.ZipFile(target, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, content in parts.items():
            archive.writestr(name, content)


@pytest.mark.parametrize("kind", ["random bytes", "empty zip", "zip of text", "OpenDocument",
                                  "compound file", "cut short"])
def test_files_that_are_not_workbooks_get_one_short_message(tmp_path, capsys, kind):
    """Checks behaviour: a file named .xlsx that is not a workbook stops with one line saying what it is."""
    path = tmp_path / "book.xlsx"
    if kind == "random bytes":
        rng = random.Random(5)
        path.write_bytes(bytes(rng.randrange(256) for _ in range(5000)))
    elif kind == "empty zip":
        zipfile.ZipFile(path, "w").close()
    elif kind == "zip of text":
        with zipfile.ZipFile(path, "w") as archive:
            archive.writestr("runs.csv", ",".join(COLUMNS))
    elif kind == "OpenDocument":
        with zipfile.ZipFile(path, "w") as archive:
            archive.writestr("mimetype", "application/vnd.oasis.opendocument.spreadsheet")
            archive.writestr("content.xml", "<office:document-content/>")
    elif kind == "compound file":
        path.write_bytes(b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + bytes(2000))
    else:
        _workbook(tmp_path / "whole.xlsx", [COLUMNS] + RUNS)
        path.write_bytes((tmp_path / "whole.xlsx").read_bytes()[:1500])
    code, _, err = _cli(["identify", path], capsys)
    assert code == 2 and err.count("\n") == 1 and len(err) < 400
    assert "xlsx" in err


def test_a_damaged_sheet_gets_one_short_message(tmp_path, capsys):
    """Checks behaviour: a sheet whose XML is cut, or a number cell reading 'inf', is one line, no dump."""
    _workbook(tmp_path / "whole.xlsx", [COLUMNS] + RUNS)
    for name, change in (("cut.xlsx", lambda xml: xml[: len(xml) // 2]),
                         ("inf.xlsx", lambda xml: xml.replace("<v>500</v>", "<v>inf</v>", 1))):
        _with_part(tmp_path / "whole.xlsx", tmp_path / name, "xl/worksheets/sheet1.xml", change)
        code, _, err = _cli(["identify", tmp_path / name], capsys)
        assert code == 2 and err.count("\n") == 1 and "damaged" in err and len(err) < 400


def test_a_small_workbook_that_unpacks_to_much_more_is_refused_before_loading(tmp_path, capsys,
                                                                              monkeypatch):
    """Checks behaviour: a zip-bomb proxy (3 MB of shared strings in a small file) stops at the limit.

    The limit is lowered to 1 MB with MOLID_XLSX_MAX_MB so the proxy stays small; raising it reads the file.
    """
    book = tmp_path / "bomb.xlsx"
    _workbook(book, [COLUMNS] + RUNS)
    workbook = openpyxl.load_workbook(book)
    padding = workbook.create_sheet("padding")
    for index in range(100):  # a cell holds at most 32,767 characters (openpyxl cuts longer ones)
        padding.append([f"{index:03d}" + "A" * 30_000])
    workbook.save(book)
    assert book.stat().st_size < 100_000
    monkeypatch.setenv("MOLID_XLSX_MAX_MB", "1")
    code, _, err = _cli(["identify", book], capsys)
    assert code == 2 and "MOLID_XLSX_MAX_MB" in err and "more than the limit of 1.0 MB" in err
    monkeypatch.setenv("MOLID_XLSX_MAX_MB", "10")
    code, document = _results(book, capsys)
    assert code == 0 and len(document["results"]) == len(RUNS)


def test_the_cell_limit_stops_a_sheet_and_can_be_raised(tmp_path, capsys, monkeypatch):
    """Checks behaviour: more cells than MOLID_XLSX_MAX_CELLS stop the file; a higher limit reads it."""
    book = tmp_path / "cells.xlsx"
    _workbook(book, [COLUMNS] + RUNS)
    monkeypatch.setenv("MOLID_XLSX_MAX_CELLS", "30")
    code, _, err = _cli(["identify", book], capsys)
    assert code == 2 and "more than 30 cells" in err and "MOLID_XLSX_MAX_CELLS" in err
    monkeypatch.setenv("MOLID_XLSX_MAX_CELLS", "70")
    assert _results(book, capsys)[0] == 0
    monkeypatch.setenv("MOLID_XLSX_MAX_CELLS", "many")
    code, _, err = _cli(["identify", book], capsys)
    assert code == 2 and "MOLID_XLSX_MAX_CELLS='many'" in err


def test_a_sheet_that_claims_to_be_huge_is_read_by_what_it_holds(tmp_path, capsys):
    """Checks behaviour: a stated size of A1:XFD1048576 is ignored; one cell in the far corner stops it.

    Both are small proxies of sheets that would take gigabytes if their stated or used size were filled in.
    """
    _workbook(tmp_path / "whole.xlsx", [COLUMNS] + RUNS)
    sheet = "xl/worksheets/sheet1.xml"

    def claim(xml):
        start = xml.index("<dimension")
        return xml[:start] + '<dimension ref="A1:XFD1048576"/>' + xml[xml.index(">", start) + 1:]

    _with_part(tmp_path / "whole.xlsx", tmp_path / "claims.xlsx", sheet, claim)
    code, document = _results(tmp_path / "claims.xlsx", capsys)
    assert code == 0 and len(document["results"]) == len(RUNS)
    far = '<row r="1048576"><c r="XFD1048576" t="inlineStr"><is><t>x</t></is></c></row></sheetData>'
    _with_part(tmp_path / "whole.xlsx", tmp_path / "far.xlsx", sheet,
               lambda xml: claim(xml).replace("</sheetData>", far))
    code, _, err = _cli(["identify", tmp_path / "far.xlsx"], capsys)
    assert code == 2 and "MOLID_XLSX_MAX_CELLS" in err
    empty_far = '<row r="1048576"><c r="A1048576"/></row></sheetData>'
    _with_part(tmp_path / "whole.xlsx", tmp_path / "empty_far.xlsx", sheet,
               lambda xml: xml.replace("</sheetData>", empty_far))
    assert _results(tmp_path / "empty_far.xlsx", capsys)[0] == 0


# --- units a temperature cannot have -------------------------------------------------------

@pytest.mark.parametrize("header", ["temperature [delta_degC]", "temperature [Δ°C]",
                                    "temperature (delta_degF)"])
def test_a_temperature_difference_unit_is_a_message_not_a_crash(tmp_path, capsys, header):
    """Checks behaviour: a difference unit under a temperature stops the file with a message (exit 2).

    A temperature difference has no zero point, so '21 delta_degC' is no temperature (BIPM SI
    Brochure 2019, 2.3.1: the degree Celsius is a unit of Celsius temperature, and a difference of
    Celsius temperatures is expressed in kelvin or degrees Celsius; pint keeps the two apart).
    """
    path = tmp_path / "delta.csv"
    lines = [",".join(COLUMNS).replace("temperature", header)] + [",".join(cells) for cells in RUNS]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    for command in (["identify", path], ["identify", path, "--json"], ["report", path, "-o",
                                                                        tmp_path / "page.html"]):
        code, _, err = _cli(command, capsys)
        assert code == 2 and "temperature difference" in err
    _same_in_chunks(path)


def test_a_celsius_value_under_a_kelvin_header_is_a_warning_not_a_crash(tmp_path, capsys):
    """Checks behaviour: 21 under 'temperature [K]' is a warning; a '°C' typed in a cell is named."""
    rows = [list(cells) for cells in RUNS]
    rows[2][6] = "21.0 °C"
    path = tmp_path / "kelvin.csv"
    lines = [",".join(COLUMNS).replace("temperature", "temperature [K]")] + [",".join(row) for row in rows]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    code, document = _results(path, capsys)
    assert code == 1
    error = next(result["error"] for result in document["results"] if result["row"] == 4)
    assert "'21.0 °C' is not a number" in error and "a unit goes in the header" in error
    warnings = [warning for result in document["results"] for warning in result["warnings"]]
    assert any("21 K is unusual" in warning for warning in warnings)


def test_the_generated_cases_are_many():
    """Checks behaviour: the suite spoils rows in over a hundred generated ways, each file different."""
    assert len(CASES) >= 130
    assert len({_build(*case)[0] for case in CASES}) == len(CASES)
