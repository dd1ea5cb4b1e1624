"""The candidate library: loading, validating and merging it.

The library is a data file, ``molid/data/candidates.csv``, one row per substance
met as a gas or vapour, with a column naming the source of each value.  It is
read once and cached; :func:`load_library` hands out copies.  Looking rows up
by name, formula or molar mass is in :mod:`molid.candidates.search`.

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

from molid.cache import content_key, read_document, write_document
from molid.physics.formulas import from_subscript, hill_formula, molar_mass, periodictable_fingerprint
from molid.physics.virial import POLAR_CLASSES

__all__ = [
    "DEFAULT_LIBRARY_PATH",
    "FILE_COLUMNS",
    "LIBRARY_COLUMNS",
    "POLAR_CLASSES",
    "LibraryError",
    "copy_library",
    "load_library",
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


class _Problems:
    """The problems found in one library file, collected so that one error lists them all."""

    def __init__(self):
        self.lines = []

    def add(self, row, column, what, accepted):
        """Record a problem at a spreadsheet row (the header is row 1) and column."""
        self.lines.append(f"row {row}, column '{column}': {what}; accepted: {accepted}")

    def raise_if_any(self, source):
        """Raise a LibraryError listing every problem recorded so far, if there is one."""
        if self.lines:
            raise LibraryError(source, self.lines)


def _check_header(columns, problems):
    """Report duplicate, unknown and missing columns of the header row."""
    for column in sorted({column for column in columns if columns.count(column) > 1}):
        problems.add(1, column, "column appears more than once", "each column once")
    unknown = [column for column in columns if column not in FILE_COLUMNS]
    for column in unknown:
        hint = ""
        if ";" in column and len(columns) == 1:
            hint = " (the file seems to use ';' between fields; save it comma-separated)"
        problems.add(1, column, f"unknown column{hint}", "the columns " + ", ".join(FILE_COLUMNS))
    for column in _REQUIRED_COLUMNS:
        if column not in columns:
            problems.add(1, column, "column missing", "a header row naming at least name and formula")


def _file_rows(table, columns):
    """Give every file column as stripped text, indexed by spreadsheet row, empty rows left out."""
    table = table.copy()
    table.columns = columns
    for column in FILE_COLUMNS:
        if column not in table.columns:
            table[column] = ""
    table = table[list(FILE_COLUMNS)].apply(lambda cells: cells.str.strip())
    # Spreadsheet numbering: the header is row 1, so data row i is row i + 2.
    table.index = pd.RangeIndex(2, 2 + len(table))
    return table[(table != "").any(axis=1)]


def _outside_rule(rule, value):
    """Tell which finite values break a number column's rule, and the words for it."""
    finite = np.isfinite(value)
    if rule == "positive":
        return finite & (value <= 0), "must be above zero"
    if rule == "non-negative":
        return finite & (value < 0), "must not be negative"
    low, high = ACENTRIC_RANGE
    return finite & ((value < low) | (value > high)), f"outside {low} to {high}"


def _parse_numbers(table, problems):
    """Read the number columns as float arrays, NaN where empty or wrong; report the wrong cells."""
    rows = table.index.to_numpy()
    numbers = {}
    for column, (rule, accepted) in _NUMBER_COLUMNS.items():
        text = table[column]
        value = np.array(pd.to_numeric(text, errors="coerce"), dtype=float)
        given = (text != "").to_numpy()
        not_number = given & ~np.isfinite(value)
        outside, what = _outside_rule(rule, value)
        out_of_range = given & outside
        for row in rows[not_number]:
            problems.add(row, column, f"{table.at[row, column]!r} is not a number", accepted)
        for row in rows[out_of_range]:
            problems.add(row, column, f"{table.at[row, column]} {what}", accepted)
        value[~given | not_number] = np.nan
        numbers[column] = value
    return numbers


def _check_names(table, problems):
    """Report missing names and names given twice (case does not count)."""
    rows = table.index.to_numpy()
    names = table["name"]
    for row in rows[(names == "").to_numpy()]:
        problems.add(row, "name", "missing name", "a non-empty common name, e.g. carbon dioxide")
    first_row_of = {}
    for row, name in zip(rows, names, strict=True):
        if not name:
            continue
        key = name.casefold()
        if key in first_row_of:
            problems.add(
                row,
                "name",
                f"duplicate name {name!r} (also row {first_row_of[key]})",
                "each name once",
            )
        else:
            first_row_of[key] = row


