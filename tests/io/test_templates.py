"""Blank run sheets (molid template): filled with simulated runs, each reads back to its SI values.

References: the runs that fill the templates are simulated from CoolProp 8.0's
reference equations of state (argon: Tegeler, Span and Wagner 1999; n-hexane: Span
and Wagner 2003; isobutane: Bücker and Wagner 2006; water: IAPWS-95) and its
humid-air model (ASHRAE RP-1485), turned into balance readings by tests/simulate.py.
The unit conversions the checks expect are the SI definitions (BIPM SI Brochure,
9th edition, 2019: 0 °C = 273.15 K; the gram, the millilitre, the kilopascal; ppm
= 10⁻⁶; common practice).
"""

import csv
import io

import numpy as np
import openpyxl
import pytest
from CoolProp import CoolProp

from molid.cli import main
from molid.io.headers import parse_header
from molid.io.reading import read_runs
from molid.io.templates import EXAMPLE_RUN, template, template_columns, template_csv, write_template
from molid.methods.registry import METHODS
from molid.pipeline.identify import identify
from tests.simulate import air_density, readings

ROOM, BAROMETER, HUMIDITY = 294.15, 100.8e3, 0.45

#: Template unit → factor and offset taking SI to it (BIPM SI Brochure 2019; common practice).
TO_TEMPLATE = {"g": (1e3, 0.0), "mL": (1e6, 0.0), "°C": (1.0, -273.15), "K": (1.0, 0.0),
               "kPa": (1e-3, 0.0), "%": (100.0, 0.0), "ppm": (1e6, 0.0), "mm": (1e3, 0.0)}


def _bulb_run(method):
    """Argon in a 250 mL bulb or drawn into a 100 mL syringe at room conditions (CoolProp)."""
    volume = 100e-6 if method == "syringe" else 250e-6
    rho_air = air_density(ROOM, BAROMETER, HUMIDITY)
    gas = CoolProp.PropsSI("D", "T", ROOM, "P", BAROMETER, "Argon") * volume
    tare, filled = readings(method, gas, rho_air, volume)
    return {"mass_tare": float(tare), "mass_filled": float(filled), "volume": volume,
            "temperature": ROOM, "pressure": BAROMETER, "humidity": HUMIDITY,
            "air_temperature": ROOM + 0.4, "air_pressure": BAROMETER - 20.0, "co2": 420e-6}


def _flask_run():
    """n-hexane vaporised in a 126 mL flask in a 99.5 °C bath (CoolProp vapour density)."""
    volume, bath = 126e-6, 372.65
    rho_air = air_density(ROOM, BAROMETER, HUMIDITY)
    vapour = CoolProp.PropsSI("D", "T", bath, "P", BAROMETER, "Hexane") * volume
    tare, filled = readings("vapour-flask", vapour, rho_air, volume, glass=0.0812)
    return {"mass_tare": float(tare), "mass_filled": float(filled), "volume": volume,
            "temperature": bath, "pressure": BAROMETER, "air_temperature": ROOM,
            "humidity": HUMIDITY, "air_pressure": BAROMETER - 20.0, "co2": 420e-6}


def _over_water_run():
    """Isobutane from a lighter collected over water, 12 mm column (CoolProp gas and water)."""
    volume, water, column = 70e-6, 294.55, 0.012
    saturation = CoolProp.PropsSI("P", "T", water, "Q", 0, "Water")
    density_water = CoolProp.PropsSI("D", "T", water, "P", BAROMETER, "Water")
    dry = BAROMETER - density_water * 9.80665 * column - saturation
    gas = CoolProp.PropsSI("D", "T", water, "P", dry, "IsoButane") * volume
    before, after = readings("over-water", gas, air_density(ROOM, BAROMETER, HUMIDITY), volume,
                             glass=14.9e-3)
    return {"source_before": float(before), "source_after": float(after), "volume": volume,
            "temperature": water, "pressure": BAROMETER, "water_column": column, "humidity": 1.0,
            "air_temperature": ROOM, "air_pressure": BAROMETER - 20.0, "co2": 420e-6}


def _simulated(method):
    if method == "vapour-flask":
        return _flask_run()
    if method == "over-water":
        return _over_water_run()
    return _bulb_run(method)


#: Standard uncertainties written in the u_ columns, SI.
UNCERTAINTIES = {"mass": 1e-7, "volume": 5e-8, "temperature": 0.2, "pressure": 50.0,
                 "air_temperature": 0.3}


