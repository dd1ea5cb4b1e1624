r"""Density of moist air by the CIPM-2007 equation.

The CIPM-2007 equation of Picard, Davis, Gläser and Fujii (Metrologia 45 (2008)
149-155) gives the density of laboratory air from pressure, temperature,
relative humidity and CO2 mole fraction. It is the air density used for the
buoyancy correction of the weighings.

All functions take SI base units (Pa, K, mole fractions and relative humidity
as plain fractions) and broadcast over numpy arrays.

Complex-step safety: every function here uses only arithmetic, integer powers
and exp on pressure, temperature, relative humidity and CO2 mole fraction, with
no comparison, ``abs``, ``maximum`` or clipping on them, and never casts to
float. A complex input therefore propagates, and
:math:`\partial\rho/\partial x = \operatorname{Im}\rho(x + ih)/h` gives the
derivative to rounding; the uncertainty budget relies on this.

The formulas are those of the paper's Appendix A1; its equation numbers were
recalled rather than re-read, so the docstrings cite the appendix.

Choice of R: the paper evaluates its equation with the CODATA 2006 value
R = 8.314 472 J/(mol K). Here the SI 2019 exact value
`molid.physics.constants.GAS_CONSTANT` = 8.314 462 618... J/(mol K) is used instead,
for two reasons: the CIPM-2007 revision itself replaced the older R by the best
value available at the time, and the molar mass of the unknown gas is computed
with the exact R, so one R runs through the whole calculation. The densities
differ by 1.13e-6 relative (higher here), a twentieth of the equation's own
relative standard uncertainty of 22e-6 (`CIPM_2007_RELATIVE_UNCERTAINTY`).
Multiply by 8.314462618 / 8.314472 to recover the paper's figures exactly.
"""

import numpy as np

from molid.physics.constants import GAS_CONSTANT, ZERO_CELSIUS

__all__ = [
    "CIPM_2007_RELATIVE_UNCERTAINTY",
    "compressibility_moist_air",
    "enhancement_factor",
    "molar_mass_dry_air",
    "moist_air_density",
    "saturation_vapour_pressure_cipm",
    "water_vapour_mole_fraction",
]

#: Relative standard uncertainty of the CIPM-2007 equation itself (not of its
#: inputs), 22e-6, as stated by Picard et al., Metrologia 45 (2008) 149.
CIPM_2007_RELATIVE_UNCERTAINTY = 22e-6

# Saturation vapour pressure coefficients A [1/K^2], B [1/K], C [1], D [K].
_PSV_A = 1.2378847e-5
_PSV_B = -1.9121316e-2
_PSV_C = 33.93711047
_PSV_D = -6.3431645e3

# Enhancement factor coefficients alpha [1], beta [1/Pa], gamma [1/K^2].
_ENHANCEMENT_ALPHA = 1.00062
_ENHANCEMENT_BETA = 3.14e-8
_ENHANCEMENT_GAMMA = 5.6e-7

# Compressibility coefficients a0 [K/Pa], a1 [1/Pa], a2 [1/(K Pa)], b0 [K/Pa],
# b1 [1/Pa], c0 [K/Pa], c1 [1/Pa], d [K^2/Pa^2], e [K^2/Pa^2].
_Z_A0 = 1.58123e-6
_Z_A1 = -2.9331e-8
_Z_A2 = 1.1043e-10
_Z_B0 = 5.707e-6
_Z_B1 = -2.051e-8
_Z_C0 = 1.9898e-4
_Z_C1 = -2.376e-6
_Z_D = 1.83e-11
_Z_E = -0.765e-8

# Molar mass of dry air at the reference CO2 fraction, and its CO2 slope
# (the atomic weight of carbon: CO2 is taken to replace O2), both in kg/mol.
_DRY_AIR_MOLAR_MASS_REFERENCE = 28.96546e-3
_DRY_AIR_CO2_SLOPE = 12.011e-3
_REFERENCE_CO2_MOLE_FRACTION = 0.0004