def _check_cas_numbers(table, problems):
    """Report CAS registry numbers that are malformed, fail their check digit or repeat."""
    first_row_of_cas = {}
    for row, cas in zip(table.index.to_numpy(), table["cas"], strict=True):
        if not cas:
            continue
        what = _cas_problem(cas)
        if what:
            problems.add(row, "cas", f"{cas!r}: {what}", "a CAS registry number such as 124-38-9")
        elif cas in first_row_of_cas:
            problems.add(
                row,
                "cas",
                f"duplicate CAS number {cas} (also row {first_row_of_cas[cas]})",
                "each CAS number once",
            )
        else:
            first_row_of_cas[cas] = row


def _resolve_formulas(table, numbers, problems, known=None):
    """Find the Hill formula and molar mass [kg/mol] of each row; only a mixture types its molar mass.

    ``known`` maps a formula as written to its Hill formula and molar mass from an earlier
    parse (the user cache); formulas parsed here are added to it.
    """
    known = {} if known is None else known
    hill = []
    mass = numbers["molar_mass_g_per_mol"] * 1e-3
    given_mass = np.isfinite(numbers["molar_mass_g_per_mol"])
    rows = table.index.to_numpy()
    for position, (row, formula) in enumerate(zip(rows, table["formula"], strict=True)):
        if not formula:
            hill.append("")
            if not given_mass[position]:
                problems.add(
                    row,
                    "formula",
                    "missing formula",
                    "a formula (or, for a mixture only, an empty formula and molar_mass_g_per_mol)",
                )
            continue
        try:
            if formula not in known:
                known[formula] = (hill_formula(formula), molar_mass(formula))
            formula_hill, formula_mass = known[formula]
            hill.append(formula_hill)
        except ValueError as error:
            hill.append("")
            problems.add(
                row,
                "formula",
                str(error).split("; accepted: ")[0],
                str(error).split("; accepted: ")[-1],
            )
            continue
        if given_mass[position]:
            problems.add(
                row,
                "molar_mass_g_per_mol",
                "a molar mass is given although the formula fixes it",
                "an empty cell when a formula is given (the molar mass is computed from "
                "the formula by periodictable); a value only for mixtures",
            )
        mass[position] = formula_mass
    return hill, mass


def _check_critical_data(table, numbers, problems):
    """Tell which rows have all three critical values; report rows that give only some."""
    critical_given = np.column_stack([np.isfinite(numbers[c]) for c in _CRITICAL_COLUMNS])
    # A cell that failed to parse was reported above; do not call the set incomplete for it.
    critical_typed = np.column_stack([(table[c] != "").to_numpy() for c in _CRITICAL_COLUMNS])
    has_critical = critical_given.all(axis=1)
    partial = critical_typed.any(axis=1) & ~critical_typed.all(axis=1)
    for row in table.index.to_numpy()[partial]:
        problems.add(
            row,
            "critical_temperature_K",
            "incomplete critical data",
            "critical_temperature_K, critical_pressure_MPa and acentric_factor "
            "all given, or all three empty",
        )
    return has_critical


def _resolve_polar_classes(table, numbers, has_critical, problems):
    """Find the polar class and dipole moment [D] of each row; an empty class means nonpolar."""
    polar = np.array(table["polar_class"], dtype=object)
    dipole = numbers["dipole_moment_D"]
    dipole_given = (table["dipole_moment_D"] != "").to_numpy()
    for position, row in enumerate(table.index.to_numpy()):
        label = polar[position]
        if not label:
            if dipole_given[position] and np.isfinite(dipole[position]) and dipole[position] > 0:
                problems.add(
                    row,
                    "polar_class",
                    "missing for a substance with a dipole moment",
                    "one of " + ", ".join(POLAR_CLASSES),
                )
            polar[position] = "nonpolar"
        elif label not in POLAR_CLASSES:
            problems.add(
                row,
                "polar_class",
                f"unknown polar class {label!r}",
                "one of " + ", ".join(POLAR_CLASSES),
            )
        elif (
            label not in _NONPOLAR_CLASSES and has_critical[position] and not dipole_given[position]
        ):
            problems.add(
                row,
                "dipole_moment_D",
                f"missing for polar_class {label!r}",
                "the gas-phase dipole moment in debye",
            )
    nonpolar = np.isin(polar, _NONPOLAR_CLASSES)
    return polar, np.where(nonpolar & ~dipole_given, 0.0, dipole)


