"""Reading .xlsx workbooks as text cells, within limits checked before anything is loaded.

An .xlsx file is a zip archive of XML parts (ECMA-376 Office Open XML, part 2:
Open Packaging Conventions). Its central directory lists each part's
uncompressed size, and Python's zipfile never inflates a part beyond its listed
size, so the total is checked against a limit before openpyxl opens the
workbook: a small file whose shared strings inflate to gigabytes (a zip bomb) is
refused with a message instead. The cells a sheet yields are counted as they are
read and the reading stops at a second limit.

==========================  ===========  ============================================
limit                       default      raised with the environment variable
==========================  ===========  ============================================
uncompressed size           100 MB       ``MOLID_XLSX_MAX_MB``
cells read from a sheet     2,000,000    ``MOLID_XLSX_MAX_CELLS``
==========================  ===========  ============================================

Cells are read as text as a user typed them: a cell holding ``NA``, ``None``,
``null``, ``N/A`` or ``nan`` stays that text (only an empty cell is empty), an
error value such as ``#N/A`` stays its text, a whole number stored as a float is
written without ``.0``, dates as ``YYYY-MM-DD HH:MM:SS``.
"""

from __future__ import annotations

import io
import math
import os
import re
import zipfile

import pandas as pd

from molid.io.headers import HEADER_SEARCH_ROWS
from molid.io.problems import InputError

__all__ = ["MAX_MEGABYTES", "MAX_CELLS", "limits", "check_archive", "Workbook", "looks_like_workbook",
           "not_a_workbook"]

#: Default limit of a workbook's uncompressed size [MB] (raise with ``MOLID_XLSX_MAX_MB``).
MAX_MEGABYTES = 100
#: Default limit of the cells read from a sheet (raise with ``MOLID_XLSX_MAX_CELLS``).
MAX_CELLS = 2_000_000

_ZIP = (b"PK\x03\x04", b"PK\x05\x06")
_OLE = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"  # a compound file: .xls, or an encrypted .xlsx
_WORKBOOK_SUFFIXES = (".xlsx", ".xlsm", ".xltx", ".xltm", ".xls", ".ods")
_SAVE = "save the sheet as .xlsx or as CSV"
_EXACT_WHOLE = 2.0 ** 53  # floats with no fraction below this print as whole numbers exactly


def limits() -> tuple[int, int]:
    """Return the workbook limits in force: uncompressed bytes and cells.

    Returns
    -------
    tuple of int
        Bytes and cells, from the environment variables or the defaults.

    Raises
    ------
    InputError
        When an environment variable is set to something that is not a positive number.
    """
    return (int(_setting("MOLID_XLSX_MAX_MB", MAX_MEGABYTES) * 1_000_000),
            int(_setting("MOLID_XLSX_MAX_CELLS", MAX_CELLS)))


def _setting(variable: str, default: float) -> float:
    text = os.environ.get(variable, "").strip()
    if not text:
        return default
    try:
        value = float(text.replace("_", ""))
    except ValueError:
        value = math.nan
    if not value > 0 or math.isinf(value):
        raise InputError(f"environment variable {variable}='{text}': give a positive number "
                         f"(the default is {default:,})")
    return value


def looks_like_workbook(data: bytes, name: str) -> bool:
    """Whether to read a file as a workbook: a zip archive, a compound file, or a workbook's name.

    Parameters
    ----------
    data : bytes
        The file's bytes.
    name : str
        Its name.

    Returns
    -------
    bool
        True for anything that is, or says it is, a workbook.
    """
    return data.startswith(_ZIP) or data.startswith(_OLE) or name.lower().endswith(_WORKBOOK_SUFFIXES)


def not_a_workbook(data: bytes, name: str) -> InputError:
    """Say in one line why a file that looks like a workbook cannot be read as one.

    Parameters
    ----------
    data : bytes
        The file's bytes.
    name : str
        Its name.

    Returns
    -------
    InputError
        The message.
    """
    if data.startswith(_OLE):
        return InputError(f"{name}: an Excel 97–2003 workbook (.xls) or a password-protected one; molid "
                          f"reads .xlsx workbooks without a password and CSV: {_SAVE}")
    if not data.startswith(_ZIP):
        return InputError(f"{name}: not an .xlsx workbook (an .xlsx file is a zip archive and this one "
                          f"is not; it may be another kind of file renamed): {_SAVE}")
    return InputError(f"{name}: a zip archive that is not an .xlsx workbook, or a damaged one: {_SAVE}")


def check_archive(data: bytes, name: str) -> zipfile.ZipFile:
    """Open a workbook's zip archive and check its parts and size before anything is inflated.

    Parameters
    ----------
    data : bytes
        The file's bytes.
    name : str
        Its name, for messages.

    Returns
    -------
    zipfile.ZipFile
        The archive, to be closed by the caller.

    Raises
    ------
    InputError
        For a file that is not a zip archive, an archive that is not a workbook, an
        OpenDocument spreadsheet, or a workbook larger than the limit when inflated.
    """
    try:
        archive = zipfile.ZipFile(io.BytesIO(data))
        parts = archive.infolist()
    except (zipfile.BadZipFile, zipfile.LargeZipFile, OSError, ValueError, EOFError):
        raise not_a_workbook(data, name) from None
    names = {part.filename for part in parts}
    if "xl/workbook.xml" not in names and not any(each.startswith("xl/workbook") for each in names):
        archive.close()
        if "mimetype" in names and "content.xml" in names:
            raise InputError(f"{name}: an OpenDocument spreadsheet (.ods), not an .xlsx workbook: {_SAVE}")
        raise not_a_workbook(data, name)
    limit = limits()[0]
    inflated = sum(part.file_size for part in parts)
    if inflated > limit:
        archive.close()
        raise InputError(
            f"{name}: the workbook holds {_size(inflated)} once unpacked, more than the limit of "
            f"{_size(limit)}; save the sheet as CSV (read in bounded memory), or raise the limit "
            "with the environment variable MOLID_XLSX_MAX_MB")
    return archive


