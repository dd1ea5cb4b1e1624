r"""Bulb tared full of air: weighed full of ambient air, then filled with the gas.

The tare includes the air inside the bulb, ρ_a·V, which the gas replaces; the
outer volume's buoyancy cancels:

.. math:: m = (I_1 - I_0)\,(1 - \rho_a/\rho_c) + \rho_a V

References
----------
OIML D 28:2004, Conventional value of the result of weighing in air.
R. S. Davis, "Note on the choice of a sensitivity weight in precision weighing",
J. Res. NBS 92 (1987) 239 (buoyancy of objects of no added volume).
"""

from __future__ import annotations

from molid.methods.base import (
    DEFAULT_GLASS_MASS,
    Method,
    conventional_mass_factor,
    no_row_checks,
    same_volume,
)
from molid.physics.constants import CONVENTIONAL_MASS_DENSITY

__all__ = ["METHOD", "gas_mass", "gas_mass_without_displaced_air", "simulate_readings"]


def gas_mass_without_displaced_air(mass_tare, mass_filled, volume, air_density):
    """Return the change of indication alone, as a student who forgets the air in the bulb [kg].

    Parameters
    ----------
    mass_tare, mass_filled : array_like
        Indications [kg].
    volume : array_like
        Internal volume [m³] (unused).
    air_density : array_like
        Air density at the balance [kg/m³].

    Returns
    -------
    numpy.ndarray
        Mass [kg].
    """
    return (mass_filled - mass_tare) * conventional_mass_factor(air_density) + 0.0 * volume


def gas_mass(mass_tare, mass_filled, volume, air_density):
    """Mass of gas in a bulb tared full of ambient air [kg].

    Parameters
    ----------
    mass_tare, mass_filled : array_like
        Indications of the bulb full of air and full of gas [kg].
    volume : array_like
        Internal volume [m³].
    air_density : array_like
        Air density at the balance [kg/m³].

    Returns
    -------
    numpy.ndarray
        Mass of gas [kg].

    Examples
    --------
    A 1 L bulb in air of 1.2 kg/m³ whose reading rises by 0.3 g holds about 1.5 g:

    >>> round(float(gas_mass(0.0, 0.3e-3, 1e-3, 1.2)) * 1e3, 6)
    1.499955
    """
    return gas_mass_without_displaced_air(mass_tare, mass_filled, volume, air_density) + (
        air_density * volume)


def simulate_readings(gas_mass, air_density, volume, glass_mass=DEFAULT_GLASS_MASS, outer_volume=None):
    r"""Simulate the indications of an ideal balance for the bulb full of air and full of gas [kg].

    Written from the forces on the pan, apart from the model's algebra (no helper
    of the model is called), so that a slip shared by both would show as a
    failed round trip.

    Parameters
    ----------
    gas_mass : array_like
        Mass of gas in the filled bulb [kg].
    air_density : array_like
        Air density at the balance (and in the bulb at tare) [kg/m³].
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

    Notes
    -----
    Downward forces on the pan, divided by g: the glass, :math:`m_g`; what fills
    the bulb, ambient air :math:`\rho_a V` at tare and the gas :math:`m` when
    filled; the buoyancy of the air the closed bulb displaces,
    :math:`-\rho_a V_{ext}` (both weighings). The
    balance is adjusted with reference weights of density ρ_c = 8000 kg/m³
    (OIML R 111-1:2004): it indicates I when weights of mass I, whose volume is
    I/ρ_c, would pull the pan with the same net force,

    .. math:: I - \rho_a I/\rho_c = F/g
              \quad\Rightarrow\quad I = \frac{F}{g}\,\frac{\rho_c}{\rho_c - \rho_a}.

    With :math:`F_0/g = m_g + \rho_a V - \rho_a V_{ext}` and
    :math:`F_1/g = m_g + m - \rho_a V_{ext}`, the change is
    :math:`I_1 - I_0 = (m - \rho_a V)\,\rho_c/(\rho_c - \rho_a)`.

    References
    ----------
    OIML R 111-1:2004, Weights of classes E1, E2, F1, F2, M1, M1–2, M2, M2–3 and M3, Part 1,
    terminology (conventional mass, ρ_c = 8000 kg/m³).
    OIML D 28:2004, Conventional value of the result of weighing in air.

    Examples
    --------
    A 250 mL bulb in air of 1.2 kg/m³ filled with as much gas as the air it held
    (0.3 g) reads the same at tare and filled:

    >>> tare, filled = simulate_readings(0.3e-3, 1.2, 250e-6)
    >>> round(float(filled - tare), 15)
    0.0
    """
    outer_volume = 1.08 * volume if outer_volume is None else outer_volume
    # Net downward force over g: what is on the pan less the air its outside pushes aside.
    lift = air_density * outer_volume
    force_tare = glass_mass + air_density * volume - lift
    force_filled = glass_mass + gas_mass - lift
    # Reference weights of mass I displace I/rho_c of air, so they pull with I (rho_c - rho_a)/rho_c.
    weights_per_force = CONVENTIONAL_MASS_DENSITY / (CONVENTIONAL_MASS_DENSITY - air_density)
    return force_tare * weights_per_force, force_filled * weights_per_force


METHOD = Method(
    name="air-tare-bulb",
    summary="tare is the bulb full of ambient air",
    vessel="a bulb tared full of air",
    required_inputs=("mass_tare", "mass_filled", "volume", "temperature", "pressure"),
    optional_inputs=("humidity", "air_temperature", "air_pressure", "co2"),
    gas_mass=gas_mass,
    gas_mass_without_displaced_air=gas_mass_without_displaced_air,
    candidate_corrections=("compressibility",),
    mistakes=("celsius-as-kelvin", "volume-unit", "pressure-unit", "no-buoyancy", "masses-swapped",
              "gas-constant-units"),
    simulate_readings=simulate_readings,
    row_checks=no_row_checks,
    gas_volume=same_volume,
    cautions=("evacuated glass can implode: shield or tape the bulb and wear eye protection",),
)
