"""Header resolution: from a header as written to a column name, its unit and its role.

A header is a name, optionally followed by a unit in square brackets
(``pressure [mmHg]``). Names are matched without regard to case, spaces or
hyphens, and a few common aliases (``rh``, ``run_id``) are accepted. A header
``u_<name>`` gives standard uncertainties of the input ``<name>``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from molid.io.columns import MEASURED_COLUMNS, REQUIRED_COLUMNS, UNCERTAIN_INPUTS, VESSEL_COLUMN
from molid.io.problems import InputError
from molid.io.units import ColumnUnit, UnitProblem, resolve_unit
from molid.methods.inputs import COLUMN_DEFAULT_UNITS, COLUMN_KINDS

__all__ = [
    "HEADER_ALIASES",
    "Header",
    "UncertaintyColumn",
    "parse_header",
    "resolve_headers",
    "measured_units",
    "uncertainty_columns",
]

#: Other names people give a column, and the name the reader knows it by.
HEADER_ALIASES = {"run_id": "run", "id": "run", "rh": "humidity", "relative_humidity": "humidity"}

_HEADER_PATTERN = re.compile(r"^\s*(?P<name>[^\[\]]*?)\s*(?:\[(?P<unit>[^\]]*)\])?\s*$")


@dataclass(frozen=True)
class Header:
    """A column's header as the user wrote it and as the reader understands it.

    Attributes
    ----------
    original : str
        The header exactly as written, to name the column in messages.
    name : str
        The column's name: lower case, words joined by ``_``, aliases resolved.
    unit : str or None
        The unit written in square brackets, None when there are no brackets.
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


def parse_header(text: str) -> Header:
    """Split a header into its column name and unit.

    Parameters
    ----------
    text : str
        The header as written, e.g. ``"Pressure [mmHg]"``.

    Returns
    -------
    Header
        The name normalised (``"pressure"``) and the unit as written (``"mmHg"``).

    Raises
    ------
    InputError
        When the header cannot be read (stray square brackets).
    """
    match = _HEADER_PATTERN.match(str(text))
    if not match:
        raise InputError(
            f"header '{text}': cannot read it; write a name, optionally followed by a unit "
            "in square brackets, e.g. 'pressure [mmHg]'"
        )
    name = re.sub(r"[\s\-]+", "_", match["name"].strip().lower())
    name = HEADER_ALIASES.get(name, name)
    unit = match["unit"].strip() if match["unit"] is not None else None
    return Header(original=str(text), name=name, unit=unit)


def resolve_headers(columns, source: str) -> dict[str, Header]:
    """Parse a file's headers and make sure every required column is there, once.

    Parameters
    ----------
    columns : iterable of str
        The headers as written, in file order.
    source : str
        The file's name, for messages.

    Returns
    -------
    dict of Header
        Each column's header by its name, in file order.

    Raises
    ------
    InputError
        When two headers mean the same column or a required column is missing.
    """
    headers = [parse_header(column) for column in columns]
    by_name: dict[str, Header] = {}
    for header in headers:
        if header.name in by_name:
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
    return by_name


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