def _library_frame(table, numbers, origin, *, hill, mass, has_critical, polar, dipole):
    """Build the library table, in SI units, from validated rows (see :data:`LIBRARY_COLUMNS`)."""
    uncertainty = numbers["u_molar_mass_g_per_mol"] * 1e-3
    return pd.DataFrame(
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


def _parse_table(table, source, origin, known_formulas=None):
    """Validate a text table of library rows and convert it to SI; raise LibraryError.

    A faulty header is reported on its own, since the rows cannot be read
    without it; otherwise every problem in the rows is collected first, so that
    one error lists them all. ``known_formulas``: see :func:`_resolve_formulas`.
    """
    problems = _Problems()
    columns = [str(column).strip() for column in table.columns]
    _check_header(columns, problems)
    problems.raise_if_any(source)
    table = _file_rows(table, columns)
    numbers = _parse_numbers(table, problems)
    _check_names(table, problems)
    _check_cas_numbers(table, problems)
    hill, mass = _resolve_formulas(table, numbers, problems, known_formulas)
    has_critical = _check_critical_data(table, numbers, problems)
    polar, dipole = _resolve_polar_classes(table, numbers, has_critical, problems)
    problems.raise_if_any(source)
    return _library_frame(table, numbers, origin, hill=hill, mass=mass, has_critical=has_critical,
                          polar=polar, dipole=dipole)


def _formula_cache_name(path):
    """Name the user-cache document of a library file's formulas, or None when it cannot be read.

    The name carries a hash of the file's bytes, periodictable's version and files
    (:func:`~molid.physics.formulas.periodictable_fingerprint`, read without importing it)
    and the code of :mod:`molid.physics.formulas`, so any change to what the formulas'
    Hill forms and molar masses depend on misses the cache.
    """
    from molid.physics import formulas

    fingerprint = periodictable_fingerprint()
    try:
        data = Path(path).read_bytes()
        code = Path(formulas.__file__).read_bytes()
    except OSError:
        return None
    return None if fingerprint is None else f"formulas-{content_key(data, fingerprint, code)}.json"


def _read_library_file(path, origin):
    """Read, validate and convert a library file, its formulas' Hill forms and molar masses cached.

    The molar masses are periodictable's, computed once per library file and kept in the
    user cache (:mod:`molid.cache`) as JSON, which gives every float back to the last bit.
    """
    path = Path(path)
    name = _formula_cache_name(path)
    cached = read_document(name) if name else None
    known = {}
    if isinstance(cached, dict):
        known = {text: (entry[0], entry[1]) for text, entry in cached.items()
                 if isinstance(entry, list) and len(entry) == 2 and isinstance(entry[0], str)
                 and isinstance(entry[1], float)}
    found = len(known)
    library = _parse_table(_read_csv(path), str(path), origin, known)
    if name and len(known) > found:
        write_document(name, {text: list(entry) for text, entry in known.items()})
    return library


@functools.lru_cache(maxsize=4)
def _cached_library_file(path, origin):
    return _read_library_file(path, origin)


def copy_library(frame):
    """Copy a library table, the list cells included, so that callers cannot alter the cache.

    Parameters
    ----------
    frame : pandas.DataFrame
        A table from :func:`load_library`, or a selection of its rows.

    Returns
    -------
    pandas.DataFrame
        An independent copy with the same index labels.
    """
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


def _extra_row(name, hill, mass):
    """Make the library row of one ``--candidate`` formula: no critical data, so ranked as an ideal gas."""
    return {
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
        rows.append(_extra_row(name, hill, mass))
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
    >>> from molid.candidates.search import find_candidate
    >>> library = load_library()
    >>> row = library.loc[find_candidate(library, "R-134a")]
    >>> round(float(row.molar_mass) * 1000, 2), row.hill
    (102.03, 'C2H2F4')
    """
    if mode not in ("merge", "replace"):
        raise ValueError(f"mode must be 'merge' or 'replace', not {mode!r}")
    if path is None:
        library = copy_library(_cached_library_file(DEFAULT_LIBRARY_PATH, "default"))
    else:
        user = _read_library_file(path, Path(path).name)
        if mode == "replace":
            library = user
        else:
            library = _merge(_cached_library_file(DEFAULT_LIBRARY_PATH, "default"), user)
            library = copy_library(library)
    extra = list(extra_candidates)
    if extra:
        added = _extra_rows(library, extra)
        if len(added):
            library = pd.concat([library, added], ignore_index=True)
    return library.reset_index(drop=True)
