"""A simulated section: its confusion table, told-apart rates and grades, and the mistake rates option.

Checks behaviour: the section agrees with the plan's own verdicts (both from molid's models);
the outside checks of the same verdicts are in test_separability.py. Mistake rates are drawn as
asked within binomial sampling error (common practice).
"""

import numpy as np
import pytest

from molid.candidates.library import load_library
from molid.candidates.search import find_candidate
from molid.io.profiles import load_profile
from molid.planning.conditions import PlanError, nominal_conditions
from molid.planning.section import parse_mistakes, simulate_section


def test_mistake_rates_are_read_and_refused():
    """Checks behaviour: rates as fractions or percent; a code the method lacks, a sum above 1 refused."""
    assert parse_mistakes("celsius-as-kelvin=5%, no-buoyancy=0.1", "air-tare-bulb") == {
        "celsius-as-kelvin": 0.05, "no-buoyancy": 0.1}
    for text, words in (("no-buoyancy=0.1", "cannot be made with the evacuated-bulb"),
                        ("celsius-as-kelvin=1.5", "between 0 and 1"), ("volume-unit", "code=rate"),
                        ("celsius-as-kelvin=0.6, volume-unit=0.5", "more than 1"),
                        ("typo-mistake=0.1", "no such mistake")):
        with pytest.raises(PlanError, match=words):
            parse_mistakes(text, "evacuated-bulb")


def test_section_of_separable_and_inseparable_gases():
    """Checks behaviour: separable gases rank first nearly always; CO2 and N2O take each other's place."""
    library = load_library().reset_index(drop=True)
    rows = [find_candidate(library, name) for name in ("argon", "carbon dioxide", "nitrous oxide")]
    found = simulate_section(nominal_conditions("syringe"), library, rows, load_profile(), count=200, seed=2)
    confusion = {row["true"]: row for row in found["confusion"]}
    assert confusion["argon"]["first"] > 0.95 and confusion["argon"]["runs"] == 200
    for a, b in (("carbon dioxide", "nitrous oxide"), ("nitrous oxide", "carbon dioxide")):
        assert 0.3 < confusion[a]["first_among_unknowns"] < 0.7
        assert confusion[a]["taken_for_among_unknowns"][b] == pytest.approx(
            1 - confusion[a]["first_among_unknowns"])
    assert found["told_apart"][(rows[0], rows[1])] > 0.99 and found["told_apart"][(rows[1], rows[2])] < 0.05


def test_graded_section_makes_mistakes_at_their_rates():
    """Checks behaviour: runs carry each mistake at about its rate, and the diagnosis finds them.

    The grade distribution adds to 1; the binomial error of 400 runs is about 1.5 %.
    """
    library = load_library().reset_index(drop=True)
    rows = [find_candidate(library, name) for name in ("helium", "argon")]
    found = simulate_section(nominal_conditions("evacuated-bulb"), library, rows, load_profile(), count=200,
                             seed=5, mistakes={"celsius-as-kelvin": 0.1, "volume-unit": 0.05})
    grades = found["grades"]
    assert grades["graded"] == 400
    assert sum(item["fraction"] for item in grades["distribution"]) == pytest.approx(1.0)
    assert grades["mistakes"]["celsius-as-kelvin"]["made"] == pytest.approx(0.1, abs=0.06)
    assert grades["mistakes"]["volume-unit"]["made"] == pytest.approx(0.05, abs=0.045)
    assert grades["mistakes"]["celsius-as-kelvin"]["diagnosed"] > 0.9
    assert grades["full_marks"] < 0.95 and grades["max_points"] == 90.0
    assert np.isfinite(grades["mean"])
