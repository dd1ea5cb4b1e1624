"""Specifications in a run file and a --spec file, their bad inputs, and the QA demo's outcomes."""

import json
from pathlib import Path

import pytest

from molid.cli import main
from molid.pipeline.identify import identify

DEMO = Path(__file__).resolve().parents[2] / "sample_runs"
RUNS = DEMO / "qa_purity.csv"
PROFILE = DEMO / "qa_lab_profile.toml"


def _document(capsys, *extra):
    assert main(["identify", str(RUNS), "--profile", str(PROFILE), "--json", *extra]) in (0, 1)
    return {sample["sample"]: sample for sample in json.loads(capsys.readouterr().out)["samples"]}


def test_demo_delivery_gets_each_outcome(capsys):
    """Checks behaviour on invented demo data: one conforms, one cannot be decided, one does not conform.

    sample_runs/qa_purity.csv: SF6 with about 0.04 %, 0.49 % and 2.1 % air (CoolProp mixture densities),
    specification at least 99.5 % (sample_runs/qa_specifications.toml), guarded acceptance.
    """
    samples = _document(capsys, "--spec", str(DEMO / "qa_specifications.toml"))
    outcomes = {name: samples[name]["conformity"]["outcome"] for name in ("CYL-2301", "CYL-2302", "CYL-2303")}
    assert outcomes == {"CYL-2301": "conforms", "CYL-2302": "undecided", "CYL-2303": "does-not-conform"}
    purity = samples["CYL-2303"]["purity"]
    assert purity["contaminant"] == "air" and purity["detected"] and purity["low"] <= 2.1 <= purity["high"]
    assert set(samples["CYL-2301"]["conformity"]) >= {"rule", "limit", "outcome", "probability"}
    assert "JCGM 106" in samples["CYL-2301"]["conformity"]["rule"]


def test_simple_acceptance_decides_the_straddling_cylinder(capsys):
    """Under simple acceptance (JCGM 106:2012 8.2) there is no 'cannot decide'."""
    samples = _document(capsys, "--spec", str(DEMO / "qa_specifications.toml"), "--rule", "simple")
    assert samples["CYL-2302"]["conformity"]["outcome"] in ("conforms", "does-not-conform")


def test_pressure_series_gives_a_model_free_molar_mass(capsys):
    """CYL-2304, SF6 at 32-101 kPa: the limiting density holds SF6's molar mass within U, B agrees.

    SF6's molar mass from the IUPAC standard atomic weights (periodictable): 146.06 g/mol;
    the demo's densities come from CoolProp's SF6 equation of state with 0.04 % air.
    """
    limiting = _document(capsys)["CYL-2304"]["limiting_density"]
    mass = limiting["molar_mass"]
    assert mass["low"] <= 146.06 <= mass["high"] and mass["unit"] == "g/mol"
    assert limiting["runs"] == 4 and min(limiting["pressures"]) < 0.5 * max(limiting["pressures"])
    assert limiting["candidates"][0]["name"] == "sulfur hexafluoride"
    assert abs(limiting["candidates"][0]["z"]) < 2


@pytest.mark.parametrize(("content", "words"), [
    ('[specifications."unobtainium"]\nmin_purity = 99\n', "unobtainium"),
    ('[specifications."argon"]\nmin_purity = 120\n', "outside 0 to 100"),
    ('[specifications."argon"]\nmin_purity = 99\nmax_contaminant = 1\n', "exactly one"),
    ('[specifications."argon"]\nmax_contaminant = 1\ncontaminant = "phlogiston"\n', "phlogiston"),
])
def test_bad_specification_files_are_refused(tmp_path, capsys, content, words):
    """Checks behaviour: a bad entry stops the run with exit 2 and names the entry."""
    spec = tmp_path / "spec.toml"
    spec.write_text(content, encoding="utf-8")
    assert main(["identify", str(RUNS), "--profile", str(PROFILE), "--spec", str(spec)]) == 2
    assert words in capsys.readouterr().err


def test_csv_specification_file(tmp_path):
    """Checks behaviour: the CSV form gives the same limit as the TOML form."""
    spec = tmp_path / "spec.csv"
    spec.write_text("label,min_purity,contaminant\nsulfur hexafluoride,99.5,air\n", encoding="utf-8")
    result = identify(RUNS, profile=PROFILE, specifications=spec)
    assert result.quality.samples.loc["CYL-2303", "limit"] == pytest.approx(0.005)


def test_columns_in_the_run_file_win_and_bad_cells_warn(tmp_path):
    """Checks behaviour: max_contaminant and contaminant columns per row; a bad cell is a row warning."""
    text = RUNS.read_text(encoding="utf-8").splitlines()
    header = text[0] + ",max_contaminant [%],contaminant"
    rows = [line + (",3,nitrogen" if i == 5 else ",250," if i == 6 else ",,unobtainium" if i == 7 else ",,")
            for i, line in enumerate(text[1:], start=1)]
    path = tmp_path / "runs.csv"
    path.write_text("\n".join([header, *rows]) + "\n", encoding="utf-8")
    result = identify(path, profile=PROFILE, specifications=DEMO / "qa_specifications.toml")
    runs = result.quality.runs
    assert runs.loc[4, "contaminant"] == "nitrogen" and runs.loc[4, "limit"] == pytest.approx(0.03)
    assert any("outside 0 to 100" in text for text in result.warnings[5])
    assert any("unobtainium" in text for text in result.warnings[6])
    assert runs.loc[6, "contaminant"] == "air"
