"""Report pages of condensed-vapour-flask samples: residual-vapour correction, cautions, page fit.

What is checked: the residual-vapour sentence, each candidate's correction and vapour pressure,
the apparatus cautions, and the fit on one A4 and one Letter page. The runs are simulated from
CoolProp 8.0 (acetone's vapour density and compressibility at the bath, its saturation pressure
at the room temperature; humid air after ASHRAE RP-1485), as in tests/methods/test_vapour_flask.py,
and written as a person types them (0.1 mg, 0.1 °C, 0.01 kPa).
"""

import re

import numpy as np
import pandas as pd
import pytest

from molid.candidates.hazards import method_cautions
from molid.methods.vapour_flask import flask_volume_at, simulate_readings
from molid.reports import build_report, write_report
from molid.reports.content import RESIDUAL_VAPOUR_SENTENCE, Highlight, Table

CoolProp = pytest.importorskip("CoolProp.CoolProp")
HumidAir = pytest.importorskip("CoolProp.HumidAirProp")
pypdf = pytest.importorskip("pypdf")

FLASK = 125.0e-6  # m³ at 20 °C
ROOM = 294.15  # K, 21 °C
BATH = 372.65  # K, 99.5 °C
PRESSURE = 101.0e3  # Pa
HUMIDITY = 0.45


def _air_density(temperature, pressure, humidity):
    """Humid-air density from CoolProp [kg/m³]: (1 + W)/v_da."""
    ratio = HumidAir.HAPropsSI("W", "T", temperature, "P", pressure, "R", humidity)
    return (1.0 + ratio) / HumidAir.HAPropsSI("Vda", "T", temperature, "P", pressure, "R", humidity)


def _coolprop_correction(fluid):
    """Compute the residual-vapour correction as a fraction of the ideal-gas value, from CoolProp.

    The cooled flask's vapour keeps out ρa·V·p_sat/p of air, so the weighing gives the vapour's
    mass less that; the ideal-gas value is proportional to the weighed mass, so the correction
    relative to it is residual/(vapour − residual).
    """
    air = _air_density(ROOM, PRESSURE, HUMIDITY)
    residual = air * FLASK * CoolProp.PropsSI("P", "T", ROOM, "Q", 0, fluid) / PRESSURE
    vapour = CoolProp.PropsSI("D", "T", BATH, "P", PRESSURE, fluid) * flask_volume_at(FLASK, BATH)
    return residual / (vapour - residual)


def _flask_file(path, expected="acetone", runs=3):
    """Write acetone flask runs (sample F-7) as a run sheet would hold them; return the path."""
    rng = np.random.default_rng(7)
    air = _air_density(ROOM, PRESSURE, HUMIDITY)
    vapour = CoolProp.PropsSI("D", "T", BATH, "P", PRESSURE, "Acetone") * flask_volume_at(FLASK, BATH)
    ratio = CoolProp.PropsSI("P", "T", ROOM, "Q", 0, "Acetone") / PRESSURE
    tare, final = simulate_readings(vapour, air, FLASK, glass_mass=0.0712, saturation_ratio=ratio)
    rows = []
    for repeat in range(runs):
        rows.append({
            "run": f"F7-{repeat + 1}", "sample": "F-7", "method": "vapour-flask",
            "expected": expected,
            "mass_tare [g]": f"{tare * 1e3 + rng.normal(0, 2e-4):.4f}",
            "mass_filled [g]": f"{final * 1e3 + rng.normal(0, 2e-4):.4f}",
            "volume [mL]": "125.0", "temperature [degC]": f"{BATH - 273.15:.1f}",
            "air_temperature [degC]": f"{ROOM - 273.15:.1f}", "pressure [kPa]": f"{PRESSURE / 1e3:.2f}",
            "humidity [%]": f"{HUMIDITY * 100:.0f}", "u_volume [mL]": "0.1",
        })
    pd.DataFrame(rows).to_csv(path, index=False)
    return path


def _candidate_rows(page):
    table = next(block for block in page.blocks
                 if isinstance(block, Table) and block.title.startswith("Candidates"))
    return {row[1]: dict(zip(table.columns, row, strict=True)) for row in table.rows}


def _number(cell):
    return float(cell.replace("−", "-").replace("+", ""))


