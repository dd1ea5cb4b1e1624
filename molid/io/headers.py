"""Header resolution: from a header as written to a column name, its unit and its role.

A header is a name, optionally followed by a unit: ``pressure [mmHg]``,
``Pressure (mmHg)`` or ``Pressure, mmHg``. Names are matched without regard to
case, and spaces, hyphens, dots and underscores count alike; the other names labs
give a column (``Temp``, ``RH``, ``Barometer``, ``Tare``) are listed in
``molid/data/header_synonyms.toml``. A header ``u_<name>`` (or ``u(<name>)``)
gives standard uncertainties of the input ``<name>``.
"""

from __future__ import annotations

import functools
import re
import sys
from dataclasses import dataclass
from importlib import resources

from molid.io.columns import MEASURED_COLUMNS, REQUIRED_COLUMNS, UNCERTAIN_INPUTS, VESSEL_COLUMN
from molid.io.problems import InputError
from molid.io.units import ColumnUnit, UnitProblem, resolve_unit
from molid.methods.inputs import COLUMN_DEFAULT_UNITS, COLUMN_KINDS

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - exercised on Python 3.10 only
    import tomli as tomllib

__all__ = [
    "HEADER_SEARCH_ROWS",
    "Header",
    "HeaderVocabulary",
    "UncertaintyColumn",
    "header_vocabulary",
    "is_header_row",
    "is_read",
    "normalise_name",
    "parse_header",
    "resolve_headers",
    "split_header",
    "measured_units",
    "uncertainty_columns",
]

#: How far down a file the header row is looked for (rows above it are titles).
HEADER_SEARCH_ROWS = 20

#: Columns the reader or the grading reads as text, besides the required and measured ones
#: (molid.io.cells reads sample, expected and wet; molid.teaching.grading student and section).
#: (``contaminant``, ``min_purity`` and ``max_contaminant`` are read by molid.io.specifications.)
_TEXT_COLUMNS = ("sample", "expected", "wet", "student", "section", VESSEL_COLUMN, "contaminant",
                 "min_purity", "max_contaminant")

_SEPARATORS = re.compile(r"[\s\-._]+")
_BRACKETS = re.compile(r"^(?P<name>[^\[\]]*?)\s*\[(?P<unit>[^\[\]]*)\]$")
_PARENTHESES = re.compile(r"^(?P<name>[^()\[\]]*?)\s*\((?P<unit>[^()\[\]]*)\)$")
_COMMA = re.compile(r"^(?P<name>[^,()\[\]]*?)\s*,\s*(?P<unit>[^,()\[\]]+)$")
# u(T) for a standard uncertainty, as the GUM writes it; lower-case u only: U(T) is an expanded one.
_UNCERTAINTY = re.compile(r"^u\s*\((?P<name>[^()\[\]]+)\)\s*(?P<rest>.*)$")
# pandas names a second column with the same header 'name.1', and a blank header 'Unnamed: 3'.
_REPEATED = re.compile(r"^(?P<base>.+)\.\d+$")
_UNNAMED = re.compile(r"^Unnamed: \d+$")


def normalise_name(text) -> str:
    """Spell a column name for matching: case folded, spaces, hyphens, dots and underscores as ``_``.

    Parameters
    ----------
    text : str
        A name as written, without its unit.

    Returns
    -------
    str
        E.g. ``"rel_humidity"`` for ``"Rel. humidity"``.

    Examples
    --------
    >>> normalise_name("Rel. humidity")
    'rel_humidity'
    >>> normalise_name(" Mass-Tare ")
    'mass_tare'
    """
    return _SEPARATORS.sub("_", str(text).strip().casefold()).strip("_")


