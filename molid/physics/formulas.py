"""Chemical formulas: one factory that parses, normalises and compares them.

Every formula in molid passes through :func:`parse_formula`, which accepts the
usual ways of writing a molecular formula and hands back a periodictable
``Formula``.  Molar masses always come from periodictable's atomic weights;
nothing here types an atomic weight.

Molar masses are returned in SI units, kg/mol, like every quantity inside the
library; multiply by 1000 for the g/mol of everyday use.

periodictable (and the parser it is built on) is imported only when a formula is
parsed: importing it costs more than the rest of a one-run analysis, so the molar
masses molid needs at every start are read back from the user cache
(:mod:`molid.cache`) under a key that holds periodictable's version and files
(:func:`periodictable_fingerprint`), and are still periodictable's.
"""

import functools
import importlib.util
import re
from pathlib import Path

from molid.cache import content_key, read_document, write_document

__all__ = [
    "from_subscript",
    "parse_formula",
    "hill_formula",
    "molar_mass",
    "cached_molar_mass",
    "periodictable_fingerprint",
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


# Unicode subscripts and the plain characters they stand for, as periodictable's
# ``formulas.from_subscript`` maps them.
_SUBSCRIPTS = str.maketrans(
    "\u2080\u2081\u2082\u2083\u2084\u2085\u2086\u2087\u2088\u2089\u208a\u208b\u208c\u208d\u208e"
    "\u2090\u2091\u2092\u2093\u2095\u2096\u2097\u2098\u2099\u209a\u209b\u209c",
    "0123456789+-=()aeoxhklmnpst",
)

#: periodictable's files whose bytes go into the key of its cached results: the package
#: (its version), the formula grammar, the element table and the atomic weights.
_PERIODICTABLE_FILES = ("__init__.py", "formulas.py", "core.py", "mass.py")


def from_subscript(text):
    """Replace unicode subscript characters by plain ones (``C₃H₈`` becomes ``C3H8``).

    Parameters
    ----------
    text : str
        Any text; other characters are kept.

    Returns
    -------
    str
        The text with subscript digits, signs, brackets and letters made plain.

    Notes
    -----
    The same mapping as periodictable's ``formulas.from_subscript``, kept here so
    that reading a label does not import periodictable.

    Examples
    --------
    >>> from_subscript("CO₂")
    'CO2'
    """
    return str(text).translate(_SUBSCRIPTS)


@functools.lru_cache(maxsize=1)
def periodictable_fingerprint():
    """Return what periodictable's results depend on, without importing it; None if not found.

    Returns
    -------
    str or None
        A hash of the installed package's files that hold its version (``__version__``),
        formula grammar, element table and atomic weights; None when the package or one
        of the files cannot be read.
    """
    spec = importlib.util.find_spec("periodictable")
    if spec is None or not spec.submodule_search_locations:
        return None
    package = Path(spec.submodule_search_locations[0])
    try:
        return content_key(*[(package / name).read_bytes() for name in _PERIODICTABLE_FILES])
    except OSError:
        return None


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
    import periodictable
    from periodictable.formulas import Formula

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
    from periodictable.core import isisotope

    if isisotope(atom):
        symbol, mass_number = atom.element.symbol, atom.isotope
    else:
        symbol, mass_number = atom.symbol, 0
    return symbol, mass_number


def _atom_text(atom):
    """Write one atom in periodictable syntax: D and T as such, else Sym[mass]."""
    from periodictable.core import isisotope

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


def _molar_mass_cache_name():
    """Name the user-cache document of :func:`cached_molar_mass`, or None when it cannot be named."""
    fingerprint = periodictable_fingerprint()
    try:
        code = Path(__file__).read_bytes()
    except OSError:
        return None
    return None if fingerprint is None else f"molar-masses-{content_key(fingerprint, code)}.json"


@functools.lru_cache(maxsize=64)
def cached_molar_mass(text):
    """Molar mass of a formula from periodictable, kept in the user cache between processes.

    Parameters
    ----------
    text : str
        Any formula :func:`parse_formula` accepts.

    Returns
    -------
    float
        Molar mass [kg/mol], the same float :func:`molar_mass` returns.

    Notes
    -----
    For the few fixed formulas molid needs at every start (water's molar mass in
    the wet-gas model): the value is read from a JSON document in the user cache
    (:mod:`molid.cache`, which gives a float back to the last bit) whose name holds
    :func:`periodictable_fingerprint` and this module's code, so another
    periodictable misses it. On a miss the value is computed by :func:`molar_mass`
    and added to the document.

    Examples
    --------
    >>> cached_molar_mass("CO2") == molar_mass("CO2")
    True
    """
    name = _molar_mass_cache_name()
    document = read_document(name) if name else None
    document = document if isinstance(document, dict) else {}
    value = document.get(text)
    if isinstance(value, float):
        return value
    value = molar_mass(text)
    if name:
        write_document(name, {**document, text: value})
    return value


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
