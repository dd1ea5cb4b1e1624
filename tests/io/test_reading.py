"""Reader: formats, units, defaults, and every bad input with its message (rest analysed)."""

import io

import numpy as np
import pandas as pd
import pytest

from molid.io.problems import InputError
from molid.io.reading import read_runs
from molid.pipeline.identify import identify

HEADER = "run,method,mass_tare,mass_filled,volume,temperature,pressure"
GOOD = "g1,evacuated-bulb,150.0000,150.5870,500,21.0,100.8"


def _read(text, **kwargs):
    return read_runs(io.BytesIO(text.encode("utf-8")), **kwargs)


def _errors(text):
    result = identify(io.BytesIO(text.encode("utf-8")), rank=False)
    return result, [" ".join(row) for row in result.errors]


def test_default_units_are_g_ml_degc_kpa():
    """Checks behaviour: without units a column is in g, mL, degC, kPa or % (the documented defaults)."""
    table = _read(f"{HEADER},humidity\n{GOOD},40\n")
    assert table.values["mass_tare"][0] == pytest.approx(0.150)
    assert table.values["volume"][0] == pytest.approx(500e-6)
    assert table.values["temperature"][0] == pytest.approx(294.15)
    assert table.values["pressure"][0] == pytest.approx(100.8e3)
    assert table.values["humidity"][0] == pytest.approx(0.40)


def test_units_in_brackets(reference):
    """Header units parsed with pint: mmHg, degF, L, mg.

    Sources: 1 mmHg = 133.322387415 Pa (common practice; reference_values.toml [measurement.mmhg]);
    t/°C = (t/°F − 32)/1.8 (NIST SP 811, 2008 edition; from memory).
    """
    mmhg = reference["measurement"]["mmhg"]["value"]
    text = ("Run,Method,Mass_Tare [mg],Mass Filled [mg],Volume [L],Temperature [degF],"
            "Pressure [mmHg]\n" "a,syringe,50000,49990,0.1,70,755\n")
    table = _read(text)
    assert table.values["mass_tare"][0] == pytest.approx(0.05)
    assert table.values["volume"][0] == pytest.approx(1e-4)
    assert table.values["temperature"][0] == pytest.approx((70 - 32) / 1.8 + 273.15)
    assert table.values["pressure"][0] == pytest.approx(755 * mmhg, rel=1e-12)


def test_uncertainty_column_in_its_own_unit_or_the_columns():
    """Checks behaviour: u_<name> takes its header's unit, else its column's (a degC u is a K difference)."""
    text = f"{HEADER},u_temperature,u_pressure [Pa]\n{GOOD},0.2,30\n"
    table = _read(text)
    assert table.uncertainties["temperature"][0] == pytest.approx(0.2)
    assert table.uncertainties["pressure"][0] == pytest.approx(30.0)


def test_semicolon_and_decimal_comma_with_bom():
    """Checks behaviour: semicolons, decimal comma, UTF-8 with BOM (as European spreadsheets save)."""
    text = "\ufeffrun;method;mass_tare;mass_filled;volume;temperature;pressure\n" \
           "s1;evacuated-bulb;150,0000;150,5870;500;21,0;100,8\n"
    table = _read(text)
    assert table.ok.all()
    assert table.values["mass_filled"][0] == pytest.approx(0.150587)
    assert table.values["temperature"][0] == pytest.approx(294.15)


def test_xlsx_reads_like_csv(tmp_path):
    """Checks behaviour: an .xlsx workbook gives the same values as the CSV."""
    frame = pd.read_csv(io.StringIO(f"{HEADER}\n{GOOD}\n"), dtype=str)
    path = tmp_path / "runs.xlsx"
    frame.to_excel(path, index=False)
    table = read_runs(path)
    assert table.ok.all()
    assert table.values["mass_filled"][0] == pytest.approx(0.150587)


def test_stdin(monkeypatch):
    """Checks behaviour: '-' reads standard input."""
    monkeypatch.setattr("sys.stdin", io.TextIOWrapper(io.BytesIO(f"{HEADER}\n{GOOD}\n".encode())))
    assert read_runs("-").ok.all()


def test_humidity_default_is_50_percent_with_wide_uncertainty():
    """Checks behaviour: with no humidity column, 50 % RH with a wide uncertainty, and a note says so."""
    table = _read(f"{HEADER}\n{GOOD}\n")
    assert table.values["humidity"][0] == pytest.approx(0.5)
    assert table.uncertainties["humidity"][0] > 0.2
    assert any("humidity not given" in note for note in table.notes)


@pytest.mark.parametrize("text, message", [
    ("", "empty"),
    (HEADER + "\n", "no data rows"),
    ("run,method,mass_tare,volume,temperature,pressure\nx,syringe,1,2,3,4\n", "mass_filled"),
    (HEADER.replace("pressure", "pressure [blorps]") + "\n" + GOOD + "\n", "unknown unit 'blorps'"),
    (HEADER.replace("pressure", "pressure [g]") + "\n" + GOOD + "\n", "not a pressure unit"),
])
def test_file_level_problems(text, message):
    """Checks behaviour: problems no row survives raise InputError saying what and where."""
    with pytest.raises(InputError, match=message):
        _read(text)


