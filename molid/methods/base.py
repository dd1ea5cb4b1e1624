r"""What every measurement method declares, and the balance algebra the methods share.

A balance adjusted with steel weights of conventional mass indicates, for an
added force g·Δm on its pan, ``Δm / (1 − ρ_a/ρ_c)`` with ρ_c = 8000 kg/m³
(OIML D 28). Gas sealed in a vessel adds mass without adding volume, so the true
change of mass is the indicated change times ``(1 − ρ_a/ρ_c)``, about
1.5 × 10⁻⁴ relative. Every method applies this factor.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, fields

import numpy as np

from molid.methods.inputs import MEASURED_INPUTS
from molid.methods.mistakes import MISTAKE_CODES
from molid.physics.constants import CONVENTIONAL_MASS_DENSITY

__all__ = [
    "CANDIDATE_CORRECTIONS",
    "barometric_pressure",
    "room_air_humidity",
    "saturated_when_wet",
    "same_volume",
    "no_row_checks",
    "DEFAULT_GLASS_MASS",
    "Method",
    "conventional_mass_factor",
    "missing_parts",
]

#: Per-candidate corrections and checks the candidate evaluation knows how to apply: the
#: candidate's own compressibility factor, (condensed-vapour flask) the air its own vapour
#: keeps out, and (gas collected over water) its solubility in the water.
CANDIDATE_CORRECTIONS = ("compressibility", "residual-vapour", "solubility")

#: Mass of the glass of a simulated vessel [kg] (any value: it cancels).
DEFAULT_GLASS_MASS = 0.15234


def conventional_mass_factor(air_density):
    r"""Factor turning a change of balance indication into a change of true mass.

    Parameters
    ----------
    air_density : array_like
        Density of the air at the balance [kg/m³].

    Returns
    -------
    numpy.ndarray or float
        :math:`1 - \rho_a/\rho_c` [1], with ρ_c = 8000 kg/m³.

    References
    ----------
    OIML D 28:2004, Conventional value of the result of weighing in air, 4.2.

    Examples
    --------
    In air of the conventional density 1.2 kg/m³ (OIML D 28):

    >>> round(conventional_mass_factor(1.2), 6)
    0.99985
    """
    return 1.0 - air_density / CONVENTIONAL_MASS_DENSITY


def same_volume(volume, temperature):
    """Return the volume unchanged: a vessel used at the temperature it was measured at [m³]."""
    return volume + 0.0 * temperature


def barometric_pressure(pressure, temperature, water_column):
    """Return the pressure as read: the gas was sealed at the barometric pressure [Pa]."""
    return pressure + 0.0 * temperature + 0.0 * water_column


def saturated_when_wet(humidity, wet):
    """Return the gas's water-vapour saturation: 1 where the run says it is wet, else 0."""
    return np.where(wet, 1.0, 0.0) + 0.0 * humidity


def room_air_humidity(humidity):
    """Return the humidity column as it is: the relative humidity of the balance-room air."""
    return humidity


def no_row_checks(values, written):
    """Return no checks: every reading this method can take is possible."""
    return []