@dataclass(frozen=True)
class HeaderVocabulary:
    """The header synonyms of ``molid/data/header_synonyms.toml``.

    Attributes
    ----------
    synonyms : dict of str
        Each synonym, normalised (see :func:`normalise_name`), to its column's name;
        every column's own name included.
    meanings : dict of str
        Each column's meaning in words, in the file's order.
    listed : dict of tuple
        Each column's synonyms as the file spells them, for the documentation.
    free_text : frozenset of str
        Normalised names of free-text columns (operator, date, notes): kept, never noted as unused.
    """

    synonyms: dict
    meanings: dict
    listed: dict
    free_text: frozenset


@functools.lru_cache(maxsize=1)
def header_vocabulary() -> HeaderVocabulary:
    """Load the header synonyms once.

    Returns
    -------
    HeaderVocabulary
        The synonyms, meanings and free-text names.

    Raises
    ------
    ValueError
        When a synonym is given to two columns (a broken data file, not a user's error).
    """
    text = resources.files("molid").joinpath("data/header_synonyms.toml").read_text("utf-8")
    document = tomllib.loads(text)
    synonyms: dict[str, str] = {}
    meanings, listed = {}, {}
    for column, entry in document["columns"].items():
        meanings[column] = entry.get("meaning", "")
        listed[column] = tuple(entry.get("synonyms", ()))
        for word in (column, *listed[column]):
            key = normalise_name(word)
            if synonyms.setdefault(key, column) != column:
                raise ValueError(f"header_synonyms.toml: '{word}' is a synonym of both "
                                 f"'{synonyms[key]}' and '{column}'")
    free_text = frozenset(normalise_name(name) for name in document["free_text"]["names"])
    return HeaderVocabulary(synonyms=synonyms, meanings=meanings, listed=listed, free_text=free_text)


@dataclass(frozen=True)
class Header:
    """A column's header as the user wrote it and as the reader understands it.

    Attributes
    ----------
    original : str
        The header exactly as written, to name the column in messages.
    name : str
        The column's name: normalised (see :func:`normalise_name`), synonyms resolved.
    unit : str or None
        The unit written after the name (in brackets, in parentheses or after a comma),
        None when there is none.
    """

    original: str
    name: str
    unit: str | None


@dataclass(frozen=True)
class UncertaintyColumn:
    """A ``u_<name>`` column that gives standard uncertainties of measured inputs.

    Attributes
    ----------
    header : Header
        The column's header.
    inputs : tuple of str
        The inputs it qualifies: every balance reading for ``u_mass``, else one.
    unit : ColumnUnit
        The unit of its cells: the header's own, else that of the input's column.
    """

    header: Header
    inputs: tuple
    unit: ColumnUnit

    @property
    def general(self) -> bool:
        """True for ``u_mass``, which yields to a column naming one reading (``u_mass_tare``)."""
        return self.header.name == "u_mass"


def _column_name(name: str) -> str:
    """Return the column a name means: its synonym's column; for a ``u_`` name, that of the rest."""
    synonyms = header_vocabulary().synonyms
    key = normalise_name(name)
    if key.startswith("u_") and len(key) > 2:
        return "u_" + synonyms.get(key[2:], key[2:])
    return synonyms.get(key, key)


def split_header(text: str, original: str | None = None) -> tuple[str, str | None]:
    """Split ``name [unit]``, ``name (unit)`` or ``name, unit``; other text is all name.

    Parameters
    ----------
    text : str
        A header, or its part after ``u(...)``.
    original : str, optional
        The whole header as written, for the message.

    Returns
    -------
    name : str
        The name as written.
    unit : str or None
        The unit as written, None when there is none.

    Raises
    ------
    InputError
        For stray square brackets.

    Examples
    --------
    >>> split_header("Pressure, Torr")
    ('Pressure', 'Torr')
    """
    original = text if original is None else original
    text = text.strip()
    if "[" in text or "]" in text:
        match = _BRACKETS.match(text)
        if not match:
            raise InputError(
                f"header '{original}': cannot read it; write a name, optionally followed by a unit "
                "in square brackets, e.g. 'pressure [mmHg]'"
            )
        return match["name"], match["unit"].strip()
    for pattern in (_PARENTHESES, _COMMA):
        match = pattern.match(text)
        if match:
            return match["name"], match["unit"].strip()
    return text, None


