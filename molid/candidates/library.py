"""The candidate library: loading, validating, merging and searching it.

The library is a data file, ``molid/data/candidates.csv``, one row per substance
met as a gas or vapour, with a column naming the source of each value.  It is
read once and cached; :func:`load_library` hands out copies.

A user file of the same format can be merged with the default library or replace
it, and single formulas can be added from the command line (``--candidate``).
Every file is validated, and all its problems are reported together in one
:class:`LibraryError`, naming the row as a spreadsheet numbers it (the header is
row 1), the column, what was wrong and what is accepted.

Inside the returned table every quantity is in SI base units (K, Pa, kg/mol);
the file holds the units chemists read in handbooks (K, MPa, g/mol, D), which
its column names state.

Substances whose vapour associates strongly (acetic acid and other carboxylic
acids, whose vapour is largely dimer) are left out of the default library: a
gas-density molar mass of such a vapour is not the formula's molar mass.
"""

import csv
import functools
import math
import re
from importlib import resources
from pathlib import Path

import numpy as np
import pandas as pd
import periodictable
from periodictable.formulas import from_subscript

from molid.physics.formulas import hill_formula, molar_mass
from molid.physics.virial import POLAR_CLASSES

__all__ = [
    "DEFAULT_LIBRARY_PATH",
    "FILE_COLUMNS",
    "LIBRARY_COLUMNS",
    "POLAR_CLASSES",
    "LibraryError",
    "load_library",
    "find_candidate",
    "search_library",
]

#: The default library shipped with molid.
DEFAULT_LIBRARY_PATH = Path(str(resources.files("molid") / "data" / "candidates.csv"))

#: Columns of a library file, in order.
FILE_COLUMNS = (
    "name",
    "formula",
    "cas",
    "aliases",
    "critical_temperature_K",
    "critical_pressure_MPa",
    "acentric_factor",
    "normal_boiling_point_K",
    "dipole_moment_D",
    "polar_class",
    "molar_mass_g_per_mol",
    "u_molar_mass_g_per_mol",
    "ghs_hazards",
    "source_critical",
    "source_dipole",
    "source_ghs",
    "note",
)

#: Columns of the table :func:`load_library` returns (SI units).
LIBRARY_COLUMNS = (
    "name",
    "formula",
    "hill",
    "cas",
    "aliases",
    "molar_mass",
    "u_molar_mass",
    "critical_temperature",
    "critical_pressure",
    "acentric_factor",
    "normal_boiling_point",
    "dipole_moment",
    "polar_class",
    "has_critical_data",
    "ghs_hazards",
    "source_critical",
    "source_dipole",
    "source_ghs",
    "note",
    "origin",
)

#: Acentric factors accepted in a library file (helium, the lowest, is about -0.39).
ACENTRIC_RANGE = (-0.5, 2.0)

_REQUIRED_COLUMNS = ("name", "formula")
_CRITICAL_COLUMNS = ("critical_temperature_K", "critical_pressure_MPa", "acentric_factor")
_NONPOLAR_CLASSES = ("nonpolar", "quantum")
_LIST_COLUMNS = ("aliases", "ghs_hazards")

# file column -> (rule, what is accepted); the conversion to SI is done where the table is built.
_NUMBER_COLUMNS = {
    "critical_temperature_K": ("positive", "a temperature in K above 0"),
    "critical_pressure_MPa": ("positive", "a pressure in MPa above 0"),
    "acentric_factor": ("acentric", f"a number from {ACENTRIC_RANGE[0]} to {ACENTRIC_RANGE[1]}"),
    "normal_boiling_point_K": ("positive", "a temperature in K above 0"),
    "dipole_moment_D": ("non-negative", "a dipole moment in debye, 0 or more"),
    "molar_mass_g_per_mol": ("positive", "a molar mass in g/mol above 0"),
    "u_molar_mass_g_per_mol": ("non-negative", "a standard uncertainty in g/mol, 0 or more"),
}

_CAS_PATTERN = re.compile(r"(\d{2,7})-(\d{2})-(\d)")


class LibraryError(ValueError):
    """A library file or ``--candidate`` option that cannot be used.

    Parameters
    ----------
    source : str
        The file or option the problems were found in.
    problems : list of str
        One line per problem, each naming row and column where there is one.
    """

    def __init__(self, source, problems):
        self.source = source
        self.problems = list(problems)
        count = len(self.problems)
        heading = f"{count} problem{'s' if count != 1 else ''} in {source}:"
        super().__init__("\n  ".join([heading, *self.problems]))


