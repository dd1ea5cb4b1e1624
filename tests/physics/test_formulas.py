"""Tests for molid.physics.formulas: parsing, Hill order, molar mass and isomer comparison."""

import pytest
from chemicals.elements import atoms_to_Hill, molecular_weight, simple_formula_parser
from chemicals.identifiers import search_chemical
from hypothesis import given
from hypothesis import strategies as st

from molid.physics.formulas import hill_formula, molar_mass, parse_formula, same_formula

# Formulas covering carbon and carbon-free molecules, groups and repeated elements.
FORMULAS = [
    "CO2",
    "CH3CH2OH",
    "(CH3)2O",
    "HCl",
    "NH3",
    "OCS",
    "CHClF2",
    "CCl2F2",
    "H2O",
    "SF6",
    "BF3",
    "CH3CH(CH3)CH3",
    "CF3CH2F",
    "C6H5CH3",
    "SiH4",
    "NO2",
    "HCN",
]


@pytest.mark.parametrize("text", FORMULAS)
def test_hill_order_matches_chemicals(text):
    """Hill order (Hill, JACS 22 (1900) 478) as chemicals.elements.atoms_to_Hill writes it."""
    atoms = parse_formula(text).atoms
    counts = {atom.symbol: int(count) for atom, count in atoms.items()}
    assert hill_formula(text) == atoms_to_Hill(counts)


@pytest.mark.parametrize(
    "text, hill",
    [
        ("CH3CH2OH", "C2H6O"),
        ("HCl", "ClH"),
        ("NH3", "H3N"),
        ("OCS", "COS"),
        ("CHCl3", "CHCl3"),
        ("D2O", "D2O"),
        ("CD4", "CD4"),
        ("C[13]O2", "C[13]O2"),
    ],
)
def test_hill_order_examples(text, hill):
    """Without carbon all symbols are alphabetical; isotopes keep periodictable syntax.

    Source: Hill 1900; the CAS convention for HCl is ClH (common practice).
    """
    assert hill_formula(text) == hill
    assert hill_formula(hill) == hill


@pytest.mark.parametrize("text", ["CO₂", "  C₃H₈  ", "C₂H₅OH", "SF₆"])
def test_unicode_subscripts_and_spaces(text):
    """Checks behaviour: Unicode subscripts and surrounding spaces are accepted."""
    plain = text.strip().translate(str.maketrans("₀₁₂₃₄₅₆₇₈₉", "0123456789"))
    assert same_formula(text, plain)


def test_isomers_compare_equal_and_case_matters():
    """Isomers have the same formula; CO (carbon monoxide) is not Co (cobalt) (common practice)."""
    assert same_formula("CH3CH2OH", "CH3OCH3")
    assert same_formula("CH3CH2CH2CH3", "CH3CH(CH3)CH3")
    assert not same_formula("C2H6O", "C2H6O2")
    assert not same_formula("CO", "Co")
    assert not same_formula("H2", "D2")


@pytest.mark.parametrize("cas", ["124-38-9", "74-98-6", "811-97-2", "7782-39-0", "2551-62-4"])
def test_molar_mass_against_chemicals(cas):
    """Molar mass [kg/mol] from periodictable agrees with chemicals 1.5's MW within 0.01 g/mol.

    chemicals uses older atomic weights (e.g. S 32.065 against IUPAC's conventional 32.06).
    """
    record = search_chemical(cas)
    assert molar_mass(record.formula) == pytest.approx(record.MW * 1e-3, abs=1e-5)


def test_molar_mass_is_si():
    """The molar mass comes out in kg/mol: CO2 is 0.044009 kg/mol.

    Source: IUPAC (CIAAW) conventional atomic weights C 12.011, O 15.999 (from memory).
    """
    assert molar_mass("CO2") == pytest.approx(0.044009, abs=1e-6)


@given(
    carbon=st.integers(0, 12),
    hydrogen=st.integers(0, 26),
    oxygen=st.integers(0, 4),
    nitrogen=st.integers(0, 3),
    chlorine=st.integers(0, 4),
)
def test_molar_mass_and_hill_properties(carbon, hydrogen, oxygen, nitrogen, chlorine):
    """For any CHONCl formula: M agrees with chemicals 1.5, Hill order with its atoms_to_Hill.

    chemicals' atomic weights are older IUPAC values (H 1.00794, Cl 35.453 against the
    conventional 1.008, 35.45), so the allowance is 0.0005 g/mol per C, H, O or N atom and
    0.0035 g/mol per Cl atom.
    """
    counts = {"C": carbon, "H": hydrogen, "O": oxygen, "N": nitrogen, "Cl": chlorine}
    counts = {symbol: count for symbol, count in counts.items() if count}
    if not counts:
        return
    text = "".join(f"{symbol}{count}" for symbol, count in counts.items())
    allowance = 5e-4 * (carbon + hydrogen + oxygen + nitrogen) + 3.5e-3 * chlorine
    assert molar_mass(text) * 1e3 == pytest.approx(molecular_weight(counts), abs=allowance)
    hill = hill_formula(text)
    assert hill == atoms_to_Hill(simple_formula_parser(text))
    assert hill_formula(hill) == hill
    assert same_formula(text, hill)


@pytest.mark.parametrize(
    "text, reason",
    [
        ("co2", "start with a capital letter"),
        ("Xy2", "unknown element Xy"),
        ("", "the formula is empty"),
        ("   ", "the formula is empty"),
        ("2H2O", "starts with a number"),
        ("CO2@1.98", "character '@' at position 4"),
        ("C H4", "space at position 2"),
        ("Na{+}Cl{-}", "character '{'"),
        ("Fe0.95O", "character '.'"),
        ("C((H4", "periodictable cannot read it"),
        ("H0", "positive count"),
    ],
)
def test_bad_formulas_say_what_is_wrong_and_what_is_accepted(text, reason):
    """Checks behaviour: garbage is refused with a ValueError naming the fault and the accepted syntax."""
    with pytest.raises(ValueError) as caught:
        parse_formula(text)
    message = str(caught.value)
    assert reason in message
    assert "accepted: element symbols" in message
    assert repr(text) in message


def test_non_string_is_a_type_error():
    """Checks behaviour: a number is not a formula (TypeError)."""
    with pytest.raises(TypeError):
        parse_formula(44)


def test_formula_object_passes_through():
    """Checks behaviour: a periodictable Formula is accepted as it is."""
    formula = parse_formula("CH4")
    assert parse_formula(formula) is formula
    assert hill_formula(formula) == "CH4"