def parse_header(text: str) -> Header:
    """Split a header into its column name and unit.

    Parameters
    ----------
    text : str
        The header as written, e.g. ``"Pressure [mmHg]"``, ``"Temp (°C)"`` or ``"Pressure, Torr"``.

    Returns
    -------
    Header
        The name normalised, synonyms resolved (``"pressure"``), and the unit as written
        (``"mmHg"``).

    Raises
    ------
    InputError
        When the header cannot be read (stray square brackets).

    Examples
    --------
    >>> parse_header("Temp (°C)")
    Header(original='Temp (°C)', name='temperature', unit='°C')
    >>> parse_header("u(T) [K]").name
    'u_temperature'
    """
    stripped = str(text).strip()
    prefix = ""
    match = _UNCERTAINTY.match(stripped)
    if match:
        prefix, stripped = "u_", f"{match['name']} {match['rest']}".strip()
    name, unit = split_header(stripped, str(text))
    if prefix and normalise_name(name).startswith("u_"):
        prefix = ""
    return Header(original=str(text), name=_column_name(prefix + name.strip()), unit=unit)


def is_read(name: str) -> bool:
    """Tell whether molid reads a column of this name (an input, a text column, a ``u_`` column).

    Parameters
    ----------
    name : str
        A column name as :func:`parse_header` gives it.

    Returns
    -------
    bool
        False for free text (operator, notes) and for names molid does not know.
    """
    return (name in REQUIRED_COLUMNS or name in MEASURED_COLUMNS or name in _TEXT_COLUMNS
            or name.startswith("u_"))


def _names(cells) -> set:
    """Column names of a row of cells; a cell that cannot be a header names nothing."""
    names = set()
    for cell in cells:
        try:
            names.add(parse_header(cell).name)
        except InputError:
            continue
    return names


def is_header_row(cells) -> bool:
    """Tell whether a row's cells name every column a run file needs (a vessel stands in for the volume).

    Parameters
    ----------
    cells : iterable of str
        One row of a sheet, as text (blank cells as "" or None).

    Returns
    -------
    bool
        True when the row names all of :data:`molid.io.columns.REQUIRED_COLUMNS`.
    """
    names = _names(str(cell) for cell in cells if cell is not None and str(cell).strip())
    return all(name in names or (name == "volume" and VESSEL_COLUMN in names)
               for name in REQUIRED_COLUMNS)


def resolve_headers(columns, source: str, notes: list | None = None) -> dict[str, Header]:
    """Parse a file's headers and make sure every required column is there, once.

    Parameters
    ----------
    columns : iterable of str
        The headers as written, in file order.
    source : str
        The file's name, for messages.
    notes : list of str, optional
        File-level remarks; when given, one note names the columns molid does not read
        (they are kept in the outputs as typed).

    Returns
    -------
    dict of Header
        Each column's header by its name, in file order (the first, for two free-text
        or unknown columns of the same name).

    Raises
    ------
    InputError
        When two headers mean the same column molid reads, or a required column is missing.
    """
    headers = [parse_header(column) for column in columns]
    originals = {header.original for header in headers}
    by_name: dict[str, Header] = {}
    for header in headers:
        repeated = _REPEATED.match(header.original)
        if repeated and repeated["base"] in originals and is_read(parse_header(repeated["base"]).name):
            # pandas renamed the second of two identical headers; name it as the user wrote it
            header = Header(repeated["base"], parse_header(repeated["base"]).name, header.unit)
        if header.name in by_name:
            if not is_read(header.name):  # free text or unknown: both kept as typed
                continue
            raise InputError(
                f"{source}: columns '{by_name[header.name].original}' and '{header.original}' "
                f"both mean '{header.name}'; keep one"
            )
        by_name[header.name] = header
    # A vessel column names calibrated vessels whose volume the register gives.
    missing = [name for name in REQUIRED_COLUMNS if name not in by_name
               and not (name == "volume" and VESSEL_COLUMN in by_name)]
    if missing:
        found = ", ".join(f"'{h.original}'" for h in headers) or "none"
        raise InputError(
            f"{source}: required column(s) missing: {', '.join(missing)}. "
            f"Required: {', '.join(REQUIRED_COLUMNS)}; found: {found}"
        )
    if notes is not None:
        _note_unused(headers, notes)
    return by_name


