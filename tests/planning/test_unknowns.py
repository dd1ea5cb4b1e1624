"""Unknowns: lists with commas inside names, closest names, and where a condensing substance is a gas.

Sources: CoolProp 8.0 saturation temperatures at 101.325 kPa (the normal boiling points of
acetone and n-butane) for the temperature at which a substance would be a gas.
"""

import pytest

from molid.candidates.library import load_library
from molid.candidates.search import find_candidate
from molid.planning.conditions import PlanError
from molid.planning.unknowns import boiling_temperature, closest_names, resolve_names, split_names

PropsSI = pytest.importorskip("CoolProp.CoolProp").PropsSI


def test_names_with_commas_and_duplicates():
    """Checks behaviour: '1,3-butadiene' stays whole; a substance named twice is planned once."""
    library = load_library().reset_index(drop=True)
    names = split_names("1,3-butadiene, argon,CO2 , carbon dioxide", library)
    assert names == ["1,3-butadiene", "argon", "CO2", "carbon dioxide"]
    assert len(resolve_names(names, library, "--unknowns")) == 3


def test_unknown_names_offer_the_closest():
    """Checks behaviour: misspelt names and ambiguous formulas are refused together, each with near names."""
    library = load_library().reset_index(drop=True)
    assert closest_names(library, "nitrogn")[0] == "nitrogen"
    with pytest.raises(PlanError) as problem:
        resolve_names(["argon", "xenonn", "C4H10"], library, "--unknowns")
    message = str(problem.value)
    assert "2 problems" in message and "xenon" in message and "n-butane" in message and "isobutane" in message


@pytest.mark.parametrize(("name", "fluid"), [("acetone", "Acetone"), ("n-butane", "n-Butane")])
def test_temperature_at_which_it_would_be_a_gas(name, fluid):
    """The temperature where the vapour pressure reaches 101.325 kPa is the boiling point (CoolProp)."""
    library = load_library().reset_index(drop=True)
    found = boiling_temperature(library, find_candidate(library, name), 101325.0)
    assert found == pytest.approx(PropsSI("T", "P", 101325.0, "Q", 0, fluid), abs=0.5)
