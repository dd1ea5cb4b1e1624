r"""Condensed-vapour flask (Dumas method): a volatile liquid vaporised in a capped flask.

The flask with its pierced cap is weighed full of room air (tare), a few mL of
the liquid are added, the flask is held in a boiling-water bath until the excess
has boiled out through the pinhole and the flask holds only vapour at the bath
temperature and the barometric pressure, then it is cooled to room
temperature, dried outside and weighed again (final).

After cooling the flask holds the condensed liquid, the substance's vapour at
its saturation pressure p_sat(T_room) and air at p − p_sat: the air that did not
re-enter, ρ_a·V·p_sat/p, is missing from the final reading. Hence

.. math:: m = (I_1 - I_0)\,(1 - \rho_a/\rho_c) + \rho_a V \frac{p_{sat}(T_{room})}{p}

and :math:`M = Z(T_b)\,m R T_b / (p V(T_b))` with the flask's volume at the bath
temperature. The second term, the residual-vapour correction, depends on the
substance (about 15 % of m for acetone in a 125 mL flask), so it is applied per
candidate, like Z; the run's headline ideal-gas value leaves it out and says so.

Second-order effects not modelled: the condensate's own volume (about 0.4 mL of
air it keeps out) and the humidity of the re-entering air.

References
----------
J. B. A. Dumas, "Mémoire sur quelques points de la théorie atomistique",
Ann. Chim. Phys. 33 (1826) 337-391 (the method).
OIML D 28:2004, Conventional value of the result of weighing in air.
ISO 3585:1998, Borosilicate glass 3.3 — Properties (linear expansion 3.3e-6 /K).
"""

from __future__ import annotations

import numpy as np

from molid.methods.base import DEFAULT_GLASS_MASS, Method, conventional_mass_factor
from molid.physics.constants import CONVENTIONAL_MASS_DENSITY

__all__ = [
    "BOROSILICATE_EXPANSION",
    "METHOD",
    "condensed_mass",
    "residual_vapour_mass",
    "flask_volume_at",
    "simulate_readings",
    "row_checks",
]

#: Cubic expansion coefficient of borosilicate glass 3.3 [1/K]: three times the linear
#: coefficient 3.3e-6 /K of ISO 3585:1998.
BOROSILICATE_EXPANSION = 3 * 3.3e-6

_CALIBRATION_TEMPERATURE = 293.15  # K, the reference temperature of volumetric glassware (ISO 384)


def condensed_mass(mass_tare, mass_filled, air_density, volume=0.0):
    """Return the mass gained between the tare and the final weighing [kg].

    Parameters
    ----------
    mass_tare, mass_filled : array_like
        Indications of the flask full of room air and after condensing [kg].
    air_density : array_like
        Air density at the balance [kg/m³].
    volume : array_like
        Flask volume [m³] (not needed: the flask's air is in both readings).

    Returns
    -------
    numpy.ndarray
        ΔI·(1 − ρa/ρc) [kg]: the substance's mass less the air its vapour keeps out.

    Examples
    --------
    A gain of 0.3000 g in air of 1.19 kg/m³ (OIML D 28 factor 1 − 1.19/8000):

    >>> round(float(condensed_mass(0.0, 0.3e-3, 1.19)) * 1e3, 6)
    0.299955
    """
    return (mass_filled - mass_tare) * conventional_mass_factor(air_density) + 0.0 * volume


def residual_vapour_mass(air_density, volume, saturation_pressure, pressure):
    """Return the mass of air kept out of the cooled flask by the substance's own vapour [kg].

    Parameters
    ----------
    air_density : array_like
        Room-air density [kg/m³].
    volume : array_like
        Flask volume at room temperature [m³].
    saturation_pressure : array_like
        The substance's vapour pressure at room temperature [Pa].
    pressure : array_like
        Barometric pressure [Pa].

    Returns
    -------
    numpy.ndarray
        ρa·V·p_sat/p [kg].

    Examples
    --------
    Acetone (p_sat ≈ 24.6 kPa at 20 °C) in a 125 mL flask, air 1.19 kg/m³, 101.3 kPa:

    >>> round(float(residual_vapour_mass(1.19, 125e-6, 24.6e3, 101.3e3)) * 1e6, 1)
    36.1
    """
    return air_density * volume * saturation_pressure / pressure


def flask_volume_at(volume, temperature, expansion=BOROSILICATE_EXPANSION):
    """Return the flask's volume at a temperature from its volume at 20 °C [m³].

    Parameters
    ----------
    volume : array_like
        Volume at 20 °C [m³].
    temperature : array_like
        Temperature of the glass [K].
    expansion : array_like
        Cubic expansion coefficient of the glass [1/K].

    Returns
    -------
    numpy.ndarray
        V(T) = V20·(1 + γ·(T − 293.15 K)) [m³].

    References
    ----------
    ISO 3585:1998 (borosilicate glass 3.3); ISO 384:2015 (20 °C reference temperature).

    Examples
    --------
    A 125 mL borosilicate flask in boiling water at 99.5 °C grows by 0.08 %:

    >>> round(float(flask_volume_at(125e-6, 372.65)) * 1e6, 4)
    125.0984
    """
    return volume * (1.0 + expansion * (temperature - _CALIBRATION_TEMPERATURE))


