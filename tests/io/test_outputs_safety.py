"""The hazard summary in the screen outputs: the JSON ``hazards`` key and the terminal's hazard line."""

import json
from pathlib import Path

import pytest

from molid.io.json_document import to_document, to_json
from molid.io.terminal import to_table
from molid.pipeline.identify import identify

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "sample_runs" / "qa_cylinders.csv"
PROFILE = ROOT / "sample_runs" / "qa_lab_profile.toml"

#: The keys of a run and of a sample the README documents as a contract.
RUN_KEYS = {"run", "row", "sample", "method", "error", "warnings", "molar_mass", "budget",
            "candidates"}
SAMPLE_KEYS = {"sample", "runs", "molar_mass", "warnings", "candidates"}


@pytest.fixture(scope="module")
def demo():
    """Identify the demo QA file."""
    return identify(DEMO, profile=PROFILE)


def _kept(candidates):
    return [(item["name"], item["verdict"]) for item in candidates
            if item["verdict"] in ("consistent", "marginal")]


def _check_hazards(hazards, candidates):
    assert set(hazards) == {"identified", "substances", "cautions", "note"}
    kept = _kept(candidates)
    assert hazards["identified"] is bool(kept)
    listed = [(item["name"], item["verdict"]) for item in hazards["substances"]
              if not item["label"]]
    assert listed == kept
    assert all(isinstance(item["ghs"], list) for item in hazards["substances"])
    assert "safety data sheet (SDS)" in hazards["note"]


def test_json_has_hazards_per_run_and_per_sample(demo):
    """Checks behaviour: every run and every sample carries ``hazards`` beside the contract keys.

    Its substances are exactly the candidates the result does not exclude (all of them), and
    an unidentified sample says so in its note.
    """
    document = json.loads(to_json(demo))
    for entry in document["results"]:
        assert RUN_KEYS <= set(entry) and "hazards" in entry
        _check_hazards(entry["hazards"], entry["candidates"])
    for entry in document["samples"]:
        assert SAMPLE_KEYS <= set(entry) and "hazards" in entry
        _check_hazards(entry["hazards"], entry["candidates"])
    unidentified = next(entry for entry in document["samples"] if entry["sample"] == "CYL-2235")
    assert unidentified["hazards"]["note"].startswith("Unidentified gas")
    assert [item["label"] for item in unidentified["hazards"]["substances"]] == [True]


def test_json_hazards_cover_candidates_beyond_top(demo):
    """Checks behaviour: with the candidate lists cut to one, ``hazards`` still names every one kept.

    In the demo, CYL-2232 is consistent with both nitrous oxide and carbon dioxide (both
    44.01 g/mol: CIAAW standard atomic weights, from memory), so the cut list hides one.
    """
    full = to_document(demo)
    cut = to_document(demo, top=1)
    for whole, short in zip(full["samples"] + full["results"], cut["samples"] + cut["results"],
                            strict=True):
        assert short["hazards"] == whole["hazards"]
    sample = next(entry for entry in cut["samples"] if entry["sample"] == "CYL-2232")
    names = {item["name"] for item in sample["hazards"]["substances"]}
    assert {"nitrous oxide", "carbon dioxide"} <= names and len(sample["candidates"]) == 1


def test_terminal_prints_a_hazard_line_per_sample(demo):
    """Checks behaviour: each sample's block has a hazard line: GHS classes, or 'unidentified' first."""
    text = to_table(demo)
    hazard_lines = [line.strip() for line in text.splitlines() if line.strip().startswith("hazards:")]
    assert len(hazard_lines) == len(demo.sample_runs)
    assert "hazards: argon (consistent): Press. Gas (Comp.), Simple asphyxiant" in hazard_lines
    unidentified = next(line for line in hazard_lines if "unidentified" in line)
    assert unidentified.startswith("hazards: unidentified: handle as unknown (possibly toxic, "
                                   "flammable")
    assert "label's sulfur hexafluoride (not confirmed)" in unidentified