def _size(count: int) -> str:
    return f"{count / 1e6:,.1f} MB" if count >= 100_000 else f"{count:,} bytes"


class Workbook:
    """A workbook open for reading its sheets as text cells.

    Parameters
    ----------
    data : bytes
        The .xlsx file's bytes.
    name : str
        Its name, for messages.

    Raises
    ------
    InputError
        See :func:`check_archive`; also for a workbook openpyxl cannot open.
    """

    def __init__(self, data: bytes, name: str):
        import openpyxl

        self.name = name
        check_archive(data, name).close()
        try:
            self._book = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True,
                                                keep_links=False)
        except Exception as error:  # openpyxl raises many kinds for damaged parts
            raise _damaged(name, error) from None
        self.sheet_names = [str(each) for each in self._book.sheetnames]

    def close(self) -> None:
        """Close the archive."""
        self._book.close()

    def __enter__(self):
        return self

    def __exit__(self, *exception):
        self.close()

    def cells(self, sheet: str, rows: int | None = None) -> pd.DataFrame:
        """Read a sheet's cells as text, "" where empty, without a header.

        Parameters
        ----------
        sheet : str
            The sheet's name.
        rows : int, optional
            Read only this many rows from the top (to look for a header).

        Returns
        -------
        pandas.DataFrame
            Row 0 is the spreadsheet's row 1; trailing empty rows are left out, short rows
            padded with "".

        Raises
        ------
        InputError
            For a damaged sheet, or more cells than the limit.
        """
        worksheet = self._book[sheet]
        if not hasattr(worksheet, "iter_rows"):  # a chart sheet holds no cells
            return pd.DataFrame()
        try:
            table = self._rows(worksheet, sheet, rows)
        except InputError:
            raise
        except Exception as error:
            raise _damaged(self.name, error, sheet) from None
        width = max((len(row) for row in table), default=0)
        return pd.DataFrame([row + [""] * (width - len(row)) for row in table],
                            columns=range(width), dtype="str")

    def _rows(self, worksheet, sheet: str, rows: int | None) -> list:
        """Read a sheet's rows as lists of text, up to its last row with a cell that is not blank.

        The table the rows make (rows × the widest row) is what memory holds, so that is
        what the cell limit bounds; blank rows at the end cost nothing.
        """
        limit = limits()[1]
        table, blank_rows, width = [], 0, 0
        # The size a sheet states for itself may be wrong, or huge: read the cells it has.
        worksheet.reset_dimensions()
        for row in worksheet.iter_rows(values_only=True):
            cells = [_text(value) for value in row]
            if not any(cell.strip() for cell in cells):
                blank_rows += 1
            else:
                width = max(width, len(cells))
                if (len(table) + blank_rows + 1) * width > limit:
                    raise InputError(
                        f"{self.name}: sheet '{sheet}' has more than {limit:,} cells (counting the empty "
                        "cells within its used rows and columns), the limit; save the sheet as CSV (read "
                        "in bounded memory), or raise the limit with the environment variable "
                        "MOLID_XLSX_MAX_CELLS")
                table.extend([[] for _ in range(blank_rows)])
                table.append(cells)
                blank_rows = 0
            if rows is not None and len(table) + blank_rows >= rows:
                break
        return table

    def first_rows(self, sheet: str) -> pd.DataFrame:
        """Read the rows in which a sheet's header is looked for."""
        return self.cells(sheet, HEADER_SEARCH_ROWS)


def _text(value) -> str:
    """Write a cell's value as the text a user typed: whole floats without '.0', None as ""."""
    if value is None:
        return ""
    if isinstance(value, str):
        return value
    if isinstance(value, bool):
        return str(value)
    if isinstance(value, float):
        if math.isfinite(value) and value == int(value) and abs(value) < _EXACT_WHOLE:
            return str(int(value))
        return repr(value)
    return str(value)


_UNPRINTABLE = re.compile(r"[^\x20-\x7e]+")


def _damaged(name: str, error: Exception, sheet: str | None = None) -> InputError:
    """One line for a workbook openpyxl cannot read: what kind of failure, briefly, never a dump."""
    detail = _UNPRINTABLE.sub(" ", str(error)).strip()
    detail = detail if len(detail) <= 80 else detail[:79] + "…"
    where = f"sheet '{sheet}' of " if sheet is not None else ""
    return InputError(f"{name}: cannot read {where}the workbook: it is damaged or not an .xlsx workbook "
                      f"({type(error).__name__}{': ' + detail if detail else ''}); {_SAVE}")
