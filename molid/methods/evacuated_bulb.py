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

from molid.methods.base import DEFAULT_GLASS_MASS, Method, conventional_mass_factor, same_volume
from molid.physics.constants import CONVENTIONAL_MASS_DENSITY

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
    r"""Simulate the indications of an ideal balance for the evacuated and the filled bulb [kg].

    Written from the forces on the pan, apart from the model's algebra (no helper
    of the model is called), so that a slip shared by both would show as a
    failed round trip.

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

    Notes
    -----
    Downward forces on the pan, divided by g: the glass, :math:`m_g`; the gas,
    :math:`m` (filled only; the evacuated bulb holds nothing); the buoyancy of the
    air the closed bulb displaces, :math:`-\rho_a V_{ext}` (both weighings). The
    balance is adjusted with reference weights of density ρ_c = 8000 kg/m³
    (OIML R 111-1:2004): it indicates I when weights of mass I, whose volume is
    I/ρ_c, would pull the pan with the same net force,

    .. math:: I - \rho_a I/\rho_c = F/g
              \quad\Rightarrow\quad I = \frac{F}{g}\,\frac{\rho_c}{\rho_c - \rho_a}.

    With :math:`F_0/g = m_g - \rho_a V_{ext}` and :math:`F_1/g = F_0/g + m`, the
    rise is :math:`I_1 - I_0 = m\,\rho_c/(\rho_c - \rho_a)`.

    References
    ----------
    OIML R 111-1:2004, Weights of classes E1, E2, F1, F2, M1, M1–2, M2, M2–3 and M3, Part 1,
    terminology (conventional mass, ρ_c = 8000 kg/m³).
    OIML D 28:2004, Conventional value of the result of weighing in air.

    Examples
    --------
    A 1 kg steel weight of density 8000 kg/m³ as the "glass" of an empty vessel reads 1 kg
    in any air (the definition of the reference weights, OIML R 111-1):

    >>> tare, _ = simulate_readings(0.0, 1.13, 0.0, glass_mass=1.0, outer_volume=1.0 / 8000)
    >>> round(float(tare), 12)
    1.0
    """
    outer_volume = 1.08 * volume if outer_volume is None else outer_volume
    # Net downward force over g: what is on the pan less the air its outside pushes aside.
    lift = air_density * outer_volume
    force_tare = glass_mass - lift
    force_filled = glass_mass + gas_mass - lift
    # Reference weights of mass I displace I/rho_c of air, so they pull with I (rho_c - rho_a)/rho_c.
    weights_per_force = CONVENTIONAL_MASS_DENSITY / (CONVENTIONAL_MASS_DENSITY - air_density)
    return force_tare * weights_per_force, force_filled * weights_per_force


def row_checks(values, written):
    """Rows whose filled bulb does not weigh more than the evacuated one.

    Parameters
    ----------
    values : dict of numpy.ndarray
        The file's readings in SI units.
    written : callable
        ``written(name, value)``: a SI value as text in the unit the user wrote.

    Returns
    -------
    list of (numpy.ndarray, callable)
        The rows at fault and the message for row i.
    """
    difference = values["mass_filled"] - values["mass_tare"]
    return [(difference <= 0, lambda i: (
        "columns 'mass_filled'/'mass_tare': an evacuated bulb cannot weigh less or the same "
        f"when filled (difference {written('mass_tare', difference[i])}); check the tare and "
        "filled readings"))]


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
    row_checks=row_checks,
    gas_volume=same_volume,
    cautions=("evacuated glass can implode: shield or tape the bulb and wear eye protection",),
)