def _row(method, values):
    """Fill the template's columns with a simulated run: numbers in the template's units."""
    cells = {"run": "R1", "sample": "S1", "method": method, "expected": "", "note": ""}
    for column in template_columns(method):
        if column.unit is None:
            continue
        scale, offset = TO_TEMPLATE[column.unit]
        if column.name.startswith("u_"):
            cells[column.name] = UNCERTAINTIES[column.name[2:]] * scale
        else:
            cells[column.name] = values[column.name] * scale + offset
    return cells


def _fill_csv(path, method, rows):
    text = path.read_text(encoding="utf-8-sig")
    headers = next(csv.reader(io.StringIO(text)))
    names = [column.name for column in template_columns(method)]
    with open(path, "w", newline="", encoding="utf-8") as stream:
        writer = csv.writer(stream)
        writer.writerow(headers)
        for row in rows:
            writer.writerow([repr(row[name]) if isinstance(row[name], float) else row[name]
                             for name in names])


def _fill_workbook(path, method, rows, keep_example=False):
    workbook = openpyxl.load_workbook(path)
    sheet = workbook["Runs"]
    names = [column.name for column in template_columns(method)]
    for number, row in enumerate(rows, start=3 if keep_example else 2):
        for position, name in enumerate(names, start=1):
            sheet.cell(row=number, column=position, value=row[name] if row[name] != "" else None)
    workbook.save(path)


@pytest.mark.parametrize("suffix", [".csv", ".xlsx"])
@pytest.mark.parametrize("method", list(METHODS))
def test_filled_template_reads_back_to_the_simulated_si_values(tmp_path, method, suffix):
    """A run simulated from CoolProp, typed into the template's units, reads back to its SI values.

    Every measured column and every u_ column of the template is filled; the reader
    must find no problem and give back each value within 1e-12 (one rounding of the
    typed decimal), so each header's unit means what the template says it does.
    """
    path = write_template(method, tmp_path / f"sheet{suffix}")
    values = _simulated(method)
    filling = _fill_csv if suffix == ".csv" else _fill_workbook
    filling(path, method, [_row(method, values)])
    table = read_runs(path)
    assert table.errors == [[]] and table.warnings == [[]]
    entry = METHODS[method]
    for name in (*entry.required_inputs, *entry.optional_inputs):
        assert table.values[name][0] == pytest.approx(values[name], rel=1e-12), name
    for name in entry.readings:
        assert table.uncertainties[name][0] == pytest.approx(UNCERTAINTIES["mass"], rel=1e-12)
    for name in entry.required_inputs:
        if name not in entry.readings:
            assert table.uncertainties[name][0] == pytest.approx(UNCERTAINTIES[name], rel=1e-12)


def test_filled_bulb_template_identifies_argon(tmp_path):
    """Three argon runs (CoolProp density, humid-air model) typed into a workbook: argon is consistent.

    Each run's own molar mass times argon's Z must match argon's 39.948 g/mol (IUPAC
    abridged atomic weight, as periodictable carries it) within its expanded uncertainty.
    """
    path = write_template("evacuated-bulb", tmp_path / "bulbs.xlsx")
    run = _row("evacuated-bulb", _bulb_run("evacuated-bulb"))
    rows = [dict(run, run=f"A{k}", expected="argon") for k in range(3)]
    _fill_workbook(path, "evacuated-bulb", rows)
    result = identify(path)
    assert result.ok.all()
    for position in range(3):
        argon = next(item for item in result.ranking.run_candidates(position)
                     if item["name"] == "argon")
        assert argon["verdict"] == "consistent"
        assert abs(argon["z"]) < 0.2


@pytest.mark.parametrize("method", list(METHODS))
def test_columns_follow_the_method_entry(method):
    """Checks behaviour: run, sample, method, the required then optional inputs, u_, expected, note."""
    entry = METHODS[method]
    headers, example = template(method)
    names = [parse_header(header).name for header in headers]
    inputs = [*entry.required_inputs, *entry.optional_inputs]
    assert names[:3 + len(inputs)] == ["run", "sample", "method", *inputs]
    assert names[-2:] == ["expected", "note"]
    uncertainty = names[3 + len(inputs):-2]
    assert uncertainty[0] == "u_mass"
    assert uncertainty[1:] == [f"u_{name}" for name in entry.required_inputs if name not in entry.readings]
    assert all(parse_header(header).unit for header in headers[3:3 + len(inputs)])
    assert len(example) == len(headers)


