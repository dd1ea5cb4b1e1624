"""Chemical formulas: one factory that parses, normalises and compares them.

Every formula in molid passes through :func:`parse_formula`, which accepts the
usual ways of writing a molecular formula and hands back a periodictable
``Formula``.  Molar masses always come from periodictable's atomic weights;
nothing here types an atomic weight.

Molar masses are returned in SI units, kg/mol, like every quantity inside the
library; multiply by 1000 for the g/mol of everyday use.
"""

import re

import periodictable
from periodictable.core import isisotope
from periodictable.formulas import Formula, from_subscript

__all__ = [
    "parse_formula",
    "hill_formula",
    "molar_mass",
    "same_formula",
]

#: What :func:`parse_formula` accepts, for error messages.
ACCEPTED = (
    "accepted: element symbols with whole-number counts in periodictable syntax, "
    "e.g. CO2, C4H10, CH3CH2OH, (CH3)2O, C₃H₈ (unicode subscripts), D2 for deuterium, "
    "C[13]O2 for an isotope; case matters (CO is carbon monoxide, Co is cobalt)"
)

# Characters periodictable needs for a molecular formula with isotopes.  Its grammar
# also takes charges, fractional counts, mixtures and densities ("{+}", ".", "+", "@",
# "%", "//"); none of them names a gas molecule, so they are refused here rather than
# silently turned into some other formula.
_ALLOWED = re.compile(r"[A-Za-z0-9()\[\]]")

# A letter run that cannot start an element symbol: a lower-case letter after a
# non-letter, or at the start.
_LOWER_START = re.compile(r"(?:^|[^A-Za-z])([a-z])")


def _fail(text, reason):
    raise ValueError(f"not a chemical formula: {text!r}: {reason}; {ACCEPTED}")


def parse_formula(text):
    """Parse a molecular formula written in any of the usual ways.

    Parameters
    ----------
    text : str or periodictable.formulas.Formula
        The formula, in periodictable syntax (``C4H10``, ``CH3CH2OH``,
        ``(CH3)2O``), optionally with unicode subscripts (``CO₂``) and
        surrounding spaces.  A ``Formula`` is returned unchanged.

    Returns
    -------
    periodictable.formulas.Formula
        The parsed formula.

    Raises
    ------
    ValueError
        If the text is not a molecular formula; the message says what was wrong
        and what is accepted.

    Notes
    -----
    Case is kept as typed: ``CO`` (carbon monoxide) and ``Co`` (cobalt) are
    different formulas, so nothing is lower- or upper-cased.  Charges,
    fractional counts, mixtures and densities, which periodictable's grammar
    also reads, are refused because none describes a gas molecule.

    References
    ----------
    P. A. Kienzle, periodictable: extensible periodic table of the elements,
    https://periodictable.readthedocs.io (formula grammar).

    Examples
    --------
    >>> parse_formula(" C₃H₈ ").atoms == parse_formula("C3H8").atoms
    True
    >>> parse_formula("co2")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    ValueError: not a chemical formula: 'co2': element symbols start with a capital letter ...
    """
    if isinstance(text, Formula):
        return text
    if not isinstance(text, str):
        raise TypeError(f"a formula must be a string, got {type(text).__name__}")
    original = text
    text = from_subscript(text).strip()
    if not text:
        _fail(original, "the formula is empty")
    for position, character in enumerate(text, start=1):
        if character.isspace():
            _fail(original, f"space at position {position} inside the formula")
        if not _ALLOWED.fullmatch(character):
            _fail(original, f"character {character!r} at position {position} is not accepted")
    if text[0].isdigit():
        _fail(original, "the formula starts with a number (write one molecule, e.g. H2O not 2H2O)")
    lower = _LOWER_START.search(text)
    if lower:
        _fail(
            original,
            f"element symbols start with a capital letter ({lower.group(1)!r} does not); "
            "write CO2 not co2",
        )
    try:
        formula = periodictable.formula(text)
    except ValueError as error:  # unknown element symbol
        _fail(original, str(error))
    except Exception as error:  # pyparsing's ParseException is not a ValueError
        _fail(original, f"periodictable cannot read it ({error})")
    atoms = formula.atoms
    if not atoms or any(count <= 0 for count in atoms.values()):
        _fail(original, "every element needs a positive count")
    return formula