@dataclass(frozen=True)
class Method:
    """One measurement method: everything the reader, model, diagnosis and simulator need.

    Attributes
    ----------
    name : str
        The word in a run sheet's ``method`` column.
    summary : str
        One line: what the tare reading is.
    vessel : str
        The vessel in a few words, for messages ("an evacuated bulb").
    required_inputs, optional_inputs : tuple of str
        Measured inputs (names of :data:`molid.methods.inputs.MEASURED_INPUTS`)
        the method needs, and those it uses when given.
    gas_mass : callable
        ``gas_mass(mass_tare, mass_filled, volume, air_density)`` → mass of gas
        in the vessel [kg]; complex-step safe in every argument.
    gas_mass_without_displaced_air : callable or None
        The same with the displaced-air term left out (a student's mistake);
        None when the method has no such term.
    candidate_corrections : tuple of str
        Corrections each candidate needs (names of :data:`CANDIDATE_CORRECTIONS`).
    mistakes : tuple of str
        Codes of :data:`molid.methods.mistakes.MISTAKE_CODES` a student can make
        with this method; the diagnosis tries exactly these.
    simulate_readings : callable
        ``simulate_readings(gas_mass, air_density, volume, glass_mass, outer_volume)``
        → (tare, filled) balance indications [kg] of an ideal balance.
    row_checks : callable
        ``row_checks(values, written)`` → list of ``(mask, message)``: the rows
        (boolean array over the file) whose readings this method cannot have
        produced, and ``message(i)`` for row i. ``values`` are the file's SI
        arrays; ``written(name, value)`` gives a value back in the unit the user wrote.
    cautions : tuple of str
        Safety cautions for the apparatus, printed in reports.
    gas_volume : callable
        ``gas_volume(volume, temperature)`` → the gas's volume at the gas
        temperature [m³] from the volume the run gives; complex-step safe.
    headline_model : str
        What the run's own molar mass (before any candidate's corrections) is,
        as printed beside it ("ideal gas").
    accepts_wet : bool
        Whether a run may say its gas is saturated with water vapour (``wet``).
    readings : tuple of str
        The two balance readings ``gas_mass`` takes, in its order.
    gas_pressure : callable
        ``gas_pressure(pressure, temperature, water_column)`` → the total pressure
        of the gas [Pa] from the barometric pressure; complex-step safe.
    vapour_saturation : callable
        ``vapour_saturation(humidity, wet)`` → the gas's water vapour as a fraction
        of saturation at its temperature [1]; complex-step safe in ``humidity``.
    air_humidity : callable
        ``air_humidity(humidity)`` → the relative humidity of the balance-room air [1].
    weighs_water : bool
        Whether the weighed mass includes the water vapour of a wet gas.
    always_wet : bool
        Whether the gas is always wet (collected over water): its ``humidity`` is the gas's.
    input_defaults : tuple of (str, float, str)
        Optional inputs that default to a fixed value with no uncertainty on this
        method's rows when blank: (name, SI value, what the default means).
    """

    name: str
    summary: str
    vessel: str
    required_inputs: tuple
    optional_inputs: tuple
    gas_mass: Callable
    gas_mass_without_displaced_air: Callable | None
    candidate_corrections: tuple
    mistakes: tuple
    simulate_readings: Callable
    row_checks: Callable
    cautions: tuple
    gas_volume: Callable = None
    headline_model: str = "ideal gas"
    accepts_wet: bool = True
    readings: tuple = ("mass_tare", "mass_filled")
    gas_pressure: Callable = barometric_pressure
    vapour_saturation: Callable = saturated_when_wet
    air_humidity: Callable = room_air_humidity
    weighs_water: bool = True
    always_wet: bool = False
    input_defaults: tuple = ()


def missing_parts(method: Method) -> list[str]:
    """List what a method lacks or declares wrongly; empty when it is complete.

    Parameters
    ----------
    method : Method
        The method to check.

    Returns
    -------
    list of str
        One line per problem.
    """
    problems = []
    for field in fields(Method):
        value = getattr(method, field.name, None)
        if value is None and field.name != "gas_mass_without_displaced_air":
            problems.append(f"{field.name} is missing")
    if not isinstance(method.name, str) or not method.name:
        problems.append("name is empty")
    for name in ("gas_mass", "simulate_readings", "row_checks", "gas_volume", "gas_pressure",
                 "vapour_saturation", "air_humidity"):
        if not callable(getattr(method, name, None)):
            problems.append(f"{name} is not callable")
    unknown = set(method.required_inputs or ()) | set(method.optional_inputs or ())
    unknown -= set(MEASURED_INPUTS)
    if unknown:
        problems.append(f"inputs not in the vocabulary: {sorted(unknown)}")
    if len(method.readings or ()) != 2 or not set(method.readings) <= set(method.required_inputs or ()):
        problems.append(f"readings {method.readings} must be two of the required inputs")
    defaulted = {name for name, _, _ in method.input_defaults or ()}
    if not defaulted <= set(method.optional_inputs or ()):
        problems.append(f"input defaults for inputs that are not optional: {sorted(defaulted)}")
    if not set(method.candidate_corrections or ()) <= set(CANDIDATE_CORRECTIONS):
        problems.append(f"unknown candidate corrections: {method.candidate_corrections}")
    if not method.mistakes or not set(method.mistakes) <= set(MISTAKE_CODES):
        problems.append(f"mistakes not in the vocabulary: {method.mistakes}")
    if ("no-buoyancy" in (method.mistakes or ())) != (method.gas_mass_without_displaced_air is not None):
        problems.append("'no-buoyancy' needs gas_mass_without_displaced_air, and only it")
    return problems
