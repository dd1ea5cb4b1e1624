"""Units of the input columns: parsing a header's unit with pint and converting to SI.

Each measured column has a physical kind (mass, volume, temperature, pressure,
fraction, length) and a default unit used when the header names none. Conversion to SI
happens once, here, at the edge of the library; everything downstream works in
kg, m³, K, Pa and plain fractions.

The pint registry is built lazily on first use so that commands which never read
a file (``molid --help``) do not pay for it, and a unit once resolved is kept in the
user cache (:mod:`molid.cache`), so that later processes need not import pint at all.
"""

from __future__ import annotations

import functools
import os
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from molid.cache import content_key, read_document, write_document

__all__ = [
    "DEFAULT_UNITS",
    "SI_UNITS",
    "ACCEPTED_UNITS",
    "UnitProblem",
    "ColumnUnit",
    "registry",
    "resolve_unit",
    "to_si",
]

#: Unit assumed when a header gives none.
DEFAULT_UNITS = {
    "mass": "g",
    "volume": "mL",
    "temperature": "degC",
    "pressure": "kPa",
    "fraction": "percent",
    "molar_mass": "g/mol",
    "length": "mm",
    "energy": "J",
}

#: The SI unit each kind is converted to.
SI_UNITS = {
    "mass": "kg",
    "volume": "m**3",
    "temperature": "K",
    "pressure": "Pa",
    "fraction": "dimensionless",
    "molar_mass": "kg/mol",
    "length": "m",
    "energy": "J",
}

#: Examples of accepted units, quoted in error messages.
ACCEPTED_UNITS = {
    "mass": "g, mg, kg",
    "volume": "mL (ml), L (l), cm³ (cm3, cc), dm³, m³",
    "temperature": "°C (degC, C), K, °F (degF, F)",
    "pressure": "kPa, Pa, hPa, mbar, bar, atm, mmHg, Torr, inHg, psi (psia)",
    "fraction": "% (percent, % RH, %RH) or 1 (a plain fraction)",
    "molar_mass": "g/mol, kg/mol",
    "length": "mm, cm, m, in",
    "energy": "J, kJ, cal, kcal",
}

_DIMENSIONS = {
    "mass": "[mass]",
    "volume": "[length] ** 3",
    "temperature": "[temperature]",
    "pressure": "[mass] / [length] / [time] ** 2",
    "fraction": "",
    "molar_mass": "[mass] / [substance]",
    "length": "[length]",
    "energy": "[mass] * [length] ** 2 / [time] ** 2",
}


#: Unit symbols as labs write them, matched exactly (case matters: mg is not Mg, mL is not ML),
#: and the name pint knows them by.
_SYMBOLS = {
    "°C": "degC", "ºC": "degC", "C": "degC", "°F": "degF", "ºF": "degF", "F": "degF", "°K": "K",
    "mL": "mL", "ml": "mL", "L": "L", "l": "L", "cc": "cm**3", "%": "percent",
    "1": "dimensionless", "-": "dimensionless",
}
#: Words and symbols read whatever their case: no other unit is spelled the same in another
#: case (keys in lower case, spaces and dots removed). A pressure in psia is absolute, as the
#: reader expects; a gauge reading (psig) is not accepted.
_WORDS = {
    "torr": "torr", "mmhg": "mmHg", "inhg": "inHg", "psi": "psi", "psia": "psi", "atm": "atm",
    "c": "degC", "degc": "degC", "celsius": "degC", "f": "degF", "degf": "degF",
    "fahrenheit": "degF", "kelvin": "K", "percent": "percent", "pct": "percent", "%rh": "percent",
    "percentrh": "percent", "fraction": "dimensionless",
}


def _pint_name(text: str) -> str:
    """Spell a unit as written in a header the way pint reads it (``Torr``: ``torr``; ``cm3``: ``cm**3``)."""
    if text in _SYMBOLS:
        return _SYMBOLS[text]
    word = re.sub(r"[\s.]+", "", text).lower()
    if word in _WORDS:
        return _WORDS[word]
    text = text.replace("°", "deg").replace("³", "**3").replace("²", "**2").replace("^", "**")
    # A power written as a bare digit after a letter: cm3, dm3, m3.
    return re.sub(r"(?<=[A-Za-z])([23])\b", r"**\1", text)


class UnitProblem(ValueError):
    """A unit that cannot be parsed or does not fit the column's kind."""


@functools.lru_cache(maxsize=1)
def registry():
    """Return the shared pint unit registry (built on first call)."""
    import pint

    try:  # pint caches its parsed definitions on disk: ten times faster on later starts
        return pint.UnitRegistry(autoconvert_offset_to_baseunit=True, cache_folder=":auto:")
    except OSError:
        return pint.UnitRegistry(autoconvert_offset_to_baseunit=True)


