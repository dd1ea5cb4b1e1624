"""The safety box of identify reports: the unidentified gas first, never an excluded candidate.

Also: the label's substance marked unconfirmed, and the mercury caution for pressures read in
mmHg, torr or inHg.
"""

import re
from pathlib import Path

import pytest

from molid.candidates.hazards import LABEL_MARK
from molid.pipeline.identify import identify
from molid.reports import write_report
from molid.reports.content import Bullets, identify_report

pypdf = pytest.importorskip("pypdf")

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "sample_runs" / "qa_cylinders.csv"
PROFILE = ROOT / "sample_runs" / "qa_lab_profile.toml"

#: Molar gas constant [J/(mol K)], exact since the 2019 SI (BIPM SI Brochure, 9th ed., 2019).
GAS_CONSTANT = 8.314462618
TARE_G = 147.3839
VOLUME_ML = 500.12


def _filled(molar_mass, temperature_c, pressure_kpa):
    """Filled-bulb reading [g] for a gas of the given molar mass: tare + pVM/(RT), the ideal gas law."""
    grams = (molar_mass * pressure_kpa * 1e3 * VOLUME_ML * 1e-6
             / (GAS_CONSTANT * (temperature_c + 273.15)))
    return f"{TARE_G + grams:.4f}"


def _run_file(path, rows, pressure_unit="kPa", label=True):
    header = ("run,sample,method,mass_tare [g],mass_filled [g],volume [mL],temperature [degC],"
              f"pressure [{pressure_unit}],humidity [%]" + (",expected" if label else ""))
    path.write_text("\n".join([header, *rows]) + "\n", encoding="utf-8")
    return path


def _row(run, sample, filled, pressure, label=None):
    row = f"{run},{sample},evacuated-bulb,{TARE_G},{filled},{VOLUME_ML},21.20,{pressure},41"
    return row + (f",{label}" if label is not None else "")


def _safety(page) -> Bullets:
    boxes = [block for block in page.blocks if isinstance(block, Bullets) and block.kind == "safety"]
    assert len(boxes) == 1
    return boxes[0]


def _box_text(page_text):
    """Cut the safety box out of a PDF page's text: from its title to the signature lines."""
    text = re.sub(r"\s+", " ", page_text)
    return text[text.index("Safety:"):text.index("Analysed by")]


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    """Make the demo QA report; return its identification and the PDF text per page."""
    out = tmp_path_factory.mktemp("safety") / "qa.pdf"
    write_report(DEMO, out, profile=str(PROFILE))
    result = identify(DEMO, profile=PROFILE)
    pages = [page.extract_text() for page in pypdf.PdfReader(str(out)).pages]
    return result, pages


def test_unidentified_demo_cylinder_says_so_first_and_lists_no_excluded_candidate(demo):
    """Checks behaviour: demo cylinder CYL-2235 (every candidate excluded) gets an unidentified-first box.

    The box says first that the gas is unidentified and to be handled as unknown, then names
    the label's substance (sulfur hexafluoride) as not confirmed, and names none of the
    candidates the run excludes.
    """
    result, pages = demo
    candidates = result.ranking.sample_candidates("CYL-2235")
    assert all(item["verdict"] not in ("consistent", "marginal") for item in candidates)
    page = next(text for text in pages if "Sample CYL-2235" in text)
    box = _box_text(page)
    assert box.startswith("Safety: UNIDENTIFIED GAS")
    lead = box.index("Unidentified gas: no candidate is consistent")
    assert lead < box.index("•")
    assert "possibly toxic, flammable, oxidising, corrosive or asphyxiant" in box
    listing = box[:box.index("Precautions.")]  # the cautions' own examples name some gases
    assert f"sulfur hexafluoride, the {LABEL_MARK}" in listing
    for item in candidates:
        if item["name"] != "sulfur hexafluoride":
            assert item["name"] not in listing, item["name"]
    assert "follow local codes, the site's safety rules" in box


def test_identified_pages_list_every_candidate_not_excluded_with_its_verdict(demo):
    """Checks behaviour: a box lists all consistent and marginal candidates, marked, and no other."""
    result, pages = demo
    for sample in result.sample_runs:
        candidates = result.ranking.sample_candidates(sample)
        kept = [item for item in candidates if item["verdict"] in ("consistent", "marginal")]
        if not kept:
            continue
        box = _box_text(next(text for text in pages if f"Sample {sample}" in text))
        assert "UNIDENTIFIED" not in box
        listing = box[:box.index("Precautions.")]
        for item in kept:
            assert f"{item['name']} ({item['verdict']})" in listing
        for item in candidates:
            if item not in kept:
                assert f"{item['name']} (" not in listing, (sample, item["name"])


def test_label_of_an_unidentified_gas_is_marked_unconfirmed(tmp_path):
    """Checks behaviour: a labelled run that matches no candidate names the label's substance, unconfirmed.

    The readings are those of a gas of M = 36.00 g/mol by the ideal gas law pV = (m/M)RT
    (no library substance within 0.4 g/mol of it: hydrogen chloride is 36.46 g/mol), labelled
    argon.
    """
    source = _run_file(tmp_path / "mix.csv", [
        _row("m1", "MIX-1", _filled(36.0, 21.20, 101.30), 101.30, "argon"),
        _row("m2", "MIX-1", _filled(36.0, 21.20, 101.30), 101.30, "argon"),
    ])
    result = identify(source)
    assert all(item["verdict"] not in ("consistent", "marginal")
               for item in result.ranking.sample_candidates("MIX-1"))
    box = _safety(identify_report(result).pages[0])
    assert box.lead.startswith("Unidentified gas:")
    assert box.items[0] == f"argon, the {LABEL_MARK}: Press. Gas (Comp.); Simple asphyxiant"
    assert not any("hydrogen chloride" in item for item in box.items)


def test_unidentified_gas_without_a_label_names_no_substance(tmp_path):
    """Checks behaviour: without a label, an unidentified gas's box names no substance at all."""
    source = _run_file(tmp_path / "mix.csv", [
        _row("m1", "MIX-2", _filled(36.0, 21.20, 101.30), 101.30),
    ], label=False)
    box = _safety(identify_report(identify(source)).pages[0])
    assert box.title == "Safety: UNIDENTIFIED GAS" and box.lead
    assert box.items[0].startswith("No candidate is consistent or marginal and the file gives no label")


@pytest.mark.parametrize("unit, pressure, mercury", [
    ("mmHg", "759.8", True), ("torr", "759.8", True), ("inHg", "29.91", True),
    ("kPa", "101.30", False),
])
def test_mercury_caution_follows_the_pressure_unit(tmp_path, unit, pressure, mercury):
    """Checks behaviour: pressures read in mmHg, torr or inHg add the mercury caution; kPa does not.

    The three readings are the same pressure (1 mmHg = 133.322387415 Pa, 1 torr = 101325/760 Pa,
    1 inHg = 3386.389 Pa: BIPM SI Brochure, 9th ed., 2019, and NIST SP 811, 2008 edition,
    from memory). The caution is conditional: it must not say that mercury was used.
    """
    source = _run_file(tmp_path / "p.csv", [
        _row("p1", "P-1", _filled(39.948, 21.20, 101.30), pressure, "argon"),
    ], pressure_unit=unit)
    text = " ".join(_safety(identify_report(identify(source)).pages[0]).items)
    assert ("If a mercury barometer or manometer was used" in text) is mercury
    assert "mercury" in text.lower() if mercury else "mercury" not in text.lower()
