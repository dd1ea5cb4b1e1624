"""Finding the header row: title lines above it, and the sheet of a workbook that has one.

Run sheets often start with a title ("Section 4B gas bulbs, 3 Dec") or a blank
row. The header is the first row, within :data:`~molid.io.headers.HEADER_SEARCH_ROWS`
rows, whose cells name every column a run file needs; the rows above it are
dropped with a note, and rows keep the numbers a spreadsheet gives them. A file
where no such row is found is read with its first row as the header, as before,
so the reader's message about missing columns names what the file holds.
"""

from __future__ import annotations

import csv
import re
from dataclasses import dataclass

import pandas as pd

from molid.io.columns import REQUIRED_COLUMNS
from molid.io.headers import HEADER_SEARCH_ROWS, is_header_row
from molid.io.problems import InputError

__all__ = [
    "HeaderLine",
    "find_header_line",
    "header_index",
    "frame_below_header",
    "title_note",
    "choose_sheet",
    "sheet_note",
]

_LINE_END = re.compile(r"\r\n|\r|\n")
_SEPARATORS = (",", ";", "\t")
_TITLE_LENGTH = 80


@dataclass(frozen=True)
class HeaderLine:
    """Where a delimited text's header is.

    Attributes
    ----------
    index : int
        Line of the header, counting from 0 (its spreadsheet row is ``index + 1``).
    offset : int
        Character position where the header line starts.
    separator : str
        The separator that splits the header into the required names.
    titles : list of str
        The non-blank lines above the header, as written.
    """

    index: int
    offset: int
    separator: str
    titles: list


def _first_lines(text: str, count: int) -> list:
    """Return the first ``count`` lines of a text, each with the position where it starts."""
    lines, start = [], 0
    for match in _LINE_END.finditer(text):
        lines.append((start, text[start:match.start()]))
        start = match.end()
        if len(lines) == count:
            return lines
    if start < len(text):
        lines.append((start, text[start:]))
    return lines


def find_header_line(text: str) -> HeaderLine | None:
    """Find the header line of delimited text (comma, semicolon or tab separated).

    Parameters
    ----------
    text : str
        The file's text, or at least its first lines.

    Returns
    -------
    HeaderLine or None
        The first line, within the search rows, whose cells name every required column
        for one of the separators; None when there is no such line.
    """
    lines = _first_lines(text, HEADER_SEARCH_ROWS)
    for index, (offset, line) in enumerate(lines):
        # the separator used most on the line first: a title's comma must not split the header
        for separator in sorted(_SEPARATORS, key=line.count, reverse=True):
            if not line.count(separator):
                continue
            cells = next(csv.reader([line], delimiter=separator, skipinitialspace=True), [])
            if is_header_row(cells):
                titles = [_title(earlier, separator) for _, earlier in lines[:index]]
                return HeaderLine(index, offset, separator, [title for title in titles if title])
    return None


def _title(line: str, separator: str) -> str:
    """Return a title line as a spreadsheet shows it: its cells, without quotes or trailing empty cells."""
    cells = next(csv.reader([line], delimiter=separator, skipinitialspace=True), [])
    joint = "  " if separator == "\t" else f"{separator} "
    return _shorten(joint.join(cell.strip() for cell in cells if cell.strip()))


def _shorten(text: str) -> str:
    return text if len(text) <= _TITLE_LENGTH else text[: _TITLE_LENGTH - 1] + "…"


def header_index(cells: pd.DataFrame) -> int | None:
    """Find the header row of a sheet's cells.

    Parameters
    ----------
    cells : pandas.DataFrame
        The sheet as text cells, without a header (row 0 is the spreadsheet's row 1).

    Returns
    -------
    int or None
        The position of the first row, within the search rows, naming every required
        column; None when there is none.
    """
    for index in range(min(len(cells), HEADER_SEARCH_ROWS)):
        if is_header_row(cells.iloc[index].tolist()):
            return index
    return None


