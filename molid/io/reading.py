"""Reading and validating run files: CSV or .xlsx in, SI arrays and per-row problems out.

The reader keeps every cell the user gave (as text), converts the measured
columns to SI once, and records per row the errors that stop that row and the
warnings that do not. A bad row never stops the others; a problem with the file
as a whole (unreadable, no data rows, a required column missing, a unit pint does
not know) raises :class:`InputError`.

Rows are numbered as a spreadsheet numbers them: the header is row 1 and the
first data row is row 2.
"""

from __future__ import annotations

import io
import re
import sys
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from molid.io.profiles import InstrumentProfile, load_profile
from molid.io.units import ColumnUnit, UnitProblem, resolve_unit
from molid.methods.inputs import COLUMN_KINDS, MEASURED_INPUTS
from molid.methods.registry import METHODS as REGISTERED_METHODS
from molid.methods.registry import REQUIRED_EVERYWHERE

__all__ = [
    "METHODS",
    "REQUIRED_COLUMNS",
    "InputError",
    "RunIds",
    "RunTable",
    "first_uses",
    "read_raw",
    "parse_runs",
    "read_runs",
]

#: Measurement methods (from the registry) and the one-line meaning of their tare reading.
METHODS = {name: method.summary for name, method in REGISTERED_METHODS.items()}

#: Columns every file needs: the run id, the method and what every method requires.
REQUIRED_COLUMNS = ("run", "method") + REQUIRED_EVERYWHERE
MEASURED_COLUMNS = tuple(COLUMN_KINDS)
TEXT_COLUMNS = ("run", "sample", "method", "wet", "expected")
#: Inputs that may have a u_<name> column; u_mass applies to both readings.
UNCERTAIN_INPUTS = MEASURED_INPUTS
_HEADER_ALIASES = {"run_id": "run", "id": "run", "rh": "humidity", "relative_humidity": "humidity"}
_TRUE = {"yes", "y", "true", "1", "wet", "saturated"}
_FALSE = {"no", "n", "false", "0", "dry", ""}


class InputError(ValueError):
    """A problem with a file as a whole: nothing in it can be analysed."""


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


@dataclass(frozen=True)
class _Header:
    original: str
    name: str
    unit: str | None


_HEADER_PATTERN = re.compile(r"^\s*(?P<name>[^\[\]]*?)\s*(?:\[(?P<unit>[^\]]*)\])?\s*$")


def _parse_header(text: str) -> _Header:
    match = _HEADER_PATTERN.match(str(text))
    if not match:
        raise InputError(
            f"header '{text}': cannot read it; write a name, optionally followed by a unit "
            "in square brackets, e.g. 'pressure [mmHg]'"
        )
    name = re.sub(r"[\s\-]+", "_", match["name"].strip().lower())
    name = _HEADER_ALIASES.get(name, name)
    unit = match["unit"].strip() if match["unit"] is not None else None
    return _Header(original=str(text), name=name, unit=unit)


def _decode(data: bytes, notes: list) -> str:
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError:
        notes.append(
            "the file is not valid UTF-8; it was read as Windows-1252 (save it as UTF-8 to be sure "
            "names and units arrive as written)"
        )
        return data.decode("cp1252", errors="replace")


def _sniff_separator(text: str) -> str:
    for line in text.splitlines():
        if line.strip():
            counts = {sep: line.count(sep) for sep in (";", ",", "\t")}
            best = max(counts, key=counts.get)
            return best if counts[best] else ","
    return ","


