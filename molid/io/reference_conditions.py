"""Reference conditions as a user writes them: ``"15 degC, 101.325 kPa"`` → (288.15 K, 101325 Pa).

A temperature and a pressure, each a number with its unit, in either order,
separated by a comma or a semicolon (a decimal comma is not read here: the comma
separates the two). The units are those the run-file reader knows
(:func:`molid.io.units.resolve_unit`, pint).

Common choices: 0 °C and 101.325 kPa (the default; "normal" conditions), 15 °C and
101.325 kPa (ISO 13443:1996, the standard reference conditions for natural gas),
20 °C and 101.325 kPa, 60 °F and 14.696 psi.
"""

from __future__ import annotations

import math
import re

from molid.io.units import ACCEPTED_UNITS, UnitProblem, resolve_unit

__all__ = ["ACCEPTED_FORM", "parse_reference_conditions"]

#: How the option is written, quoted in messages.
ACCEPTED_FORM = '"TEMPERATURE UNIT, PRESSURE UNIT", e.g. "15 degC, 101.325 kPa" or "273.15 K; 1 atm"'

_QUANTITY = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(\S.*?)\s*$")


def _quantity(part: str, given: str):
    """Read one 'number unit' part as (kind, SI value); the kind is the one whose unit it is."""
    match = _QUANTITY.match(part)
    if match is None:
        raise ValueError(f"cannot read {part.strip()!r} in {given!r} as a number with a unit; "
                         f"give {ACCEPTED_FORM}")
    number, unit = float(match.group(1)), match.group(2)
    for kind in ("temperature", "pressure"):
        try:
            resolved = resolve_unit(kind, unit)
        except UnitProblem:
            continue
        return kind, resolved.scale * number + resolved.offset
    raise ValueError(f"{unit!r} in {given!r} is neither a temperature unit ({ACCEPTED_UNITS['temperature']}) "
                     f"nor a pressure unit ({ACCEPTED_UNITS['pressure']}); give {ACCEPTED_FORM}")


def parse_reference_conditions(text: str) -> tuple:
    """Read reference conditions: a temperature and a pressure with their units.

    Parameters
    ----------
    text : str
        Such as ``"15 degC, 101.325 kPa"``, ``"0 °C; 1 atm"`` or ``"101.325 kPa, 288.15 K"``.

    Returns
    -------
    tuple of float
        Temperature [K] and pressure [Pa].

    Raises
    ------
    ValueError
        Naming what was given and showing the accepted form.

    Examples
    --------
    >>> parse_reference_conditions("15 degC, 101.325 kPa")
    (288.15, 101325.0)
    """
    given = str(text)
    parts = [part for part in re.split(r"[,;]", given) if part.strip()]
    if len(parts) != 2:
        raise ValueError(f"cannot read {given!r} as reference conditions; give {ACCEPTED_FORM}")
    found = dict(_quantity(part, given) for part in parts)
    if set(found) != {"temperature", "pressure"}:
        raise ValueError(f"{given!r} does not give one temperature and one pressure; give {ACCEPTED_FORM}")
    temperature, pressure = round(found["temperature"], 9), round(found["pressure"], 6)
    if not (math.isfinite(temperature) and temperature > 0):
        raise ValueError(f"the temperature in {given!r} is not above absolute zero; give {ACCEPTED_FORM}")
    if not (math.isfinite(pressure) and pressure > 0):
        raise ValueError(f"the pressure in {given!r} is not above zero; give {ACCEPTED_FORM}")
    return temperature, pressure
