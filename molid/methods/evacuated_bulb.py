r"""Evacuated bulb: weighed empty (evacuated), then filled with the gas.

The bulb's outer volume displaces the same air at both weighings, so the
buoyancy cancels and the gas mass is the change of indication times the
conventional-mass factor:

.. math:: m = (I_1 - I_0)\,(1 - \rho_a/\rho_c)

References
----------
OIML D 28:2004, Conventional value of the result of weighing in air.
"""

from __future__ import annotations

from molid.methods.base import DEFAULT_GLASS_MASS, Method, balance_indication, conventional_mass_factor

__all__ = ["METHOD", "gas_mass", "simulate_readings"]


def gas_mass(mass_tare, mass_filled, volume, air_density):
    """Mass of gas in an evacuated-then-filled bulb [kg].

    Parameters
    ----------
    mass_tare, mass_filled : array_like
        Indications of the evacuated and the filled bulb [kg].
    volume : array_like
        Internal volume [m³] (not needed: the buoyancy cancels).
    air_density : array_like
        Air density at the balance [kg/m³].

    Returns
    -------
    numpy.ndarray
        Mass of gas [kg].

    Examples
    --------
    A rise of 1.7 g in air of 1.2 kg/m³ (OIML D 28 factor 0.99985):

    >>> round(float(gas_mass(0.0, 1.7e-3, 1e-3, 1.2)) * 1e3, 6)
    1.699745
    """
    return (mass_filled - mass_tare) * conventional_mass_factor(air_density) + 0.0 * volume


def simulate_readings(gas_mass, air_density, volume, glass_mass=DEFAULT_GLASS_MASS, outer_volume=None):
    """Simulate the indications of an ideal balance for the evacuated and the filled bulb [kg].

    Parameters
    ----------
    gas_mass : array_like
        Mass of gas admitted [kg].
    air_density : array_like
        Air density at the balance [kg/m³].
    volume : array_like
        Internal volume [m³].
    glass_mass : float
        Mass of the glass [kg].
    outer_volume : array_like, optional
        Volume the closed bulb displaces [m³]; 1.08 V by default.

    Returns
    -------
    tuple of numpy.ndarray
        Tare and filled indications [kg].
    """
    outer_volume = 1.08 * volume if outer_volume is None else outer_volume
    displaced_air = air_density * outer_volume
    tare = balance_indication(glass_mass - displaced_air, air_density)
    filled = balance_indication(glass_mass + gas_mass - displaced_air, air_density)
    return tare, filled


METHOD = Method(
    name="evacuated-bulb",
    summary="tare is the evacuated bulb",
    vessel="an evacuated bulb",
    required_inputs=("mass_tare", "mass_filled", "volume", "temperature", "pressure"),
    optional_inputs=("humidity", "air_temperature", "air_pressure", "co2"),
    gas_mass=gas_mass,
    gas_mass_without_displaced_air=None,
    candidate_corrections=("compressibility",),
    mistakes=("celsius-as-kelvin", "volume-unit", "pressure-unit", "masses-swapped",
              "gas-constant-units"),
    simulate_readings=simulate_readings,
    gains_weight_when_filled=True,
    cautions=("evacuated glass can implode: shield or tape the bulb and wear eye protection",),
)