def read_raw(source) -> tuple[pd.DataFrame, bool, list, str]:
    """Read a run file into a table of text cells.

    Parameters
    ----------
    source : str, pathlib.Path, file-like or pandas.DataFrame
        A path to a .csv/.txt/.xlsx file, ``"-"`` for standard input, an open
        binary or text file, or a DataFrame already in memory.

    Returns
    -------
    raw : pandas.DataFrame
        All cells as strings, blank cells as "".
    decimal_comma : bool
        True when numbers may use a decimal comma (semicolon- or tab-separated text).
    notes : list of str
        Remarks on how the file was read.
    name : str
        A name for the source, for messages.

    Raises
    ------
    InputError
        When the file cannot be read or holds no header.
    """
    notes: list = []
    if isinstance(source, pd.DataFrame):
        raw = source.copy()
        raw.columns = [str(column) for column in raw.columns]
        raw = raw.astype(object).where(raw.notna(), "").astype(str)
        return raw, False, notes, "data frame"
    name = "standard input" if str(source) == "-" else str(source)
    try:
        if str(source) == "-":
            data = sys.stdin.buffer.read()
        elif hasattr(source, "read"):
            data = source.read()
            name = getattr(source, "name", "stream")
        else:
            data = Path(source).read_bytes()
    except FileNotFoundError:
        raise InputError(f"{name}: no such file") from None
    except IsADirectoryError:
        raise InputError(f"{name}: is a folder, not a file") from None
    except OSError as error:
        raise InputError(f"{name}: cannot read it ({error.strerror})") from None
    if isinstance(data, str):
        data = data.encode("utf-8")
    if not data.strip():
        raise InputError(f"{name}: the file is empty; expected a header row and data rows")
    if data[:4] == b"PK\x03\x04":
        try:
            raw = pd.read_excel(io.BytesIO(data), dtype=str, header=0)
        except Exception as error:  # openpyxl raises many kinds for damaged files
            raise InputError(f"{name}: cannot read it as an .xlsx workbook ({error})") from None
        raw = raw.fillna("")
        raw.columns = [str(column) for column in raw.columns]
        return raw, False, notes, name
    text = _decode(data, notes)
    separator = _sniff_separator(text)
    try:
        raw = pd.read_csv(
            io.StringIO(text),
            sep=separator,
            dtype=str,
            keep_default_na=False,
            skip_blank_lines=False,
            skipinitialspace=True,
        )
    except pd.errors.EmptyDataError:
        raise InputError(f"{name}: no header row found") from None
    except (pd.errors.ParserError, ValueError) as error:
        raise InputError(f"{name}: cannot read it as CSV ({error})") from None
    raw.columns = [str(column) for column in raw.columns]
    return raw, separator in (";", "\t"), notes, name


def _blank_rows(raw: pd.DataFrame) -> np.ndarray:
    if raw.shape[1] == 0:
        return np.ones(len(raw), dtype=bool)
    stripped = raw.apply(lambda column: column.str.strip())
    return (stripped == "").all(axis=1).to_numpy()


def _numbers(column: pd.Series, decimal_comma: bool) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Parse a text column: values, blank mask and not-a-number mask."""
    text = column.str.strip()
    blank = (text == "").to_numpy()
    if decimal_comma:
        text = text.str.replace(",", ".", regex=False)
    values = _fast_floats(text, blank)
    if values is None:  # some cell is not a number: parse cell by cell, coercing the bad ones
        values = pd.to_numeric(text, errors="coerce").to_numpy(dtype=float)
    # "nan" parses as NaN; a user who typed it gave no number, so it counts as bad
    not_number = ~blank & np.isnan(values)
    return values, blank, not_number


def first_uses(raw: pd.DataFrame, registry: RunIds, first_row: int) -> np.ndarray:
    """Duplicate run ids of a chunk of raw rows: the row that first used each id, 0 where new."""
    column = next((name for name in raw.columns if _parse_header(name).name == "run"), None)
    if column is None:
        return np.zeros(len(raw), dtype=np.int64)
    ids = raw[column].astype(str).str.strip().to_numpy(dtype=object)
    ids = np.where(ids == "", None, ids)
    return registry.check(ids, np.arange(first_row, first_row + len(raw)))


def _fast_floats(text: pd.Series, blank: np.ndarray):
    """All cells as floats by Arrow's C++ cast, or None when any non-blank cell is not a number."""
    try:
        import pyarrow as pa
        import pyarrow.compute as pc

        array = pa.array(text.to_numpy(dtype=object), type=pa.string()) \
            if not hasattr(text.array, "_pa_array") else text.array._pa_array
        array = pc.if_else(pa.array(blank), pa.scalar(None, pa.string()), array)
        return np.asarray(pc.cast(array, pa.float64()).to_numpy(zero_copy_only=False), dtype=float)
    except Exception:  # ArrowInvalid for a bad cell; anything else: take the careful path
        return None