def _unique_headers(cells) -> list:
    """Header cells as column labels the way pandas names them: 'Unnamed: 3' when blank, 'x.1' repeated."""
    labels, seen = [], {}
    for position, cell in enumerate(cells):
        label = str(cell) if str(cell).strip() else f"Unnamed: {position}"
        if label in seen:
            seen[label] += 1
            label = f"{label}.{seen[label]}"
        else:
            seen[label] = 0
        labels.append(label)
    return labels


def frame_below_header(cells: pd.DataFrame, notes: list) -> pd.DataFrame:
    """Turn a sheet's cells into a table under its header row; note any title rows dropped.

    Parameters
    ----------
    cells : pandas.DataFrame
        The sheet as text cells ("" where blank), without a header.
    notes : list of str
        Where the note of skipped title rows goes.

    Returns
    -------
    pandas.DataFrame
        The rows below the header, labelled by it; ``attrs["header_row"]`` is the
        header's spreadsheet row (1 when no header row was recognised).
    """
    index = header_index(cells)
    if index is None:
        index = 0
    elif index:
        titles = [" ".join(str(cell).strip() for cell in row if str(cell).strip())
                  for row in cells.iloc[:index].itertuples(index=False)]
        notes.append(title_note(index + 1, [_shorten(title) for title in titles if title]))
    if len(cells) == 0:
        frame = pd.DataFrame()
    else:
        frame = cells.iloc[index + 1:].reset_index(drop=True)
        frame.columns = _unique_headers(cells.iloc[index].tolist())
    frame.attrs["header_row"] = index + 1
    return frame


def title_note(header_row: int, titles: list) -> str:
    """Say which rows above the header were skipped, quoting their text.

    Parameters
    ----------
    header_row : int
        The header's spreadsheet row (2 or more).
    titles : list of str
        The non-blank rows above it, as written.

    Returns
    -------
    str
        E.g. ``rows 1–2 above the header were skipped: 'Section 4B gas bulbs, 3 Dec'``.

    Examples
    --------
    >>> title_note(2, ["Gas bulbs, 3 Dec"])
    "row 1 above the header was skipped: 'Gas bulbs, 3 Dec'"
    """
    rows = "row 1 above the header was" if header_row == 2 else \
        f"rows 1–{header_row - 1} above the header were"
    quoted = "; ".join(f"'{title}'" for title in titles)
    return f"{rows} skipped" + (f": {quoted}" if quoted else " (blank)")


def choose_sheet(names: list, sheet, source: str) -> str:
    """Find the sheet asked for by name (exactly, else ignoring case) or by position from 1.

    Parameters
    ----------
    names : list of str
        The workbook's sheet names, in order.
    sheet : str or int
        A sheet's name, or its position counting from 1.
    source : str
        The file's name, for messages.

    Returns
    -------
    str
        The sheet's name.

    Raises
    ------
    InputError
        When no sheet has that name or position; the message lists the sheets.

    Examples
    --------
    >>> choose_sheet(["Cover", "Runs"], "2", "book.xlsx")
    'Runs'
    >>> choose_sheet(["Cover", "Runs"], "runs", "book.xlsx")
    'Runs'
    """
    text = str(sheet).strip()
    if text in names:
        return text
    folded = [name for name in names if name.casefold() == text.casefold()]
    if len(folded) == 1:
        return folded[0]
    if text.isdigit() and 1 <= int(text) <= len(names):
        return names[int(text) - 1]
    listed = ", ".join(f"{position} '{name}'" for position, name in enumerate(names, start=1))
    raise InputError(f"{source}: no sheet '{sheet}'; its sheets are {listed} (give a name or a "
                     "position counting from 1)")


def sheet_note(chosen: str, first: str) -> str:
    """Say that a sheet other than the first was read because only it has a header row."""
    return (f"sheet '{chosen}' was read: the first sheet, '{first}', has no header row naming "
            f"{', '.join(REQUIRED_COLUMNS)} (choose another sheet with --sheet)")
