r"""Gas laws for notebooks: molar volume, density, and a gas taken from one state to another.

Every function is plain arithmetic on its arguments, so it takes floats, numpy
arrays (SI units) and ``uncertainties`` numbers alike, propagates the latter's
uncertainties and correlations to first order (GUM 5.1.2), and is complex-step
safe. A real gas enters through its compression factor Z at each state (``1``,
the default, is the ideal gas); :mod:`molid.candidates.gas_states` supplies the Z
of a named gas from the candidate library.

The equation of state of a gas of compression factor Z is

.. math:: p V = Z n R T, \qquad \rho = \frac{p M}{Z R T}, \qquad V_m = \frac{Z R T}{p},

and between two states 1 and 2 of the same amount of gas (the combined gas law,
with Z at both states)

.. math:: V_2 = V_1\,\frac{p_1}{p_2}\,\frac{T_2}{T_1}\,\frac{Z_2}{Z_1}, \qquad
          \rho_2 = \rho_1\,\frac{p_2}{p_1}\,\frac{T_1}{T_2}\,\frac{Z_1}{Z_2}.

References
----------
.. [1] P. Atkins, J. de Paula, *Physical Chemistry*, 8th ed., Oxford University Press
   (2006), sections 1.2 (the perfect gas law, the combined gas law) and 1.3 (the
   compression factor).
.. [2] E. Tiesinga, P. J. Mohr, D. B. Newell, B. N. Taylor, "CODATA recommended values
   of the fundamental physical constants: 2018", Rev. Mod. Phys. 93 (2021) 025010
   (R exact; molar volume of an ideal gas 22.413 969 54 L/mol at 273.15 K, 101.325 kPa).
.. [3] ISO 6976:2016, Natural gas — Calculation of calorific values, density, relative
   density and Wobbe indices from composition, clause 3 (relative density) and
   section 9 (its calculation from the molar masses and compression factors).
"""

from __future__ import annotations

from molid.physics.constants import GAS_CONSTANT

__all__ = ["convert_density", "convert_volume", "mass_density", "molar_volume", "relative_density"]


def molar_volume(temperature, pressure, compressibility=1.0):
    r"""Volume of one mole of gas at a state, V_m = Z·R·T/p [m³/mol].

    Parameters
    ----------
    temperature : float, array_like or ufloat
        Temperature [K].
    pressure : float, array_like or ufloat
        Pressure [Pa].
    compressibility : float, array_like or ufloat, optional
        Compression factor Z of the gas at that state [-]; 1 (the default) for the ideal gas.

    Returns
    -------
    float, numpy.ndarray or ufloat
        Molar volume [m³/mol].

    Notes
    -----
    :math:`V_m = Z R T/p` with R = N_A·k exact (SI 2019); Atkins & de Paula (2006), 1.3.

    References
    ----------
    CODATA 2018 (Tiesinga et al. 2021): the molar volume of an ideal gas at
    273.15 K and 101.325 kPa is 22.413 969 54… L/mol (exact, from R).

    Examples
    --------
    The ideal gas at 273.15 K and 101.325 kPa (CODATA 2018: 22.413 969 54… L/mol):

    >>> round(molar_volume(273.15, 101325.0) * 1e3, 9)
    22.413969545

    and at 273.15 K and 100 kPa (CODATA 2018: 22.710 954 64 L/mol):

    >>> round(molar_volume(273.15, 100e3) * 1e3, 8)
    22.71095464
    """
    return compressibility * GAS_CONSTANT * temperature / pressure


def mass_density(molar_mass, temperature, pressure, compressibility=1.0):
    r"""Mass density of a gas at a state, ρ = p·M/(Z·R·T) [kg/m³].

    Parameters
    ----------
    molar_mass : float, array_like or ufloat
        Molar mass [kg/mol].
    temperature : float, array_like or ufloat
        Temperature [K].
    pressure : float, array_like or ufloat
        Pressure [Pa].
    compressibility : float, array_like or ufloat, optional
        Compression factor Z at that state [-]; 1 for the ideal gas.

    Returns
    -------
    float, numpy.ndarray or ufloat
        Density [kg/m³].

    Notes
    -----
    :math:`\rho = p M/(Z R T)`: the molar mass over the molar volume of :func:`molar_volume`.

    References
    ----------
    P. Atkins, J. de Paula, *Physical Chemistry*, 8th ed. (2006), 1.2 and 1.3.

    Examples
    --------
    Carbon dioxide (44.0095 g/mol) as an ideal gas at 0 °C and 101.325 kPa: by hand,
    0.0440095 × 101325 / (8.314 462 618 × 273.15) = 1.963 49 kg/m³; with its
    compression factor there, Z = 0.993 2 (a value of about that size follows from
    B ≈ −150 cm³/mol), 1.963 49/0.993 2 = 1.976 9 kg/m³:

    >>> round(mass_density(44.0095e-3, 273.15, 101325.0), 5)
    1.96349
    >>> round(mass_density(44.0095e-3, 273.15, 101325.0, 0.9932), 4)
    1.9769
    """
    return pressure * molar_mass / (compressibility * GAS_CONSTANT * temperature)


