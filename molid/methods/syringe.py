r"""Gas syringe: weighed empty with the plunger home, then with the plunger drawn out by V.

Drawing the plunger out adds V to the volume the syringe displaces, so the
balance loses ρ_a·V of buoyant lift while gaining the gas:

.. math:: m = (I_1 - I_0)\,(1 - \rho_a/\rho_c) + \rho_a V

For gases lighter than air the change of indication is negative, and that is correct.

References
----------
OIML D 28:2004, Conventional value of the result of weighing in air.
"""

from __future__ import annotations

from molid.methods.air_tare_bulb import gas_mass, gas_mass_without_displaced_air
from molid.methods.base import DEFAULT_GLASS_MASS, Method, balance_indication

__all__ = ["METHOD", "simulate_readings"]


def simulate_readings(gas_mass, air_density, volume, glass_mass=DEFAULT_GLASS_MASS, outer_volume=None):
    """Simulate the indications of an ideal balance for the empty and the drawn syringe [kg].

    Parameters
    ----------
    gas_mass : array_like
        Mass of gas drawn in [kg].
    air_density : array_like
        Air density at the balance [kg/m³].
    volume : array_like
        Volume drawn [m³].
    glass_mass : float
        Mass of the syringe [kg].
    outer_volume : array_like, optional
        Volume the empty syringe displaces [m³]; 1.08 V by default.

    Returns
    -------
    tuple of numpy.ndarray
        Tare and filled indications [kg].
    """
    outer_volume = 1.08 * volume if outer_volume is None else outer_volume
    tare = balance_indication(glass_mass - air_density * outer_volume, air_density)
    filled = balance_indication(glass_mass + gas_mass - air_density * (outer_volume + volume), air_density)
    return tare, filled


# The syringe's algebra is the air-tare bulb's: both gain ρ_a·V of displaced air.
METHOD = Method(
    name="syringe",
    summary="tare is the empty syringe, plunger home",
    vessel="a gas syringe",
    required_inputs=("mass_tare", "mass_filled", "volume", "temperature", "pressure"),
    optional_inputs=("humidity", "air_temperature", "air_pressure", "co2"),
    gas_mass=gas_mass,
    gas_mass_without_displaced_air=gas_mass_without_displaced_air,
    candidate_corrections=("compressibility",),
    mistakes=("celsius-as-kelvin", "volume-unit", "pressure-unit", "no-buoyancy", "masses-swapped",
              "gas-constant-units"),
    simulate_readings=simulate_readings,
    gains_weight_when_filled=False,
    cautions=(),
)
