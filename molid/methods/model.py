"""The measurement model shared by all methods: readings and conditions to molar mass.

Each run's method (see :mod:`molid.methods.registry`) turns its two balance
readings into the mass of gas in the vessel (or released by a source) and its
barometric pressure into the gas's (less a water column, over water); the moist-air density comes from
CIPM-2007; a wet gas loses its water vapour's mass and partial pressure; the
ideal gas law then gives the molar mass. The model functions take arrays of
equal shape (SI units) and use only arithmetic and analytic numpy functions, so
that :mod:`molid.uncertainty.propagation` can differentiate them by complex step.

Wet gas
-------
A gas saturated with water vapour at temperature T holds water at partial
pressure ``p_w = φ·p_sat(T)`` (φ = 1 for a gas said to be wet; the collected gas's
humidity over water); the dry gas has partial pressure ``p − p_w`` and, where the
vessel itself is weighed, the weighed mass includes ``m_w = p_w·V·M_w/(R·T)``.
"""

from __future__ import annotations

import numpy as np

from molid.methods.registry import select_by_method
from molid.physics.air import moist_air_density
from molid.physics.constants import GAS_CONSTANT
from molid.physics.water import MOLAR_MASS_WATER, saturation_pressure_water

__all__ = ["gas_mass", "ideal_gas_molar_mass", "measurement_model", "method_readings"]

def gas_mass(first_reading, second_reading, volume, air_density, method_code):
    r"""Mass of gas from each run's two balance readings [kg].

    Parameters
    ----------
    first_reading, second_reading : array_like
        The two indications each run's method weighs (see :func:`method_readings`):
        tare and filled for a vessel, before and after for a source [kg].
    volume : array_like
        Internal volume of the bulb, or volume drawn into the syringe [m³].
    air_density : array_like
        Density of the ambient air at the balance [kg/m³].
    method_code : array_like of int
        Each run's code in :data:`molid.methods.registry.METHOD_CODES`.

    Returns
    -------
    numpy.ndarray
        Mass of gas [kg].

    Notes
    -----
    Each method's own ``gas_mass`` (see the modules of :mod:`molid.methods`).

    References
    ----------
    OIML D 28:2004, Conventional value of the result of weighing in air.
    R. S. Davis, "Note on the choice of a sensitivity weight in precision
    weighing", J. Res. NBS 92 (1987) 239 (buoyancy of objects of no added volume).

    Examples
    --------
    An air-tare bulb of 1 L in air of 1.2 kg/m³ whose reading rises by 0.3 g
    holds about 1.5 g of gas:

    >>> round(float(gas_mass(0.0, 0.3e-3, 1e-3, 1.2, 1)) * 1e3, 6)
    1.499955
    """
    return select_by_method(
        method_code, lambda method: method.gas_mass(first_reading, second_reading, volume, air_density))


def method_readings(inputs: dict, method_code):
    """Each run's two balance readings, picked by its method from the named inputs [kg].

    Parameters
    ----------
    inputs : dict of array_like
        The model's inputs by name (``mass_tare``, ``source_before``, ...).
    method_code : array_like of int
        Each run's method code.

    Returns
    -------
    tuple of numpy.ndarray
        The first and second readings of each run's method (``Method.readings``).
    """
    first = select_by_method(method_code, lambda method: inputs[method.readings[0]])
    second = select_by_method(method_code, lambda method: inputs[method.readings[1]])
    return first, second


def ideal_gas_molar_mass(mass, temperature, pressure, volume):
    """Molar mass from the ideal gas law, M = m·R·T/(p·V) [kg/mol].

    Parameters
    ----------
    mass : array_like
        Mass of gas [kg].
    temperature : array_like
        Gas temperature [K].
    pressure : array_like
        Gas (partial) pressure [Pa].
    volume : array_like
        Gas volume [m³].

    Returns
    -------
    numpy.ndarray
        Molar mass [kg/mol].

    References
    ----------
    BIPM, The International System of Units (SI), 9th ed., 2019 (R = N_A·k exact).

    Examples
    --------
    One mole of ideal gas at 273.15 K and 100 kPa fills the IUPAC standard molar
    volume 22.710 954 64 L (CODATA 2018); 28 g of it is 28 g/mol:

    >>> round(float(ideal_gas_molar_mass(28e-3, 273.15, 100e3, 22.71095464e-3)) * 1e3, 6)
    28.0
    """
    return mass * GAS_CONSTANT * temperature / (pressure * volume)


def _water_pressure(wet, temperature, water_vapour, saturation):
    """Partial pressure of the water vapour of a wet gas [Pa]; 0 for a dry one."""
    if not np.any(wet):
        return 0.0 * water_vapour
    with np.errstate(all="ignore"):  # dry rows at odd temperatures need no p_sat
        pressure = saturation_pressure_water(temperature)
    return np.where(wet, saturation * pressure * (1.0 + water_vapour), 0.0)