# The molar mass of water the equation was built with [kg/mol]. It is part of
# the published formula; molid.physics.water.MOLAR_MASS_WATER (18.015 g/mol, abridged
# atomic weights) would shift the density by only ~1e-7 relative.
_WATER_MOLAR_MASS_CIPM = 18.01528e-3


def _as_array(value):
    """Return ``value`` as an inexact numpy array without dropping an imaginary part."""
    return np.asarray(value) * 1.0


def saturation_vapour_pressure_cipm(temperature):
    r"""Return the saturation vapour pressure of water as written in CIPM-2007.

    Parameters
    ----------
    temperature : array_like
        Air temperature on ITS-90 [K].

    Returns
    -------
    numpy.ndarray or numpy scalar
        Saturation vapour pressure :math:`p_\mathrm{sv}` over liquid water [Pa].

    Notes
    -----
    Appendix A1 of [1]_ (the saturation vapour pressure formula):

    .. math:: p_\mathrm{sv} = 1\,\mathrm{Pa}\times
              \exp\left(A T^2 + B T + C + D/T\right)

    with A = 1.2378847e-5 K⁻², B = -1.9121316e-2 K⁻¹, C = 33.93711047 and
    D = -6.3431645e3 K. It is a fit for the CIPM-2007 range (about 15 °C to
    27 °C); there it sits 4e-5 to 7e-5 relative below IAPWS-95, which changes
    the air density by less than 1e-6 relative. For other uses prefer
    `molid.physics.water.saturation_pressure_water`.

    References
    ----------
    .. [1] A. Picard, R. S. Davis, M. Gläser, K. Fujii, "Revised formula for
       the density of moist air (CIPM-2007)", Metrologia 45 (2008) 149-155,
       doi:10.1088/0026-1394/45/2/004.

    Examples
    --------
    At 20 °C, the reference temperature of mass metrology (common practice):

    >>> round(float(saturation_vapour_pressure_cipm(293.15)), 1)
    2339.2
    """
    temperature = _as_array(temperature)
    exponent = _PSV_A * temperature**2 + _PSV_B * temperature + _PSV_C + _PSV_D / temperature
    return np.exp(exponent)[()]


def enhancement_factor(pressure, temperature):
    r"""Return the enhancement factor of water vapour in air.

    Parameters
    ----------
    pressure : array_like
        Total air pressure [Pa].
    temperature : array_like
        Air temperature [K].

    Returns
    -------
    numpy.ndarray or numpy scalar
        Enhancement factor :math:`f` [1], the ratio of the water-vapour mole
        fraction at saturation in air to :math:`p_\mathrm{sv}/p`.

    Notes
    -----
    Appendix A1 of [1]_:

    .. math:: f = \alpha + \beta p + \gamma t^2

    with :math:`t` the Celsius temperature, α = 1.00062, β = 3.14e-8 Pa⁻¹ and
    γ = 5.6e-7 K⁻². Valid for 600 hPa to 1100 hPa and 15 °C to 27 °C.

    References
    ----------
    .. [1] A. Picard, R. S. Davis, M. Gläser, K. Fujii, "Revised formula for
       the density of moist air (CIPM-2007)", Metrologia 45 (2008) 149-155,
       doi:10.1088/0026-1394/45/2/004.

    Examples
    --------
    >>> round(float(enhancement_factor(101325.0, 293.15)), 6)
    1.004026
    """
    pressure = _as_array(pressure)
    celsius = _as_array(temperature) - ZERO_CELSIUS
    return (_ENHANCEMENT_ALPHA + _ENHANCEMENT_BETA * pressure + _ENHANCEMENT_GAMMA * celsius**2)[()]


