"""Searching the candidate library: the row a user's label names, and rows by text or molar mass.

A label may be a name, an alias, a CAS registry number or a formula; names and
aliases are compared without regard to case, spaces and hyphens, formulas by
their Hill formula.  A formula typed in the wrong case (``co2``) is read as
element symbols only when it is not a valid formula as typed and the reading
is unambiguous.
"""

import functools
import re

import numpy as np

from molid.candidates.library import copy_library
from molid.physics.formulas import from_subscript, hill_formula

__all__ = ["find_candidate", "search_library"]


@functools.lru_cache(maxsize=1)
def _element_symbols():
    """Element symbols periodictable knows, including D and T for hydrogen isotopes.

    Read on first use: importing periodictable costs more than a one-run analysis, and
    only a wrongly-cased formula needs the symbols.
    """
    import periodictable

    return frozenset(element.symbol for element in periodictable.elements if element.number > 0) | {"D", "T"}


def _name_key(text):
    """Key for comparing names: case, spaces, hyphens and dashes do not count."""
    text = str(text).casefold()
    return re.sub(r"[\s\-\u2010-\u2015\u2212_]+", "", text)


def _unique(index):
    return int(index[0]) if len(index) == 1 else None


def _recased_formulas(text, limit=64):
    """Every way of reading a wrongly-cased formula as element symbols (``nh3`` -> ``NH3``)."""
    pieces = re.split(r"([A-Za-z]+)", text)
    readings = [""]
    for piece in pieces:
        if not piece.isalpha():
            readings = [reading + piece for reading in readings]
            continue
        splits = _symbol_splits(piece.casefold())
        readings = [reading + split for reading in readings for split in splits][:limit]
    return readings


@functools.lru_cache(maxsize=256)
def _symbol_splits(letters):
    """Split a lower-case letter run into element symbols in every possible way."""
    if not letters:
        return ("",)
    splits = []
    for size in (1, 2):
        symbol = letters[:size].capitalize()
        if len(letters) >= size and symbol in _element_symbols():
            splits.extend(symbol + rest for rest in _symbol_splits(letters[size:]))
    return tuple(splits)


def _hill_or_none(text):
    try:
        return hill_formula(text)
    except ValueError:
        return None


def _find_by_formula(library, text):
    """Match a label as a formula (see :func:`find_candidate`, steps 3 and 4)."""
    index = library.index
    typed = (library["formula"] == text).to_numpy(dtype=bool)
    if typed.any():  # written as a library row writes it: that row's Hill formula, nothing to parse
        hill = library["hill"].to_numpy()[typed][0]
        return _unique(index[(library["hill"] == hill).to_numpy()])
    try:
        hill = hill_formula(text)
    except ValueError:
        if not any(character.isdigit() for character in text):
            return None
        readings = {_hill_or_none(candidate) for candidate in _recased_formulas(text)}
        matches = library["hill"].isin(readings - {None, ""}).to_numpy()
        return _unique(index[matches])
    return _unique(index[(library["hill"] == hill).to_numpy()])


def find_candidate(library, label):
    """Find the library row a user's label names.

    Parameters
    ----------
    library : pandas.DataFrame
        A table from :func:`molid.candidates.library.load_library`.
    label : str
        A name (``carbon dioxide``), alias (``R-744``), CAS number
        (``124-38-9``) or formula (``CO2``, ``C₃H₈``).

    Returns
    -------
    int or None
        The index label of the matching row, or None when nothing matches or
        the label is ambiguous.

    Notes
    -----
    The label is tried, in order, as:

    1. a name, then an alias: case, spaces and hyphens do not count
       (``r134a`` finds ``R-134a``);
    2. a CAS registry number;
    3. a formula, exactly as typed, compared by Hill formula.  When several
       isomers share the formula (``C4H10``: n-butane and isobutane) the
       answer is None, because only a name can tell them apart;
    4. only when the text is not a valid formula as typed (``co2``, ``nh3``)
       and holds a digit: every reading of its letters as element symbols is
       tried, and the label matches if exactly one library row has one of
       those formulas.  So ``co2`` finds carbon dioxide, but ``Co`` (a valid
       formula: cobalt) never becomes CO, and ``no`` is not taken for nitric
       oxide.

    Examples
    --------
    >>> from molid.candidates.library import load_library
    >>> library = load_library()
    >>> library.loc[find_candidate(library, "124-38-9"), "name"]
    'carbon dioxide'
    >>> find_candidate(library, "C4H10") is None  # n-butane or isobutane?
    True
    """
    text = from_subscript(str(label)).strip()
    if not text:
        return None
    key = _name_key(text)
    index = library.index

    by_name = index[library["name"].map(_name_key).to_numpy() == key]
    if len(by_name):
        return _unique(by_name)
    alias_keys = library["aliases"].map(lambda aliases: {_name_key(a) for a in aliases})
    by_alias = index[alias_keys.map(lambda keys: key in keys).to_numpy(dtype=bool)]
    if len(by_alias):
        return _unique(by_alias)
    by_cas = index[(library["cas"] == text).to_numpy()]
    if len(by_cas):
        return _unique(by_cas)
    return _find_by_formula(library, text)


def _text_matches(library, text):
    """Rows whose name, aliases, formula, Hill formula or CAS number hold the text, or share its formula."""
    needle = from_subscript(text).strip()
    haystack = (
        library["name"]
        + "\n"
        + library["aliases"].map("\n".join)
        + "\n"
        + library["formula"]
        + "\n"
        + library["hill"]
        + "\n"
        + library["cas"]
    ).str.casefold()
    found = np.array(haystack.str.contains(needle.casefold(), regex=False), dtype=bool)
    try:
        hill = hill_formula(needle)
    except ValueError:
        pass
    else:
        found |= (library["hill"] == hill).to_numpy()
    return found


def search_library(library, text=None, molar_mass_window=None):
    """Select library rows by a text and/or a molar-mass window.

    Parameters
    ----------
    library : pandas.DataFrame
        A table from :func:`molid.candidates.library.load_library`.
    text : str, optional
        Case-insensitive substring looked for in name, aliases, formula, Hill
        formula and CAS number.  A text that is a valid formula also selects
        every row with the same Hill formula (``CH3CH2OH`` finds ethanol and
        dimethyl ether).
    molar_mass_window : tuple of float, optional
        ``(low, high)`` molar mass window [g/mol], inclusive; g/mol because it
        comes straight from the command line.

    Returns
    -------
    pandas.DataFrame
        The selected rows, in library order, with their original index labels.

    Raises
    ------
    ValueError
        If the window's low end is above its high end.

    Examples
    --------
    >>> from molid.candidates.library import load_library
    >>> library = load_library()
    >>> sorted(search_library(library, molar_mass_window=(44.0, 44.2))["name"])
    ['carbon dioxide', 'ethylene oxide', 'nitrous oxide', 'propane']
    """
    selected = np.ones(len(library), dtype=bool)
    if text is not None and text.strip():
        selected &= _text_matches(library, text)
    if molar_mass_window is not None:
        low, high = (float(value) for value in molar_mass_window)
        if low > high:
            raise ValueError(
                f"molar-mass window ({low}, {high}) g/mol: the low end is above the high end"
            )
        grams = library["molar_mass"].to_numpy(dtype=float) * 1000.0
        selected &= (grams >= low) & (grams <= high)
    return copy_library(library[selected])
