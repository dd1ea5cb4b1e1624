"""Reading and validating run files: CSV or .xlsx in, SI arrays and per-row problems out.

The reader keeps every cell the user gave (as text), converts the measured
columns to SI once, and records per row the errors that stop that row and the
warnings that do not. A bad row never stops the others; a problem with the file
as a whole (unreadable, no data rows, a required column missing, a unit pint does
not know) raises :class:`InputError`.

Rows are numbered as a spreadsheet numbers them: the header is row 1 and the
first data row is row 2, unless title rows stand above the header (see
:mod:`molid.io.header_row`); then every row keeps its own spreadsheet number.
"""

from __future__ import annotations

import io
import re
import sys
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from molid.io.cells import (
    blank_rows,
    column_text,
    read_measured,
    read_stated_uncertainties,
    read_wet,
    text_columns,
)
from molid.io.checks import (
    check_method_columns,
    check_method_inputs,
    check_methods,
    check_ranges,
    check_run_ids,
    check_unused_inputs,
    check_wet,
    inputs_in_use,
)
from molid.io.defaults import fill_defaults
from molid.io.delimited import count_rows, find_layout, frames, raise_first_error, text_head
from molid.io.encodings import blocks_of, detect_encoding
from molid.io.header_row import choose_sheet, frame_below_header, header_index, sheet_note
from molid.io.headers import (
    measured_units,
    parse_header,
    resolve_headers,
    uncertainty_columns,
)
from molid.io.problems import InputError, RowProblems, read_file_bytes
from molid.io.profiles import InstrumentProfile, load_profile
from molid.io.vessel_column import load_vessels, look_up_vessels, share_vessel_volumes, vessel_rows
from molid.io.workbooks import Workbook, looks_like_workbook

__all__ = [
    "RunIds",
    "RunTable",
    "first_uses",
    "read_raw",
    "parse_runs",
    "read_runs",
]


class RunIds:
    """The run ids met so far in one file, to find duplicates across chunks.

    Each id is kept as a 128-bit hash (two independent 64-bit keys of pandas'
    vectorised hashing) with the row that first used it: 24 bytes a run, so a
    file of a million runs needs 24 MB whatever the length of its ids. Two
    different ids share both hashes with a probability of about n²/2¹²⁹.
    """

    _KEYS = ("molid-run-ids-01", "molid-run-ids-02")

    def __init__(self):
        self.first = np.zeros(0, dtype=np.uint64)
        self.second = np.zeros(0, dtype=np.uint64)
        self.rows = np.zeros(0, dtype=np.int64)

    def check(self, run_ids, row_numbers) -> np.ndarray:
        """Record a chunk's ids; return, per id, the row that used it first (0 where new).

        Parameters
        ----------
        run_ids : numpy.ndarray of object
            Run ids of the chunk (None where blank: never a duplicate).
        row_numbers : numpy.ndarray of int
            Their spreadsheet rows.

        Returns
        -------
        numpy.ndarray of int
            The earlier row for duplicates, 0 for ids met for the first time.
        """
        run_ids = np.asarray(run_ids, dtype=object)
        rows = np.asarray(row_numbers, dtype=np.int64)
        result = np.zeros(len(run_ids), dtype=np.int64)
        present = pd.notna(pd.Series(run_ids, dtype=object)).to_numpy()
        if not present.any():
            return result
        ids = run_ids[present].astype(str)
        first = pd.util.hash_array(ids, hash_key=self._KEYS[0])
        second = pd.util.hash_array(ids, hash_key=self._KEYS[1])
        present_rows = rows[present]
        # Earlier chunks.
        position = np.searchsorted(self.first, first)
        inside = position < len(self.first)
        clipped = np.where(inside, position, 0)
        earlier = inside & (self.first[clipped] == first) & (self.second[clipped] == second) \
            if len(self.first) else np.zeros(len(first), dtype=bool)
        found = np.where(earlier, self.rows[clipped] if len(self.rows) else 0, 0)
        # Within this chunk: later uses point at the first.
        codes, _ = pd.factorize(pd.Series(ids, dtype=object))
        first_in_chunk = pd.Series(present_rows).groupby(codes).transform("first").to_numpy()
        repeated = first_in_chunk != present_rows
        found = np.where(~earlier & repeated, first_in_chunk, found)
        result[present] = found
        new = ~earlier & ~repeated
        if new.any():
            self.first = np.concatenate([self.first, first[new]])
            self.second = np.concatenate([self.second, second[new]])
            self.rows = np.concatenate([self.rows, present_rows[new]])
            order = np.argsort(self.first, kind="stable")
            self.first, self.second, self.rows = (self.first[order], self.second[order],
                                                  self.rows[order])
        return result