def _cas_problem(cas):
    """Say what is wrong with a CAS registry number, or return None if it is valid."""
    match = _CAS_PATTERN.fullmatch(cas)
    if not match:
        return "not a CAS registry number"
    digits = (match.group(1) + match.group(2))[::-1]
    # CAS check digit: sum of each digit times its position counted from the right, mod 10.
    check = sum(position * int(digit) for position, digit in enumerate(digits, start=1)) % 10
    if check != int(match.group(3)):
        return f"check digit should be {check}, not {match.group(3)} (a typing error?)"
    return None


def _split_list(text):
    return [item.strip() for item in text.split(";") if item.strip()]


def _name_key(text):
    """Key for comparing names: case, spaces, hyphens and dashes do not count."""
    text = str(text).casefold()
    return re.sub(r"[\s\-\u2010-\u2015\u2212_]+", "", text)


def _read_csv(path):
    """Read a library file as text cells, one record per spreadsheet row.

    Blank lines are kept (as empty rows) so that row numbers match what a
    spreadsheet shows; a row with more or fewer fields than the header is an
    error rather than being shifted into the wrong columns.
    """
    try:
        with open(path, encoding="utf-8-sig", newline="") as stream:
            records = list(csv.reader(stream))
    except OSError as error:  # missing file, a directory, no permission
        raise LibraryError(
            str(path),
            [f"cannot be opened ({error.strerror or error}); accepted: a readable CSV file"],
        ) from error
    except (UnicodeDecodeError, csv.Error) as error:
        raise LibraryError(
            str(path),
            [f"cannot be read as comma-separated UTF-8 text ({error}); accepted: a CSV file"],
        ) from error
    if not records or not any(records[0]):
        raise LibraryError(
            str(path), ["the file is empty; accepted: a header row and one row per substance"]
        )
    header, body = records[0], records[1:]
    problems = [
        f"row {number}: {len(record)} fields where the header has {len(header)}; accepted: "
        "the same number of fields on every row (quote a cell that holds a comma)"
        for number, record in enumerate(body, start=2)
        if record and len(record) != len(header)
    ]
    if problems:
        raise LibraryError(str(path), problems)
    body = [record if record else [""] * len(header) for record in body]
    return pd.DataFrame(body, columns=header, dtype=object)


