r"""Saturation pressure, density and molar mass of ordinary water.

The saturation pressure over liquid water comes from the auxiliary equation of
Wagner and Pruss, which reproduces the full IAPWS-95 formulation closely enough
for a wet-gas correction (to within about 1e-4 relative between 0 °C and 100 °C).
The density of liquid water between 0 °C and 40 °C, for calibrating vessels by
water fill, comes from the formula of Tanaka et al. (2001), recommended by the
CIPM for metrology.

Every function takes and returns SI base units and is vectorised with numpy
broadcasting. `saturation_pressure_water` and `water_density` use only
arithmetic, powers and exp, with no comparison, ``abs`` or clipping on the temperature, so a complex
temperature passes through unchanged and the complex-step derivative
:math:`\mathrm{d}p_\sigma/\mathrm{d}T = \operatorname{Im} p_\sigma(T + ih)/h` is exact to
rounding. Range checks live in the separate `saturation_pressure_valid`.
"""

import numpy as np

from molid.physics.constants import STANDARD_ATMOSPHERE, ZERO_CELSIUS
from molid.physics.formulas import cached_molar_mass

__all__ = [
    "CRITICAL_PRESSURE_WATER",
    "CRITICAL_TEMPERATURE_WATER",
    "MOLAR_MASS_WATER",
    "TANAKA_RELATIVE_UNCERTAINTY",
    "TRIPLE_POINT_TEMPERATURE_WATER",
    "molar_mass_water",
    "saturation_pressure_valid",
    "saturation_pressure_water",
    "water_density",
    "water_density_valid",
]

#: Critical temperature of ordinary water T_c [K] (IAPWS R2-83(1992); also
#: Wagner & Pruss 2002, eq. 2.1a).
CRITICAL_TEMPERATURE_WATER = 647.096

#: Critical pressure of ordinary water p_c [Pa] (IAPWS R2-83(1992); Wagner &
#: Pruss 2002, eq. 2.1b).
CRITICAL_PRESSURE_WATER = 22.064e6

#: Triple-point temperature of ordinary water T_t [K] (ITS-90 defining fixed
#: point; Wagner & Pruss 2002, eq. 2.2a).
TRIPLE_POINT_TEMPERATURE_WATER = 273.16

#: Molar mass of H2O [kg/mol] from the atomic weights tabulated by periodictable (read back from
#: the user cache after the first process, so that importing this module does not import it).
MOLAR_MASS_WATER = cached_molar_mass("H2O")

# Coefficients a_1 ... a_6 and exponents of eq. (2.5) in Wagner & Pruss (2002),
# identical to IAPWS SR1-86(1992).
_WAGNER_PRUSS_COEFFICIENTS = (
    -7.85951783,
    1.84408259,
    -11.7866497,
    22.6807411,
    -15.9618719,
    1.80122502,
)
_WAGNER_PRUSS_EXPONENTS = (1.0, 1.5, 3.0, 3.5, 4.0, 7.5)

# Tanaka et al. (2001), eq. (1) (Thiesen's form): a1..a4 in °C, °C, °C², °C and
# a5 [kg/m³], the density of air-free SMOW at its maximum, at 101.325 kPa.
_TANAKA_A1 = -3.983035
_TANAKA_A2 = 301.797
_TANAKA_A3 = 522528.9
_TANAKA_A4 = 69.34881
_TANAKA_A5 = 999.974950
# Dissolved air (air-saturated minus air-free water), Tanaka et al. (2001) after
# Bignell (1983): s0 [kg/m³] and s1 [kg/(m³·°C)], stated for 0 °C to 25 °C.
_TANAKA_AIR_S0 = -4.612e-3
_TANAKA_AIR_S1 = 0.106e-3
# Isothermal compressibility, Tanaka et al. (2001): kappa0 [1/Pa], kappa1
# [1/(Pa·°C)], kappa2 [1/(Pa·°C²)].
_TANAKA_KAPPA0 = 50.74e-11
_TANAKA_KAPPA1 = -0.326e-11
_TANAKA_KAPPA2 = 0.00416e-11

#: Relative standard uncertainty of the Tanaka formula itself for SMOW, about
#: 1e-6 (1e-3 kg/m³) between 0 °C and 40 °C; the paper tabulates it by temperature
#: (value from memory, rounded up).
TANAKA_RELATIVE_UNCERTAINTY = 1.0e-6