@dataclass
class RunTable:
    """Validated runs: the user's cells, SI values, uncertainties and per-row problems.

    Attributes
    ----------
    raw : pandas.DataFrame
        Every cell as the user wrote it (text), with the user's header names.
    row_numbers : numpy.ndarray
        Spreadsheet row number of each run (header = row 1).
    text : pandas.DataFrame
        Normalised text columns: run, sample, method, expected (None where blank).
    wet : numpy.ndarray
        True where the gas was saturated with water vapour.
    values, uncertainties : dict of numpy.ndarray
        SI values and standard uncertainties of each input, NaN where unusable.
    shared_uncertainties : dict of numpy.ndarray
        The part of each uncertainty common to every run with the same instrument
        (a calibration error, from the profile), which averaging does not reduce.
    given : dict of numpy.ndarray
        For air_temperature and air_pressure: True where the row gives its own value
        (elsewhere the gas's temperature or pressure is used).
    errors, warnings : list of list of str
        Per-row problems; a row with errors is not analysed.
    notes : list of str
        Remarks about the file as a whole (defaults applied, encoding).
    units : dict of ColumnUnit
        The unit each measured column was read in.
    """

    raw: pd.DataFrame
    row_numbers: np.ndarray
    text: pd.DataFrame
    wet: np.ndarray
    values: dict
    uncertainties: dict
    shared_uncertainties: dict
    given: dict
    errors: list
    warnings: list
    notes: list = field(default_factory=list)
    units: dict = field(default_factory=dict)
    source: str = ""

    def __len__(self) -> int:
        return len(self.row_numbers)

    @property
    def ok(self) -> np.ndarray:
        """True for rows without errors."""
        return np.fromiter((not problems for problems in self.errors), dtype=bool,
                           count=len(self.errors))


def read_raw(source, *, sheet=None, find_sheet: bool = False,
             keep_bad_lines: bool = False) -> tuple[pd.DataFrame, bool, list, str]:
    """Read a run file into a table of text cells, from its header row down.

    Parameters
    ----------
    source : str, pathlib.Path, file-like or pandas.DataFrame
        A path to a .csv/.txt/.xlsx file, ``"-"`` for standard input, an open
        binary or text file, or a DataFrame already in memory (one that read_raw
        returned keeps its header row, notes and name).
    sheet : str or int, optional
        For a workbook: the sheet's name, or its position counting from 1; by default the first.
    find_sheet : bool
        For a run file: when no sheet is named and the first has no header row naming the
        required columns, read the only other sheet that has one (with a note). Other
        files (answer keys, water fills) keep to the first sheet.
    keep_bad_lines : bool
        Keep the lines of a text file that do not fit its header as rows of empty cells,
        their problems in ``attrs["line_problems"]`` (see :func:`molid.io.delimited.frames`),
        for a caller that reports them row by row (:func:`parse_runs` does). By default the
        first such line stops the file with a message naming its row.

    Returns
    -------
    raw : pandas.DataFrame
        All cells as strings, blank cells as "". ``attrs["header_row"]`` is the
        header's spreadsheet row (rows above it were titles).
    decimal_comma : bool
        True when numbers may use a decimal comma (semicolon- or tab-separated text).
    notes : list of str
        Remarks on how the file was read.
    name : str
        A name for the source, for messages.

    Raises
    ------
    InputError
        When the file cannot be read or holds no header, or the sheet asked for is not there.
    """
    notes: list = []
    if isinstance(source, pd.DataFrame):
        raw = source.copy()
        raw.columns = [str(column) for column in raw.columns]
        raw = raw.astype(object).where(raw.notna(), "").astype(str)
        attrs = source.attrs
        raw.attrs = dict(attrs)
        return (raw, bool(attrs.get("decimal_comma", False)), list(attrs.get("notes", [])),
                attrs.get("source", "data frame"))
    data, name = _read_bytes(source)
    if not data.strip():
        raise InputError(f"{name}: the file is empty; expected a header row and data rows")
    if looks_like_workbook(data, name):
        raw, decimal_comma = _read_workbook(data, name, sheet, notes, find_sheet), False
    else:
        if sheet is not None:
            raise InputError(f"{name}: sheet '{sheet}' asked for, but the file is text (CSV), "
                             "not an .xlsx workbook")
        raw, separator = _read_text(data, name, notes, keep_bad_lines, find_sheet)
        decimal_comma = separator in (";", "\t")
    # what a later read_raw of this frame needs to read it the same way
    raw.attrs.update(source=name, notes=list(notes), decimal_comma=decimal_comma)
    return raw, decimal_comma, notes, name


