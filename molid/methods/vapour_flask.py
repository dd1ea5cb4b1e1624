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

from molid.methods.base import conventional_mass_factor

__all__ = [
    "BOROSILICATE_EXPANSION",
    "condensed_mass",
    "residual_vapour_mass",
    "flask_volume_at",
]

#: Cubic expansion coefficient of borosilicate glass 3.3 [1/K]: three times the linear
#: coefficient 3.3e-6 /K of ISO 3585:1998.
BOROSILICATE_EXPANSION = 3 * 3.3e-6

_CALIBRATION_TEMPERATURE = 293.15  # K, the reference temperature of volumetric glassware (ISO 384)


def condensed_mass(mass_tare, mass_filled, air_density):
    """Return the mass gained between the tare and the final weighing [kg].

    Parameters
    ----------
    mass_tare, mass_filled : array_like
        Indications of the flask full of room air and after condensing [kg].
    air_density : array_like
        Air density at the balance [kg/m³].

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
    return (mass_filled - mass_tare) * conventional_mass_factor(air_density)


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
