"""The unknowns of a plan: names read from an option or a file, found in the library, explained when not.

Names are separated by commas (or written one per line in a file); a comma
inside a library name (``1,3-butadiene``) is kept when the joined text names a
library entry. Each name is looked up as ``molid identify`` looks up a label
(name, alias, CAS number or formula; :func:`molid.candidates.search.find_candidate`).
A name that matches nothing is reported with the closest library names; a
substance that cannot be measured by the method at the nominal conditions is
reported with the reason and, for a substance that would condense, the
temperature or pressure at which it would be a gas.
"""

from __future__ import annotations

import difflib
from pathlib import Path

import numpy as np

from molid.candidates.dissolution import load_henry_table
from molid.candidates.evaluation import candidate_constants
from molid.candidates.search import find_candidate, search_library
from molid.candidates.vapour_pressures import saturation_pressure
from molid.planning.conditions import PlanError, listed

__all__ = ["split_names", "read_names_file", "closest_names", "resolve_names", "condenses_at",
           "boiling_temperature", "unfit_message"]


def split_names(text: str, library) -> list:
    """Split a comma-separated list of names, keeping commas that belong to a library name.

    Parameters
    ----------
    text : str
        E.g. ``"argon, 1,3-butadiene, CO2"``.
    library : pandas.DataFrame
        The candidate library.

    Returns
    -------
    list of str
        The names, stripped, blanks dropped.

    Examples
    --------
    >>> from molid.candidates.library import load_library
    >>> split_names("argon, 1,3-butadiene,CO2", load_library())
    ['argon', '1,3-butadiene', 'CO2']
    """
    pieces = str(text).replace("\n", ",").split(",")
    names, start = [], 0
    while start < len(pieces):
        end = start + 1
        # the longest run of pieces that, joined by commas again, names a library entry
        for stop in range(len(pieces), start + 1, -1):
            if find_candidate(library, ",".join(pieces[start:stop]).strip()) is not None:
                end = stop
                break
        name = ",".join(pieces[start:end]).strip()
        if name:
            names.append(name)
        start = end
    return names


def read_names_file(path) -> list:
    """Read a file of names, one per line; blank lines and text after '#' are skipped.

    Raises
    ------
    PlanError
        When the file cannot be read.
    """
    try:
        text = Path(path).read_text(encoding="utf-8-sig")
    except (OSError, UnicodeDecodeError) as error:
        reason = getattr(error, "strerror", None) or "not a UTF-8 text file"
        raise PlanError(f"--unknowns-file {path}: cannot read it ({reason})") from None
    names = [line.split("#", 1)[0].strip() for line in text.splitlines()]
    return [name for name in names if name]


def closest_names(library, text: str, count: int = 3) -> list:
    """Library names closest to a text that matches none: by shared text first, then by spelling.

    Examples
    --------
    >>> from molid.candidates.library import load_library
    >>> closest_names(load_library(), "argonn")
    ['argon']
    """
    found = list(search_library(library, text)["name"]) if text.strip() else []
    spellings = {}
    for row in library.itertuples():
        for spelling in (row.name, *row.aliases, row.formula or ""):
            if spelling:
                spellings.setdefault(str(spelling).casefold(), row.name)
    near = difflib.get_close_matches(str(text).casefold(), list(spellings), n=count * 3, cutoff=0.6)
    found += [spellings[spelling] for spelling in near]
    return list(dict.fromkeys(found))[:count]


def resolve_names(names, library, option: str) -> list:
    """Find each name's library row; refuse the whole list naming every name that matches none.

    Parameters
    ----------
    names : list of str
        Names, formulas or CAS numbers.
    library : pandas.DataFrame
        The candidate library (index 0..c-1).
    option : str
        The option the names came from, for messages.

    Returns
    -------
    list of int
        The rows, in the order given; a substance named twice is kept once.

    Raises
    ------
    PlanError
        One line per name that is not found (or names several isomers), with the closest names.
    """
    rows, problems = [], []
    for name in names:
        row = find_candidate(library, name)
        if row is None:
            near = closest_names(library, name)
            hint = f"closest library names: {', '.join(near)}" if near else \
                "`molid library TEXT` searches the library"
            problems.append(f"'{name}' is not in the library or names several isomers ({hint})")
        elif row not in rows:
            rows.append(int(row))
    if problems:
        raise PlanError(f"{option}: " + listed(problems))
    return rows


def _saturation(library, row, temperature):
    """Vapour pressure of a library row at temperatures [Pa] (+inf above its critical temperature)."""
    constants = candidate_constants(library)
    T = np.atleast_1d(np.asarray(temperature, dtype=float))[:, None]
    with np.errstate(all="ignore"):
        values, _ = saturation_pressure(T, constants, np.array([row]),
                                        constants["relative_saturation"][[row]])
    return values[:, 0]


def condenses_at(library, row, temperature, pressure) -> bool:
    """Tell whether a substance's vapour pressure at a temperature is below a pressure."""
    if not library.at[row, "has_critical_data"]:
        return False
    return bool(_saturation(library, row, temperature)[0] < pressure)


def boiling_temperature(library, row, pressure):
    """Temperature at which a substance's vapour pressure reaches a pressure [K], to 0.1 K.

    Parameters
    ----------
    library : pandas.DataFrame
        The candidate library.
    row : int
        The substance's row.
    pressure : float
        [Pa].

    Returns
    -------
    float
        The temperature [K]; NaN when not found between 50 K and the critical temperature.
    """
    grid = np.arange(50.0, 800.0, 0.1)
    values = _saturation(library, row, grid)
    above = np.flatnonzero(np.isfinite(values) & (values >= pressure))
    return float(grid[above[0]]) if len(above) else float("nan")


def unfit_message(library, row, verdict: str, conditions) -> str:
    """Say why a substance cannot be an unknown of this method at the nominal conditions.

    Parameters
    ----------
    library : pandas.DataFrame
        The candidate library.
    row : int
        The substance's row.
    verdict : str
        Its own verdict at the nominal conditions: ``condenses``, ``not-a-liquid`` or ``dissolves``.
    conditions : molid.planning.conditions.Conditions
        The nominal conditions.

    Returns
    -------
    str
        One line: what is wrong and, for a condensing substance, the temperature or
        pressure at which it would be a gas.
    """
    name = library.at[row, "name"]
    text = conditions.text
    if verdict == "condenses":
        vapour = float(_saturation(library, row, conditions.temperature)[0])
        boils = boiling_temperature(library, row, conditions.pressure)
        ways = [f"above {boils - 273.15:.1f} degC at {text['pressure']}"] if np.isfinite(boils) else []
        if vapour >= 1.0:  # a pressure below 1 Pa is no way to measure a gas by weighing
            ways.append(f"below {vapour / 1000:.3g} kPa at {text['temperature']}")
        return (f"{name} is not a gas at {text['temperature']} and {text['pressure']}: its vapour "
                f"pressure there is about {vapour / 1000:.3g} kPa"
                + (f"; it would be a gas {' or '.join(ways)}" if ways else ""))
    if verdict == "not-a-liquid":
        return (f"{name} is a gas at the room temperature ({text['room_temperature']}): a condensed-"
                "vapour flask needs a liquid that boils between the room and the bath; measure it "
                "with a gas method (evacuated-bulb, air-tare-bulb, syringe)")
    reason = load_henry_table().get(str(name).strip().lower(), (0, 0, True, "", ""))[3]
    return (f"{name} cannot be collected over water: " + (reason or "it dissolves in water")
            + "; measure it with a vessel method (evacuated-bulb, air-tare-bulb, syringe)")
