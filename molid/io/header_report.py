"""How molid understood a run file's headers: ``molid columns FILE``.

For each header as written: the column it means (through which synonym), the unit
written and its conversion to SI, and where a default standard uncertainty would
come from (a ``u_`` column, a rule of the instrument profile, or nowhere). Headers
molid reads nothing from are listed as unused; they stay in the outputs as typed.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from molid.io.headers import (
    header_vocabulary,
    is_read,
    measured_units,
    normalise_name,
    parse_header,
    resolve_headers,
    split_header,
    uncertainty_columns,
)
from molid.io.profiles import InstrumentProfile, load_profile
from molid.io.reading import read_raw
from molid.io.units import SI_UNITS, ColumnUnit
from molid.methods.inputs import INPUT_LABELS

__all__ = ["ColumnsReport", "describe_columns", "columns_text"]

_SI_SYMBOLS = {"m**3": "m³", "dimensionless": "(a fraction)"}


@dataclass
class ColumnsReport:
    """How a file's headers were understood.

    Attributes
    ----------
    source : str
        The file's name.
    sheet : str or None
        The workbook sheet read (None for text files).
    header_row : int
        The header's spreadsheet row.
    rows : list of dict
        One per header, in file order: ``header`` (as written), ``column`` (its meaning,
        "" when unused), ``matched`` (the synonym, or how it matched), ``role``, ``unit``
        (as written, or the default), ``si`` (the conversion), ``uncertainty`` (where a
        default uncertainty would come from).
    unused : list of str
        The headers molid reads nothing from, as written.
    notes : list of str
        The reader's notes on the file (title rows, the sheet chosen, unused columns).
    """

    source: str
    sheet: str | None
    header_row: int
    rows: list = field(default_factory=list)
    unused: list = field(default_factory=list)
    notes: list = field(default_factory=list)

    def to_frame(self):
        """Return the rows as a pandas DataFrame, one row per header."""
        import pandas as pd

        return pd.DataFrame(self.rows, columns=["header", "column", "matched", "role", "unit", "si",
                                                "uncertainty"])


def _conversion(unit: ColumnUnit) -> str:
    """Write a unit's map to SI in words: '1 Torr = 133.322 Pa', 'x °C = (x + 273.15) K'."""
    si = SI_UNITS[unit.kind]
    symbol = _SI_SYMBOLS.get(si, si)
    if unit.offset:
        scale = "x" if unit.scale == 1 else f"{unit.scale:.6g} x"
        return f"x {unit.text} = ({scale} + {unit.offset:.6g}) {symbol}"
    return f"1 {unit.text} = {unit.scale:.6g} {symbol}"


def _matched(header) -> str:
    """How a header matched its column: by its name, or through a synonym of the table."""
    if header.name.startswith("u_"):
        return "u_ column"
    written, _ = split_header(header.original)
    return "name" if normalise_name(written) == header.name else "synonym"


def _uncertainty_source(name: str, stated: dict, profile: InstrumentProfile) -> str:
    """Where the default uncertainty of a measured input would come from."""
    if name in stated:
        return f"column '{stated[name]}' (the profile's rule where its cell is blank)"
    rule = profile.rule(name)
    if not (rule.absolute or rule.relative):
        return "none"
    table = name if name in profile.rules else "mass"
    return f"profile ({profile.source}) [{table}]: {rule.description or 'set'}"


@dataclass
class _FileColumns:
    """What describing one header needs to know of the whole file."""

    units: dict          # the unit of each measured column present
    stated: dict         # measured input -> the u_ header that gives its uncertainty
    stated_units: dict   # u_ column name -> its unit and the inputs it qualifies
    profile: InstrumentProfile


