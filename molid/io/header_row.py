"""Finding the header row: title lines above it, and the sheet of a workbook that has one.

Run sheets often start with a title ("Section 4B gas bulbs, 3 Dec") or a blank
row. The header is the first row, within :data:`~molid.io.headers.HEADER_SEARCH_ROWS`
rows, whose cells name every column a run file needs; the rows above it are
dropped with a note, and rows keep the numbers a spreadsheet gives them. A file
where no such row is found is read with its first row as the header, as before,
so the reader's message about missing columns names what the file holds.
"""

from __future__ import annotations

import re

import pandas as pd

from molid.io.columns import REQUIRED_COLUMNS
from molid.io.headers import HEADER_SEARCH_ROWS, is_header_row
from molid.io.problems import InputError

__all__ = [
    "column_labels",
    "header_index",
    "header_line_notes",
    "join_header_lines",
    "title_text",
    "frame_below_header",
    "title_note",
    "choose_sheet",
    "sheet_note",
]

_LINE_END = re.compile(r"\r\n|\r|\n")
_TITLE_LENGTH = 80


def title_text(cells, separator: str) -> str:
    """Return a title row as a spreadsheet shows it: its cells, without quotes or empty cells.

    Parameters
    ----------
    cells : list of str
        The row's cells.
    separator : str
        The file's separator, shown between the cells.

    Returns
    -------
    str
        The cells joined, shortened to 80 characters.

    Examples
    --------
    >>> title_text(["Gas bulbs", " 3 Dec", ""], ",")
    'Gas bulbs, 3 Dec'
    """
    joint = "  " if separator == "\t" else f"{separator} "
    return _shorten(joint.join(str(cell).strip() for cell in cells if str(cell).strip()))


def join_header_lines(cell) -> str:
    r"""Read a header cell that holds line breaks (a wrapped header) as one line.

    Parameters
    ----------
    cell : str
        The header cell as written.

    Returns
    -------
    str
        Its lines, stripped, joined by single spaces; a cell without a line break as it is.

    Examples
    --------
    >>> join_header_lines("Temperature\n(°C)")
    'Temperature (°C)'
    """
    text = str(cell)
    if "\n" not in text and "\r" not in text:
        return text
    return " ".join(part.strip() for part in _LINE_END.split(text) if part.strip())


def header_line_notes(cells, header_row: int) -> list:
    """Write a note for each header cell that held a line break, saying how it was read.

    Parameters
    ----------
    cells : list of str
        The header's cells as written.
    header_row : int
        The header's spreadsheet row.

    Returns
    -------
    list of str
        One note per such cell.
    """
    return [f"the header cell '{_shorten(str(cell).strip())!s}' in row {header_row} holds a line break; "
            f"it was read as '{join_header_lines(cell)}'"
            for cell in cells if join_header_lines(cell) != str(cell)]


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
        if is_header_row([join_header_lines(cell) for cell in cells.iloc[index].tolist()]):
            return index
    return None


def column_labels(cells) -> list:
    """Label a header's cells as pandas does: ``Unnamed: 3`` where blank, ``x.1`` for a second ``x``.

    Parameters
    ----------
    cells : list of str
        The header's cells (line breaks already joined).

    Returns
    -------
    list of str
        One unique label per cell; two headers that mean one column are told apart by
        :func:`molid.io.headers.resolve_headers`, which names both.

    Examples
    --------
    >>> column_labels(["run", "pressure", "pressure", ""])
    ['run', 'pressure', 'pressure.1', 'Unnamed: 3']
    """
    labels, used = [], set()
    for position, cell in enumerate(cells):
        label = str(cell) if str(cell).strip() else f"Unnamed: {position}"
        base, repeat = label, 0
        while label in used:
            repeat += 1
            label = f"{base}.{repeat}"
        used.add(label)
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
        header = cells.iloc[index].tolist()
        notes.extend(header_line_notes(header, index + 1))
        frame.columns = column_labels([join_header_lines(cell) for cell in header])
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
