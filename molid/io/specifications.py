"""Purity specifications: the columns of a run file and the ``--spec`` file, read and checked.

A specification gives an upper limit on a contaminant's mole fraction, written as
a maximum contaminant fraction (``max_contaminant``) or a minimum purity
(``min_purity``; the limit is then 100 % less it), both in percent unless the
header names another fraction unit, and optionally the contaminant (a library
name, formula or CAS number; air when none is named).

In a run file the columns ``min_purity``, ``max_contaminant`` and ``contaminant``
apply to their row (and a sample takes its runs' value). A specification file
applies to every run and sample labelled (``expected``) with a gas it names;
the file is TOML::

    [specifications."sulfur hexafluoride"]
    min_purity = 99.9          # percent
    contaminant = "air"

or CSV with the columns ``label``, ``min_purity`` or ``max_contaminant`` and
optionally ``contaminant``. A column of the run file wins over the file.
"""

from __future__ import annotations

import csv
import sys
from pathlib import Path

import numpy as np

from molid.candidates.search import find_candidate
from molid.io.headers import parse_header
from molid.io.problems import InputError
from molid.io.units import UnitProblem, resolve_unit, to_si

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - exercised on Python 3.10 only
    import tomli as tomllib

__all__ = ["SPEC_COLUMNS", "specification_columns", "load_specifications"]

#: Columns of a run file that carry a specification.
SPEC_COLUMNS = ("contaminant", "min_purity", "max_contaminant")


def _limit(min_purity, max_contaminant):
    """Upper limit of the contaminant fraction [1] from a minimum purity or a maximum contaminant."""
    return np.where(np.isfinite(max_contaminant), max_contaminant, 1.0 - min_purity)


def specification_columns(table, library) -> dict:
    """Read the specification columns of a run table, row by row.

    Parameters
    ----------
    table : molid.io.reading.RunTable
        The runs, with the user's cells in ``raw``.
    library : pandas.DataFrame
        The candidate library, to find each contaminant.

    Returns
    -------
    dict
        ``contaminant`` (library row, -1 where none is named), ``limit`` (upper limit of
        the contaminant fraction [1], NaN where none) and ``warnings`` (per row, a list of
        messages: an unknown contaminant, a limit outside 0-100 %, both limits given).
    """
    count = len(table.raw)
    headers = {parse_header(column).name: column for column in table.raw.columns}
    warnings = [[] for _ in range(count)]
    contaminant = np.full(count, -1)
    if "contaminant" in headers:
        cells = table.raw[headers["contaminant"]].astype(str).str.strip().to_numpy(dtype=object)
        found = {text: find_candidate(library, text) for text in set(cells) if text}
        for i, text in enumerate(cells):
            if text and found[text] is None:
                warnings[i].append(f"column '{headers['contaminant']}': '{text}' is no library gas "
                                   "(a name, formula or CAS number); the default contaminant is used")
            elif text:
                contaminant[i] = found[text]
    values = {}
    for name in ("min_purity", "max_contaminant"):
        values[name] = np.full(count, np.nan)
        if name in headers:
            values[name] = _percent_column(table.raw[headers[name]], headers[name], warnings)
    both = np.isfinite(values["min_purity"]) & np.isfinite(values["max_contaminant"])
    for i in np.flatnonzero(both):
        warnings[i].append("both min_purity and max_contaminant are given; max_contaminant is used")
    return {"contaminant": contaminant, "limit": _limit(values["min_purity"], values["max_contaminant"]),
            "warnings": warnings}


def _percent_column(cells, header_text, warnings):
    """Read a fraction column [1]: NaN where blank or unusable, with a warning on the row."""
    header = parse_header(header_text)
    try:
        unit = resolve_unit("fraction", header.unit)
    except UnitProblem as error:
        raise InputError(f"column '{header_text}': {error}") from None
    text = cells.astype(str).str.strip()
    numbers = np.array([_number(item) for item in text], dtype=float)
    values = to_si(numbers, unit)
    for i in np.flatnonzero((text != "").to_numpy() & ~np.isfinite(numbers)):
        warnings[i].append(f"column '{header_text}': '{text.iloc[i]}' is not a number; no specification")
    for i in np.flatnonzero(np.isfinite(values) & ((values < 0) | (values > 1))):
        warnings[i].append(f"column '{header_text}': {text.iloc[i]} {unit.text} is outside 0 to 100 %; "
                           "no specification")
    return np.where((values >= 0) & (values <= 1), values, np.nan)


def _number(text):
    try:
        return float(text.replace(",", ".")) if text else np.nan
    except ValueError:
        return np.nan


def load_specifications(path, library) -> dict:
    """Read a specification file (TOML or CSV): label's library row → (limit, contaminant row).

    Parameters
    ----------
    path : str or pathlib.Path
        The file.
    library : pandas.DataFrame
        The candidate library.

    Returns
    -------
    dict
        Library row of each labelled gas → (upper limit of the contaminant fraction [1],
        contaminant's library row or -1 for the default).

    Raises
    ------
    InputError
        An unreadable file, a label or contaminant that is no library gas, a limit
        outside 0-100 % or missing: the message names the entry.
    """
    path = Path(path)
    try:
        if path.suffix.lower() == ".toml":
            with path.open("rb") as stream:
                entries = _toml_entries(tomllib.load(stream), path)
        else:
            with path.open(encoding="utf-8-sig", newline="") as stream:
                entries = [(f"row {number}", row)
                           for number, row in enumerate(csv.DictReader(stream), start=2)]
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError, csv.Error) as error:
        raise InputError(f"{path}: cannot read the specification file: {error}") from None
    specifications = {}
    for where, entry in entries:
        label = str(entry.get("label", "")).strip()
        row = find_candidate(library, label) if label else None
        if row is None:
            raise InputError(f"{path}, {where}: label '{label}' is no library gas; give a name, formula "
                             "or CAS number that `molid library` lists")
        specifications[row] = (_entry_limit(entry, path, where),
                               _entry_contaminant(entry, library, path, where))
    return specifications


def _toml_entries(document, path):
    table = document.get("specifications")
    if not isinstance(table, dict):
        raise InputError(f"{path}: expected a [specifications.\"<label>\"] table per labelled gas")
    return [(f"[specifications.\"{label}\"]", {**values, "label": label}) for label, values in table.items()
            if isinstance(values, dict)]


def _entry_limit(entry, path, where):
    """Return the upper limit [1] of one entry, from min_purity or max_contaminant in percent."""
    found = {key: entry.get(key) for key in ("min_purity", "max_contaminant")
             if str(entry.get(key, "") or "").strip() != ""}
    if len(found) != 1:
        raise InputError(f"{path}, {where}: give exactly one of min_purity or max_contaminant (percent)")
    key, value = next(iter(found.items()))
    try:
        percent = float(str(value).replace("%", "").strip())
    except ValueError:
        raise InputError(f"{path}, {where}: {key} = {value!r} is not a number of percent") from None
    if not 0.0 <= percent <= 100.0:
        raise InputError(f"{path}, {where}: {key} = {percent:g} % is outside 0 to 100 %")
    return percent / 100.0 if key == "max_contaminant" else 1.0 - percent / 100.0


def _entry_contaminant(entry, library, path, where):
    text = str(entry.get("contaminant", "") or "").strip()
    if not text:
        return -1
    row = find_candidate(library, text)
    if row is None:
        raise InputError(f"{path}, {where}: contaminant '{text}' is no library gas")
    return row