def water_vapour_mole_fraction(pressure, temperature, relative_humidity):
    r"""Return the mole fraction of water vapour in moist air.

    Parameters
    ----------
    pressure : array_like
        Total air pressure [Pa].
    temperature : array_like
        Air temperature [K].
    relative_humidity : array_like
        Relative humidity as a fraction [1] (0.5 for 50 %).

    Returns
    -------
    numpy.ndarray or numpy scalar
        Water-vapour mole fraction :math:`x_\mathrm{v}` [mol/mol].

    Notes
    -----
    Appendix A1 of [1]_:

    .. math:: x_\mathrm{v} = h\, f(p, t)\, \frac{p_\mathrm{sv}(T)}{p}

    with :math:`h` the relative humidity, :math:`f` from `enhancement_factor`
    and :math:`p_\mathrm{sv}` from `saturation_vapour_pressure_cipm`.

    References
    ----------
    .. [1] A. Picard, R. S. Davis, M. Gläser, K. Fujii, "Revised formula for
       the density of moist air (CIPM-2007)", Metrologia 45 (2008) 149-155,
       doi:10.1088/0026-1394/45/2/004.

    Examples
    --------
    >>> round(float(water_vapour_mole_fraction(101325.0, 293.15, 0.5)), 6)
    0.011589
    """
    pressure = _as_array(pressure)
    return (
        _as_array(relative_humidity)
        * enhancement_factor(pressure, temperature)
        * saturation_vapour_pressure_cipm(temperature)
        / pressure
    )[()]


def compressibility_moist_air(pressure, temperature, water_vapour_mole_fraction):
    r"""Return the compressibility factor of moist air.

    Parameters
    ----------
    pressure : array_like
        Total air pressure [Pa].
    temperature : array_like
        Air temperature [K].
    water_vapour_mole_fraction : array_like
        Mole fraction of water vapour :math:`x_\mathrm{v}` [mol/mol].

    Returns
    -------
    numpy.ndarray or numpy scalar
        Compressibility factor :math:`Z` [1].

    Notes
    -----
    Appendix A1 of [1]_, with :math:`t` the Celsius temperature:

    .. math::
        Z = 1 - \frac{p}{T}\left[a_0 + a_1 t + a_2 t^2
            + (b_0 + b_1 t) x_\mathrm{v} + (c_0 + c_1 t) x_\mathrm{v}^2\right]
            + \frac{p^2}{T^2}\left(d + e\, x_\mathrm{v}^2\right)

    a0 = 1.58123e-6 K Pa⁻¹, a1 = -2.9331e-8 Pa⁻¹, a2 = 1.1043e-10 K⁻¹ Pa⁻¹,
    b0 = 5.707e-6 K Pa⁻¹, b1 = -2.051e-8 Pa⁻¹, c0 = 1.9898e-4 K Pa⁻¹,
    c1 = -2.376e-6 Pa⁻¹, d = 1.83e-11 K² Pa⁻², e = -0.765e-8 K² Pa⁻².
    Valid for 600 hPa to 1100 hPa and 15 °C to 27 °C.

    References
    ----------
    .. [1] A. Picard, R. S. Davis, M. Gläser, K. Fujii, "Revised formula for
       the density of moist air (CIPM-2007)", Metrologia 45 (2008) 149-155,
       doi:10.1088/0026-1394/45/2/004.

    Examples
    --------
    Dry air at 20 °C and one standard atmosphere:

    >>> round(float(compressibility_moist_air(101325.0, 293.15, 0.0)), 6)
    0.999643
    """
    pressure = _as_array(pressure)
    temperature = _as_array(temperature)
    fraction = _as_array(water_vapour_mole_fraction)
    celsius = temperature - ZERO_CELSIUS
    bracket = (
        _Z_A0
        + _Z_A1 * celsius
        + _Z_A2 * celsius**2
        + (_Z_B0 + _Z_B1 * celsius) * fraction
        + (_Z_C0 + _Z_C1 * celsius) * fraction**2
    )
    return (
        1.0
        - pressure / temperature * bracket
        + (pressure / temperature) ** 2 * (_Z_D + _Z_E * fraction**2)
    )[()]


