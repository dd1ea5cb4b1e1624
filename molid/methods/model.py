"""The measurement model shared by all methods: readings and conditions to molar mass.

Each run's method (see :mod:`molid.methods.registry`) turns its two balance
readings into the mass of gas in the vessel; the moist-air density comes from
CIPM-2007; a wet gas loses its water vapour's mass and partial pressure; the
ideal gas law then gives the molar mass. The model functions take arrays of
equal shape (SI units) and use only arithmetic and analytic numpy functions, so
that :mod:`molid.uncertainty.propagation` can differentiate them by complex step.

Wet gas
-------
A gas saturated with water vapour at temperature T holds water at partial
pressure ``p_w = p_sat(T)``; the dry gas has partial pressure ``p − p_w`` and
the weighed mass includes ``m_w = p_w·V·M_w/(R·T)``.
"""

from __future__ import annotations

import numpy as np

from molid.methods.registry import select_by_method
from molid.physics.air import moist_air_density
from molid.physics.constants import GAS_CONSTANT
from molid.physics.water import MOLAR_MASS_WATER, saturation_pressure_water

__all__ = ["gas_mass", "ideal_gas_molar_mass", "measurement_model"]

def gas_mass(mass_tare, mass_filled, volume, air_density, method_code):
    r"""Mass of gas in the vessel from two balance readings [kg].

    Parameters
    ----------
    mass_tare, mass_filled : array_like
        Balance indications before and after filling [kg].
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
        method_code, lambda method: method.gas_mass(mass_tare, mass_filled, volume, air_density))


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


def _water_pressure(wet, temperature, water_vapour):
    """Partial pressure of the water vapour of a wet gas [Pa]; 0 for a dry one."""
    if not np.any(wet):
        return 0.0 * water_vapour
    with np.errstate(all="ignore"):  # dry rows at odd temperatures need no p_sat
        saturation = saturation_pressure_water(temperature)
    return np.where(wet, saturation * (1.0 + water_vapour), 0.0)


def measurement_model(
    mass_tare,
    mass_filled,
    volume,
    temperature,
    pressure,
    humidity,
    air_temperature,
    air_pressure,
    co2,
    air_density_formula,
    water_vapour,
    *,
    method_code,
    wet,
    air_temperature_given,
    air_pressure_given,
):
    """Evaluate the full measurement model: every input to the ideal-gas molar mass.

    Parameters
    ----------
    mass_tare, mass_filled : array_like
        Balance indications [kg].
    volume : array_like
        Gas volume [m³].
    temperature, pressure : array_like
        Gas temperature [K] and total pressure [Pa] when sealed.
    humidity : array_like
        Relative humidity of the balance-room air [fraction, 0-1].
    air_temperature, air_pressure : array_like
        Balance-room conditions [K], [Pa]; used only where given, else the gas's.
    co2 : array_like
        CO2 mole fraction of the air.
    air_density_formula : array_like
        Relative correction to the CIPM-2007 air density (value 0; carries its uncertainty).
    water_vapour : array_like
        Relative correction to the water partial pressure of wet gas (value 0).
    method_code : array_like of int
        See :func:`gas_mass`.
    wet : array_like of bool
        Gas saturated with water vapour at its temperature.
    air_temperature_given, air_pressure_given : array_like of bool
        Where the row states its own balance-room conditions.

    Returns
    -------
    dict of numpy.ndarray
        ``molar_mass`` [kg/mol] of the dry gas under the ideal gas law, and the
        intermediate ``air_density`` [kg/m³], ``gas_mass`` [kg] (dry gas),
        ``water_mass`` [kg], ``dry_pressure`` [Pa] and ``residual_vapour_factor``
        [kg/(mol·Pa)]: ρa·V·R·T/(p²·V_T), which times a candidate's vapour
        pressure at room temperature gives the residual-vapour correction of a
        condensed-vapour flask (used only for methods that declare it).
    """
    room_temperature = np.where(air_temperature_given, air_temperature, temperature)
    room_pressure = np.where(air_pressure_given, air_pressure, pressure)
    air_density = moist_air_density(room_pressure, room_temperature, humidity, co2) * (
        1.0 + air_density_formula
    )
    total_mass = gas_mass(mass_tare, mass_filled, volume, air_density, method_code)
    gas_volume = select_by_method(method_code, lambda method: method.gas_volume(volume, temperature))
    water_pressure = _water_pressure(wet, temperature, water_vapour)
    water_mass = water_pressure * gas_volume * MOLAR_MASS_WATER / (GAS_CONSTANT * temperature)
    dry_mass = total_mass - water_mass
    dry_pressure = pressure - water_pressure
    return {
        "molar_mass": ideal_gas_molar_mass(dry_mass, temperature, dry_pressure, gas_volume),
        "air_density": air_density,
        "gas_mass": dry_mass,
        "water_mass": water_mass,
        "dry_pressure": dry_pressure,
        # molar mass per pascal of a candidate's vapour pressure left in a cooled flask
        # (the residual-vapour correction is this times p_sat(T_room); see vapour_flask)
        "residual_vapour_factor": air_density * volume * GAS_CONSTANT * temperature
        / (pressure * pressure * gas_volume),
    }