class _Problems:
    """Per-row errors and warnings, filled by vectorised checks."""

    def __init__(self, row_numbers: np.ndarray):
        self.row_numbers = row_numbers
        # One shared empty list: a row gets its own list only when it has a problem,
        # so a clean chunk of 10,000 rows allocates no 20,000 lists.
        empty: list = []
        self.errors = [empty] * len(row_numbers)
        self.warnings = [empty] * len(row_numbers)

    def error(self, mask, message) -> None:
        for index in np.flatnonzero(mask):
            self.errors[index] = self.errors[index] + [
                f"row {self.row_numbers[index]}, " + message(index)]

    def warn(self, mask, message) -> None:
        for index in np.flatnonzero(mask):
            self.warnings[index] = self.warnings[index] + [message(index)]


def _temperature_hint(unit: ColumnUnit, written: float) -> str:
    for candidate in ("degC", "K", "degF"):
        if candidate == unit.text:
            continue
        converted = written * resolve_unit("temperature", candidate).scale + resolve_unit(
            "temperature", candidate
        ).offset
        if 273.0 <= converted <= 400.0:
            return f"; it would be a lab temperature in {candidate}"
    return ""


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
        Spreadsheet row number of the first row of ``raw`` (2 for a whole file).
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

    Returns
    -------
    RunTable
        Blank rows are dropped; every other row is kept, with its problems.

    Raises
    ------
    InputError
        For a missing required column, a duplicated column, an unknown unit, or no data rows.
    """
    profile = profile or load_profile()
    notes = list(notes or [])
    headers = [_parse_header(column) for column in raw.columns]
    by_name: dict[str, _Header] = {}
    for header in headers:
        if header.name in by_name:
            raise InputError(
                f"{source}: columns '{by_name[header.name].original}' and '{header.original}' "
                f"both mean '{header.name}'; keep one"
            )
        by_name[header.name] = header
    missing = [name for name in REQUIRED_COLUMNS if name not in by_name]
    if missing:
        found = ", ".join(f"'{h.original}'" for h in headers) or "none"
        raise InputError(
            f"{source}: required column(s) missing: {', '.join(missing)}. "
            f"Required: {', '.join(REQUIRED_COLUMNS)}; found: {found}"
        )

    blank = _blank_rows(raw)
    row_numbers_all = np.arange(first_row, first_row + len(raw))
    raw = raw.loc[~blank].reset_index(drop=True)
    row_numbers = row_numbers_all[~blank]
    if len(raw) == 0 and require_rows:
        raise InputError(f"{source}: the file has a header but no data rows")
    problems = _Problems(row_numbers)
    n = len(raw)

    def cells(name: str) -> pd.Series:
        return raw[by_name[name].original].astype(str)

    # Text columns.
    text = pd.DataFrame(index=range(n))
    for name in ("run", "sample", "method", "expected"):
        if name in by_name:
            values = cells(name).str.strip().to_numpy(dtype=object)
            text[name] = pd.Series(np.where(values == "", None, values), dtype=object)
        else:
            text[name] = pd.Series([None] * n, dtype=object)
    run = text["run"]
    problems.error(run.isna().to_numpy(),
                   lambda i: "column 'run': the run id is empty; give each run a unique id")
    run_values = run.to_numpy(dtype=object)
    if first_use_of_rows is not None:  # duplicates already found by the caller, row by row
        first_use = np.asarray(first_use_of_rows)[~blank]
    else:
        registry_of_ids = seen_runs if seen_runs is not None else RunIds()
        first_use = registry_of_ids.check(run_values, row_numbers)
    problems.error(
        first_use > 0,
        lambda i: f"column 'run': duplicate run id '{run_values[i]}' (first used in row "
        f"{first_use[i]}); run ids must be unique",
    )
    # Few distinct spellings: normalise each once, then map back.
    codes, spellings = pd.factorize(cells("method"))
    normalised = np.array([re.sub(r"[\s_]+", "-", str(item).strip().lower()) for item in spellings]
                          + [""], dtype=object)
    method_values = normalised[codes]
    method = pd.Series(method_values, dtype=object)
    text["method"] = pd.Series(np.where(method_values == "", None, method_values), dtype=object)
    unknown_method = ~method.isin(list(METHODS)).to_numpy()
    method_text = cells("method").to_numpy()
    problems.error(
        unknown_method,
        lambda i: f"column 'method': '{method_text[i]}' is not a method; accepted: "
        + ", ".join(METHODS),
    )

    wet = np.zeros(n, dtype=bool)
    if "wet" in by_name:
        wet_text = cells("wet").str.strip().str.lower()
        wet = wet_text.isin(list(_TRUE)).to_numpy()
        bad_wet = ~(wet_text.isin(list(_TRUE)) | wet_text.isin(list(_FALSE))).to_numpy()
        original = cells("wet").to_numpy()
        problems.error(
            bad_wet, lambda i: f"column 'wet': '{original[i]}' is not yes or no; accepted: yes, no"
        )

    # Measured columns.
    units: dict[str, ColumnUnit] = {}
    values: dict[str, np.ndarray] = {}
    blanks: dict[str, np.ndarray] = {}
    for name in MEASURED_COLUMNS:
        kind = COLUMN_KINDS[name]
        header = by_name.get(name)
        try:
            unit = resolve_unit(kind, header.unit if header else None)
        except UnitProblem as problem:
            raise InputError(f"{source}: column '{header.original}': {problem}") from None
        units[name] = unit
        if header is None:
            values[name] = np.full(n, np.nan)
            blanks[name] = np.ones(n, dtype=bool)
            continue
        numbers, is_blank, not_number = _numbers(cells(name), decimal_comma)
        original = cells(name).to_numpy()
        # The student's own result is not a measurement input: a bad cell there is only
        # a warning, so the run is still analysed.
        report = problems.warn if name == "reported_molar_mass" else problems.error
        report(
            not_number,
            lambda i, name=name, unit=unit, original=original: (
                f"column '{by_name[name].original}': '{original[i]}' is not a number; "
                f"expected a number in {unit.text}"
                + (" (a decimal comma works in semicolon- or tab-separated files only)"
                   if not decimal_comma and "," in str(original[i]) else "")
            ),
        )
        infinite = np.isinf(numbers)
        problems.error(
            infinite,
            lambda i, name=name: f"column '{by_name[name].original}': the value is infinite; "
            "give a finite number",
        )
        if name in REQUIRED_COLUMNS:
            problems.error(
                is_blank,
                lambda i, name=name: f"column '{by_name[name].original}': the cell is empty; "
                f"a value in {units[name].text} is required",
            )
        numbers = np.where(infinite, np.nan, numbers)
        values[name] = numbers * unit.scale + unit.offset
        blanks[name] = is_blank | not_number | infinite

    # Uncertainty columns: u_<name> in the unit of its header, else of the column it qualifies.
    stated: dict[str, np.ndarray] = {}
    for header in headers:
        if not header.name.startswith("u_"):
            continue
        target = header.name[2:]
        targets = ("mass_tare", "mass_filled") if target == "mass" else (target,)
        if not all(t in UNCERTAIN_INPUTS for t in targets):
            notes.append(
                f"column '{header.original}' is not an uncertainty of a measured input and was "
                f"kept but not used; uncertainty columns: u_{', u_'.join(UNCERTAIN_INPUTS)}, u_mass"
            )
            continue
        kind = COLUMN_KINDS[targets[0]]
        try:
            unit = resolve_unit(kind, header.unit) if header.unit else units[targets[0]]
        except UnitProblem as problem:
            raise InputError(f"{source}: column '{header.original}': {problem}") from None
        numbers, is_blank, not_number = _numbers(raw[header.original].astype(str), decimal_comma)
        original = raw[header.original].astype(str).to_numpy()
        problems.error(
            not_number | np.isinf(numbers),
            lambda i, header=header, unit=unit, original=original: (
                f"column '{header.original}': '{original[i]}' is not a finite number; "
                f"expected a standard uncertainty in {unit.text}"
            ),
        )
        negative = numbers < 0
        problems.error(
            negative,
            lambda i, header=header: f"column '{header.original}': a standard uncertainty "
            "cannot be negative",
        )
        if kind == "fraction":
            too_wide = numbers * unit.delta_scale > 1.0
            problems.error(
                too_wide,
                lambda i, header=header: f"column '{header.original}': a standard uncertainty "
                "above 100 % cannot be; give it in % (or as a fraction, with '[1]' in the "
                "header)",
            )
            negative = negative | too_wide
        u_si = np.where(is_blank | not_number | negative | np.isinf(numbers), np.nan, numbers)
        u_si = u_si * unit.delta_scale
        for t in targets:
            if t in stated and target == "mass":
                continue  # a specific u_mass_tare beats the general u_mass
            stated[t] = u_si

    # Assumed inputs, and air conditions defaulting to the gas's.
    given = {}
    for name, gas_name in (("air_temperature", "temperature"), ("air_pressure", "pressure")):
        given[name] = ~blanks[name]
        values[name] = np.where(given[name], values[name], values[gas_name])
    assumed_rows = {}
    for name in ("humidity", "co2"):
        assumed_value, assumed_rule = profile.assumed[name]
        assumed_rows[name] = blanks[name]
        if blanks[name].any():
            how_many = "every row" if blanks[name].all() else "some rows"
            width = assumed_rule.apply(assumed_value)
            label = "relative humidity" if name == "humidity" else "CO2 mole fraction"
            shown = f"{assumed_value * 100:g} %" if name == "humidity" else f"{assumed_value:g}"
            shown_u = f"{width * 100:.1f} %" if name == "humidity" else f"{width:.2g}"
            notes.append(
                f"{label} not given for {how_many}: assumed {shown} with standard "
                f"uncertainty {shown_u}"
            )
        values[name] = np.where(blanks[name], assumed_value, values[name])

    uncertainties: dict[str, np.ndarray] = {}
    shared: dict[str, np.ndarray] = {}
    defaulted = []
    for name in UNCERTAIN_INPUTS:
        rule = profile.rule(name)
        if name in ("humidity", "co2"):
            _, assumed_rule = profile.assumed[name]
            default = np.where(assumed_rows[name], assumed_rule.apply(values[name]),
                               rule.apply(values[name]))
            default_shared = np.where(assumed_rows[name], assumed_rule.apply_shared(values[name]),
                                      rule.apply_shared(values[name]))
        elif name in ("air_temperature", "air_pressure"):
            # Where the gas's value stands in, the gas's uncertainty already covers it.
            default = np.where(given[name], rule.apply(values[name]), 0.0)
            default_shared = np.where(given[name], rule.apply_shared(values[name]), 0.0)
        else:
            default = rule.apply(values[name])
            default_shared = rule.apply_shared(values[name])
        if name in stated:
            use_default = np.isnan(stated[name])
            uncertainties[name] = np.where(use_default, default, stated[name])
            # A u_<name> cell says nothing of calibration: it counts as run-to-run.
            shared[name] = np.where(use_default, default_shared, 0.0)
            if name in ("air_temperature", "air_pressure"):
                uncertainties[name] = np.where(given[name], uncertainties[name], 0.0)
                shared[name] = np.where(given[name], shared[name], 0.0)
        else:
            use_default = np.ones(n, dtype=bool)
            uncertainties[name] = default
            shared[name] = default_shared
        if use_default.any() and name not in ("humidity", "co2") and (
            name not in ("air_temperature", "air_pressure") or (given[name] & use_default).any()
        ):
            defaulted.append(name)
    if defaulted:
        where = (profile.source if profile.source == "default profile"
                 else f"profile {profile.source}")
        notes.append(
            "no stated uncertainty for " + ", ".join(defaulted)
            + f" in some or all rows: used the values of the {where}"
        )

    _check_ranges(values, units, by_name, text, problems)
    table = RunTable(
        raw=raw,
        row_numbers=row_numbers,
        text=text,
        wet=wet,
        values=values,
        uncertainties=uncertainties,
        shared_uncertainties=shared,
        given=given,
        errors=problems.errors,
        warnings=problems.warnings,
        notes=notes,
        units=units,
        source=source,
    )
    return table


def _check_ranges(values, units, by_name, text, problems: _Problems) -> None:
    """Errors for values that cannot be; warnings for values that look like a unit slip."""
    volume = values["volume"]
    problems.error(
        volume <= 0,
        lambda i: f"column '{by_name['volume'].original}': the volume must be > 0 "
        f"(got {volume[i] / units['volume'].scale:g} {units['volume'].text})",
    )
    for name in ("temperature", "air_temperature"):
        if name not in by_name:
            continue
        absolute = values[name]
        problems.error(
            absolute <= 0,
            lambda i, name=name, absolute=absolute: (
                f"column '{by_name[name].original}': {_written(absolute[i], units[name]):g} "
                f"{units[name].text} is at or below absolute zero; give a temperature above 0 K"
            ),
        )
        odd = (absolute > 0) & ((absolute < 200.0) | (absolute > 700.0))
        problems.warn(
            odd,
            lambda i, name=name, absolute=absolute: (
                f"{name.replace('_', ' ')} {_written(absolute[i], units[name]):g} "
                f"{units[name].text}" + (f" = {absolute[i]:.1f} K" if units[name].scale != 1
                                          or units[name].offset != 0 else "")
                + " is unusual for gas weighing"
                + _temperature_hint(units[name], _written(absolute[i], units[name]))
            ),
        )
    for name in ("pressure", "air_pressure"):
        if name not in by_name:
            continue
        pressure = values[name]
        problems.error(
            pressure <= 0,
            lambda i, name=name: f"column '{by_name[name].original}': the pressure must be > 0",
        )
        odd = (pressure > 0) & ((pressure < 10e3) | (pressure > 250e3))
        problems.warn(
            odd,
            lambda i, name=name, pressure=pressure: (
                f"{name.replace('_', ' ')} {_written(pressure[i], units[name]):g} "
                f"{units[name].text}" + (f" = {pressure[i] / 1000:.4g} kPa"
                                          if units[name].text != "kPa" else "")
                + " is unusual for a gas in glass"
                + _pressure_hint_for(pressure[i], units[name])
            ),
        )
    if "humidity" in by_name:
        humidity = values["humidity"]
        problems.error(
            (humidity < 0) | (humidity > 1),
            lambda i: f"column '{by_name['humidity'].original}': relative humidity "
            f"{humidity[i] * 100:g} % is outside 0-100 %",
        )
    if "co2" in by_name:
        co2 = values["co2"]
        problems.error(
            (co2 < 0) | (co2 > 0.05),
            lambda i: f"column '{by_name['co2'].original}': a CO2 mole fraction of "
            f"{co2[i]:g} is outside 0 to 0.05",
        )
    odd_volume = (volume > 0) & ((volume < 1e-6) | (volume > 20e-3))
    problems.warn(
        odd_volume,
        lambda i: f"volume {_written(volume[i], units['volume']):g} {units['volume'].text} is "
        "unusual for a bulb or syringe; check the volume unit",
    )
    difference = values["mass_filled"] - values["mass_tare"]
    method = text["method"].to_numpy()
    problems.error(
        (method == "evacuated-bulb") & (difference <= 0),
        lambda i: "columns 'mass_filled'/'mass_tare': an evacuated bulb cannot weigh less "
        f"or the same when filled (difference {difference[i] / units['mass_tare'].scale:.6g} "
        f"{units['mass_tare'].text}); check the tare and filled readings",
    )


def _written(value_si: float, unit: ColumnUnit) -> float:
    return (value_si - unit.offset) / unit.scale


def _pressure_hint_for(value_si: float, unit: ColumnUnit) -> str:
    written = _written(value_si, unit)
    for candidate in ("mmHg", "inHg", "atm", "bar", "Pa", "hPa", "psi", "kPa"):
        if candidate == unit.text:
            continue
        if 80e3 <= written * resolve_unit("pressure", candidate).scale <= 110e3:
            return f"; the number would be an ordinary room pressure in {candidate}"
    return ""


def read_runs(source, *, profile: InstrumentProfile | str | Path | None = None) -> RunTable:
    """Read and validate a run file (CSV, .xlsx, ``-`` for stdin, or a DataFrame).

    Parameters
    ----------
    source : str, pathlib.Path, file-like or pandas.DataFrame
        The runs. See the README for the columns.
    profile : InstrumentProfile or path, optional
        Default uncertainties; a path is loaded with :func:`molid.io.profiles.load_profile`.

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
    raw, decimal_comma, notes, name = read_raw(source)
    return parse_runs(raw, decimal_comma=decimal_comma, profile=profile, notes=notes, source=name)