def _hill_key(atom):
    """Sort key placing an atom in Hill order; isotopes follow their element."""
    if isisotope(atom):
        symbol, mass_number = atom.element.symbol, atom.isotope
    else:
        symbol, mass_number = atom.symbol, 0
    return symbol, mass_number


def _atom_text(atom):
    """Write one atom in periodictable syntax: D and T as such, else Sym[mass]."""
    if isisotope(atom) and atom.symbol not in ("D", "T"):
        return f"{atom.element.symbol}[{atom.isotope}]"
    return atom.symbol


def hill_formula(text_or_formula):
    """Write a formula in Hill order.

    Parameters
    ----------
    text_or_formula : str or periodictable.formulas.Formula
        Any formula :func:`parse_formula` accepts.

    Returns
    -------
    str
        The Hill formula, in periodictable syntax so it parses back to itself.

    Notes
    -----
    Hill order: when the molecule contains carbon, C comes first, then H, then
    the other elements alphabetically; without carbon every element, hydrogen
    included, is alphabetical (HCl is written ClH, NH3 is H3N).  periodictable's
    own ``Formula.hill`` always puts H second, so the order is built here from
    periodictable's atom counts.  Hydrogen isotopes (D, T) are kept beside H,
    as suppliers' catalogues write CDCl3.

    References
    ----------
    E. A. Hill, "On a system of indexing chemical literature; adopted by the
    Classification Division of the U. S. Patent Office", J. Am. Chem. Soc. 22
    (1900) 478-494, doi:10.1021/ja02046a005.

    Examples
    --------
    Ethanol and the Hill formulas in Hill's own convention:

    >>> hill_formula("CH3CH2OH")
    'C2H6O'
    >>> hill_formula("HCl")
    'ClH'
    >>> hill_formula("NH3")
    'H3N'
    """
    atoms = parse_formula(text_or_formula).atoms
    has_carbon = any(_hill_key(atom)[0] == "C" for atom in atoms)

    def key(atom):
        symbol, mass_number = _hill_key(atom)
        if has_carbon and symbol in ("C", "H"):
            return (0, "" if symbol == "C" else "H", mass_number)
        return (1, symbol, mass_number)

    pieces = []
    for atom in sorted(atoms, key=key):
        count = atoms[atom]
        pieces.append(_atom_text(atom) + ("" if count == 1 else f"{count:g}"))
    return "".join(pieces)


def molar_mass(text_or_formula):
    r"""Molar mass of a formula from periodictable's standard atomic weights.

    Parameters
    ----------
    text_or_formula : str or periodictable.formulas.Formula
        Any formula :func:`parse_formula` accepts.

    Returns
    -------
    float
        Molar mass [kg/mol].

    Notes
    -----
    .. math:: M = 10^{-3}\,\mathrm{kg\,g^{-1}} \sum_i n_i A_{r,i}\ \mathrm{g/mol}

    with :math:`n_i` the count and :math:`A_{r,i}` the standard atomic weight
    of element *i* (or the atomic mass of a named isotope), as tabulated by
    periodictable.

    References
    ----------
    IUPAC Commission on Isotopic Abundances and Atomic Weights, standard atomic
    weights (conventional values), as shipped with periodictable.

    Examples
    --------
    CO2 from the conventional atomic weights C 12.011 and O 15.999:

    >>> round(molar_mass("CO2") * 1000, 3)
    44.009
    """
    return parse_formula(text_or_formula).mass * 1e-3


def same_formula(first, second):
    """Tell whether two formulas have the same atoms in the same numbers.

    Parameters
    ----------
    first, second : str or periodictable.formulas.Formula
        Any formulas :func:`parse_formula` accepts.

    Returns
    -------
    bool
        True when the molecular formulas agree, so isomers compare equal.

    Examples
    --------
    Ethanol and dimethyl ether are isomers:

    >>> same_formula("CH3CH2OH", "(CH3)2O")
    True
    >>> same_formula("CO", "Co")
    False
    """
    return parse_formula(first).atoms == parse_formula(second).atoms
