"""The answer key of a lab section: which gas each unknown sample is.

:func:`read_key` reads a key file; :func:`identities_from_key` lays a key over a
run file's ``expected`` column (the key wins where both give an identity).
"""

from __future__ import annotations

import numpy as np

from molid.io.headers import parse_header
from molid.io.problems import InputError
from molid.io.reading import read_raw

__all__ = ["KeyFileError", "read_key", "identities_from_key"]

_KEY_IDENTITY_COLUMNS = ("expected", "identity", "gas", "answer", "substance", "formula", "name")


class KeyFileError(InputError):
    """An answer key that cannot be used."""


def _identity_column(names: list, name) -> str:
    """Find the key's identity column: a known header, else the other column of two."""
    identity = next((item for item in _KEY_IDENTITY_COLUMNS if item in names), None)
    if identity is None and len(names) == 2:
        identity = names[1 - names.index("sample")]
    if identity is None:
        raise KeyFileError(f"answer key {name}: no identity column; name it 'expected' (or "
                           "identity, gas, answer, substance, formula, name)")
    return identity


def read_key(source) -> dict:
    """Read an answer key: sample id -> (identity text, key-file row).

    Parameters
    ----------
    source : str, pathlib.Path, file-like or pandas.DataFrame
        A CSV or .xlsx file with a ``sample`` column and an identity column
        (``expected``, ``identity``, ``gas``, ``answer``, ``substance``,
        ``formula`` or ``name``; or any second column of a two-column file).

    Returns
    -------
    dict
        Sample id -> (identity as written, spreadsheet row).

    Raises
    ------
    KeyFileError
        For a file without those columns, blank cells, or a sample given two
        different identities (every problem named by row).
    """
    try:
        raw, _, _, name = read_raw(source)
    except InputError as problem:
        raise KeyFileError(f"answer key: {problem}") from None
    names = [parse_header(column).name for column in raw.columns]
    if "sample" not in names:
        raise KeyFileError(f"answer key {name}: no 'sample' column (found: "
                           + ", ".join(f"'{c}'" for c in raw.columns) + ")")
    identity = _identity_column(names, name)
    samples = raw.iloc[:, names.index("sample")].astype(str).str.strip()
    identities = raw.iloc[:, names.index(identity)].astype(str).str.strip()
    rows = np.arange(2, len(raw) + 2)
    problems, key = [], {}
    for sample, text, row in zip(samples, identities, rows, strict=True):
        if not sample and not text:
            continue
        if not sample or not text:
            problems.append(f"row {row}: " + ("the sample id is empty" if not sample else
                                              f"sample '{sample}' has no identity"))
            continue
        if sample in key and key[sample][0].casefold() != text.casefold():
            problems.append(f"row {row}: sample '{sample}' is '{text}' here but "
                            f"'{key[sample][0]}' in row {key[sample][1]}")
            continue
        key.setdefault(sample, (text, int(row)))
    if problems:
        raise KeyFileError(f"answer key {name}: " + "; ".join(problems))
    if not key:
        raise KeyFileError(f"answer key {name}: no sample in it")
    return key


def identities_from_key(key, samples, column_expected, rows) -> tuple[np.ndarray, list]:
    """Give each run its true identity: the answer key's first, else the ``expected`` column.

    Parameters
    ----------
    key : str, pathlib.Path, file-like, pandas.DataFrame, dict or None
        An answer key (see :func:`read_key`), or a dict sample -> identity (or
        -> (identity, row)); None uses the column alone.
    samples : numpy.ndarray of str or None
        Sample id of each run.
    column_expected : numpy.ndarray of str or None
        The run file's ``expected`` cell of each run.
    rows : numpy.ndarray of int
        Spreadsheet row of each run.

    Returns
    -------
    expected : numpy.ndarray of str or None
        The identity of each run as written; None where neither gives one.
    notes : list of str
        Where the key overrides the column, and key samples with no run.

    Raises
    ------
    KeyFileError
        For a key file that cannot be used.
    """
    if key is None:
        return column_expected.copy(), []
    notes = []
    key_map = key if isinstance(key, dict) else read_key(key)
    key_map = {str(sample): (value if isinstance(value, tuple) else (value, None))
               for sample, value in key_map.items()}
    from_key = np.array([key_map.get(sample, (None, None))[0] if sample is not None else None
                         for sample in samples], dtype=object)
    differs = [int(rows[i]) for i in range(len(samples)) if from_key[i] is not None
               and column_expected[i] is not None
               and str(from_key[i]).casefold() != str(column_expected[i]).casefold()]
    if differs:
        notes.append("the answer key overrides the 'expected' column where they differ (rows "
                     + ", ".join(map(str, differs)) + ")")
    expected = np.where(from_key != None, from_key, column_expected)  # noqa: E711
    unused = sorted(set(key_map) - {str(s) for s in samples if s is not None})
    if unused:
        notes.append("answer key samples with no run: " + ", ".join(unused))
    return expected, notes
