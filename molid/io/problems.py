"""What can be wrong with an input file: a problem with the whole file, or with some rows.

A problem with the file as a whole stops everything and is raised as
:class:`InputError`. A problem with a row is collected in :class:`RowProblems`
as an error (the row is not analysed) or a warning (it is), so one bad row never
stops the others.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

__all__ = ["InputError", "RowProblems", "read_file_bytes"]


class InputError(ValueError):
    """A problem with a file as a whole: nothing in it can be analysed."""


def read_file_bytes(path, problem: type[Exception] = InputError) -> bytes:
    """Read a file's bytes; a path that is missing, a folder or unreadable raises ``problem`` saying which.

    Parameters
    ----------
    path : str or pathlib.Path
        The file.
    problem : type
        The exception raised, with the path and the reason as its message.

    Returns
    -------
    bytes
        The file's content.
    """
    from pathlib import Path

    try:
        return Path(path).read_bytes()
    except FileNotFoundError:
        raise problem(f"{path}: no such file") from None
    except IsADirectoryError:
        raise problem(f"{path}: is a folder, not a file") from None
    except OSError as error:
        raise problem(f"{path}: cannot read it ({error.strerror})") from None


class RowProblems:
    """Per-row errors and warnings, filled by vectorised checks.

    Parameters
    ----------
    row_numbers : numpy.ndarray of int
        Spreadsheet row number of each row; every error message starts with it.

    Attributes
    ----------
    errors, warnings : list of list of str
        The messages of each row, in the order the checks found them.
    """

    def __init__(self, row_numbers: np.ndarray):
        self.row_numbers = row_numbers
        # One shared empty list: a row gets its own list only when it has a problem,
        # so a clean chunk of 10,000 rows allocates no 20,000 lists.
        empty: list = []
        self.errors = [empty] * len(row_numbers)
        self.warnings = [empty] * len(row_numbers)

    def error(self, mask, message: Callable[[int], str]) -> None:
        """Give each row selected by ``mask`` an error, prefixed with its row number.

        Parameters
        ----------
        mask : numpy.ndarray of bool
            The rows that have the problem.
        message : callable
            Called with a row's position, returns the message; only rows with the
            problem pay for writing one.
        """
        for index in np.flatnonzero(mask):
            self.errors[index] = self.errors[index] + [
                f"row {self.row_numbers[index]}, " + message(index)]

    def warn(self, mask, message: Callable[[int], str]) -> None:
        """Give each row selected by ``mask`` a warning (the row is still analysed).

        Parameters
        ----------
        mask : numpy.ndarray of bool
            The rows that have the problem.
        message : callable
            Called with a row's position, returns the message.
        """
        for index in np.flatnonzero(mask):
            self.warnings[index] = self.warnings[index] + [message(index)]
