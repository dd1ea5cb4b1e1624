"""Swaps: GHS hazard classes compared by category, and suggestions that the plan separates.

Sources: UN GHS Rev.10 (2023): within a hazard class, category 1 is the most severe and
sub-category 1A more severe than 1B (1.1.2.5 and the class chapters, from memory); the
classes as the library writes them (CLP notation, e.g. "Flam. Gas 1A", "Acute Tox. 3 (inhal.)").
"""

import pytest

from molid.planning.plan import make_plan
from molid.planning.swaps import hazard_class, no_worse_hazards


@pytest.mark.parametrize(("text", "parts"), [
    ("Flam. Gas 1A", ("Flam. Gas", 1, "A")), ("Acute Tox. 2 (inhal.)", ("Acute Tox. (inhal.)", 2, "")),
    ("Press. Gas (Comp.)", ("Press. Gas", 0, "")), ("Simple asphyxiant", ("Simple asphyxiant", 0, "")),
    ("Chem. Unst. Gas A", ("Chem. Unst. Gas", 0, "A")), ("Skin Corr. 1B", ("Skin Corr.", 1, "B")),
])
def test_hazard_classes_split_into_class_and_category(text, parts):
    """A class as written splits into the class (with its route) and its category."""
    assert hazard_class(text) == parts


def test_no_worse_hazards_by_category():
    """A more severe category, or a class the replaced gas lacks, is worse; the same or milder is not."""
    assert no_worse_hazards(["Acute Tox. 3 (inhal.)"], ["Acute Tox. 2 (inhal.)"])
    assert not no_worse_hazards(["Acute Tox. 2 (inhal.)"], ["Acute Tox. 3 (inhal.)"])
    assert not no_worse_hazards(["Acute Tox. 3 (oral)"], ["Acute Tox. 3 (inhal.)"])
    assert not no_worse_hazards(["Ox. Gas 1", "Press. Gas (Comp.)"],
                                ["Press. Gas (Liq.)", "Simple asphyxiant"])
    assert no_worse_hazards([], ["Flam. Gas 1A"])


def test_suggested_swaps_are_separable_and_no_more_hazardous():
    """Checks behaviour: every suggested swap is separable from the other unknowns and no more hazardous."""
    plan = make_plan(method="syringe", unknowns="carbon dioxide, nitrous oxide, helium")
    from molid.candidates.library import load_library

    library = load_library().set_index("name")
    swaps = {item["replace"]: item["with"] for item in plan["swaps"]}
    assert set(swaps) == {"carbon dioxide", "nitrous oxide"}
    for replaced, suggestions in swaps.items():
        assert suggestions
        for item in suggestions:
            assert item["separation"] >= 5
            assert no_worse_hazards(library.at[item["name"], "ghs_hazards"],
                                    library.at[replaced, "ghs_hazards"])
    assert "swap carbon dioxide for" in plan["summary"][0]