@pytest.mark.parametrize("method", list(METHODS))
def test_example_row_is_refused_row_by_row(tmp_path, method):
    """Checks behaviour: the example row as written is an error row (its e.g. cells), not a run.

    With a real run below it, the example row (row 2) is not analysed, its errors quote the
    'e.g.' cells, and the real run (row 3) is read without a problem.
    """
    headers, example = template(method)
    assert example[0] == EXAMPLE_RUN and example[2] == method
    marked = [cell for cell in example[1:-1] if cell and cell != method]
    assert marked and all(cell.startswith("e.g. ") for cell in marked)
    path = write_template(method, tmp_path / "sheet.xlsx")
    _fill_workbook(path, method, [_row(method, _simulated(method))], keep_example=True)
    table = read_runs(path)
    assert list(table.row_numbers) == [2, 3]
    assert table.errors[0] and all("'e.g. " in message for message in table.errors[0])
    required = [name for name in METHODS[method].required_inputs]
    for name in required:
        assert any(f"column '{name} [" in message for message in table.errors[0]), name
    assert table.errors[1] == []


def test_template_as_written_exits_1_naming_row_2(tmp_path, capsys):
    """Checks behaviour: molid identify on the untouched template exits 1 with row 2's errors, no result."""
    path = write_template("syringe", tmp_path / "sheet.csv")
    assert main(["identify", str(path), "--json"]) == 1
    out = capsys.readouterr().out
    assert '"run": "EXAMPLE-delete-me"' in out and '"molar_mass": null' in out
    assert "'e.g. 87.4351' is not a number" in out


def test_workbook_has_method_list_and_header_comments(tmp_path):
    """Checks behaviour: the workbook's method column has a drop-down list, and each header a comment."""
    for method in METHODS:
        path = write_template(method, tmp_path / f"{method}.xlsx")
        workbook = openpyxl.load_workbook(path)
        assert workbook.sheetnames[0] == "Runs"
        sheet = workbook["Runs"]
        columns = template_columns(method)
        letter = openpyxl.utils.get_column_letter([c.name for c in columns].index("method") + 1)
        lists = [rule for rule in sheet.data_validations.dataValidation if rule.type == "list"]
        assert len(lists) == 1
        assert lists[0].formula1 == '"' + ",".join(METHODS) + '"'
        assert f"{letter}2:{letter}1001" in str(lists[0].sqref)
        for position, column in enumerate(columns, start=1):
            cell = sheet.cell(row=1, column=position)
            assert cell.value == column.header
            assert cell.comment is not None and column.meaning in cell.comment.text
            if column.unit:
                assert f"Unit: {column.unit}." in cell.comment.text
        assert [cell.value or "" for cell in sheet[2]] == [column.example for column in columns]
        assert any("safety data sheet" in str(row[0].value) for row in workbook["About"].iter_rows())


def test_csv_to_stdout_and_files(tmp_path, capsys):
    """Checks behaviour: CSV on stdout without -o; a .csv file with a byte-order mark; the same rows."""
    assert main(["template", "over-water"]) == 0
    assert capsys.readouterr().out == template_csv("over-water")
    assert main(["template", "over-water", "-o", str(tmp_path / "w.csv")]) == 0
    data = (tmp_path / "w.csv").read_bytes()
    assert data.startswith(b"\xef\xbb\xbf") and data[3:].decode("utf-8") == template_csv("over-water")


def test_exit_codes(tmp_path, capsys):
    """Checks behaviour: unknown method and unknown format exit 2; an existing file needs --force."""
    assert main(["template", "bulb"]) == 2
    message = capsys.readouterr().err
    assert "unknown method 'bulb'" in message and all(name in message for name in METHODS)
    assert main(["template", "syringe", "-o", str(tmp_path / "sheet.ods")]) == 2
    assert ".xlsx" in capsys.readouterr().err
    target = tmp_path / "sheet.xlsx"
    assert main(["template", "Vapour flask", "-o", str(target)]) == 0
    first = target.read_bytes()
    assert main(["template", "syringe", "-o", str(target)]) == 2
    assert "already exists; use --force" in capsys.readouterr().err
    assert target.read_bytes() == first
    assert main(["template", "syringe", "-o", str(target), "--force"]) == 0
    assert openpyxl.load_workbook(target)["Runs"]["C2"].value == "syringe"
    assert main(["template", "syringe", "-o", str(tmp_path / "missing" / "sheet.csv")]) == 2


def test_uncertainty_columns_share_their_inputs_units():
    """Checks behaviour: each u_ column is in its input's unit, a temperature's in kelvin."""
    for method in METHODS:
        units = {column.name: column.unit for column in template_columns(method)}
        for name, unit in units.items():
            if name.startswith("u_") and name != "u_mass":
                assert unit == ("K" if units[name[2:]] == "°C" else units[name[2:]])
        assert np.all([units[name] == "g" for name in METHODS[method].readings])