def convert_volume(volume, temperature_from, pressure_from, temperature_to, pressure_to,
                   compressibility_from=1.0, compressibility_to=1.0):
    r"""Volume of a fixed amount of gas at a second state (the combined gas law) [m³].

    Parameters
    ----------
    volume : float, array_like or ufloat
        Volume at the first state [m³] (any volume unit: the result is in the same one).
    temperature_from, pressure_from : float, array_like or ufloat
        The first state: temperature [K] and pressure [Pa].
    temperature_to, pressure_to : float, array_like or ufloat
        The second state: temperature [K] and pressure [Pa].
    compressibility_from, compressibility_to : float, array_like or ufloat, optional
        The gas's compression factor at each state [-]; 1 for the ideal gas.

    Returns
    -------
    float, numpy.ndarray or ufloat
        Volume at the second state, in the unit of ``volume``.

    Notes
    -----
    .. math:: V_2 = V_1\,\frac{p_1}{p_2}\,\frac{T_2}{T_1}\,\frac{Z_2}{Z_1}

    from :math:`pV = ZnRT` at both states with n fixed (Atkins & de Paula 2006, 1.2).

    References
    ----------
    P. Atkins, J. de Paula, *Physical Chemistry*, 8th ed. (2006), 1.2 (the combined gas law).

    Examples
    --------
    1.000 L collected at 20 °C and 98.0 kPa is, at 0 °C and 101.325 kPa (ideal gas),
    by hand 1.000 × (98.0/101.325) × (273.15/293.15) = 0.901 20 L:

    >>> round(convert_volume(1.000, 293.15, 98.0e3, 273.15, 101325.0), 5)
    0.9012
    """
    return (volume * (pressure_from / pressure_to) * (temperature_to / temperature_from)
            * (compressibility_to / compressibility_from))


def convert_density(density, temperature_from, pressure_from, temperature_to, pressure_to,
                    compressibility_from=1.0, compressibility_to=1.0):
    r"""Density of a gas at a second state, from its density at a first [kg/m³].

    Parameters
    ----------
    density : float, array_like or ufloat
        Density at the first state [kg/m³] (any density unit: the result is in the same one).
    temperature_from, pressure_from : float, array_like or ufloat
        The first state: temperature [K] and pressure [Pa].
    temperature_to, pressure_to : float, array_like or ufloat
        The second state: temperature [K] and pressure [Pa].
    compressibility_from, compressibility_to : float, array_like or ufloat, optional
        The gas's compression factor at each state [-]; 1 for the ideal gas.

    Returns
    -------
    float, numpy.ndarray or ufloat
        Density at the second state.

    Notes
    -----
    .. math:: \rho_2 = \rho_1\,\frac{p_2}{p_1}\,\frac{T_1}{T_2}\,\frac{Z_1}{Z_2}

    the inverse of :func:`convert_volume`'s ratio (the mass is fixed).

    References
    ----------
    P. Atkins, J. de Paula, *Physical Chemistry*, 8th ed. (2006), 1.2 and 1.3.

    Examples
    --------
    A gas of 1.2 kg/m³ at 0 °C and 101.325 kPa has, at 20 °C and 98.0 kPa (ideal gas),
    by hand 1.2 × (98.0/101.325) × (273.15/293.15) = 1.081 44 kg/m³:

    >>> round(convert_density(1.2, 273.15, 101325.0, 293.15, 98.0e3), 5)
    1.08144
    """
    return (density * (pressure_to / pressure_from) * (temperature_from / temperature_to)
            * (compressibility_from / compressibility_to))


def relative_density(molar_mass, compressibility, molar_mass_air, compressibility_air):
    r"""Relative density of a gas: its density over that of dry air at the same state [-].

    Parameters
    ----------
    molar_mass : float, array_like or ufloat
        Molar mass of the gas [kg/mol].
    compressibility : float, array_like or ufloat
        Compression factor of the gas at the state [-].
    molar_mass_air : float, array_like or ufloat
        Molar mass of dry air [kg/mol] (28.965 46 g/mol for the standard composition of
        ISO 6976:2016, that of CIPM-2007 with x(CO2) = 0.0004).
    compressibility_air : float, array_like or ufloat
        Compression factor of dry air at the same state [-].

    Returns
    -------
    float, numpy.ndarray or ufloat
        Relative density d [-].

    Notes
    -----
    ISO 6976:2016 defines the relative density as the density of the gas divided by the
    density of dry air of standard composition at the same specified pressure and
    temperature; for gases obeying :math:`\rho = pM/(ZRT)` the state cancels but for Z:

    .. math:: d = \frac{M}{M_\mathrm{air}}\,\frac{Z_\mathrm{air}}{Z}

    References
    ----------
    ISO 6976:2016, clause 3 (definition) and section 9 (calculation).

    Examples
    --------
    Methane at 15 °C and 101.325 kPa with the compression factors of ISO 6976:2016
    (methane Z = 1 − 0.044 52² = 0.998 018, from its summation factor; dry air
    Z = 0.999 595; from memory): by hand 16.042 46/28.965 46 × 0.999 595/0.998 018 =
    0.554 72:

    >>> round(relative_density(16.04246e-3, 1 - 0.04452**2, 28.96546e-3, 0.999595), 5)
    0.55472
    """
    return (molar_mass / molar_mass_air) * (compressibility_air / compressibility)
