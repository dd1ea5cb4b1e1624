"""Nominal conditions as typed on the command line, converted to SI and checked.

Sources: BIPM, The International System of Units (SI Brochure), 9th ed. 2019 (1 mL = 1e-6 m³,
0 °C = 273.15 K, 1 bar = 100 kPa); the standard atmosphere, 101 325 Pa (10th CGPM, 1954);
1 mmHg = 133.322 387 415 Pa (NIST SP 811, 2008).
"""

import pytest

from molid.planning.conditions import METHOD_DEFAULTS, PlanError, nominal_conditions, parse_quantity


@pytest.mark.parametrize(("text", "kind", "value"), [
    ("250 mL", "volume", 250e-6), ("0.25 L", "volume", 250e-6), ("21 degC", "temperature", 294.15),
    ("294.15 K", "temperature", 294.15), ("1 atm", "pressure", 101325.0),
    ("760 mmHg", "pressure", 760 * 133.322387415),
    ("1.01325 bar", "pressure", 101325.0), ("101", "pressure", 101e3), ("250", "volume", 250e-6),
])
def test_quantities_in_si(text, kind, value):
    """A number and a unit give the value the SI definitions give."""
    assert parse_quantity("--x", text, kind) == pytest.approx(value, rel=1e-9)


@pytest.mark.parametrize(("options", "words"), [
    ({"volume": "-250 mL"}, "--volume '-250 mL': a volume must be above 0"),
    ({"temperature": "-300 degC"}, "below absolute zero"),
    ({"temperature": "0 K"}, "below absolute zero"),
    ({"pressure": "0 kPa"}, "a pressure must be above 0"),
    ({"pressure": "101 parsec"}, "--pressure '101 parsec'"),
    ({"volume": "lots"}, "not a number with a unit"),
])
def test_impossible_conditions_name_the_option(options, words):
    """Checks behaviour: a value no measurement can have is refused, naming the option and what it accepts."""
    with pytest.raises(PlanError, match=words.replace("(", r"\(")):
        nominal_conditions("syringe", **options)


def test_method_limits():
    """Checks behaviour: water outside 0-40 °C for over-water and a bath not above the room are refused."""
    with pytest.raises(PlanError, match="between 0 and 40 degC"):
        nominal_conditions("over-water", temperature="50 degC")
    with pytest.raises(PlanError, match="hotter than the room"):
        nominal_conditions("vapour-flask", temperature="20 degC")
    with pytest.raises(PlanError, match="not a method"):
        nominal_conditions("balloon")


def test_every_method_has_defaults():
    """Checks behaviour: each registered method has default conditions that pass the checks."""
    from molid.methods.registry import METHODS

    assert set(METHOD_DEFAULTS) == set(METHODS)
    for method in METHODS:
        conditions = nominal_conditions(method)
        assert conditions.volume > 0 and conditions.temperature > 273.15


def test_measured_humidity():
    """A humidity in percent or as a plain fraction (unit '1'); refused over water and outside 0-100 %."""
    assert nominal_conditions("syringe", humidity="45 %").humidity == pytest.approx(0.45)
    assert nominal_conditions("syringe", humidity="0.45 1").humidity == pytest.approx(0.45)
    assert nominal_conditions("syringe").humidity is None
    with pytest.raises(PlanError, match="collected gas's"):
        nominal_conditions("over-water", humidity="45 %")
    with pytest.raises(PlanError, match="from 0 to 100 %"):
        nominal_conditions("syringe", humidity="150 %")
