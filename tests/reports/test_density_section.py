"""Densities on the report page: the gas as weighed, and at reference conditions as its leading candidate.

Sources: CoolProp 8.0 (I. H. Bell, J. Wronski, S. Quoilin, V. Lemort, Ind. Eng. Chem. Res. 53
(2014) 2498), whose argon is the reference equation of state of Tegeler, Span and Wagner
(J. Phys. Chem. Ref. Data 28 (1999) 779) and whose n-butane vapour pressure is from Bücker and
Wagner (J. Phys. Chem. Ref. Data 35 (2006) 929); the demo's argon cylinder (CYL-2231,
sample_runs/qa_cylinders.csv) is argon by its label, and molid's result agrees with that label.
"""

import json
import math
import re
from pathlib import Path

import pandas as pd
import pytest

from molid.cli import main
from molid.io.reference_conditions import ACCEPTED_FORM

PropsSI = pytest.importorskip("CoolProp.CoolProp").PropsSI
simulate = pytest.importorskip("simulate")

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "sample_runs" / "qa_cylinders.csv"
PROFILE = ROOT / "sample_runs" / "qa_lab_profile.toml"
ATMOSPHERE = 101325.0
NUMBER = r"(−?\d+(?:\.\d+)?)"
REFERENCE_LINE = (rf"If (.+?) \(leading (consistent|marginal) candidate\), at {NUMBER} °C and {NUMBER} kPa: "
                  rf"{NUMBER} ± {NUMBER} kg/m³; relative density {NUMBER} ± {NUMBER}")
WEIGHED_LINE = rf"As weighed: {NUMBER} ± {NUMBER} kg/m³ at {NUMBER} °C and {NUMBER} kPa"


def _number(text) -> float:
    return float(text.replace("−", "-"))


def _sections(html):
    """Split an HTML report into its page sections, keyed by the page title."""
    parts = re.split(r"<section", html)[1:]
    return {re.search(r"<h1[^>]*>([^<]+)</h1>", part).group(1): part for part in parts}


def _report(tmp_path, *options, name="qa.html"):
    out = tmp_path / name
    assert main(["report", str(DEMO), "--profile", str(PROFILE), "-o", str(out), *options]) == 0
    return out.read_text(encoding="utf-8")


@pytest.fixture(scope="module")
def reports(tmp_path_factory):
    """Make the QA demo's HTML report at the default reference conditions and at 15 °C."""
    folder = tmp_path_factory.mktemp("density")
    return (_report(folder), _report(folder, "--reference-conditions", "15 degC, 101.325 kPa",
                                     name="qa15.html"))


@pytest.mark.parametrize(("index", "temperature"), [(0, 273.15), (1, 288.15)])
def test_argon_reference_density_agrees_with_coolprop(reports, index, temperature):
    """The argon cylinder's density at 0 °C (default) and at 15 °C, 101.325 kPa is CoolProp's within its U.

    Source: CoolProp 8.0 argon (Tegeler, Span and Wagner 1999) at the stated conditions:
    1.78396 kg/m³ at 0 °C and 1.69075 kg/m³ at 15 °C (computed in the test).
    """
    page = _sections(reports[index])["Sample CYL-2231"]
    found = re.search(REFERENCE_LINE, page)
    assert found is not None, page[-3000:]
    name, verdict, celsius, kilopascal, value, expanded = found.groups()[:6]
    assert (name, verdict) == ("argon", "consistent")
    assert _number(celsius) == pytest.approx(temperature - 273.15)
    assert _number(kilopascal) == pytest.approx(101.325)
    truth = PropsSI("D", "T", temperature, "P", ATMOSPHERE, "Argon")
    assert abs(_number(value) - truth) <= _number(expanded), (value, expanded, truth)


def test_reference_conditions_change_the_stated_conditions_and_the_number(reports):
    """At 15 °C instead of 0 °C the argon line names those conditions; its density falls as CoolProp's.

    Source: CoolProp 8.0 argon densities at 0 °C and 15 °C, 101.325 kPa (ratio 0.94776); the two
    shown values' ratio agrees within their combined relative U.
    """
    default, warm = (_sections(html)["Sample CYL-2231"] for html in reports)
    assert "at 0 °C and 101.325 kPa" in default and "at 15 °C and 101.325 kPa" not in default
    assert "at 15 °C and 101.325 kPa" in warm and "at 0 °C and 101.325 kPa" not in warm
    cold_value, cold_u = (_number(text) for text in re.search(REFERENCE_LINE, default).groups()[4:6])
    warm_value, warm_u = (_number(text) for text in re.search(REFERENCE_LINE, warm).groups()[4:6])
    ratio = PropsSI("D", "T", 288.15, "P", ATMOSPHERE, "Argon") / PropsSI("D", "T", 273.15, "P", ATMOSPHERE,
                                                                           "Argon")
    assert abs(warm_value / cold_value - ratio) <= math.hypot(cold_u / cold_value, warm_u / warm_value)
    assert warm_value < cold_value