def molar_mass_water():
    r"""Return the molar mass of ordinary water.

    Returns
    -------
    float
        Molar mass of H2O [kg/mol], from the atomic weights in periodictable.

    Notes
    -----
    .. math:: M_\mathrm{w} = 2 A_r(\mathrm{H}) + A_r(\mathrm{O})
              \quad [\mathrm{g/mol}]

    periodictable carries the IUPAC conventional (abridged) atomic weights, so
    the value is 18.015 g/mol; the older full-precision value 18.01528 g/mol
    differs by 1.6e-5 relative, far below anything a gas-density run resolves.

    References
    ----------
    .. [1] P. A. Kienzle et al., periodictable: extensible periodic table of the
       elements, https://github.com/pkienzle/periodictable (atomic weights from
       the IUPAC Commission on Isotopic Abundances and Atomic Weights).

    Examples
    --------
    >>> round(molar_mass_water() * 1000.0, 3)
    18.015
    """
    return MOLAR_MASS_WATER


def saturation_pressure_water(temperature):
    r"""Return the saturation (vapour) pressure of ordinary water over liquid.

    Parameters
    ----------
    temperature : array_like
        Temperature on ITS-90 [K]. Real or complex (for complex-step
        differentiation).

    Returns
    -------
    numpy.ndarray or numpy scalar
        Saturation pressure :math:`p_\sigma` [Pa], broadcast to the shape of
        ``temperature``.

    Notes
    -----
    Wagner and Pruss auxiliary equation, eq. (2.5) of [1]_ (the same equation
    and coefficients as IAPWS SR1-86(1992) [2]_):

    .. math::
        \ln\frac{p_\sigma}{p_c} = \frac{T_c}{T}\left(a_1\vartheta
        + a_2\vartheta^{1.5} + a_3\vartheta^{3} + a_4\vartheta^{3.5}
        + a_5\vartheta^{4} + a_6\vartheta^{7.5}\right),
        \qquad \vartheta = 1 - \frac{T}{T_c}

    with :math:`T_c` = 647.096 K and :math:`p_c` = 22.064 MPa.

    Valid from the triple point (273.16 K) to the critical point (647.096 K).
    Below 273.16 K the formula is still evaluated (it describes supercooled
    liquid only approximately); above :math:`T_c` the fractional powers of the
    negative :math:`\vartheta` have no real value and the result is NaN. Use
    `saturation_pressure_valid` to detect both cases.

    References
    ----------
    .. [1] W. Wagner, A. Pruss, "The IAPWS formulation 1995 for the
       thermodynamic properties of ordinary water substance for general and
       scientific use", J. Phys. Chem. Ref. Data 31 (2002) 387-535,
       doi:10.1063/1.1461829.
    .. [2] IAPWS SR1-86(1992), "Revised supplementary release on saturation
       properties of ordinary water substance", International Association for
       the Properties of Water and Steam, 1992.

    Examples
    --------
    At 100 °C (373.15 K) the IAPWS-95 tables give 101.418 kPa:

    >>> round(float(saturation_pressure_water(373.15)) / 1000.0, 3)
    101.418
    """
    temperature = np.asarray(temperature) * 1.0
    reduced_distance = 1.0 - temperature / CRITICAL_TEMPERATURE_WATER
    with np.errstate(invalid="ignore"):
        series = sum(
            coefficient * reduced_distance**exponent
            for coefficient, exponent in zip(
                _WAGNER_PRUSS_COEFFICIENTS, _WAGNER_PRUSS_EXPONENTS, strict=True
            )
        )
    pressure = CRITICAL_PRESSURE_WATER * np.exp(CRITICAL_TEMPERATURE_WATER / temperature * series)
    return pressure[()]


def saturation_pressure_valid(temperature):
    r"""Return whether a temperature lies in the range of the saturation equation.

    Parameters
    ----------
    temperature : array_like
        Temperature [K]. For complex input the real part is tested.

    Returns
    -------
    numpy.ndarray or numpy.bool_
        True where 273.16 K <= T <= 647.096 K, the range of eq. (2.5) of [1]_.

    Notes
    -----
    .. math:: T_t \le T \le T_c

    Kept apart from `saturation_pressure_water` so that the latter stays free
    of comparisons and can be differentiated by complex step.

    References
    ----------
    .. [1] W. Wagner, A. Pruss, J. Phys. Chem. Ref. Data 31 (2002) 387-535,
       doi:10.1063/1.1461829.

    Examples
    --------
    >>> saturation_pressure_valid([263.15, 293.15, 700.0]).tolist()
    [False, True, False]
    """
    temperature = np.real(np.asarray(temperature))
    inside = (temperature >= TRIPLE_POINT_TEMPERATURE_WATER) & (
        temperature <= CRITICAL_TEMPERATURE_WATER
    )
    return inside[()]