def _read_bytes(source) -> tuple[bytes, str]:
    """Read the bytes of a path, ``"-"`` (standard input) or an open file; name it for messages."""
    name = "standard input" if str(source) == "-" else str(source)
    try:
        if str(source) == "-":
            data = sys.stdin.buffer.read()
        elif hasattr(source, "read"):
            data = source.read()
            name = getattr(source, "name", "stream")
        else:
            data = read_file_bytes(source)
    except OSError as error:  # reading standard input or an open file
        raise InputError(f"{name}: cannot read it ({error.strerror})") from None
    if isinstance(data, str):
        data = data.encode("utf-8")
    return data, str(name)


def _read_workbook(data: bytes, name: str, sheet, notes: list, find_sheet: bool) -> pd.DataFrame:
    """Read a workbook's sheet as text cells under its header row (see :func:`read_raw` for ``sheet``)."""
    with Workbook(data, name) as book:
        names = book.sheet_names
        if not names:
            raise InputError(f"{name}: the workbook has no sheets")
        chosen = choose_sheet(names, sheet, name) if sheet is not None else names[0]
        cells = book.cells(chosen)
        if find_sheet and sheet is None and len(names) > 1 and header_index(cells) is None:
            with_header = [other for other in names[1:]
                           if header_index(book.first_rows(other)) is not None]
            if len(with_header) == 1:
                chosen = with_header[0]
                cells = book.cells(chosen)
                notes.append(sheet_note(chosen, names[0]))
    raw = frame_below_header(cells, notes)
    raw.attrs["sheet"] = chosen
    return raw


def _read_text(data: bytes, name: str, notes: list, keep_bad_lines: bool,
               run_file: bool) -> tuple[pd.DataFrame, str]:
    """Read delimited text from its header row down, as the large-file reader reads it."""
    encoding = detect_encoding(blocks_of(data), name, count_rows)
    text = data.decode(encoding.codec)
    if not text.strip():
        raise InputError(f"{name}: the file is empty; expected a header row and data rows")
    notes.extend(encoding.notes)
    layout = find_layout(text_head(text, complete=True), run_file)
    notes.extend(layout.notes)
    parts, problems, start = [], {}, 0
    for part in frames(io.StringIO(text, newline=""), layout):
        if not keep_bad_lines:
            raise_first_error(part, name)
        problems.update({start + position: problem
                         for position, problem in part.attrs.get("line_problems", {}).items()})
        parts.append(part)
        start += len(part)
    raw = pd.concat(parts, ignore_index=True) if parts else \
        pd.DataFrame({label: pd.Series([], dtype="str") for label in layout.labels})
    raw.attrs = {"header_row": layout.header_row}
    if problems:
        raw.attrs["line_problems"] = problems
    return raw, layout.separator


def first_uses(raw: pd.DataFrame, registry: RunIds, first_row: int) -> np.ndarray:
    """Duplicate run ids of a chunk of raw rows: the row that first used each id, 0 where new."""
    column = next((name for name in raw.columns if parse_header(name).name == "run"), None)
    if column is None:
        return np.zeros(len(raw), dtype=np.int64)
    ids = raw[column].astype(str).str.strip().to_numpy(dtype=object)
    ids = np.where(ids == "", None, ids)
    return registry.check(ids, np.arange(first_row, first_row + len(raw)))