def test_acetone_row_carries_its_correction_and_vapour_pressure(tmp_path):
    """Acetone's row: correction, p_sat at the room and Z at the bath against CoolProp 8.0.

    CoolProp: the air acetone's vapour keeps out of the cooled flask is about 19 % of the weighed
    mass (about 16 % of the vapour's own mass, the figure usually quoted); its saturation pressure
    at 21 °C is 25.8 kPa and its Z at 99.5 °C and 101 kPa 0.971. molid uses its own vapour-pressure
    equation (within 0.5 % of CoolProp for acetone) and the Tsonopoulos virial Z.
    """
    report, ok = build_report(_flask_file(tmp_path / "flask.csv"))
    assert ok
    page = report.pages[0]
    acetone = _candidate_rows(page)["acetone"]
    correction = _number(acetone["corr. [%]"])
    assert 10.0 < correction < 20.0
    assert correction == pytest.approx(100 * _coolprop_correction("Acetone"), abs=0.5)
    saturation = CoolProp.PropsSI("P", "T", ROOM, "Q", 0, "Acetone") / 1e3
    assert _number(acetone["p_sat [kPa]"]) == pytest.approx(saturation, rel=0.01)
    assert _number(acetone["Z"]) == pytest.approx(
        CoolProp.PropsSI("Z", "T", BATH, "P", PRESSURE, "Acetone"), abs=0.003)


def test_label_substance_listed_with_its_own_vapour_pressure(tmp_path):
    """A label outside the top candidates (n-hexane) gets a row with its own p_sat, against CoolProp.

    CoolProp 8.0: n-hexane's saturation pressure at 21 °C is 16.9 kPa; its correction relative to
    this flask's ideal-gas value is f·p_sat/M, so in the ratio of the two vapour pressures to
    acetone's (both rows share f and M).
    """
    report, _ = build_report(_flask_file(tmp_path / "flask.csv", expected="n-hexane"))
    rows = _candidate_rows(report.pages[0])
    hexane, acetone = rows["n-hexane"], rows["acetone"]
    saturation = CoolProp.PropsSI("P", "T", ROOM, "Q", 0, "Hexane")
    assert _number(hexane["p_sat [kPa]"]) == pytest.approx(saturation / 1e3, rel=0.01)
    ratio = saturation / CoolProp.PropsSI("P", "T", ROOM, "Q", 0, "Acetone")
    assert _number(hexane["corr. [%]"]) == pytest.approx(_number(acetone["corr. [%]"]) * ratio,
                                                         rel=0.02)


def test_result_box_says_the_ideal_value_has_no_residual_correction(tmp_path):
    """Checks behaviour: the result box of a flask page says the ideal value is uncorrected.

    The per-run warning is not repeated under it; a page of another method does not say it.
    """
    report, _ = build_report(_flask_file(tmp_path / "flask.csv"))
    page = report.pages[0]
    box = next(block for block in page.blocks if isinstance(block, Highlight))
    assert RESIDUAL_VAPOUR_SENTENCE in box.lines
    assert "no residual-vapour correction" in RESIDUAL_VAPOUR_SENTENCE
    warnings = [item for block in page.blocks if getattr(block, "kind", "") == "warning"
                for item in block.items]
    assert not any("no residual-vapour correction" in item for item in warnings)
    other = tmp_path / "bulb.csv"
    other.write_text("run,method,mass_tare,mass_filled,volume,temperature,pressure\n"
                     "B1,evacuated-bulb,147.3839,148.2020,500.12,21.72,100.39\n", encoding="utf-8")
    report, _ = build_report(other)
    box = next(block for block in report.pages[0].blocks if isinstance(block, Highlight))
    assert RESIDUAL_VAPOUR_SENTENCE not in box.lines


@pytest.mark.parametrize("paper", ["a4", "letter"])
def test_flask_page_prints_on_one_sheet_with_the_apparatus_cautions(tmp_path, paper):
    """Checks behaviour: a three-run flask sample fills one A4 and one Letter page.

    The page holds the sentence, acetone's correction and the flask's apparatus cautions; its
    provenance block may run onto a second page.
    """
    out = tmp_path / "flask.pdf"
    write_report(_flask_file(tmp_path / "flask.csv"), out, paper=paper)
    pages = [page.extract_text() for page in pypdf.PdfReader(str(out)).pages]
    if len(pages) == 2 and pages[1].splitlines()[1:2] == ["Provenance"]:
        pages.pop()
    assert len(pages) == 1
    text = re.sub(r"\s+", " ", pages[0])
    assert RESIDUAL_VAPOUR_SENTENCE in text
    assert re.search(r"acetone C3H6O .*?\+1\d\.\d consistent", text)
    cautions = method_cautions(["vapour-flask"])
    assert cautions
    for caution in cautions:
        assert caution[0].upper() + caution[1:] in text
    assert "Analysed by" in text
