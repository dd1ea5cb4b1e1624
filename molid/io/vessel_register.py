"""The vessel register: a CSV of calibrated vessels, read, written and looked up by id.

Columns, in this order (the register's contract, see docs/vessels.md):
``vessel`` (the id), ``volume [mL]`` (at 20 °C), ``u_volume [mL]`` (standard
uncertainty), ``expansion [1/K]`` (cubic expansion coefficient of the material),
``calibrated`` (date of the latest fill) and ``source_rows`` (the rows of the
fill file the volume comes from, e.g. ``2;3;4``).
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from molid.io.cells import parse_numbers
from molid.io.headers import parse_header
from molid.io.problems import InputError
from molid.io.safe_files import neutralise_cell
from molid.io.units import UnitProblem, resolve_unit

__all__ = ["REGISTER_COLUMNS", "VesselRegister", "read_register", "register_csv"]

#: The register's columns, exactly as written.
REGISTER_COLUMNS = ("vessel", "volume [mL]", "u_volume [mL]", "expansion [1/K]", "calibrated",
                    "source_rows")
_EXPANSION_UNITS = {"1/k", "/k", "k^-1", "k-1", "1/degc", "1/°c", "/°c", "1/c"}


@dataclass(frozen=True)
class VesselRegister:
    """Calibrated vessels: volume at 20 °C, its standard uncertainty and the material's expansion.

    Attributes
    ----------
    ids : numpy.ndarray of object
        Vessel ids.
    volume, u_volume : numpy.ndarray
        Volume at 20 °C and its standard uncertainty [m³].
    expansion : numpy.ndarray
        Cubic expansion coefficient [1/K].
    calibrated : numpy.ndarray of object
        Calibration date of each vessel, as written.
    source : str
        The register file's name, for messages.
    """

    ids: np.ndarray
    volume: np.ndarray
    u_volume: np.ndarray
    expansion: np.ndarray
    calibrated: np.ndarray
    source: str

    def positions(self, names) -> np.ndarray:
        """Return each id's row in the register, -1 where the register has no such vessel.

        Parameters
        ----------
        names : array_like of object
            Vessel ids (None where blank).

        Returns
        -------
        numpy.ndarray of int
            One position per id.
        """
        index = pd.Index(self.ids)
        keys = pd.Series(np.asarray(names, dtype=object), dtype=object).fillna("")
        return index.get_indexer(keys.astype(str).str.strip())


def _ids(cells: pd.Series) -> np.ndarray:
    """Vessel ids as written, stripped; a quote a spreadsheet guard added is taken off."""
    text = cells.astype(str).str.strip()
    guarded = text.str.match(r"^'[=+\-@]")
    return np.where(guarded, text.str[1:], text).astype(object)


def _column(raw: pd.DataFrame, name: str, source: str) -> tuple[pd.Series, str | None]:
    """Return the cells of one register column and the unit its header names."""
    for header in raw.columns:
        parsed = parse_header(header)
        if parsed.name == name:
            return raw[header], parsed.unit
    raise InputError(f"{source}: not a vessel register: column '{name}' is missing; a register "
                     f"has the columns {', '.join(REGISTER_COLUMNS)} (write one with molid calibrate)")


def _numbers(raw: pd.DataFrame, name: str, scale: float, source: str) -> np.ndarray:
    """Read a numeric register column in SI; a bad cell stops the register (a file molid wrote)."""
    cells, _ = _column(raw, name, source)
    values, blank, not_number = parse_numbers(cells.astype(str), decimal_comma=False)
    bad = blank | not_number | ~np.isfinite(values) | (values < 0) | ((values <= 0) & (name == "volume"))
    if bad.any():
        position = int(np.flatnonzero(bad)[0])
        row = int(raw.index[position]) + 2
        raise InputError(f"{source}: row {row}, column '{name}': '{cells.iloc[position]}' is not a "
                         f"usable number; expected a number >= 0 (> 0 for the volume)")
    return values * scale


def read_register(path) -> VesselRegister:
    """Read a vessel register written by ``molid calibrate`` (or by hand in its format).

    Parameters
    ----------
    path : str or pathlib.Path
        The register CSV.

    Returns
    -------
    VesselRegister
        In SI units.

    Raises
    ------
    InputError
        For a file that cannot be read, a missing column, an unknown unit, a bad
        number or a vessel listed twice, naming the row and column.
    """
    source = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise InputError(f"{source}: no such vessel register") from None
    except (OSError, UnicodeDecodeError) as error:
        raise InputError(f"{source}: cannot read the vessel register ({error})") from None
    try:
        raw = pd.read_csv(io.StringIO(text), dtype=str, keep_default_na=False, skipinitialspace=True)
    except (pd.errors.ParserError, pd.errors.EmptyDataError, ValueError) as error:
        raise InputError(f"{source}: cannot read the vessel register as CSV ({error})") from None
    raw = raw.loc[~(raw.apply(lambda column: column.str.strip()) == "").all(axis=1)]
    ids = _ids(_column(raw, "vessel", source)[0])
    _, volume_unit = _column(raw, "volume", source)
    _, expansion_unit = _column(raw, "expansion", source)
    try:
        scale = resolve_unit("volume", volume_unit).scale
    except UnitProblem as problem:
        raise InputError(f"{source}: column 'volume': {problem}") from None
    if expansion_unit is not None and expansion_unit.strip().lower().replace(" ", "") not in \
            _EXPANSION_UNITS:
        raise InputError(f"{source}: column 'expansion': unit '{expansion_unit}' is not accepted; "
                         "give the cubic expansion coefficient in 1/K")
    duplicated = pd.Series(ids).duplicated()
    empty = ids == ""
    if duplicated.any() or empty.any():
        position = int(np.flatnonzero(duplicated.to_numpy() | empty)[0])
        raise InputError(f"{source}: row {int(raw.index[position]) + 2}, column 'vessel': "
                         + ("the vessel id is empty" if empty[position] else
                            f"vessel '{ids[position]}' is listed twice") + "; list each vessel once")
    return VesselRegister(
        ids=ids, volume=_numbers(raw, "volume", scale, source),
        u_volume=_numbers(raw, "u_volume", scale, source),
        expansion=_numbers(raw, "expansion", 1.0, source),
        calibrated=_column(raw, "calibrated", source)[0].astype(str).str.strip().to_numpy(dtype=object),
        source=source,
    )


def register_csv(vessels, volume, u_volume, expansion, calibrated, source_rows) -> str:
    """Write the register's CSV text: one row per vessel, the columns of `REGISTER_COLUMNS`.

    Parameters
    ----------
    vessels : sequence of str
        Vessel ids.
    volume, u_volume : array_like
        Volume at 20 °C and its standard uncertainty [m³].
    expansion : array_like
        Cubic expansion coefficient [1/K].
    calibrated : sequence of str
        Calibration dates (ISO 8601, YYYY-MM-DD).
    source_rows : sequence of str
        The fill file's rows of each vessel, joined by ``;``.

    Returns
    -------
    str
        CSV text; volumes in mL to 1e-6 mL, uncertainties to three significant
        digits, text cells a spreadsheet would run as formulas neutralised.
    """
    stream = io.StringIO()
    writer = csv.writer(stream, lineterminator="\n")
    writer.writerow(REGISTER_COLUMNS)
    for row in zip(vessels, volume, u_volume, expansion, calibrated, source_rows, strict=True):
        name, value, u, gamma, date, rows = row
        writer.writerow([neutralise_cell(str(name)), f"{value * 1e6:.6f}", f"{u * 1e6:.3g}",
                         f"{gamma:.3g}", date, rows])
    return stream.getvalue()