def _parse_table(table, source, origin):
    """Validate a text table of library rows and convert it to SI; raise LibraryError."""
    problems = []

    def problem(row, column, what, accepted):
        problems.append(f"row {row}, column '{column}': {what}; accepted: {accepted}")

    columns = [str(column).strip() for column in table.columns]
    table = table.copy()
    table.columns = columns
    for column in sorted({column for column in columns if columns.count(column) > 1}):
        problem(1, column, "column appears more than once", "each column once")
    unknown = [column for column in columns if column not in FILE_COLUMNS]
    for column in unknown:
        hint = ""
        if ";" in column and len(columns) == 1:
            hint = " (the file seems to use ';' between fields; save it comma-separated)"
        problem(1, column, f"unknown column{hint}", "the columns " + ", ".join(FILE_COLUMNS))
    for column in _REQUIRED_COLUMNS:
        if column not in columns:
            problem(1, column, "column missing", "a header row naming at least name and formula")
    if problems:
        raise LibraryError(source, problems)
    for column in FILE_COLUMNS:
        if column not in table.columns:
            table[column] = ""
    table = table[list(FILE_COLUMNS)].apply(lambda cells: cells.str.strip())
    # Spreadsheet numbering: the header is row 1, so data row i is row i + 2.
    table.index = pd.RangeIndex(2, 2 + len(table))
    table = table[(table != "").any(axis=1)]
    rows = table.index.to_numpy()

    numbers = {}
    for column, (rule, accepted) in _NUMBER_COLUMNS.items():
        text = table[column]
        value = np.array(pd.to_numeric(text, errors="coerce"), dtype=float)
        given = (text != "").to_numpy()
        not_number = given & ~np.isfinite(value)
        if rule == "positive":
            out_of_range = given & np.isfinite(value) & (value <= 0)
            what = "must be above zero"
        elif rule == "non-negative":
            out_of_range = given & np.isfinite(value) & (value < 0)
            what = "must not be negative"
        else:
            low, high = ACENTRIC_RANGE
            out_of_range = given & np.isfinite(value) & ((value < low) | (value > high))
            what = f"outside {low} to {high}"
        for row in rows[not_number]:
            problem(row, column, f"{table.at[row, column]!r} is not a number", accepted)
        for row in rows[out_of_range]:
            problem(row, column, f"{table.at[row, column]} {what}", accepted)
        value[~given | not_number] = np.nan
        numbers[column] = value

    names = table["name"]
    for row in rows[(names == "").to_numpy()]:
        problem(row, "name", "missing name", "a non-empty common name, e.g. carbon dioxide")
    first_row_of = {}
    for row, name in zip(rows, names, strict=True):
        if not name:
            continue
        key = name.casefold()
        if key in first_row_of:
            problem(
                row,
                "name",
                f"duplicate name {name!r} (also row {first_row_of[key]})",
                "each name once",
            )
        else:
            first_row_of[key] = row

    first_row_of_cas = {}
    for row, cas in zip(rows, table["cas"], strict=True):
        if not cas:
            continue
        what = _cas_problem(cas)
        if what:
            problem(row, "cas", f"{cas!r}: {what}", "a CAS registry number such as 124-38-9")
        elif cas in first_row_of_cas:
            problem(
                row,
                "cas",
                f"duplicate CAS number {cas} (also row {first_row_of_cas[cas]})",
                "each CAS number once",
            )
        else:
            first_row_of_cas[cas] = row

    hill = []
    mass = numbers["molar_mass_g_per_mol"] * 1e-3
    given_mass = np.isfinite(numbers["molar_mass_g_per_mol"])
    for position, (row, formula) in enumerate(zip(rows, table["formula"], strict=True)):
        if not formula:
            hill.append("")
            if not given_mass[position]:
                problem(
                    row,
                    "formula",
                    "missing formula",
                    "a formula (or, for a mixture only, an empty formula and molar_mass_g_per_mol)",
                )
            continue
        try:
            hill.append(hill_formula(formula))
            formula_mass = molar_mass(formula)
        except ValueError as error:
            hill.append("")
            problem(
                row,
                "formula",
                str(error).split("; accepted: ")[0],
                str(error).split("; accepted: ")[-1],
            )
            continue
        if given_mass[position]:
            problem(
                row,
                "molar_mass_g_per_mol",
                "a molar mass is given although the formula fixes it",
                "an empty cell when a formula is given (the molar mass is computed from "
                "the formula by periodictable); a value only for mixtures",
            )
        mass[position] = formula_mass

    critical_given = np.column_stack([np.isfinite(numbers[c]) for c in _CRITICAL_COLUMNS])
    # A cell that failed to parse was reported above; do not call the set incomplete for it.
    critical_typed = np.column_stack([(table[c] != "").to_numpy() for c in _CRITICAL_COLUMNS])
    has_critical = critical_given.all(axis=1)
    partial = critical_typed.any(axis=1) & ~critical_typed.all(axis=1)
    for row in rows[partial]:
        problem(
            row,
            "critical_temperature_K",
            "incomplete critical data",
            "critical_temperature_K, critical_pressure_MPa and acentric_factor "
            "all given, or all three empty",
        )

    polar = np.array(table["polar_class"], dtype=object)
    dipole = numbers["dipole_moment_D"]
    dipole_given = (table["dipole_moment_D"] != "").to_numpy()
    for position, row in enumerate(rows):
        label = polar[position]
        if not label:
            if dipole_given[position] and np.isfinite(dipole[position]) and dipole[position] > 0:
                problem(
                    row,
                    "polar_class",
                    "missing for a substance with a dipole moment",
                    "one of " + ", ".join(POLAR_CLASSES),
                )
            polar[position] = "nonpolar"
        elif label not in POLAR_CLASSES:
            problem(
                row,
                "polar_class",
                f"unknown polar class {label!r}",
                "one of " + ", ".join(POLAR_CLASSES),
            )
        elif (
            label not in _NONPOLAR_CLASSES and has_critical[position] and not dipole_given[position]
        ):
            problem(
                row,
                "dipole_moment_D",
                f"missing for polar_class {label!r}",
                "the gas-phase dipole moment in debye",
            )
    nonpolar = np.isin(polar, _NONPOLAR_CLASSES)
    dipole = np.where(nonpolar & ~dipole_given, 0.0, dipole)

    if problems:
        raise LibraryError(source, problems)

    uncertainty = numbers["u_molar_mass_g_per_mol"] * 1e-3
    frame = pd.DataFrame(
        {
            "name": table["name"].to_numpy(dtype=object),
            "formula": table["formula"]
            .map(lambda text: from_subscript(text).strip())
            .to_numpy(dtype=object),
            "hill": hill,
            "cas": table["cas"].to_numpy(dtype=object),
            "aliases": [_split_list(text) for text in table["aliases"]],
            "molar_mass": mass,
            "u_molar_mass": np.where(np.isfinite(uncertainty), uncertainty, 0.0),
            "critical_temperature": numbers["critical_temperature_K"],
            "critical_pressure": numbers["critical_pressure_MPa"] * 1e6,
            "acentric_factor": numbers["acentric_factor"],
            "normal_boiling_point": numbers["normal_boiling_point_K"],
            "dipole_moment": dipole,
            "polar_class": polar,
            "has_critical_data": has_critical,
            "ghs_hazards": [_split_list(text) for text in table["ghs_hazards"]],
            "source_critical": table["source_critical"].to_numpy(dtype=object),
            "source_dipole": table["source_dipole"].to_numpy(dtype=object),
            "source_ghs": table["source_ghs"].to_numpy(dtype=object),
            "note": table["note"].to_numpy(dtype=object),
            "origin": origin,
        },
        columns=list(LIBRARY_COLUMNS),
    )
    return frame