def _row(header, found: _FileColumns) -> dict:
    """Describe one header (see :class:`ColumnsReport` for the keys)."""
    name = header.name
    row = {"header": header.original, "column": name, "matched": _matched(header), "role": "",
           "unit": "", "si": "", "uncertainty": ""}
    if name in found.units:
        unit = found.units[name]
        row.update(role=f"input: {INPUT_LABELS.get(name, name.replace('_', ' '))}",
                   unit=unit.text if header.unit else f"{unit.text} (default)", si=_conversion(unit),
                   uncertainty=_uncertainty_source(name, found.stated, found.profile))
    elif name in found.stated_units:
        unit, inputs = found.stated_units[name]
        row.update(role=f"standard uncertainty of {' and '.join(inputs)}", unit=unit.text,
                   si=_conversion(unit))
    elif is_read(name) and not name.startswith("u_"):
        row["role"] = header_vocabulary().meanings.get(name, "text")
    elif name in header_vocabulary().free_text:
        row.update(column="", matched="", role="free text, kept as typed")
    else:
        row.update(column="", matched="", role="not used, kept as typed")
    return row


def describe_columns(source, *, profile: InstrumentProfile | str | Path | None = None,
                     sheet=None) -> ColumnsReport:
    """Say how each header of a run file is understood, without analysing its rows.

    Parameters
    ----------
    source : str, pathlib.Path, file-like or pandas.DataFrame
        The run file (see :func:`molid.io.reading.read_raw`).
    profile : InstrumentProfile or path, optional
        The instrument profile whose rules give default uncertainties; the built-in one when None.
    sheet : str or int, optional
        For a workbook: the sheet's name or position counting from 1.

    Returns
    -------
    ColumnsReport
        One row per header, the unused headers and the reader's notes.

    Raises
    ------
    InputError
        When the file cannot be read: a required column missing, two headers meaning one
        column, a unit molid does not know.
    """
    if profile is None or isinstance(profile, (str, Path)):
        profile = load_profile(profile)
    raw, _, notes, name = read_raw(source, sheet=sheet, find_sheet=True, keep_bad_lines=True)
    by_name = resolve_headers(raw.columns, name, notes)
    units = measured_units(by_name, name)
    found = _FileColumns(units={key: unit for key, unit in units.items() if key in by_name},
                         stated={}, stated_units={}, profile=profile)
    for column in sorted(uncertainty_columns(by_name, units, name, notes),
                         key=lambda each: not each.general):  # u_mass yields to u_mass_tare
        found.stated_units[column.header.name] = (column.unit, column.inputs)
        found.stated.update({each: column.header.original for each in column.inputs})
    rows = [_row(parse_header(original), found) for original in raw.columns]
    unused = [row["header"] for row in rows if row["role"].startswith("not used")]
    return ColumnsReport(source=name, sheet=raw.attrs.get("sheet"),
                         header_row=int(raw.attrs.get("header_row", 1)), rows=rows, unused=unused,
                         notes=notes)


def columns_text(report: ColumnsReport) -> str:
    """Format a :class:`ColumnsReport` for the terminal.

    Parameters
    ----------
    report : ColumnsReport
        From :func:`describe_columns`.

    Returns
    -------
    str
        A heading, one block per header, then the unused headers and the notes.
    """
    where = f"{report.source}" + (f", sheet '{report.sheet}'" if report.sheet else "")
    lines = [f"{where}: header in row {report.header_row}, data from row {report.header_row + 1}", ""]
    for row in report.rows:
        meaning = row["column"] or "-"
        via = f" (by {row['matched']})" if row["matched"] == "synonym" else ""
        lines.append(f"'{row['header']}' -> {meaning}{via}: {row['role']}")
        if row["unit"]:
            lines.append(f"    unit {row['unit']}; {row['si']}")
        if row["uncertainty"]:
            lines.append(f"    default uncertainty: {row['uncertainty']}")
    lines.append("")
    lines.append("Unused columns: " + (", ".join(f"'{header}'" for header in report.unused)
                                       if report.unused else "none"))
    if report.notes:
        lines += ["", "Notes"] + [f"- {note}" for note in report.notes]
    return "\n".join(lines) + "\n"
