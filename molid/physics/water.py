r"""Saturation pressure and molar mass of ordinary water.

The saturation pressure over liquid water comes from the auxiliary equation of
Wagner and Pruss, which reproduces the full IAPWS-95 formulation closely enough
for a wet-gas correction (to within about 1e-4 relative between 0 °C and 100 °C).

Every function takes and returns SI base units and is vectorised with numpy
broadcasting. `saturation_pressure_water` uses only arithmetic, powers and
exp, with no comparison, ``abs`` or clipping on the temperature, so a complex
temperature passes through unchanged and the complex-step derivative
:math:`\mathrm{d}p_\sigma/\mathrm{d}T = \operatorname{Im} p_\sigma(T + ih)/h` is exact to
rounding. Range checks live in the separate `saturation_pressure_valid`.
"""

import numpy as np
import periodictable

__all__ = [
    "CRITICAL_PRESSURE_WATER",
    "CRITICAL_TEMPERATURE_WATER",
    "MOLAR_MASS_WATER",
    "TRIPLE_POINT_TEMPERATURE_WATER",
    "molar_mass_water",
    "saturation_pressure_valid",
    "saturation_pressure_water",
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

#: Molar mass of H2O [kg/mol] from the atomic weights tabulated by periodictable.
MOLAR_MASS_WATER = periodictable.formula("H2O").mass / 1000.0

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