def _read_library_file(path, origin):
    path = Path(path)
    return _parse_table(_read_csv(path), str(path), origin)


@functools.lru_cache(maxsize=4)
def _cached_library_file(path, origin):
    return _read_library_file(path, origin)


def _copy(frame):
    """Copy a library table, the list cells included, so callers cannot alter the cache."""
    copied = frame.copy()
    for column in _LIST_COLUMNS:
        copied[column] = pd.Series(
            [list(items) for items in frame[column]], index=frame.index, dtype=object
        )
    return copied


def _merge(base, user):
    """Replace base rows sharing a name or CAS number (case-insensitive) with user rows."""
    user_names = set(user["name"].str.casefold())
    user_cas = set(cas.casefold() for cas in user["cas"] if cas)
    replaced = base["name"].str.casefold().isin(user_names) | base["cas"].str.casefold().isin(
        user_cas
    )
    return pd.concat([base[~replaced], user], ignore_index=True)


def _extra_rows(library, extra_candidates):
    """Rows for ``--candidate FORMULA`` or ``FORMULA=name`` options, without critical data."""
    problems = []
    rows = []
    known_names = dict(zip(library["name"].str.casefold(), library["hill"], strict=True))
    known_hill = set(library["hill"])
    for text in extra_candidates:
        formula_text, equals, name = str(text).partition("=")
        formula_text, name = formula_text.strip(), name.strip()
        accepted = "FORMULA or FORMULA=name, e.g. C3H8 or C4H10=n-butane"
        if equals and not name:
            problems.append(f"--candidate {text!r}: empty name after '='; accepted: {accepted}")
            continue
        try:
            hill = hill_formula(formula_text)
            mass = molar_mass(formula_text)
        except ValueError as error:
            problems.append(f"--candidate {text!r}: {error}")
            continue
        if not name:
            if hill in known_hill:
                continue  # the library already holds this formula, with more data
            name = hill
        key = name.casefold()
        if key in known_names:
            if known_names[key] == hill:
                continue
            problems.append(
                f"--candidate {text!r}: the name {name!r} is already used for "
                f"{known_names[key] or 'a mixture'}; accepted: a new name or the same formula"
            )
            continue
        known_names[key] = hill
        known_hill.add(hill)
        rows.append(
            {
                "name": name,
                "formula": hill,
                "hill": hill,
                "cas": "",
                "aliases": [],
                "molar_mass": mass,
                "u_molar_mass": 0.0,
                "critical_temperature": math.nan,
                "critical_pressure": math.nan,
                "acentric_factor": math.nan,
                "normal_boiling_point": math.nan,
                "dipole_moment": math.nan,
                "polar_class": "nonpolar",
                "has_critical_data": False,
                "ghs_hazards": [],
                "source_critical": "",
                "source_dipole": "",
                "source_ghs": "",
                "note": "Added with --candidate: no critical data, so it is ranked with the "
                "ideal-gas molar mass; its hazards are not known to molid.",
                "origin": "--candidate",
            }
        )
    if problems:
        raise LibraryError("--candidate options", problems)
    return pd.DataFrame(rows, columns=list(LIBRARY_COLUMNS))


