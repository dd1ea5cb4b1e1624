"""Grading a lab section: rubric arithmetic, bad input, exports, summary and a fresh random class.

Runs are simulated from CoolProp densities (reference equations of state) and the
students' results computed by a student's own arithmetic (see
tests/teaching/test_diagnosis.py), independent of molid. Tests of the rubric,
files and messages check molid's own behaviour and say so.
"""

import csv
import io
import json
import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from molid.cli import main
from molid.teaching.answer_key import KeyFileError, read_key
from molid.teaching.class_summary import MAD_SCALE, OUTLIER_LIMIT, robust_spread, robust_z, summarise
from molid.teaching.grades_output import grades_csv, grading_document
from molid.teaching.grading import grade
from molid.teaching.rubric import RubricError, load_rubric

test_diagnosis = pytest.importorskip("test_diagnosis")
GASES, PLANTS = test_diagnosis.GASES, test_diagnosis.PLANTS
simulate_run, student_result = test_diagnosis.simulate_run, test_diagnosis.student_result
PropsSI = test_diagnosis.PropsSI
scipy_stats = pytest.importorskip("scipy.stats")

GRADE_KEYS = {"expected", "percent_error", "in_interval", "expected_rank", "expected_z",
              "points", "diagnosis"}


def random_section(seed, runs=30, share=0.45):
    """Simulate a section of students; some make a classic mistake, picked at random.

    Returns the rows and, per run, the planted mistake code (None for a correct run).
    """
    rng = np.random.default_rng(seed)
    unit = ["kPa", "mmHg", "atm", "bar"][int(rng.integers(4))]
    rows, planted = [], []
    for number in range(runs):
        gas = list(GASES)[int(rng.integers(len(GASES)))]
        method = ["evacuated-bulb", "air-tare-bulb", "syringe"][int(rng.integers(3))]
        cells, rho_air = simulate_run(rng, gas, method, pressure_unit=unit)
        correct = student_result(cells, rho_air)
        mistake, value = None, correct
        if rng.random() < share:
            choices = [code for code in PLANTS
                       if not (code == "no-buoyancy" and method == "evacuated-bulb")]
            mistake = choices[int(rng.integers(len(choices)))]
            ways = [how for how in PLANTS[mistake]
                    if not isinstance(how, tuple) or how[0] == unit]
            how = ways[int(rng.integers(len(ways)))]
            value = student_result(cells, rho_air, mistake, how)
        rows.append({"run": f"S{seed % 1000:03d}-{number:02d}", "student": f"Student {number}",
                     "section": f"L{number % 2 + 1}", "sample": f"U{number}", "expected": gas,
                     **cells, "reported_molar_mass": f"{value:#.5g}"})
        planted.append(mistake)
    return rows, planted


def _frame(rows):
    return pd.DataFrame(rows).fillna("")


# -- the Done criterion: a fresh random section --------------------------------------------

@pytest.mark.parametrize("seed", [20261201, 7319, 424242])
def test_fresh_random_section(seed):
    """Random section and mistakes: every planted mistake has its code, no correct run has one.

    Readings from CoolProp's reference equations of state; each mistake planted by
    the student's arithmetic in test_diagnosis.py (constants from SI Brochure 2019,
    CGPM 1954). The k = 2 intervals of noise-free readings hold the true value in
    about 95 % of runs (JCGM 100:2008, 6.2).
    """
    rows, planted = random_section(seed)
    assert any(planted) and not all(planted)
    graded = grade(_frame(rows)).grades
    for codes, mistake, run in zip(graded["diagnosis"], planted, graded["run"], strict=True):
        if mistake is None:
            assert codes == [], run
        else:
            assert mistake in codes, (run, mistake, codes)
    # readings without noise but rounded as written: the k = 2 intervals hold the true value
    assert graded["in_interval"].astype(bool).mean() >= 0.9


