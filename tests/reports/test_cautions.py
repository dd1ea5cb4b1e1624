"""The cautions data file (molid/data/cautions.toml): every hazard class of the library has words.

Hazard class names: United Nations, Globally Harmonized System of Classification and
Labelling of Chemicals (GHS), tenth revised edition, ST/SG/AC.10/30/Rev.10, 2023 (chapter
titles from memory; unchanged from the ninth revised edition, 2021).
"""

import pandas as pd
import pytest

from molid.candidates.hazards import hazard_cautions, load_cautions, substance_cautions
from molid.candidates.library import DEFAULT_LIBRARY_PATH

#: Code prefix → the GHS chapter title it stands for (GHS Rev.10, from memory).
GHS_CLASSES = {
    "Press. Gas": "Gases under pressure",            # chapter 2.5
    "Flam. Gas": "Flammable gases",                  # chapter 2.2
    "Pyr. Gas": "Flammable gases",                   # chapter 2.2, pyrophoric gas
    "Chem. Unst. Gas": "Flammable gases",            # chapter 2.2, chemically unstable gas
    "Ox. Gas": "Oxidizing gases",                    # chapter 2.4
    "Flam. Liq.": "Flammable liquids",               # chapter 2.6
    "Acute Tox.": "Acute toxicity",                  # chapter 3.1
    "Skin Corr.": "Skin corrosion/irritation",       # chapter 3.2
    "Skin Irrit.": "Skin corrosion/irritation",      # chapter 3.2
    "Eye Dam.": "Serious eye damage/eye irritation",  # chapter 3.3
    "Eye Irrit.": "Serious eye damage/eye irritation",  # chapter 3.3
    "Muta.": "Germ cell mutagenicity",               # chapter 3.5
    "Carc.": "Carcinogenicity",                      # chapter 3.6
    "Repr.": "Reproductive toxicity",                # chapter 3.7
    "STOT": "Specific target organ toxicity",        # chapters 3.8 and 3.9
    "Asp. Tox.": "Aspiration hazard",                # chapter 3.10
    "Aquatic": "Hazardous to the aquatic environment",  # chapter 4.1
    "Ozone": "Hazardous to the ozone layer",         # chapter 4.2
}


def _library_codes():
    library = pd.read_csv(DEFAULT_LIBRARY_PATH, dtype=str, keep_default_na=False)
    return sorted({code.strip() for cell in library["ghs_hazards"] for code in cell.split(";")
                   if code.strip()})


def test_every_library_hazard_class_has_a_caution():
    """Checks behaviour: every code in the library's ghs_hazards column gets plain-words wording.

    A code matching no prefix of the data file would print its class with no caution.
    """
    prefixes = [entry["prefix"] for entry in load_cautions()["ghs"]]
    codes = _library_codes()
    assert len(codes) > 30
    missing = [code for code in codes if not any(code.startswith(p) for p in prefixes)]
    assert missing == []
    for code in codes:
        assert hazard_cautions([code]), code


@pytest.mark.parametrize("prefix, title", sorted(GHS_CLASSES.items()))
def test_class_names_are_those_of_the_ghs(prefix, title):
    """Each hazard-class entry names its GHS class by the GHS chapter title (GHS Rev.10, from memory)."""
    entries = {entry["prefix"]: entry for entry in load_cautions()["ghs"]}
    assert entries[prefix]["ghs_class"].startswith(title)
    assert "GHS Rev.10" in entries[prefix]["source"]


def test_classes_outside_the_ghs_say_so():
    """Simple asphyxiant and radioactivity are not GHS hazard classes, and radon has its own caution.

    GHS Rev.10, Annex 4, A4.3.2.3 lists simple asphyxiants among hazards that do not result in
    classification; radioactive material is outside the GHS's classes (from memory). The file
    must not present either as a GHS class.
    """
    entries = {entry["prefix"]: entry for entry in load_cautions()["ghs"]}
    for prefix in ("Simple asphyxiant", "Radioactive"):
        assert entries[prefix]["ghs_class"].startswith("not a GHS hazard class")
    assert any("radioactive" in text for text in substance_cautions(["radon"]))


def test_every_entry_has_a_caution_and_a_source():
    """Checks behaviour: each entry of the data file carries a source and a non-empty caution."""
    data = load_cautions()
    for group in ("ghs", "substance", "pressure_unit"):
        for entry in data[group]:
            assert entry["caution"].strip() and entry["source"].strip(), entry
    assert data["unidentified"]["handling"] and data["unidentified"]["source"]