def load_library(path=None, mode="merge", extra_candidates=()):
    """Load the candidate library, optionally with a user file and extra formulas.

    Parameters
    ----------
    path : str or pathlib.Path, optional
        A user library file in the format of ``molid/data/candidates.csv``.
        Only ``name`` and ``formula`` columns are required.
    mode : {"merge", "replace"}
        ``"merge"``: user rows replace default rows with the same name or the
        same CAS number (case-insensitive) and the rest are added;
        ``"replace"``: the user file is the whole library.
    extra_candidates : iterable of str
        ``FORMULA`` or ``FORMULA=name`` strings (the ``--candidate`` option).
        They carry no critical data (``has_critical_data`` is False), so they are
        ranked with the ideal-gas molar mass.  A bare formula already in the
        library adds nothing; a name already in the library must come with the
        same formula.

    Returns
    -------
    pandas.DataFrame
        One row per candidate, index 0..n-1, columns :data:`LIBRARY_COLUMNS`:
        ``molar_mass`` and ``u_molar_mass`` [kg/mol], ``critical_temperature``
        and ``normal_boiling_point`` [K], ``critical_pressure`` [Pa],
        ``acentric_factor`` [-], ``dipole_moment`` [D], ``aliases`` and
        ``ghs_hazards`` as lists of str, ``origin`` ("default", the user file's
        name, or "--candidate").  Missing numbers are NaN; ``u_molar_mass`` is
        0 where none is given.

    Raises
    ------
    LibraryError
        If the user file or a ``--candidate`` string is invalid; the message
        lists every problem with its row (header = row 1) and column.

    Notes
    -----
    The molar mass of a substance with a formula is always computed from the
    formula by periodictable; only mixtures (air) carry a typed molar mass.
    The default file is read once per process and cached; each call returns
    a fresh copy.

    Examples
    --------
    >>> library = load_library()
    >>> row = library.loc[find_candidate(library, "R-134a")]
    >>> round(float(row.molar_mass) * 1000, 2), row.hill
    (102.03, 'C2H2F4')
    """
    if mode not in ("merge", "replace"):
        raise ValueError(f"mode must be 'merge' or 'replace', not {mode!r}")
    if path is None:
        library = _copy(_cached_library_file(DEFAULT_LIBRARY_PATH, "default"))
    else:
        user = _read_library_file(path, Path(path).name)
        if mode == "replace":
            library = user
        else:
            library = _merge(_cached_library_file(DEFAULT_LIBRARY_PATH, "default"), user)
            library = _copy(library)
    extra = list(extra_candidates)
    if extra:
        added = _extra_rows(library, extra)
        if len(added):
            library = pd.concat([library, added], ignore_index=True)
    return library.reset_index(drop=True)


def _unique(index):
    return int(index[0]) if len(index) == 1 else None


# Element symbols periodictable knows, including D and T for hydrogen isotopes.
_SYMBOLS = frozenset(element.symbol for element in periodictable.elements if element.number > 0) | {
    "D",
    "T",
}


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
        if len(letters) >= size and symbol in _SYMBOLS:
            splits.extend(symbol + rest for rest in _symbol_splits(letters[size:]))
    return tuple(splits)


def _hill_or_none(text):
    try:
        return hill_formula(text)
    except ValueError:
        return None


def find_candidate(library, label):
    """Find the library row a user's label names.

    Parameters
    ----------
    library : pandas.DataFrame
        A table from :func:`load_library`.
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
    try:
        hill = hill_formula(text)
    except ValueError:
        if not any(character.isdigit() for character in text):
            return None
        readings = {_hill_or_none(candidate) for candidate in _recased_formulas(text)}
        matches = library["hill"].isin(readings - {None, ""}).to_numpy()
        return _unique(index[matches])
    return _unique(index[(library["hill"] == hill).to_numpy()])


def search_library(library, text=None, molar_mass_window=None):
    """Select library rows by a text and/or a molar-mass window.

    Parameters
    ----------
    library : pandas.DataFrame
        A table from :func:`load_library`.
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
    >>> library = load_library()
    >>> sorted(search_library(library, molar_mass_window=(44.0, 44.2))["name"])
    ['carbon dioxide', 'ethylene oxide', 'nitrous oxide', 'propane']
    """
    selected = np.ones(len(library), dtype=bool)
    if text is not None and text.strip():
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
        selected &= found
    if molar_mass_window is not None:
        low, high = (float(value) for value in molar_mass_window)
        if low > high:
            raise ValueError(
                f"molar-mass window ({low}, {high}) g/mol: the low end is above the high end"
            )
        grams = library["molar_mass"].to_numpy(dtype=float) * 1000.0
        selected &= (grams >= low) & (grams <= high)
    return _copy(library[selected])
