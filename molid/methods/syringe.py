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
from molid.methods.base import DEFAULT_GLASS_MASS, Method, no_row_checks, same_volume
from molid.physics.constants import CONVENTIONAL_MASS_DENSITY

__all__ = ["METHOD", "simulate_readings"]


def simulate_readings(gas_mass, air_density, volume, glass_mass=DEFAULT_GLASS_MASS, outer_volume=None):
    r"""Simulate the indications of an ideal balance for the empty and the drawn syringe [kg].

    Written from the forces on the pan, apart from the model's algebra (no helper
    of the model is called), so that a slip shared by both would show as a
    failed round trip.

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

    Notes
    -----
    Downward forces on the pan, divided by g: the syringe, :math:`m_g`; the gas,
    :math:`m` (drawn only; the plunger home leaves no room for air); the buoyancy
    of the air the syringe displaces, :math:`-\rho_a V_{ext}` with the plunger
    home and :math:`-\rho_a (V_{ext} + V)` drawn out by V. The
    balance is adjusted with reference weights of density ρ_c = 8000 kg/m³
    (OIML R 111-1:2004): it indicates I when weights of mass I, whose volume is
    I/ρ_c, would pull the pan with the same net force,

    .. math:: I - \rho_a I/\rho_c = F/g
              \quad\Rightarrow\quad I = \frac{F}{g}\,\frac{\rho_c}{\rho_c - \rho_a}.

    With :math:`F_0/g = m_g - \rho_a V_{ext}` and
    :math:`F_1/g = m_g + m - \rho_a (V_{ext} + V)`, the change is
    :math:`I_1 - I_0 = (m - \rho_a V)\,\rho_c/(\rho_c - \rho_a)`.

    References
    ----------
    OIML R 111-1:2004, Weights of classes E1, E2, F1, F2, M1, M1–2, M2, M2–3 and M3, Part 1,
    terminology (conventional mass, ρ_c = 8000 kg/m³).
    OIML D 28:2004, Conventional value of the result of weighing in air.

    Examples
    --------
    A syringe drawn out by 100 mL in air of 1.2 kg/m³ that takes in 0.12 g of gas
    (as much as the air it now displaces) reads the same as at tare:

    >>> tare, filled = simulate_readings(0.12e-3, 1.2, 100e-6)
    >>> round(float(filled - tare), 15)
    0.0
    """
    outer_volume = 1.08 * volume if outer_volume is None else outer_volume
    # Net downward force over g: what is on the pan less the air its outside pushes aside;
    # drawing the plunger out by V pushes aside V more.
    force_tare = glass_mass - air_density * outer_volume
    force_filled = glass_mass + gas_mass - air_density * (outer_volume + volume)
    # Reference weights of mass I displace I/rho_c of air, so they pull with I (rho_c - rho_a)/rho_c.
    weights_per_force = CONVENTIONAL_MASS_DENSITY / (CONVENTIONAL_MASS_DENSITY - air_density)
    return force_tare * weights_per_force, force_filled * weights_per_force


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
    row_checks=no_row_checks,
    gas_volume=same_volume,
    # common practice: a regulator can blow the plunger out of a glass syringe
    cautions=("never fill a glass syringe straight from a cylinder regulator: use a low-pressure "
              "stage (bag, balloon or bubbler), or the plunger can be blown out",),
)