def test_density_as_weighed_agrees_with_coolprop_argon(reports):
    """The argon cylinder's own density at its stated temperature and pressure is CoolProp argon's within U.

    Source: CoolProp 8.0 argon (Tegeler, Span and Wagner 1999) at the temperature and pressure
    the page states (the runs' mean).
    """
    page = _sections(reports[0])["Sample CYL-2231"]
    value, expanded, celsius, kilopascal = (_number(text) for text in re.search(WEIGHED_LINE, page).groups())
    truth = PropsSI("D", "T", celsius + 273.15, "P", kilopascal * 1e3, "Argon")
    assert abs(value - truth) <= expanded, (value, expanded, truth)


def test_page_numbers_are_the_json_documents(reports, tmp_path, capsys):
    """Checks behaviour: each page's density lines show the JSON document's numbers (U = 2u)."""
    assert main(["identify", str(DEMO), "--profile", str(PROFILE), "--json"]) == 0
    samples = {item["sample"]: item for item in json.loads(capsys.readouterr().out)["samples"]}
    sections = _sections(reports[0])
    for name, sample in samples.items():
        page = sections[f"Sample {name}"]
        weighed = [_number(text) for text in re.search(WEIGHED_LINE, page).groups()]
        assert weighed[0] == pytest.approx(sample["density"]["value"], abs=weighed[1] / 10)
        assert weighed[1] == pytest.approx(2 * sample["density"]["u"], rel=0.05)
        found = re.search(REFERENCE_LINE, page)
        leading = next((item for item in sample["candidates"] if item["verdict"] == "consistent"), None)
        if leading is None:
            assert found is None and "none is consistent or marginal" in page
            continue
        assert found.group(1) == leading["name"]
        value, expanded, relative, relative_expanded = (_number(text) for text in found.groups()[4:])
        assert value == pytest.approx(leading["reference_density"]["value"], abs=expanded / 10)
        assert relative == pytest.approx(leading["relative_density"]["value"], abs=relative_expanded / 10)
        assert relative_expanded == pytest.approx(2 * leading["relative_density"]["u"], rel=0.05)


def test_candidate_liquid_at_reference_conditions_gets_the_reason_not_a_number(tmp_path):
    """An n-butane run with reference conditions at −10 °C: no density, and the page says it would be liquid.

    Source: CoolProp 8.0 n-butane (Bücker and Wagner 2006): its vapour pressure at −10 °C is
    about 69 kPa, below 101.325 kPa; the run is simulated from its CoolProp density at 22 °C, 100.5 kPa.
    """
    assert PropsSI("P", "T", 263.15, "Q", 0, "n-Butane") < ATMOSPHERE
    temperature, pressure, volume = 295.15, 100.5e3, 1e-3
    tare, filled = simulate.readings("evacuated-bulb", PropsSI("D", "T", temperature, "P", pressure,
                                                               "n-Butane") * volume,
                                     simulate.air_density(temperature, pressure, 0.5), volume)
    path = tmp_path / "butane.csv"
    pd.DataFrame([{"run": "B-1", "method": "evacuated-bulb", "mass_tare [kg]": float(tare),
                   "mass_filled [kg]": float(filled), "volume [m^3]": volume, "temperature [K]": temperature,
                   "pressure [Pa]": pressure, "humidity [1]": 0.5}]).to_csv(path, index=False)
    out = tmp_path / "butane.html"
    assert main(["report", str(path), "-o", str(out), "--reference-conditions", "-10 degC, 101.325 kPa"]) == 0
    page = _sections(out.read_text(encoding="utf-8"))["Run B-1"]
    assert re.search(r"If n-butane \(leading consistent candidate\), at −10 °C and 101.325 kPa: "
                     r"it would be liquid there \(its vapour pressure there is about [\d.]+ kPa\)", page)
    assert re.search(WEIGHED_LINE, page)
    assert "relative density −" not in page and not re.search(REFERENCE_LINE, page)


def test_bad_reference_conditions_on_report_exit_2_with_the_message(tmp_path, capsys):
    """Checks behaviour: an unreadable --reference-conditions names what was given and the accepted form."""
    out = tmp_path / "r.html"
    with pytest.raises(SystemExit) as stop:
        main(["report", str(DEMO), "-o", str(out), "--reference-conditions", "warm and humid"])
    assert stop.value.code == 2
    said = capsys.readouterr().err
    assert "--reference-conditions" in said and "'warm and humid'" in said and ACCEPTED_FORM in said
    assert not out.exists()


def test_reference_conditions_recorded_in_the_report_provenance(tmp_path, reports):
    """Checks behaviour: the report's provenance names the reference conditions given (CLI and API)."""
    from molid.reports import write_report

    assert 'reference_conditions=&quot;288.15 K, 101325.0 Pa&quot;' in reports[1]
    assert "reference_conditions=" not in reports[0]
    path, _ = write_report(DEMO, tmp_path / "api.html", profile=PROFILE, reference_conditions=(293.15, 1e5))
    text = path.read_text(encoding="utf-8")
    assert 'reference_conditions=&quot;293.15 K, 100000.0 Pa&quot;' in text
    assert "at 20 °C and 100 kPa" in text