@dataclass(frozen=True)
class ColumnUnit:
    """A column's unit as a linear map to SI: ``si = scale * value + offset``.

    ``delta_scale`` converts a difference (an uncertainty) in this unit to SI; it
    equals ``scale`` and exists only to make that use explicit for offset units
    such as degC, where a standard uncertainty of 0.1 degC is 0.1 K.
    """

    kind: str
    text: str
    scale: float
    offset: float

    @property
    def delta_scale(self) -> float:
        """Factor converting a difference in this unit to SI."""
        return self.scale


def _unit_cache_name() -> str | None:
    """Name the user-cache document of resolved units, or None when pint's files are not found.

    The name carries a hash of this module's code (its spellings and dimensions), pint's
    installed version and its unit definition files, so a change to any of them misses
    the cache.
    """
    import importlib.util

    spec = importlib.util.find_spec("pint")
    if spec is None or not spec.submodule_search_locations:
        return None
    package = Path(spec.submodule_search_locations[0])
    try:
        parts = [Path(__file__).read_bytes(),
                 " ".join(sorted(entry.name for entry in os.scandir(package.parent)
                                 if entry.name.startswith("pint-") and entry.name.endswith(".dist-info")))]
        parts += [(package / name).read_bytes() for name in ("default_en.txt", "constants_en.txt")]
    except OSError:
        return None
    return f"units-{content_key(*parts)}.json"


@functools.lru_cache(maxsize=1)
def _cached_units() -> tuple:
    """Return the cache document's name and its units (``"kind:text"`` → [scale, offset]), read once."""
    name = _unit_cache_name()
    document = read_document(name) if name else None
    return name, document if isinstance(document, dict) else {}


@functools.lru_cache(maxsize=256)
def resolve_unit(kind: str, text: str | None) -> ColumnUnit:
    """Parse a unit for a column of the given kind.

    Parameters
    ----------
    kind : str
        One of the keys of :data:`DEFAULT_UNITS`.
    text : str or None
        The unit as written in the header, or None for the kind's default.

    Returns
    -------
    ColumnUnit
        The linear map from values in that unit to SI.

    Raises
    ------
    UnitProblem
        When pint does not know the unit or it is not of the column's kind.

    Notes
    -----
    Importing pint costs more than the rest of a one-run analysis, so a unit pint has
    resolved once is kept in the user cache (:mod:`molid.cache`): its scale and offset,
    which JSON gives back to the last bit. Units pint refuses are not kept.
    """
    text = (text or "").strip() or DEFAULT_UNITS[kind]
    name, known = _cached_units()
    entry = known.get(f"{kind}:{text}")
    if isinstance(entry, list) and len(entry) == 2 and all(isinstance(number, float) for number in entry):
        return ColumnUnit(kind=kind, text=text, scale=entry[0], offset=entry[1])
    unit = _resolve_with_pint(kind, text)
    known[f"{kind}:{text}"] = [unit.scale, unit.offset]
    if name:
        write_document(name, known)
    return unit


def _resolve_with_pint(kind: str, text: str) -> ColumnUnit:
    """Resolve a unit (as written, not empty) of a column's kind with pint's registry."""
    normalized = _pint_name(text)
    ureg = registry()
    try:
        unit = ureg.Unit(normalized)
    except Exception as error:  # pint raises several types for unknown names
        raise UnitProblem(
            f"unknown unit '{text}'; accepted for {kind}: {ACCEPTED_UNITS[kind]}"
        ) from error
    expected = ureg.get_dimensionality(_DIMENSIONS[kind]) if _DIMENSIONS[kind] else {}
    if unit.dimensionality != expected:
        raise UnitProblem(
            f"unit '{text}' is not a {kind.replace('_', ' ')} unit; "
            f"accepted: {ACCEPTED_UNITS[kind]}"
        )
    si = SI_UNITS[kind]
    zero = float(ureg.Quantity(0.0, unit).to(si).magnitude)
    if zero != 0.0:
        # An offset unit (degC, degF): its scale is that of its difference unit.
        scale = float(ureg.Quantity(1.0, f"delta_{unit}").to(si).magnitude)
    else:
        scale = float(ureg.Quantity(1.0, unit).to(si).magnitude)
    return ColumnUnit(kind=kind, text=text, scale=scale, offset=zero)


def to_si(values, unit: ColumnUnit, *, difference: bool = False) -> np.ndarray:
    """Convert values (or, with ``difference``, uncertainties) to SI.

    Parameters
    ----------
    values : array_like
        Values in ``unit``.
    unit : ColumnUnit
        The column's unit.
    difference : bool
        Treat the values as differences (uncertainties): no offset is added.

    Returns
    -------
    numpy.ndarray
        Values in the SI unit of the column's kind.

    Examples
    --------
    Conventional definitions (BIPM SI Brochure, 2019: 0 degC = 273.15 K; 1 mmHg =
    133.322387415 Pa):

    >>> float(to_si(20.0, resolve_unit("temperature", "degC")))
    293.15
    >>> round(float(to_si(760.0, resolve_unit("pressure", "mmHg"))), 3)
    101325.014
    """
    values = np.asarray(values, dtype=float)
    if difference:
        return values * unit.delta_scale
    return values * unit.scale + unit.offset