def test_fresh_section_writes_grades_and_plots(tmp_path):
    """The command writes a grades CSV with the planted codes, and PNG and SVG plots.

    Checks behaviour: the files the command writes. The PNG signature is that of
    the PNG specification (W3C Recommendation 2003, ISO/IEC 15948:2004), 5.2; from memory.
    """
    rows, planted = random_section(90125, runs=16)
    path = tmp_path / "section.csv"
    _frame(rows).to_csv(path, index=False)
    grades_path, plots = tmp_path / "grades.csv", tmp_path / "plots"
    assert main(["grade", str(path), "-o", str(grades_path), "--plots", str(plots)]) == 0
    with open(grades_path, newline="", encoding="utf-8") as stream:
        records = list(csv.DictReader(stream))
    assert [record["run"] for record in records] == [row["run"] for row in rows]
    for record, mistake in zip(records, planted, strict=True):
        codes = record["diagnosis"].split("; ") if record["diagnosis"] else []
        assert (mistake in codes) if mistake else codes == [], record["run"]
    for name in ("percent_error", "intervals"):
        assert (plots / f"{name}.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
        assert b"<svg" in (plots / f"{name}.svg").read_bytes()[:500]
    # plots already there: replaced only with --force
    assert main(["grade", str(path), "--plots", str(plots)]) == 2


# -- rubric ---------------------------------------------------------------------------------

def test_rubric_band_arithmetic():
    """Band edges belong to the band; beyond the last band the 'beyond' points.

    Checks behaviour: the rubric's band arithmetic, worked by hand.
    """
    rubric = load_rubric({"percent_error": {"bands": [{"up_to": 1, "points": 50},
                                                      {"up_to": 5, "points": 20}],
                                            "beyond": 5}})
    got = rubric.band_points([0.0, 1.0, -1.0, 1.0001, 5.0, 5.1, np.nan])
    np.testing.assert_array_equal(got, [50, 50, 50, 20, 20, 5, np.nan])
    assert rubric.max_points == 50 + 30


@settings(max_examples=60, deadline=None)
@given(limits=st.lists(st.floats(0.01, 100), min_size=1, max_size=6, unique=True),
       points=st.lists(st.floats(0, 100), min_size=7, max_size=7),
       errors=st.lists(st.floats(-200, 200), min_size=2, max_size=20))
def test_band_points_never_reward_a_larger_error(limits, points, errors):
    """For any valid rubric, a larger percent error never earns more points.

    Checks behaviour: a property of the rubric, over rubrics drawn by hypothesis.
    """
    limits = sorted(limits)
    values = sorted(points, reverse=True)[: len(limits) + 1]
    rubric = load_rubric({"percent_error": {
        "bands": [{"up_to": limit, "points": value} for limit, value in zip(
            limits, values, strict=False)], "beyond": values[len(limits)]}})
    size = np.abs(np.array(errors))
    order = np.argsort(size, kind="stable")
    earned = rubric.band_points(size[order])
    assert (np.diff(earned) <= 0).all()
    assert earned.max() + rubric.identification_points == pytest.approx(
        rubric.max_points) or earned.max() + rubric.identification_points < rubric.max_points


def test_points_add_up(tmp_path):
    """Points are band + identification − smallest deduction, never below 0.

    Checks behaviour: the rubric's sums, worked by hand. The CO2 run's ideal-gas
    error is 1/Z − 1 with Z from CoolProp's reference equation of state for CO2
    (R. Span and W. Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509).
    """
    rng = np.random.default_rng(3)
    rows = []
    for number, (gas, mistake) in enumerate([("argon", None), ("argon", "celsius-as-kelvin"),
                                             ("carbon dioxide", None), ("oxygen", "unexplained")]):
        cells, rho_air = simulate_run(rng, gas, "evacuated-bulb")
        how = 1.3 if mistake == "unexplained" else None
        value = student_result(cells, rho_air, mistake, how)
        rows.append({"run": f"p{number}", "expected": gas, **cells,
                     "reported_molar_mass": f"{value:#.5g}"})
    rubric = tmp_path / "rubric.toml"
    rubric.write_text(
        "[percent_error]\nbands = [{ up_to = 0.5, points = 40 }, { up_to = 50, points = 10 }]\n"
        "beyond = 0\n[identification]\npoints = 20\n[deductions]\ncelsius-as-kelvin = 15\n"
        "unexplained = 25\n[diagnosis]\ncarry_forward = false\n", encoding="utf-8")
    grades = grade(_frame(rows), rubric=rubric).grades.set_index("run")
    # argon within 0.5 %: 40 + 20 identified
    assert grades.at["p0", "points"] == 60
    # °C as K: about -93 %, beyond the bands, not identified as argon, minus 15 -> floor 0
    assert grades.at["p1", "diagnosis"] == ["celsius-as-kelvin"]
    assert grades.at["p1", "points"] == 0
    # CO2 with the ideal gas law is high by 1/Z - 1, about 0.5 % at room conditions (Span and
    # Wagner 1996, via CoolProp): the graded error discounts the non-ideality -> top band
    co2 = rows[2]
    compressibility = PropsSI("Z", "T", float(co2["temperature [degC]"]) + 273.15,
                              "P", float(co2["pressure [kPa]"]) * 1e3, "CarbonDioxide")
    # readings rounded to 0.1 mg on about 0.45 g of gas, the result to 5 figures: < 0.05 %
    assert grades.at["p2", "percent_error"] == pytest.approx(100 * (1 / compressibility - 1),
                                                             abs=0.05)
    assert grades.at["p2", "percent_error"] > 0.3
    assert grades.at["p2", "graded_percent_error"] < 0.1
    assert grades.at["p2", "points"] == 60
    # 30 % off: band 10, oxygen still the nearest unknown? 41.6 g/mol is nearest argon -> 0
    assert grades.at["p3", "diagnosis"] == ["unexplained"]
    assert grades.at["p3", "points"] == max(0, 10 + 0 - 25)
    assert (grades["max_points"] == 60).all()


def test_interval_and_rank_of_the_true_gas():
    """The true gas's interval uses its Z; a wrong key is out of the interval and ranked low.

    Butane's ideal-gas value is high by 1/Z − 1, about 3 % at room conditions (Z
    from CoolProp's reference equation of state for n-butane, D. Bücker and
    W. Wagner, J. Phys. Chem. Ref. Data 35 (2006) 929), yet its interval holds the
    true M; argon keyed as oxygen is excluded (argon's M from IUPAC standard atomic
    weights is 39.95 g/mol, oxygen's 32.00 g/mol).
    """
    rng = np.random.default_rng(15)
    butane, rho_butane = simulate_run(rng, "n-butane", "evacuated-bulb")
    argon, rho_argon = simulate_run(rng, "argon", "evacuated-bulb")
    grades = grade(_frame([
        {"run": "b", "expected": "n-butane", **butane,
         "reported_molar_mass": f"{student_result(butane, rho_butane):#.5g}"},
        {"run": "a", "expected": "oxygen", **argon,
         "reported_molar_mass": f"{student_result(argon, rho_argon):#.5g}"},
    ]), rubric={"identification": {"among": "library"}}).grades.set_index("run")
    ideal_high = (grades.at["b", "molar_mass"] - grades.at["b", "true_molar_mass"])
    compressibility = PropsSI("Z", "T", float(butane["temperature [degC]"]) + 273.15,
                              "P", float(butane["pressure [kPa]"]) * 1e3, "n-Butane")
    # readings rounded to 0.1 mg on about 0.6 g of gas: under 2e-4 of M
    assert ideal_high / grades.at["b", "true_molar_mass"] == pytest.approx(
        1 / compressibility - 1, abs=3e-4)
    assert ideal_high / grades.at["b", "true_molar_mass"] > 0.02
    assert ideal_high > grades.at["b", "U"]  # the ideal-gas interval misses it
    assert bool(grades.at["b", "in_interval"]) and grades.at["b", "expected_rank"] <= 2
    assert grades.at["b", "points"] == grades.at["b", "max_points"]
    assert not bool(grades.at["a", "in_interval"])
    assert grades.at["a", "expected_rank"] > 5 and abs(grades.at["a", "expected_z"]) > 10
    # among the whole library the nearest is argon, not the keyed oxygen
    assert not bool(grades.at["a", "identified"]) and grades.at["a", "identified_as"] == "argon"


def test_carry_forward_grades_the_recomputed_result():
    """With carry_forward, a diagnosed run earns the recomputed result's points less the deduction.

    Checks behaviour: the default rubric's sum, by hand.
    """
    rng = np.random.default_rng(4)
    cells, rho_air = simulate_run(rng, "argon", "evacuated-bulb")
    value = student_result(cells, rho_air, "volume-unit")
    grades = grade(_frame([{"run": "cf", "expected": "argon", **cells,
                            "reported_molar_mass": f"{value:#.5g}"}])).grades
    rubric = load_rubric()
    expected = (rubric.band_points(grades["graded_percent_error"])[0]
                + rubric.identification_points - rubric.deductions["volume-unit"])
    assert grades["points"].iat[0] == expected
    assert grades["graded_percent_error"].iat[0] < 0.5
    assert grades["percent_error"].iat[0] < -99


@pytest.mark.parametrize("content, key", [
    ("[percent_error]\nbands = [{ up_to = 1, points = 'many' }]\n",
     "percent_error.bands[0].points"),
    ("[percent_error]\nbands = [{ up_to = 2, points = 5 }, { up_to = 1, points = 4 }]\n",
     "percent_error.bands"),
    ("[deductions]\nno-buoyancy = -3\n", "deductions.no-buoyancy"),
    ("[deductions]\nforgot-units = 3\n", "deductions.forgot-units"),
    ("[identification]\namong = 'everything'\n", "identification.among"),
    ("[diagnosis]\ncarry_forward = 'yes'\n", "diagnosis.carry_forward"),
    ("[grading]\npoints = 1\n", "[grading]"),
])
def test_bad_rubric_names_the_key(tmp_path, content, key):
    """A rubric with a bad value is refused with a message naming the key.

    Checks behaviour: the rubric reader's messages.
    """
    path = tmp_path / "rubric.toml"
    path.write_text(content, encoding="utf-8")
    with pytest.raises(RubricError, match=key.replace("[", r"\[").replace("]", r"\]")):
        load_rubric(path)


def test_bad_rubric_on_the_command_line(tmp_path, capsys):
    """The CLI reports a bad rubric without a traceback and exits 2.

    Checks behaviour: the command's exit status and message.
    """
    rows, _ = random_section(5, runs=3, share=0)
    runs = tmp_path / "runs.csv"
    _frame(rows).to_csv(runs, index=False)
    rubric = tmp_path / "rubric.toml"
    rubric.write_text("[identification]\npoints = 'ten'\n", encoding="utf-8")
    assert main(["grade", str(runs), "--rubric", str(rubric)]) == 2
    assert "identification.points" in capsys.readouterr().err


# -- key and bad rows -----------------------------------------------------------------------

def test_key_file_and_row_problems(tmp_path, capsys):
    """Bad rows (unknown identity, sample not in the key, no readings) are named; others graded.

    Checks behaviour: the row messages. Key identities are given by formula or by name.
    """
    rng = np.random.default_rng(6)
    rows = []
    for number, sample in enumerate(["A", "B", "C", "D"]):
        cells, rho_air = simulate_run(rng, ["argon", "carbon dioxide", "helium", "argon"][number],
                                      "syringe")
        rows.append({"run": f"k{number}", "student": f"S{number}", "sample": sample, **cells,
                     "reported_molar_mass": f"{student_result(cells, rho_air):#.5g}"})
    rows[2]["sample"] = "Z"  # not in the key
    rows.append({"run": "k4", "student": "Nobody", "sample": "A", "method": "syringe"})
    rows.append({"run": "k5", "student": "S5", "sample": "E", **rows[0]})
    rows[-1].update(run="k5", sample="E")
    runs = tmp_path / "runs.csv"
    _frame(rows).to_csv(runs, index=False)
    key = tmp_path / "key.csv"
    key.write_text("sample,expected\nA,Ar\nB,carbon dioxide\nD,argon\nE,unobtainium\n",
                   encoding="utf-8")
    graded = grade(runs, key=key).grades.set_index("run")
    assert graded.loc[["k0", "k1", "k3"], "error"].isna().all()
    assert graded.loc[["k0", "k1", "k3"], "expected_name"].tolist() == [
        "argon", "carbon dioxide", "argon"]
    assert "row 4" in graded.at["k2", "error"] and "'Z'" in graded.at["k2", "error"]
    assert "row 6" in graded.at["k4", "error"] and "no readings" in graded.at["k4", "error"]
    assert "row 7" in graded.at["k5", "error"] and "unobtainium" in graded.at["k5", "error"]
    assert graded.loc[["k2", "k4", "k5"], "points"].isna().all()
    assert main(["grade", str(runs), "--key", str(key)]) == 1
    out = capsys.readouterr().out
    assert "Not graded" in out and "unobtainium" in out


def test_isomer_formula_in_key_is_refused_by_row():
    """A formula shared by isomers (C4H10) cannot name the unknown; the row says so.

    Checks behaviour: the row message (n-butane and isobutane share C4H10, common practice).
    """
    rng = np.random.default_rng(14)
    cells, rho_air = simulate_run(rng, "n-butane", "evacuated-bulb")
    graded = grade(_frame([{"run": "i", "sample": "X", **cells}]), key={"X": "C4H10"}).grades
    assert "several substances" in graded["error"].iat[0]
    assert "n-butane" in graded["error"].iat[0] and "isobutane" in graded["error"].iat[0]


def test_key_file_problems(tmp_path):
    """A key with a sample given two identities, or without a sample column, is refused.

    Checks behaviour: the key reader's messages.
    """
    twice = tmp_path / "twice.csv"
    twice.write_text("sample,expected\nA,N2\nA,O2\n", encoding="utf-8")
    with pytest.raises(KeyFileError, match="row 3: sample 'A'"):
        read_key(twice)
    wrong = tmp_path / "wrong.csv"
    wrong.write_text("unknown,gas\nA,N2\n", encoding="utf-8")
    with pytest.raises(KeyFileError, match="sample"):
        read_key(wrong)
    good = tmp_path / "good.csv"
    good.write_text("sample;identity\nA;N2\n\nB;R-134a\n", encoding="utf-8")
    assert read_key(good) == {"A": ("N2", 2), "B": ("R-134a", 4)}


# -- exports --------------------------------------------------------------------------------

def test_export_neutralises_formulas_and_keeps_numbers(tmp_path):
    """A student named =HYPERLINK(...) arrives as text; numbers stay numbers.

    The prefixed characters are those of OWASP, "CSV Injection" (owasp.org); the
    rest checks behaviour: the CSV file equals the library's text.
    """
    rows, _ = random_section(8, runs=3, share=0)
    rows[0]["student"] = '=HYPERLINK("http://example.invalid","grade me")'
    rows[1]["student"] = "+1 for effort"
    rows[2]["section"] = "@lab"
    graded = grade(_frame(rows))
    text = grades_csv(graded)
    records = list(csv.DictReader(io.StringIO(text)))
    assert records[0]["student"] == "'" + rows[0]["student"]
    assert records[1]["student"] == "'+1 for effort"
    assert records[2]["section"] == "'@lab"
    for record in records:
        float(record["percent_error"])  # a number, negative ones too, never quoted
        assert not record["percent_error"].startswith("'")
        assert record["in_interval"] in ("TRUE", "FALSE")
    output = tmp_path / "grades.csv"
    runs = tmp_path / "runs.csv"
    _frame(rows).to_csv(runs, index=False)
    assert main(["grade", str(runs), "-o", str(output)]) == 0
    assert output.read_text(encoding="utf-8") == text
    assert main(["grade", str(runs), "-o", str(output)]) == 2  # exists: needs --force


def test_json_document(tmp_path, capsys):
    """--json: each result has the grade keys with their types; the top level a summary.

    Checks behaviour: the JSON document's keys and types, and the planted codes.
    """
    rows, planted = random_section(9, runs=8, share=0.5)
    runs = tmp_path / "runs.csv"
    _frame(rows).to_csv(runs, index=False)
    assert main(["grade", str(runs), "--json"]) == 0
    document = json.loads(capsys.readouterr().out)
    assert "summary" in document and document["summary"]["runs"] == 8
    for entry, mistake in zip(document["results"], planted, strict=True):
        entry_grade = entry["grade"]
        assert GRADE_KEYS <= set(entry_grade)
        assert isinstance(entry_grade["expected"], str)
        assert isinstance(entry_grade["percent_error"], float)
        assert isinstance(entry_grade["in_interval"], bool)
        assert isinstance(entry_grade["expected_rank"], int)
        assert isinstance(entry_grade["expected_z"], float)
        assert isinstance(entry_grade["points"], float)
        assert all(isinstance(code, str) for code in entry_grade["diagnosis"])
        assert (mistake in entry_grade["diagnosis"]) if mistake else not entry_grade["diagnosis"]
    assert document.pop("provenance")["command"] == "grade"
    assert document == json.loads(json.dumps(grading_document(grade(runs), top=5),
                                             allow_nan=False))


# -- summary statistics ---------------------------------------------------------------------

def test_mad_scale_and_outlier_limit(reference):
    """MAD scale 1/Φ⁻¹(3/4) (Rousseeuw and Croux 1993) and the 3.5 limit (Iglewicz and Hoaglin 1993).

    See also test_class_statistics.py (ISO 13528:2015, MADe = 1.483·MAD).
    """
    entry = reference["grading"]["mad_scale"]
    assert MAD_SCALE == pytest.approx(entry["value"], rel=entry["tolerance_relative"])
    assert MAD_SCALE == pytest.approx(1 / scipy_stats.norm.ppf(0.75), rel=1e-14)
    assert OUTLIER_LIMIT == reference["grading"]["outlier_limit"]["value"]


def test_robust_statistics_against_scipy():
    """robust_spread equals scipy's normal-scaled median absolute deviation (scipy.stats reference)."""
    data = np.random.default_rng(1).standard_t(3, size=41) * 2.0 + 0.7
    assert robust_spread(data) == pytest.approx(
        scipy_stats.median_abs_deviation(data, scale="normal"), rel=1e-12)
    z = robust_z(data)
    assert z == pytest.approx((data - np.median(data)) / robust_spread(data))
    assert np.isnan(robust_z([1.0, 1.0, 1.0, 2.0])).all()  # MAD = 0: no robust z


def test_summary_against_hand_computation():
    """Counts, medians, spreads, identifications, outliers and diagnoses per group, by hand.

    Checks behaviour: the grouping and counting, worked by hand; the spread is
    checked against scipy.stats.median_abs_deviation (scale="normal").
    """
    frame = pd.DataFrame({
        "run": [f"r{i}" for i in range(8)],
        "student": [f"s{i}" for i in range(8)],
        "section": ["A"] * 5 + ["B"] * 3,
        "expected": ["Ar"] * 6 + ["CO2"] * 2,
        "expected_name": ["argon"] * 6 + ["carbon dioxide"] * 2,
        "percent_error": [0.1, -0.2, 0.3, 0.0, -92.5, 0.2, 1.0, np.nan],
        "identified": [True, True, True, True, False, True, True, None],
        "in_interval": [True, True, False, True, True, True, True, None],
        "points": [90.0, 90.0, 85.0, 90.0, 20.0, 90.0, 80.0, np.nan],
        "max_points": [90.0] * 8,
        "diagnosis": [[], [], [], [], ["celsius-as-kelvin"], [], ["pressure-unit",
                      "gas-constant-units"], []],
        "error": [None] * 7 + ["row 9: no readings"],
    })
    summary = summarise(frame)
    argon = next(item for item in summary["by_unknown"] if item["unknown"] == "argon")
    errors = np.array([0.1, -0.2, 0.3, 0.0, -92.5, 0.2])
    # median of (-92.5, -0.2, 0, 0.1, 0.2, 0.3) = 0.05; |dev| = 0.05 0.25 0.25 0.05 92.55 0.15
    # -> MAD = median(0.05, 0.05, 0.15, 0.25, 0.25, 92.55) = 0.2
    assert argon["count"] == 6 and argon["graded"] == 6
    assert argon["median_percent_error"] == pytest.approx(0.05)
    assert argon["robust_spread_percent"] == pytest.approx(0.2 * MAD_SCALE)
    assert argon["robust_spread_percent"] == pytest.approx(
        scipy_stats.median_abs_deviation(errors, scale="normal"))
    assert argon["identified"] == 5
    assert [item["run"] for item in argon["outliers"]] == ["r4"]
    assert argon["outliers"][0]["robust_z"] == pytest.approx((-92.5 - 0.05) / (0.2 * MAD_SCALE))
    assert argon["diagnoses"] == {"celsius-as-kelvin": 1}
    co2 = next(item for item in summary["by_unknown"] if item["unknown"] == "carbon dioxide")
    assert co2["count"] == 2 and co2["graded"] == 1 and co2["outliers"] == []
    section_b = next(item for item in summary["by_section"] if item["section"] == "B")
    assert section_b["median_percent_error"] == pytest.approx((0.2 + 1.0) / 2)
    assert summary["not_graded"] == 1
    assert [item["code"] for item in summary["diagnoses"]] == [
        "celsius-as-kelvin", "gas-constant-units", "pressure-unit"]
    assert math.isclose(summary["overall"]["mean_points"], (90 * 4 + 85 + 20 + 80) / 7)


def test_demo_section_runs(tmp_path):
    """The demo teaching section grades with the key: every planted demo mistake found.

    Checks behaviour: the demo data's planted mistakes (sample_runs/make_demo_data.py).
    """
    from pathlib import Path

    root = Path(__file__).resolve().parents[2] / "sample_runs"
    graded = grade(root / "teaching_section.csv", key=root / "teaching_key.csv").grades
    found = {run: codes for run, codes in zip(graded["run"], graded["diagnosis"], strict=True)}
    # the demo generator plants these (sample_runs/make_demo_data.py)
    assert "celsius-as-kelvin" in found["B03"] and "no-buoyancy" in found["B04"]
    assert "volume-unit" in found["B08"] and "pressure-unit" in found["B11"]
    assert "masses-swapped" in found["B15"] and "gas-constant-units" in found["B17"]
    assert "no-buoyancy" in found["B20"] and found["B22"] == ["unexplained"]
    clean = set(graded["run"]) - {"B03", "B04", "B08", "B11", "B15", "B17", "B20", "B22"}
    assert all(found[run] == [] for run in clean)