def molar_mass_dry_air(co2_mole_fraction=_REFERENCE_CO2_MOLE_FRACTION):
    r"""Return the molar mass of dry air for a given CO2 content.

    Parameters
    ----------
    co2_mole_fraction : array_like, optional
        Mole fraction of CO2 in dry air [mol/mol]; default 0.0004.

    Returns
    -------
    numpy.ndarray or numpy scalar
        Molar mass of dry air :math:`M_\mathrm{a}` [kg/mol].

    Notes
    -----
    Appendix A1 of [1]_:

    .. math:: M_\mathrm{a} = \left[28.96546 + 12.011\,(x_\mathrm{CO_2}
              - 0.0004)\right]\times 10^{-3}\ \mathrm{kg/mol}

    The slope is the atomic weight of carbon, because extra CO2 is assumed to
    replace O2 (respiration and combustion). The 28.96546 g/mol rests on the
    argon mole fraction 0.009332 adopted in CIPM-2007.

    References
    ----------
    .. [1] A. Picard, R. S. Davis, M. Gläser, K. Fujii, "Revised formula for
       the density of moist air (CIPM-2007)", Metrologia 45 (2008) 149-155,
       doi:10.1088/0026-1394/45/2/004.

    Examples
    --------
    >>> round(float(molar_mass_dry_air()) * 1000.0, 5)
    28.96546
    """
    excess = _as_array(co2_mole_fraction) - _REFERENCE_CO2_MOLE_FRACTION
    return (_DRY_AIR_MOLAR_MASS_REFERENCE + _DRY_AIR_CO2_SLOPE * excess)[()]


def moist_air_density(
    pressure, temperature, relative_humidity, co2_mole_fraction=_REFERENCE_CO2_MOLE_FRACTION
):
    r"""Return the density of moist air by the CIPM-2007 equation.

    Parameters
    ----------
    pressure : array_like
        Total air pressure [Pa].
    temperature : array_like
        Air temperature on ITS-90 [K].
    relative_humidity : array_like
        Relative humidity as a fraction [1] (0.5 for 50 %).
    co2_mole_fraction : array_like, optional
        Mole fraction of CO2 [mol/mol]; default 0.0004.

    Returns
    -------
    numpy.ndarray or numpy scalar
        Air density :math:`\rho_\mathrm{a}` [kg/m³].

    Notes
    -----
    Eq. (1) of [1]_ (the density equation, restated in its Appendix A1;
    numbering recalled, not re-read):

    .. math:: \rho_\mathrm{a} = \frac{p M_\mathrm{a}}{Z R T}
              \left[1 - x_\mathrm{v}\left(1 - \frac{M_\mathrm{v}}{M_\mathrm{a}}
              \right)\right]

    with :math:`M_\mathrm{v}` = 18.01528e-3 kg/mol, :math:`x_\mathrm{v}` from
    `water_vapour_mole_fraction`, :math:`Z` from `compressibility_moist_air`
    and :math:`M_\mathrm{a}` from `molar_mass_dry_air`. :math:`R` is the SI 2019
    exact value rather than the paper's 8.314 472 J/(mol K); see the module
    notes. Range of validity: 600 hPa to 1100 hPa, 15 °C to 27 °C, 0 to 100 %
    relative humidity. Relative standard uncertainty of the equation itself:
    `CIPM_2007_RELATIVE_UNCERTAINTY` (22e-6).

    References
    ----------
    .. [1] A. Picard, R. S. Davis, M. Gläser, K. Fujii, "Revised formula for
       the density of moist air (CIPM-2007)", Metrologia 45 (2008) 149-155,
       doi:10.1088/0026-1394/45/2/004.

    Examples
    --------
    Air at 20 °C, 101.325 kPa, 50 % relative humidity and 400 µmol/mol CO2,
    the usual reference conditions of mass metrology (common practice):

    >>> round(float(moist_air_density(101325.0, 293.15, 0.5)), 5)
    1.19932
    """
    pressure = _as_array(pressure)
    temperature = _as_array(temperature)
    fraction = water_vapour_mole_fraction(pressure, temperature, relative_humidity)
    compressibility = compressibility_moist_air(pressure, temperature, fraction)
    dry_molar_mass = molar_mass_dry_air(co2_mole_fraction)
    water_correction = 1.0 - fraction * (1.0 - _WATER_MOLAR_MASS_CIPM / dry_molar_mass)
    density = (
        pressure
        * dry_molar_mass
        / (compressibility * GAS_CONSTANT * temperature)
        * water_correction
    )
    return np.asarray(density)[()]
