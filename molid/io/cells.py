"""Cell parsing: from the text a user typed to numbers in SI, yes/no flags and method names.

Every column is parsed at once (pandas string methods, Arrow's float cast); only
the rows whose cells cannot be read pay for a message. A blank cell is not an
error by itself: whether a value is required is the caller's business.
"""

from __future__ import annotations

import re
import unicodedata

import numpy as np
import pandas as pd

from molid.io.columns import MEASURED_COLUMNS, REQUIRED_COLUMNS
from molid.io.headers import Header, UncertaintyColumn
from molid.io.problems import RowProblems
from molid.io.units import ColumnUnit

__all__ = [
    "YES_WORDS",
    "NO_WORDS",
    "blank_rows",
    "column_text",
    "parse_numbers",
    "cell_hint",
    "method_names",
    "text_columns",
    "read_wet",
    "read_measured",
    "read_stated_uncertainties",
]

#: Cells of the ``wet`` column read as yes and as no (after stripping, lower case).
YES_WORDS = {"yes", "y", "true", "1", "wet", "saturated"}
NO_WORDS = {"no", "n", "false", "0", "dry", ""}


def blank_rows(raw: pd.DataFrame) -> np.ndarray:
    """Flag the rows whose every cell is blank or white space (rows a spreadsheet leaves empty).

    Parameters
    ----------
    raw : pandas.DataFrame
        Cells as text.

    Returns
    -------
    numpy.ndarray of bool
        One flag per row.
    """
    if raw.shape[1] == 0:
        return np.ones(len(raw), dtype=bool)
    stripped = raw.apply(lambda column: column.str.strip())
    return (stripped == "").all(axis=1).to_numpy()


def column_text(raw: pd.DataFrame, header: Header) -> pd.Series:
    """Return the cells of one column as the user wrote them, as strings.

    Parameters
    ----------
    raw : pandas.DataFrame
        Cells as text, with the user's headers.
    header : Header
        The column's header.

    Returns
    -------
    pandas.Series of str
        The column's cells.
    """
    return raw[header.original].astype(str)