def _gas_and_water(method_code, volume, temperature, pressure, humidity, water_column, wet,
                   water_vapour):
    """Each run's gas volume [m³], gas pressure [Pa], water-vapour pressure [Pa] and weighed water [kg]."""
    gas_volume = select_by_method(method_code, lambda method: method.gas_volume(volume, temperature))
    gas_pressure = select_by_method(
        method_code, lambda method: method.gas_pressure(pressure, temperature, water_column))
    saturation = select_by_method(method_code, lambda method: method.vapour_saturation(humidity, wet))
    water_pressure = _water_pressure(wet, temperature, water_vapour, saturation)
    # a source weighed before and after a release never held the tube's water vapour
    weighs_water = select_by_method(method_code, lambda method: 1.0 if method.weighs_water else 0.0)
    water_mass = weighs_water * water_pressure * gas_volume * MOLAR_MASS_WATER / (GAS_CONSTANT * temperature)
    return gas_volume, gas_pressure, water_pressure, water_mass


def measurement_model(
    mass_tare, mass_filled, volume, temperature, pressure, humidity, air_temperature, air_pressure,
    co2, air_density_formula, water_vapour, source_before=0.0, source_after=0.0, water_column=0.0,
    *, method_code, wet, air_temperature_given, air_pressure_given,
):
    """Evaluate the full measurement model: every input to the ideal-gas molar mass.

    Parameters
    ----------
    mass_tare, mass_filled : array_like
        Balance indications of a vessel [kg].
    volume : array_like
        Gas volume [m³].
    temperature, pressure : array_like
        Gas temperature [K] and barometric pressure [Pa] when sealed or read.
    humidity : array_like
        Relative humidity of the balance-room air, or (gas collected over water)
        of the collected gas [fraction, 0-1].
    air_temperature, air_pressure : array_like
        Balance-room conditions [K], [Pa]; used only where given, else the gas's.
    co2 : array_like
        CO2 mole fraction of the air.
    air_density_formula : array_like
        Relative correction to the CIPM-2007 air density (value 0; carries its uncertainty).
    water_vapour : array_like
        Relative correction to the water partial pressure of wet gas (value 0).
    source_before, source_after : array_like
        Balance indications of a gas source before and after a release [kg].
    water_column : array_like
        Height of the water inside a collection tube above the outside level [m].
    method_code : array_like of int
        See :func:`gas_mass`.
    wet : array_like of bool
        Gas saturated with water vapour at its temperature (always, over water).
    air_temperature_given, air_pressure_given : array_like of bool
        Where the row states its own balance-room conditions.

    Returns
    -------
    dict of numpy.ndarray
        ``molar_mass`` [kg/mol] of the dry gas under the ideal gas law, and the
        intermediate ``air_density`` [kg/m³], ``gas_mass`` [kg] (dry gas),
        ``water_mass`` [kg], ``dry_pressure`` [Pa], ``water_pressure`` [Pa],
        ``column_pressure`` [Pa] (the water column's, over water) and
        ``residual_vapour_factor`` [kg/(mol·Pa)]: ρa·V·R·T/(p²·V_T), which times a
        candidate's vapour pressure at room temperature gives the residual-vapour
        correction of a condensed-vapour flask (used only for methods that declare it).
    """
    room_temperature = np.where(air_temperature_given, air_temperature, temperature)
    room_pressure = np.where(air_pressure_given, air_pressure, pressure)
    room_humidity = select_by_method(method_code, lambda method: method.air_humidity(humidity))
    air_density = moist_air_density(room_pressure, room_temperature, room_humidity, co2) * (
        1.0 + air_density_formula
    )
    first, second = method_readings(
        {"mass_tare": mass_tare, "mass_filled": mass_filled, "source_before": source_before,
         "source_after": source_after}, method_code)
    total_mass = gas_mass(first, second, volume, air_density, method_code)
    gas_volume, gas_pressure, water_pressure, water_mass = _gas_and_water(
        method_code, volume, temperature, pressure, humidity, water_column, wet, water_vapour)
    dry_mass = total_mass - water_mass
    dry_pressure = gas_pressure - water_pressure
    return {
        "molar_mass": ideal_gas_molar_mass(dry_mass, temperature, dry_pressure, gas_volume),
        "air_density": air_density,
        "gas_mass": dry_mass,
        "water_mass": water_mass,
        "dry_pressure": dry_pressure,
        "water_pressure": water_pressure,
        "column_pressure": pressure - gas_pressure,
        # molar mass per pascal of a candidate's vapour pressure left in a cooled flask
        # (the residual-vapour correction is this times p_sat(T_room); see vapour_flask)
        "residual_vapour_factor": air_density * volume * GAS_CONSTANT * temperature
        / (pressure * pressure * gas_volume),
    }