def water_density(temperature, pressure=STANDARD_ATMOSPHERE, air_saturated=False):
    r"""Return the density of liquid water between 0 °C and 40 °C by the Tanaka formula.

    Parameters
    ----------
    temperature : array_like
        Water temperature on ITS-90 [K]. Real or complex (complex-step safe).
    pressure : array_like, optional
        Pressure on the water [Pa]; 101 325 Pa by default (the formula's own).
    air_saturated : bool, optional
        Add the correction for water saturated with air (True) or keep the
        formula's air-free water (False, default).

    Returns
    -------
    numpy.ndarray or numpy scalar
        Density :math:`\rho_\mathrm{W}` [kg/m³].

    Notes
    -----
    Eq. (1) of [1]_ (Thiesen's form) with :math:`t` in °C:

    .. math:: \rho(t) = a_5\left[1 - \frac{(t + a_1)^2 (t + a_2)}{a_3 (t + a_4)}\right]

    :math:`a_1` = −3.983035 °C, :math:`a_2` = 301.797 °C, :math:`a_3` =
    522528.9 °C², :math:`a_4` = 69.34881 °C, :math:`a_5` = 999.974950 kg/m³:
    air-free water of the isotopic composition of SMOW at 101.325 kPa.

    Air saturation adds :math:`\Delta\rho = s_0 + s_1 t` with :math:`s_0` =
    −4.612e-3 kg/m³, :math:`s_1` = 0.106e-3 kg/(m³·°C) (stated for 0–25 °C;
    used up to 40 °C here, where it is about −0.6e-3 kg/m³). A pressure other
    than 101.325 kPa multiplies by :math:`1 + (\kappa_0 + \kappa_1 t +
    \kappa_2 t^2)(p - 101\,325\ \mathrm{Pa})` with :math:`\kappa_0` =
    50.74e-11 Pa⁻¹, :math:`\kappa_1` = −0.326e-11 Pa⁻¹ °C⁻¹, :math:`\kappa_2` =
    0.00416e-11 Pa⁻¹ °C⁻². The coefficients were checked against secondary
    restatements of the paper, not re-read in it. Tap or distilled water differs
    from SMOW in isotopic composition by a few parts in 10⁶ at most (the paper
    gives the correction); it is not applied.

    The formula's relative standard uncertainty is about 1e-6
    (`TANAKA_RELATIVE_UNCERTAINTY`). Valid from 0 °C to 40 °C; use
    `water_density_valid` to check, outside this function (comparisons would
    break the complex step).

    References
    ----------
    .. [1] M. Tanaka, G. Girard, R. Davis, A. Peuto, N. Bignell, "Recommended
       table for the density of water between 0 °C and 40 °C based on recent
       experimental reports", Metrologia 38 (2001) 301-309,
       doi:10.1088/0026-1394/38/4/3.
    .. [2] N. Bignell, "The effect of dissolved air on the density of water",
       Metrologia 19 (1983) 57-59.

    Examples
    --------
    The paper's table gives 998.2067 kg/m³ at 20 °C and 997.0470 kg/m³ at 25 °C:

    >>> round(float(water_density(293.15)), 4), round(float(water_density(298.15)), 4)
    (998.2067, 997.047)
    """
    celsius = np.asarray(temperature) * 1.0 - ZERO_CELSIUS
    density = _TANAKA_A5 * (
        1.0 - (celsius + _TANAKA_A1) ** 2 * (celsius + _TANAKA_A2)
        / (_TANAKA_A3 * (celsius + _TANAKA_A4))
    )
    if air_saturated:
        density = density + _TANAKA_AIR_S0 + _TANAKA_AIR_S1 * celsius
    compressibility = _TANAKA_KAPPA0 + _TANAKA_KAPPA1 * celsius + _TANAKA_KAPPA2 * celsius**2
    density = density * (1.0 + compressibility * (np.asarray(pressure) - STANDARD_ATMOSPHERE))
    return np.asarray(density)[()]


def water_density_valid(temperature):
    r"""Return whether a temperature lies in the range of the Tanaka water-density formula.

    Parameters
    ----------
    temperature : array_like
        Temperature [K]. For complex input the real part is tested.

    Returns
    -------
    numpy.ndarray or numpy.bool_
        True where 273.15 K <= T <= 313.15 K (0 °C to 40 °C), the range of [1]_.

    Notes
    -----
    .. math:: 0\ \mathrm{°C} \le t \le 40\ \mathrm{°C}

    References
    ----------
    .. [1] M. Tanaka et al., Metrologia 38 (2001) 301-309, doi:10.1088/0026-1394/38/4/3.

    Examples
    --------
    >>> water_density_valid([272.0, 293.15, 320.0]).tolist()
    [False, True, False]
    """
    celsius = np.real(np.asarray(temperature)) - ZERO_CELSIUS
    return ((celsius >= 0.0) & (celsius <= 40.0))[()]