def _gas_mass(mass_tare, mass_filled, volume, air_density):
    """Return the registry's form of :func:`condensed_mass` [kg]."""
    return condensed_mass(mass_tare, mass_filled, air_density, volume)


def simulate_readings(gas_mass, air_density, volume, glass_mass=DEFAULT_GLASS_MASS, outer_volume=None,
                      saturation_ratio=0.0):
    r"""Simulate the indications of an ideal balance for the flask before and after [kg].

    Parameters
    ----------
    gas_mass : array_like
        Mass of the substance the flask held as vapour at the bath [kg].
    air_density : array_like
        Room-air density [kg/m³].
    volume : array_like
        Flask volume at room temperature [m³].
    glass_mass : float
        Mass of the flask and cap [kg].
    outer_volume : array_like, optional
        Volume the closed flask displaces [m³]; 1.08 V by default.
    saturation_ratio : array_like
        p_sat(T_room)/p of the substance: the fraction of the flask its cooled vapour
        keeps free of air (0 for a substance of no vapour pressure).

    Returns
    -------
    tuple of numpy.ndarray
        Tare and final indications [kg].

    Notes
    -----
    Forces on the pan over g: at tare the glass and the flask's air; at the end
    the glass, the substance (liquid and vapour) and the air that re-entered,
    ρa·V·(1 − p_sat/p); both less the air the outside displaces. Reference
    weights of mass I pull with I·(1 − ρa/ρc) (OIML R 111-1, D 28).
    """
    outer_volume = 1.08 * volume if outer_volume is None else outer_volume
    outside = air_density * outer_volume
    force_tare = glass_mass + air_density * volume - outside
    force_final = glass_mass + gas_mass + air_density * volume * (1.0 - saturation_ratio) - outside
    weights_per_force = CONVENTIONAL_MASS_DENSITY / (CONVENTIONAL_MASS_DENSITY - air_density)
    return force_tare * weights_per_force, force_final * weights_per_force


#: Densest room air a flask can hold [kg/m³] (dry air at 0 °C and 105 kPa is about 1.34):
#: a final reading below the tare by more than this times V is impossible.
_DENSEST_AIR = 1.35


def row_checks(values, written):
    """Rows a condensed-vapour flask cannot have produced.

    Parameters
    ----------
    values : dict of numpy.ndarray
        The file's readings in SI units.
    written : callable
        ``written(name, value)``: a SI value as text in the unit the user wrote.

    Returns
    -------
    list of (numpy.ndarray, callable)
        The rows at fault and the message for row i: a bath not above room
        temperature, a final reading below the tare by more than all the flask's air.
    """
    count = len(values["temperature"])
    room = values.get("air_temperature", np.full(count, np.nan))
    bath = values["temperature"]
    change = values["mass_filled"] - values["mass_tare"]
    most_air = _DENSEST_AIR * values["volume"]
    return [
        (bath <= room, lambda i: (
            f"column 'temperature': the bath ({written('temperature', bath[i])}) must be hotter "
            f"than the room ({written('air_temperature', room[i])}) to drive the liquid out as vapour")),
        (change < -most_air, lambda i: (
            f"columns 'mass_filled'/'mass_tare': the final reading is below the tare by "
            f"{written('mass_tare', -change[i])}, more than all the air in the flask "
            f"(about {written('mass_tare', most_air[i])}) could explain; check the readings")),
    ]


METHOD = Method(
    name="vapour-flask",
    summary="tare is the capped flask full of room air; final is after vaporising and cooling",
    vessel="a condensed-vapour flask",
    required_inputs=("mass_tare", "mass_filled", "volume", "temperature", "pressure",
                     "air_temperature"),
    optional_inputs=("humidity", "air_pressure", "co2"),
    gas_mass=_gas_mass,
    gas_mass_without_displaced_air=None,
    candidate_corrections=("compressibility", "residual-vapour"),
    mistakes=("celsius-as-kelvin", "volume-unit", "pressure-unit", "masses-swapped",
              "gas-constant-units", "room-temperature-for-vapour"),
    simulate_readings=simulate_readings,
    row_checks=row_checks,
    cautions=(
        "heat flammable liquids only in a water bath on a hot plate, never over a flame, in a fume hood",
        "boiling water and a hot flask scald: handle the flask with tongs and let it cool on a mat",
        "never seal a flask that is being heated: the cap must keep its pinhole open",
    ),
    gas_volume=flask_volume_at,
    headline_model="ideal gas, no residual-vapour correction",
    # the flask holds the substance's own vapour, never a gas saturated with water
    accepts_wet=False,
)
