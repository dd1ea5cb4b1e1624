"""Nominal conditions of a planned measurement: the options as typed, their defaults, their checks.

A quantity is typed as a number and a unit (``"250 mL"``, ``"21 degC"``,
``"101 kPa"``), parsed with the run reader's units (:mod:`molid.io.units`); a
number without a unit is in the column's default unit (mL, °C, kPa). Each
method has defaults typical of its apparatus (:data:`METHOD_DEFAULTS`).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from molid.io.problems import InputError
from molid.io.units import DEFAULT_UNITS, UnitProblem, resolve_unit, to_si
from molid.methods.registry import METHODS
from molid.physics.constants import ZERO_CELSIUS

__all__ = ["PlanError", "METHOD_DEFAULTS", "PLAUSIBLE", "Conditions", "listed", "parse_quantity",
           "nominal_conditions"]

#: Defaults of each method: vessel volume, gas temperature (a flask's: the bath's), pressure
#: and room temperature. Common practice: 250 mL bulbs, 100 mL gas syringes and collection
#: tubes, 125 mL flasks in a boiling-water bath, a room at 21 °C and about 101 kPa.
METHOD_DEFAULTS = {
    "evacuated-bulb": {"volume": "250 mL", "temperature": "21 degC", "pressure": "101 kPa"},
    "air-tare-bulb": {"volume": "250 mL", "temperature": "21 degC", "pressure": "101 kPa"},
    "syringe": {"volume": "100 mL", "temperature": "21 degC", "pressure": "101 kPa"},
    "vapour-flask": {"volume": "125 mL", "temperature": "99.5 degC", "pressure": "101 kPa"},
    "over-water": {"volume": "100 mL", "temperature": "21 degC", "pressure": "101 kPa"},
}
#: The room's temperature unless ``--room-temperature`` says otherwise.
DEFAULT_ROOM_TEMPERATURE = "21 degC"

#: Nominal values a plan accepts [SI]: the ranges a run sheet takes without a warning
#: (molid.io.checks): 200-700 K, 10-250 kPa, 1 mL to 20 L.
PLAUSIBLE = {"temperature": (200.0, 700.0), "pressure": (10e3, 250e3), "volume": (1e-6, 20e-3)}
_RANGE_WORDS = {"temperature": "200 K to 700 K (-73 to 427 degC)", "pressure": "10 kPa to 250 kPa",
                "volume": "1 mL to 20 L (a number alone is in mL)"}

_NUMBER = re.compile(r"^\s*([-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")
_KINDS = {"volume": "volume", "temperature": "temperature", "pressure": "pressure",
          "room_temperature": "temperature"}
_EXAMPLES = {"volume": "'250 mL'", "temperature": "'21 degC'", "pressure": "'101 kPa'",
             "room_temperature": "'21 degC'"}


class PlanError(InputError):
    """A plan that cannot be made as asked: the option or name at fault, and what is accepted."""


def listed(problems) -> str:
    """Join problems into one message, numbered when there are several.

    Examples
    --------
    >>> listed(["a is wrong"]), listed(["a is wrong", "b too"])
    ('a is wrong', '2 problems: (1) a is wrong; (2) b too')
    """
    if len(problems) == 1:
        return problems[0]
    return f"{len(problems)} problems: " + "; ".join(f"({index}) {text}" for index, text in
                                                      enumerate(problems, start=1))


@dataclass(frozen=True)
class Conditions:
    """Nominal conditions in SI, with the text each was given as.

    Attributes
    ----------
    method : str
        The registered method's name.
    volume, temperature, pressure, room_temperature : float
        [m³], [K] (the gas's; a flask's bath), [Pa], [K] (the balance room's; the gas's
        for a method whose runs do not state it).
    text : dict
        Option name → the quantity as typed or defaulted.
    humidity : float or None
        The room's relative humidity as the runs will state it [1]; None when the runs
        do not measure it (the profile's assumed value and range apply).
    """

    method: str
    volume: float
    temperature: float
    pressure: float
    room_temperature: float
    text: dict
    humidity: float | None = None

    def as_dict(self) -> dict:
        """Return the four conditions by name (SI), as the simulator takes them."""
        return {"volume": self.volume, "temperature": self.temperature, "pressure": self.pressure,
                "room_temperature": self.room_temperature, "humidity": self.humidity}

    def describe(self) -> str:
        """Say the conditions in words: '250 mL at 21 degC and 101 kPa'."""
        words = f"{self.text['volume']} at {self.text['temperature']} and {self.text['pressure']}"
        if "air_temperature" in METHODS[self.method].required_inputs:
            words += f", room at {self.text['room_temperature']}"
        if self.humidity is not None:
            words += f", room humidity {self.text['humidity']} (measured)"
        return words


def parse_quantity(option: str, text: str, kind: str) -> float:
    """Read a quantity typed on the command line as a number in SI.

    Parameters
    ----------
    option : str
        The option's name, for messages (``--volume``).
    text : str
        A number and a unit, e.g. ``"250 mL"``; without a unit the kind's default unit.
    kind : str
        ``volume``, ``temperature`` or ``pressure``.

    Returns
    -------
    float
        The value in m³, K or Pa.

    Raises
    ------
    PlanError
        Naming the option, what was typed and what is accepted.

    Examples
    --------
    The SI Brochure's definitions (BIPM 2019): 1 mL = 1e-6 m³, 0 °C = 273.15 K.

    >>> round(parse_quantity("--volume", "250 mL", "volume") * 1e6, 9)
    250.0
    >>> round(parse_quantity("--temperature", "21 degC", "temperature"), 2)
    294.15
    """
    match = _NUMBER.match(str(text))
    if match is None:
        raise PlanError(f"{option} '{text}': not a number with a unit; give e.g. "
                        f"{_EXAMPLES.get(kind, '')} (a number alone is in {DEFAULT_UNITS[kind]})")
    number = float(match.group(1).replace(",", "."))
    try:
        unit = resolve_unit(kind, match.group(2) or None)
    except UnitProblem as problem:
        raise PlanError(f"{option} '{text}': {problem}") from None
    value = float(to_si(number, unit))
    if not math.isfinite(value):
        raise PlanError(f"{option} '{text}': not a finite number")
    return value


def _check(option: str, text: str, kind: str, value: float) -> None:
    """Refuse a nominal value no measurement can have, naming the option and what is accepted."""
    if kind == "temperature" and value <= 0:
        raise PlanError(f"{option} '{text}' is at or below absolute zero (0 K = "
                        f"{-ZERO_CELSIUS:g} degC); give a temperature above it, e.g. '21 degC'")
    if kind == "volume" and value <= 0:
        raise PlanError(f"{option} '{text}': a volume must be above 0; give e.g. '250 mL'")
    if kind == "pressure" and value <= 0:
        raise PlanError(f"{option} '{text}': a pressure must be above 0; give the absolute "
                        "(barometric) pressure, e.g. '101 kPa'")
    low, high = PLAUSIBLE[kind]
    if not low <= value <= high:
        shown = {"temperature": f"{value:.1f} K", "pressure": f"{value / 1000:.4g} kPa",
                 "volume": f"{value * 1e6:.4g} mL"}[kind]
        raise PlanError(f"{option} '{text}' ({shown}) is outside what gas weighing in glass uses; "
                        f"give a value from {_RANGE_WORDS[kind]}")


def _method_checks(method: str, values: dict, text: dict) -> None:
    """Refuse nominal values the method cannot be used at (water that is not liquid, a cold bath)."""
    if METHODS[method].always_wet and not (ZERO_CELSIUS < values["temperature"] < ZERO_CELSIUS + 40):
        raise PlanError(f"--temperature '{text['temperature']}': gas collected over water is at the "
                        "water's temperature, which must be between 0 and 40 degC")
    if "air_temperature" in METHODS[method].required_inputs \
            and values["temperature"] <= values["room_temperature"]:
        raise PlanError(f"--temperature '{text['temperature']}': the bath of a condensed-vapour flask "
                        f"must be hotter than the room (--room-temperature '{text['room_temperature']}')")


def _humidity(method: str, text):
    """Read the measured room humidity (a percentage, or a fraction with unit '1'); None when not given."""
    if text is None:
        return None
    if METHODS[method].always_wet:
        raise PlanError(f"--humidity: over water the humidity is the collected gas's (saturated); a "
                        f"{method} plan takes no room humidity")
    match = _NUMBER.match(str(text))
    try:
        unit = resolve_unit("fraction", (match.group(2) or None) if match else None)
    except UnitProblem as problem:
        raise PlanError(f"--humidity '{text}': {problem}") from None
    value = float(to_si(float(match.group(1).replace(",", ".")), unit)) if match else float("nan")
    if not 0.0 <= value <= 1.0:
        raise PlanError(f"--humidity '{text}': give the room's relative humidity from 0 to 100 %, "
                        "e.g. '45 %'")
    return value


def nominal_conditions(method: str, volume=None, temperature=None, pressure=None,
                       room_temperature=None, humidity=None) -> Conditions:
    """Read and check the nominal conditions, the method's defaults where an option is not given.

    Parameters
    ----------
    method : str
        A registered method's name.
    volume, temperature, pressure, room_temperature : str, optional
        Quantities as typed (see :func:`parse_quantity`).
    humidity : str, optional
        The room's relative humidity as the runs will measure it (``"45 %"``); without
        it the runs state none and the profile's assumed humidity applies.

    Returns
    -------
    Conditions
        In SI, with the text of each.

    Raises
    ------
    PlanError
        An unknown method, or a quantity that cannot be read or cannot be.
    """
    if method not in METHODS:
        raise PlanError(f"--method '{method}' is not a method molid knows; accepted: "
                        + ", ".join(METHODS))
    given = {"volume": volume, "temperature": temperature, "pressure": pressure,
             "room_temperature": room_temperature}
    defaults = {**METHOD_DEFAULTS[method], "room_temperature": DEFAULT_ROOM_TEMPERATURE}
    text = {name: (value if value is not None else defaults[name]) for name, value in given.items()}
    values = {}
    for name, typed in text.items():
        option = "--" + name.replace("_", "-")
        values[name] = parse_quantity(option, typed, _KINDS[name])
        _check(option, typed, _KINDS[name], values[name])
    _method_checks(method, values, text)
    values["humidity"] = _humidity(method, humidity)
    text["humidity"] = str(humidity).strip() if humidity is not None else None
    if "air_temperature" not in METHODS[method].required_inputs:
        # the runs state no balance-room temperature: the model takes the gas's
        values["room_temperature"], text["room_temperature"] = values["temperature"], text["temperature"]
    return Conditions(method=method, text=text, **values)