def parse_numbers(column: pd.Series, decimal_comma: bool) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Parse a text column: values, blank mask and not-a-number mask.

    Parameters
    ----------
    column : pandas.Series of str
        The cells.
    decimal_comma : bool
        Read ``1,5`` as 1.5.

    Returns
    -------
    values : numpy.ndarray of float
        NaN where blank or not a number.
    blank : numpy.ndarray of bool
        True where the cell is empty or white space.
    not_number : numpy.ndarray of bool
        True where a non-blank cell is not a number (``nan`` included).
    """
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


_NUMBER_THEN_TEXT = re.compile(r"^\s*[+-]?(\d+[.,]?\d*|[.,]\d+)([eE][+-]?\d+)?"
                               r"\s*(?P<unit>[^\d\s.,+-].*?)\s*$")


def cell_hint(text: str, unit: str) -> str:
    """Say why a cell that looks like a number is not one: a unit typed in it, or a character unseen.

    Parameters
    ----------
    text : str
        The cell as written.
    unit : str
        The column's unit, as the message names it.

    Returns
    -------
    str
        A parenthesised hint starting with a space, or "" when there is none to give.

    Examples
    --------
    >>> cell_hint("\u221221.5", "degC")
    ' (it holds U+2212 MINUS SIGN, which a number cannot hold; type it again with the keyboard)'
    >>> cell_hint("21.5 °C", "K")
    " (a unit goes in the header, e.g. 'name [°C]', not in the cell)"
    """
    odd = [character for character in dict.fromkeys(text.strip()) if not " " <= character <= "~"]
    match = _NUMBER_THEN_TEXT.match(text)
    if match and not any(unicodedata.category(character).startswith(("C", "Z")) for character in odd):
        if match["unit"] == unit:
            return " (write the number alone: the header gives the unit)"
        return f" (a unit goes in the header, e.g. 'name [{match['unit']}]', not in the cell)"
    if not odd:
        return ""
    named = ", ".join(f"U+{ord(character):04X} {unicodedata.name(character, 'a control character')}"
                      for character in odd[:3])
    return f" (it holds {named}, which a number cannot hold; type it again with the keyboard)"


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


def method_names(column: pd.Series) -> np.ndarray:
    """Spell method cells as the registry does: lower case, words joined by hyphens.

    Parameters
    ----------
    column : pandas.Series of str
        The cells of the ``method`` column.

    Returns
    -------
    numpy.ndarray of object
        One name per row, ``""`` where blank.
    """
    # Few distinct spellings: normalise each once, then map back.
    codes, spellings = pd.factorize(column)
    normalised = np.array([re.sub(r"[\s_]+", "-", str(item).strip().lower()) for item in spellings]
                          + [""], dtype=object)
    return normalised[codes]


def text_columns(raw: pd.DataFrame, by_name: dict[str, Header]) -> pd.DataFrame:
    """Collect the columns kept as text: run, sample, method and expected (None where blank).

    Parameters
    ----------
    raw : pandas.DataFrame
        Cells as text, with the user's headers.
    by_name : dict of Header
        The file's headers by column name.

    Returns
    -------
    pandas.DataFrame
        One column each, stripped; the method normalised by :func:`method_names`.
    """
    n = len(raw)
    text = pd.DataFrame(index=range(n))
    for name in ("run", "sample", "method", "expected"):
        if name not in by_name:
            text[name] = pd.Series([None] * n, dtype=object)
            continue
        cells = column_text(raw, by_name[name])
        values = method_names(cells) if name == "method" else cells.str.strip().to_numpy(dtype=object)
        text[name] = pd.Series(np.where(values == "", None, values), dtype=object)
    return text


def read_wet(raw: pd.DataFrame, by_name: dict[str, Header], problems: RowProblems) -> np.ndarray:
    """Read the ``wet`` column as flags, with an error for each cell that is neither yes nor no.

    Parameters
    ----------
    raw : pandas.DataFrame
        Cells as text, with the user's headers.
    by_name : dict of Header
        The file's headers by column name.
    problems : RowProblems
        Where the errors go.

    Returns
    -------
    numpy.ndarray of bool
        True where the gas was saturated with water vapour (all False without the column).
    """
    if "wet" not in by_name:
        return np.zeros(len(raw), dtype=bool)
    cells = column_text(raw, by_name["wet"])
    wet_text = cells.str.strip().str.lower()
    wet = wet_text.isin(list(YES_WORDS)).to_numpy()
    bad_wet = ~(wet_text.isin(list(YES_WORDS)) | wet_text.isin(list(NO_WORDS))).to_numpy()
    original = cells.to_numpy()
    problems.error(
        bad_wet, lambda i: f"column 'wet': '{original[i]}' is not yes or no; accepted: yes, no"
    )
    return wet


def read_measured(raw: pd.DataFrame, by_name: dict[str, Header], units: dict[str, ColumnUnit],
                  decimal_comma: bool, problems: RowProblems,
                  may_be_blank: dict | None = None) -> tuple[dict, dict]:
    """Read every measured column in SI, with an error for each cell that cannot be used.

    Parameters
    ----------
    raw : pandas.DataFrame
        Cells as text, with the user's headers.
    by_name : dict of Header
        The file's headers by column name.
    units : dict of ColumnUnit
        The unit of each measured column.
    decimal_comma : bool
        Accept a decimal comma in numbers.
    problems : RowProblems
        Where the errors (and, for the student's reported result, warnings) go.
    may_be_blank : dict of numpy.ndarray, optional
        Per required column, rows where a blank cell is no error (the volume of a
        run that names a calibrated vessel).

    Returns
    -------
    values : dict of numpy.ndarray
        SI values of every measured column, NaN where unusable or absent.
    blanks : dict of numpy.ndarray
        True where a column gives no usable value (blank, not a number, infinite, absent).
    """
    values: dict[str, np.ndarray] = {}
    blanks: dict[str, np.ndarray] = {}
    for name in MEASURED_COLUMNS:
        header = by_name.get(name)
        if header is None:
            values[name] = np.full(len(raw), np.nan)
            blanks[name] = np.ones(len(raw), dtype=bool)
            continue
        values[name], blanks[name] = _read_measured_column(raw, header, units[name], decimal_comma,
                                                           problems, (may_be_blank or {}).get(name))
    return values, blanks


def _read_measured_column(raw: pd.DataFrame, header: Header, unit: ColumnUnit, decimal_comma: bool,
                          problems: RowProblems, may_be_blank=None) -> tuple[np.ndarray, np.ndarray]:
    """Read one measured column in SI and where it gives no usable value, reporting each bad cell."""
    cells = column_text(raw, header)
    numbers, is_blank, not_number = parse_numbers(cells, decimal_comma)
    original = cells.to_numpy()
    # The student's own result is not a measurement input: a bad cell there is only
    # a warning, so the run is still analysed.
    report = problems.warn if header.name == "reported_molar_mass" else problems.error
    report(
        not_number,
        lambda i: (
            f"column '{header.original}': '{original[i]}' is not a number; "
            f"expected a number in {unit.text}"
            + (" (a decimal comma works in semicolon- or tab-separated files only)"
               if not decimal_comma and "," in str(original[i]) else "")
            + cell_hint(str(original[i]), unit.text)
        ),
    )
    infinite = np.isinf(numbers)
    problems.error(
        infinite,
        lambda i: f"column '{header.original}': the value is infinite; give a finite number",
    )
    if header.name in REQUIRED_COLUMNS:
        problems.error(
            is_blank if may_be_blank is None else is_blank & ~may_be_blank,
            lambda i: f"column '{header.original}': the cell is empty; "
            f"a value in {unit.text} is required",
        )
    numbers = np.where(infinite, np.nan, numbers)
    return numbers * unit.scale + unit.offset, is_blank | not_number | infinite


def read_stated_uncertainties(raw: pd.DataFrame, columns: list[UncertaintyColumn], decimal_comma: bool,
                              problems: RowProblems) -> dict[str, np.ndarray]:
    """Read the standard uncertainties the file states in ``u_`` columns, in SI.

    Parameters
    ----------
    raw : pandas.DataFrame
        Cells as text, with the user's headers.
    columns : list of UncertaintyColumn
        The file's usable ``u_`` columns (see :func:`molid.io.headers.uncertainty_columns`).
    decimal_comma : bool
        Accept a decimal comma in numbers.
    problems : RowProblems
        Where the errors go: a cell that is not a finite number, negative, or a
        fraction's uncertainty above 100 %.

    Returns
    -------
    dict of numpy.ndarray
        Per input that has one, its stated uncertainty, NaN where none usable.
        A column naming one mass reading beats ``u_mass`` for that reading.
    """
    stated: dict[str, np.ndarray] = {}
    for column in columns:
        u_si = _read_uncertainty_column(raw, column, decimal_comma, problems)
        for name in column.inputs:
            if name in stated and column.general:
                continue  # a specific u_mass_tare beats the general u_mass
            stated[name] = u_si
    return stated


def _read_uncertainty_column(raw: pd.DataFrame, column: UncertaintyColumn, decimal_comma: bool,
                             problems: RowProblems) -> np.ndarray:
    """Read one ``u_`` column in SI, NaN where a cell is blank or unusable, reporting each bad cell."""
    header, unit = column.header, column.unit
    cells = column_text(raw, header)
    numbers, is_blank, not_number = parse_numbers(cells, decimal_comma)
    original = cells.to_numpy()
    problems.error(
        not_number | np.isinf(numbers),
        lambda i: (
            f"column '{header.original}': '{original[i]}' is not a finite number; "
            f"expected a standard uncertainty in {unit.text}" + cell_hint(str(original[i]), unit.text)
        ),
    )
    negative = numbers < 0
    problems.error(
        negative,
        lambda i: f"column '{header.original}': a standard uncertainty cannot be negative",
    )
    if unit.kind == "fraction":
        too_wide = numbers * unit.delta_scale > 1.0
        problems.error(
            too_wide,
            lambda i: f"column '{header.original}': a standard uncertainty "
            "above 100 % cannot be; give it in % (or as a fraction, with '[1]' in the "
            "header)",
        )
        negative = negative | too_wide
    u_si = np.where(is_blank | not_number | negative | np.isinf(numbers), np.nan, numbers)
    return u_si * unit.delta_scale