def parse_runs(
    raw: pd.DataFrame,
    *,
    decimal_comma: bool = False,
    profile: InstrumentProfile | None = None,
    first_row: int = 2,
    seen_runs: RunIds | None = None,
    notes: list | None = None,
    source: str = "",
    require_rows: bool = True,
    first_use_of_rows=None,
    vessels=None,
) -> RunTable:
    """Validate a table of text cells and convert its measured columns to SI.

    Parameters
    ----------
    raw : pandas.DataFrame
        Cells as text, headers as the user wrote them (see :func:`read_raw`).
    decimal_comma : bool
        Accept a decimal comma in numbers.
    profile : InstrumentProfile, optional
        Default uncertainties; the built-in default profile when None.
    first_row : int
        Spreadsheet row of the first row of ``raw``: 2 below a header in row 1, else ``header_row + 1``.
    seen_runs : RunIds, optional
        Run ids already met in earlier chunks of the same file, updated in place,
        so duplicate ids are found across chunks.
    notes : list of str, optional
        File-level remarks to extend.
    source : str
        The file's name, for messages.
    require_rows : bool
        Raise when no data rows remain (False for later chunks of a long file).
    first_use_of_rows : array_like of int, optional
        For each row of ``raw``, the row that first used its run id (0 where new),
        when the caller has checked duplicates itself (see :func:`first_uses`).
    vessels : VesselRegister or path, optional
        The vessel register, for files whose runs name a ``vessel`` instead of a ``volume``.

    Returns
    -------
    RunTable
        Blank rows are dropped; every other row is kept, with its problems.

    Raises
    ------
    InputError
        For a missing required column, a duplicated column, an unknown unit, no data rows,
        or a ``vessel`` column without a register.
    """
    profile = profile or load_profile()
    register = load_vessels(vessels)
    notes = list(notes or [])
    by_name = resolve_headers(raw.columns, source, notes)
    raw, row_numbers, kept, bad_lines = _rows_to_read(raw, first_row, require_rows, source)
    problems = RowProblems(row_numbers)
    text = text_columns(raw, by_name)
    if first_use_of_rows is not None:  # duplicates already found by the caller, row by row
        first_use = np.asarray(first_use_of_rows)[kept]
    else:
        registry = seen_runs if seen_runs is not None else RunIds()
        first_use = registry.check(text["run"].to_numpy(dtype=object), row_numbers)
    check_run_ids(text["run"], first_use, problems)
    check_methods(text["method"], column_text(raw, by_name["method"]), problems)
    wet = check_wet(text["method"], read_wet(raw, by_name, problems), problems)
    # Units before cells: an unknown unit stops the file before any row is judged.
    units = _absolute_temperatures(measured_units(by_name, source), by_name, source)
    values, given, uncertainties, shared = _measured_values(
        raw, by_name, units, decimal_comma, profile, register, problems, notes, source, text["method"])
    check_ranges(values, units, by_name, text, problems)
    _report_bad_lines(bad_lines, problems, notes)
    return RunTable(
        raw=raw, row_numbers=row_numbers, text=text, wet=wet, values=values,
        uncertainties=uncertainties, shared_uncertainties=shared, given=given,
        errors=problems.errors, warnings=problems.warnings, notes=notes, units=units, source=source,
    )


def _rows_to_read(raw: pd.DataFrame, first_row: int, require_rows: bool, source: str):
    """Drop the blank rows, keeping a malformed line (its cells empty) for its problem to be reported.

    Returns the rows kept, their spreadsheet rows, the mask of rows kept and the problems
    of malformed lines by their position among the rows kept (see
    :func:`molid.io.delimited.frames`).
    """
    line_problems = raw.attrs.get("line_problems", {})
    blank = np.array(blank_rows(raw), dtype=bool)  # a copy: the frame's own array is read-only
    if line_problems:
        blank[list(line_problems)] = False
    kept = ~blank
    row_numbers = np.arange(first_row, first_row + len(raw))[kept]
    positions = {old: new for new, old in enumerate(np.flatnonzero(kept))}
    bad_lines = {positions[old]: problem for old, problem in line_problems.items()}
    raw = raw.loc[kept].reset_index(drop=True)
    raw.attrs.pop("line_problems", None)
    if len(raw) == 0 and require_rows:
        raise InputError(f"{source}: the file has a header but no data rows")
    return raw, row_numbers, kept, bad_lines