def _note_unused(headers, notes: list) -> None:
    """Add one note naming the headers molid reads nothing from (u_ columns have their own note)."""
    free_text = header_vocabulary().free_text
    unused = [header.original for header in headers
              if not is_read(header.name) and header.name not in free_text
              and header.original.strip() and not _UNNAMED.match(header.original)]
    if not unused:
        return
    listed = ", ".join(f"'{original}'" for original in unused)
    notes.append(
        f"{'column' if len(unused) == 1 else 'columns'} {listed} "
        f"{'was' if len(unused) == 1 else 'were'} not used: no input or column molid reads goes by "
        f"{'that name' if len(unused) == 1 else 'those names'} (kept in the outputs as typed; "
        "the headers molid reads are listed in docs/input.md)"
    )


def measured_units(by_name: dict[str, Header], source: str) -> dict[str, ColumnUnit]:
    """Resolve the unit of each measured column: its header's, else the kind's default.

    Parameters
    ----------
    by_name : dict of Header
        The file's headers by column name (see :func:`resolve_headers`).
    source : str
        The file's name, for messages.

    Returns
    -------
    dict of ColumnUnit
        One unit for every measured column, present in the file or not.

    Raises
    ------
    InputError
        When a header names a unit pint does not know or of the wrong kind.
    """
    units: dict[str, ColumnUnit] = {}
    for name in MEASURED_COLUMNS:
        header = by_name.get(name)
        try:
            written = header.unit if header else None
            units[name] = resolve_unit(COLUMN_KINDS[name], written or COLUMN_DEFAULT_UNITS.get(name))
        except UnitProblem as problem:
            raise InputError(f"{source}: column '{header.original}': {problem}") from None
    return units


def uncertainty_columns(by_name: dict[str, Header], units: dict[str, ColumnUnit], source: str,
                        notes: list) -> list[UncertaintyColumn]:
    """Find the file's ``u_<name>`` columns that qualify a measured input, with their units.

    Parameters
    ----------
    by_name : dict of Header
        The file's headers by column name (see :func:`resolve_headers`).
    units : dict of ColumnUnit
        The unit of each measured column (see :func:`measured_units`): a ``u_``
        column without a unit of its own is in the unit of the column it qualifies.
    source : str
        The file's name, for messages.
    notes : list of str
        File-level remarks; a note is added for each ``u_`` column that qualifies
        no measured input (it is kept in the table but not used).

    Returns
    -------
    list of UncertaintyColumn
        In file order.

    Raises
    ------
    InputError
        When a ``u_`` header names a unit pint does not know or of the wrong kind.
    """
    columns = []
    for header in by_name.values():
        if not header.name.startswith("u_"):
            continue
        target = header.name[2:]
        inputs = ("mass_tare", "mass_filled", "source_before", "source_after") if target == "mass" \
            else (target,)
        if not all(name in UNCERTAIN_INPUTS for name in inputs):
            notes.append(
                f"column '{header.original}' is not an uncertainty of a measured input and was "
                f"kept but not used; uncertainty columns: u_{', u_'.join(UNCERTAIN_INPUTS)}, u_mass"
            )
            continue
        try:
            unit = (resolve_unit(COLUMN_KINDS[inputs[0]], header.unit) if header.unit
                    else units[inputs[0]])
        except UnitProblem as problem:
            raise InputError(f"{source}: column '{header.original}': {problem}") from None
        columns.append(UncertaintyColumn(header=header, inputs=inputs, unit=unit))
    return columns
