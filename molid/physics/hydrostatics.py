r"""Hydrostatic pressure of a water column: the pressure of a gas collected over water.

A gas collected in a tube or cylinder standing in water is at the barometric
pressure minus the weight per area of the water column that stands inside the
tube above the outside water level (plus, when the inside level is lower, the
column pressing the other way). The density of the water comes from the Tanaka
et al. (2001) formula in `molid.physics.water`, the acceleration of free fall is
the standard value g_n.

Every function takes and returns SI base units, is vectorised with numpy
broadcasting and uses only arithmetic, so complex temperatures, heights and
pressures pass through unchanged (complex-step differentiation).
"""

from molid.physics.constants import STANDARD_GRAVITY
from molid.physics.water import water_density

__all__ = ["gas_pressure_over_water", "water_column_pressure"]


def water_column_pressure(temperature, height):
    r"""Return the hydrostatic pressure of a column of liquid water.

    Parameters
    ----------
    temperature : array_like
        Water temperature on ITS-90 [K], 0 °C to 40 °C (the range of the density
        formula). Real or complex.
    height : array_like
        Height of the column [m]; negative for a column pressing the other way.
        Real or complex.

    Returns
    -------
    numpy.ndarray or numpy scalar
        :math:`\Delta p = \rho_\mathrm{w}(T)\,g_n\,h` [Pa].

    Notes
    -----
    Hydrostatic equation for an incompressible liquid at rest,

    .. math:: \Delta p = \rho_\mathrm{w}(T)\,g_n\,h,

    with :math:`\rho_\mathrm{w}` from eq. (1) of Tanaka et al. [1]_ (air-free
    SMOW at 101.325 kPa; the compressibility over a few kPa changes it by about
    1e-6) and the standard acceleration of free fall :math:`g_n` = 9.80665 m/s²
    [2]_. The local g differs from g_n by up to ±0.3 %, which a column of a few
    hundred millimetres turns into a few pascals.

    References
    ----------
    .. [1] M. Tanaka, G. Girard, R. Davis, A. Peuto and N. Bignell, "Recommended
       table for the density of water between 0 °C and 40 °C based on recent
       experimental reports", Metrologia 38 (2001) 301–309,
       doi:10.1088/0026-1394/38/4/3.
    .. [2] Comptes rendus de la 3e Conférence Générale des Poids et Mesures
       (1901), p. 70: standard acceleration of free fall, 980.665 cm/s².

    Examples
    --------
    120 mm of water at 20 °C, by hand: ρ_w(20 °C) = 998.207 kg/m³, and
    998.207 × 9.80665 × 0.120 = 1174.7 Pa.

    >>> round(float(water_column_pressure(293.15, 0.120)), 1)
    1174.7
    """
    return water_density(temperature) * STANDARD_GRAVITY * height


def gas_pressure_over_water(barometric_pressure, temperature, height):
    r"""Return the total pressure of a gas collected over water in a tube.

    Parameters
    ----------
    barometric_pressure : array_like
        Pressure of the room at the outside water level [Pa]. Real or complex.
    temperature : array_like
        Water temperature on ITS-90 [K], 0 °C to 40 °C. Real or complex.
    height : array_like
        Height of the water level inside the tube above the outside level [m];
        negative where the inside level is lower. Real or complex.

    Returns
    -------
    numpy.ndarray or numpy scalar
        Total pressure of the collected (wet) gas [Pa]. Subtract the water's
        saturation pressure for the dry gas's partial pressure.

    Notes
    -----
    The pressure is the same everywhere on the outside level; inside the tube
    it falls by the weight of the raised column (hydrostatic equation),

    .. math:: p_\mathrm{gas} = p_\mathrm{bar} - \rho_\mathrm{w}(T)\,g_n\,h,

    with :math:`\rho_\mathrm{w}` from Tanaka et al. [1]_ and :math:`g_n` = 9.80665 m/s²
    [2]_ (see `water_column_pressure`). The density of the air column between
    the two water levels (about 1e-3 of the water's) is neglected.

    References
    ----------
    .. [1] M. Tanaka, G. Girard, R. Davis, A. Peuto and N. Bignell, Metrologia 38
       (2001) 301–309, doi:10.1088/0026-1394/38/4/3.
    .. [2] 3rd CGPM (1901): standard acceleration of free fall.

    Examples
    --------
    Room at 100.000 kPa, water at 20 °C standing 120 mm higher inside the tube:
    100 000 Pa − 1174.7 Pa = 98 825.3 Pa.

    >>> round(float(gas_pressure_over_water(100000.0, 293.15, 0.120)), 1)
    98825.3
    """
    return barometric_pressure - water_column_pressure(temperature, height)