def _report_bad_lines(bad_lines: dict, problems: RowProblems, notes: list) -> None:
    """Give each malformed line its own problem: an error replaces what its empty cells caused."""
    for index, (kind, message) in sorted(bad_lines.items()):
        if kind == "error":
            problems.errors[index] = [f"row {problems.row_numbers[index]}, {message}"]
            problems.warnings[index] = []
        elif kind == "warning":
            problems.warnings[index] = [message, *problems.warnings[index]]
        elif message not in notes:
            notes.append(message)


_DIFFERENCE_UNIT = re.compile(r"^\s*(delta|\u0394|\u2206)", re.IGNORECASE)


def _absolute_temperatures(units: dict, by_name: dict, source: str) -> dict:
    """Refuse a temperature difference unit (delta_degC, Δ°C) for a temperature: it has no zero point."""
    for name, unit in units.items():
        if unit.kind == "temperature" and name in by_name and _DIFFERENCE_UNIT.match(unit.text):
            raise InputError(
                f"{source}: column '{by_name[name].original}': '{unit.text}' is a unit of temperature "
                "difference, which says nothing of where zero is; give the temperature in degC, K or "
                "degF (a difference unit is right for an uncertainty column such as u_temperature)")
    return units


def _measured_values(raw, by_name, units, decimal_comma, profile, register, problems, notes, source,
                     method):
    """Read the measured columns and their uncertainties; fill volumes from a vessel register."""
    check_method_columns(method, by_name, source)
    ids = vessel_rows(raw, by_name, register, source)
    values, blanks = read_measured(raw, by_name, units, decimal_comma, problems,
                                   None if ids is None else {"volume": pd.notna(ids)})
    # before the defaults fill blanks in: a method's own inputs are never assumed
    typed = {name: (column_text(raw, header).str.strip() != "").to_numpy()
             for name, header in by_name.items() if name in blanks}
    check_method_inputs(method, blanks, by_name, problems, typed)
    in_use = inputs_in_use(method)
    check_unused_inputs(in_use, blanks, by_name, method, problems)
    stated = read_stated_uncertainties(raw, uncertainty_columns(by_name, units, source, notes),
                                       decimal_comma, problems)
    found = None if ids is None else look_up_vessels(ids, register, values, blanks, stated, by_name,
                                                     problems)
    given, uncertainties, shared = fill_defaults(values, blanks, stated, profile, notes,
                                                 method.to_numpy(dtype=object), in_use)
    if found is not None:
        share_vessel_volumes(found, values, uncertainties, shared, register, problems, notes)
    return values, given, uncertainties, shared


def read_runs(source, *, profile: InstrumentProfile | str | Path | None = None,
              vessels=None, sheet=None) -> RunTable:
    """Read and validate a run file (CSV, .xlsx, ``-`` for stdin, or a DataFrame).

    Parameters
    ----------
    source : str, pathlib.Path, file-like or pandas.DataFrame
        The runs. See the README for the columns.
    profile : InstrumentProfile or path, optional
        Default uncertainties; a path is loaded with :func:`molid.io.profiles.load_profile`.
    vessels : VesselRegister or path, optional
        Vessel register (see :mod:`molid.io.vessel_register`): runs may name a
        ``vessel`` instead of giving a ``volume``.
    sheet : str or int, optional
        For a workbook: the sheet's name, or its position counting from 1 (see :func:`read_raw`).

    Returns
    -------
    RunTable
        Validated runs with their per-row problems.

    Raises
    ------
    InputError
        When nothing in the file can be analysed.
    """
    if profile is None or isinstance(profile, (str, Path)):
        profile = load_profile(profile)
    raw, decimal_comma, notes, name = read_raw(source, sheet=sheet, find_sheet=True, keep_bad_lines=True)
    return parse_runs(raw, decimal_comma=decimal_comma, profile=profile, notes=notes, source=name,
                      vessels=vessels, first_row=int(raw.attrs.get("header_row", 1)) + 1)