@pytest.mark.parametrize("bad_row, column, fragment", [
    ("b1,evacuated-bulb,150.0000,abc,500,21.0,100.8", "mass_filled", "'abc' is not a number"),
    ("b1,evacuated-bulb,150.0000,150.5870,0,21.0,100.8", "volume", "must be > 0"),
    ("b1,evacuated-bulb,150.0000,150.5870,-5,21.0,100.8", "volume", "must be > 0"),
    ("b1,evacuated-bulb,150.0000,150.5870,500,-280,100.8", "temperature", "absolute zero"),
    ("b1,evacuated-bulb,150.5870,150.0000,500,21.0,100.8", "mass_filled", "cannot weigh less"),
    ("b1,bulb-thing,150.0000,150.5870,500,21.0,100.8", "method", "accepted: evacuated-bulb"),
    ("g1,evacuated-bulb,150.0000,150.5870,500,21.0,100.8", "run", "duplicate run id 'g1'"),
    (",evacuated-bulb,150.0000,150.5870,500,21.0,100.8", "run", "run id is empty"),
    ("b1,evacuated-bulb,150.0000,,500,21.0,100.8", "mass_filled", "cell is empty"),
    ("b1,evacuated-bulb,150.0000,inf,500,21.0,100.8", "mass_filled", "infinite"),
    ("b1,air-tare-bulb,150.0000,148.0000,500,21.0,100.8", "", "gas mass comes out"),
])
def test_bad_rows_are_reported_and_the_rest_analysed(bad_row, column, fragment):
    """Checks behaviour: each bad row names its spreadsheet row and column; good rows are still analysed."""
    text = f"{HEADER}\n{GOOD}\n{bad_row}\ng2,syringe,50.0000,49.9990,100,21.0,100.8\n"
    result, errors = _errors(text)
    assert errors[0] == "" and errors[2] == ""
    assert "row 3" in errors[1] and fragment in errors[1]
    if column:
        assert f"'{column}'" in errors[1] or column in errors[1]
    assert np.isfinite(result.molar_mass[[0, 2]]).all()
    assert np.isnan(result.molar_mass[1])


def test_negative_syringe_difference_is_allowed():
    """A syringe of helium weighs less when filled; that is normal (common practice).

    Helium's molar mass 4.0026 g/mol (IUPAC, from memory) must come out of the 3.5-4.5 g/mol window.
    """
    result, errors = _errors(f"{HEADER}\ng2,syringe,50.0000,49.8970,100,21.0,100.8\n")
    assert errors == [""]
    assert 3.5e-3 < result.molar_mass[0] < 4.5e-3


@pytest.mark.parametrize("header_unit, value, hint", [
    ("temperature [K]", "22.5", "degC"),
    ("pressure", "755", "mmHg"),
    ("pressure", "1.0", "atm"),
])
def test_suspicious_values_warn(header_unit, value, hint):
    """Checks behaviour: a 'K' column holding 15-35, or 'kPa' holding ~750 or ~1, warns with the likely unit.

    The likely units are common practice: room temperature 15-35 degC, room pressure ~750 mmHg or ~1 atm.
    """
    name = header_unit.split(" ")[0]
    columns = HEADER.split(",")
    cells = GOOD.split(",")
    position = columns.index(name)
    columns[position], cells[position] = header_unit, value
    table = _read(",".join(columns) + "\n" + ",".join(cells) + "\n")
    assert any(hint in warning for warning in table.warnings[0]), table.warnings


def test_implausible_density_warns():
    """Checks behaviour: a molar mass below hydrogen's (2.016 g/mol, common practice) warns."""
    result, _ = _errors(f"{HEADER}\nx,evacuated-bulb,150.0000,150.0010,500,21.0,100.8\n")
    assert any("lighter than hydrogen" in w for w in result.warnings[0])


def test_blank_lines_keep_spreadsheet_row_numbers():
    """Checks behaviour: blank lines are skipped but later rows keep the numbers a spreadsheet shows."""
    text = f"{HEADER}\n{GOOD}\n\nb1,evacuated-bulb,150.0000,abc,500,21.0,100.8\n"
    table = _read(text)
    assert list(table.row_numbers) == [2, 4]
    assert "row 4" in table.errors[1][0]


def test_user_columns_are_kept():
    """Checks behaviour: columns molid does not use are kept as the user wrote them."""
    table = _read(f"{HEADER},operator\n{GOOD},=cmd|' /C calc'!A0\n")
    assert table.raw["operator"].iat[0] == "=cmd|' /C calc'!A0"


def test_humidity_uncertainty_above_100_percent_is_an_error():
    """Checks behaviour: u_humidity of 200 % names its row and column; the next row is analysed."""
    result, errors = _errors(f"{HEADER},humidity,u_humidity\n{GOOD},40,200\n"
                             "g2,evacuated-bulb,150.0000,150.5870,500,21.0,100.8,40,5\n")
    assert "row 2, column 'u_humidity'" in errors[0] and errors[1] == ""


def test_co2_without_a_unit_is_a_mole_fraction(tmp_path):
    """Checks behaviour: a bare `co2` header reads 0.0004 as a mole fraction, as the README's table says."""
    path = tmp_path / "co2.csv"
    path.write_text("run,method,mass_tare,mass_filled,volume,temperature,pressure,co2,humidity\n"
                    "b1,evacuated-bulb,150.0000,150.5870,500,21.0,100.8,0.0004,40\n", encoding="utf-8")
    table = read_runs(path)
    assert table.values["co2"][0] == pytest.approx(0.0004)
    assert table.values["humidity"][0] == pytest.approx(0.40)
