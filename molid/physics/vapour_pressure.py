"""Vapour pressures: per-substance equations (Wagner, DIPPR 101, Antoine) and corresponding-states estimates.

The substance-specific equations take one published coefficient set each
(the candidate library keeps them in ``molid/data/vapour_pressure.csv``) and
are accurate to a few tenths of a percent inside their ranges. The
corresponding-states estimates (Lee–Kesler, Ambrose–Walton) need only the
critical temperature and pressure and the acentric factor, are a few percent
off, and serve where no equation is known; they branch on the reduced
temperature with ``np.where`` and are not meant to be differentiated by complex
step. Above the critical temperature their vapour pressure is +inf (the
substance cannot condense).
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "vapour_pressure_lee_kesler",
    "vapour_pressure_ambrose_walton",
    "WAGNER_EXPONENTS",
    "vapour_pressure_wagner",
    "vapour_pressure_dippr101",
    "vapour_pressure_antoine",
]


def _reduced_temperature_below_critical(temperature, critical_temperature):
    reduced = np.asarray(temperature, dtype=float) / np.asarray(critical_temperature, dtype=float)
    subcritical = reduced <= 1.0
    # The correlations are evaluated on a safe value above Tc and replaced by
    # +inf afterwards, so fractional powers of negative numbers never occur.
    return np.where(subcritical, reduced, 1.0), subcritical


def vapour_pressure_lee_kesler(
    temperature, critical_temperature, critical_pressure, acentric_factor
):
    r"""Vapour pressure from the Lee–Kesler corresponding-states estimate.

    Parameters
    ----------
    temperature : array_like
        Temperature [K].
    critical_temperature : array_like
        Critical temperature [K].
    critical_pressure : array_like
        Critical pressure [Pa].
    acentric_factor : array_like
        Pitzer acentric factor [-].

    Returns
    -------
    numpy.ndarray
        Saturation pressure [Pa]; ``+inf`` above the critical temperature,
        where the substance cannot condense.

    Notes
    -----
    Lee & Kesler (1975), the vapour-pressure equation of the appendix, in the
    form of Poling, Prausnitz & O'Connell (2001), eq. 7-4.1:

    .. math::

        \ln p_r = f^{(0)} + \omega f^{(1)}

        f^{(0)} = 5.92714 - \frac{6.09648}{T_r} - 1.28862 \ln T_r + 0.169347\,T_r^6

        f^{(1)} = 15.2518 - \frac{15.6875}{T_r} - 13.4721 \ln T_r + 0.43577\,T_r^6

    From the triple point (roughly :math:`T_r \gtrsim 0.3`) to the critical
    point; typically within a few percent for nonpolar substances, worse for
    alcohols and water at low :math:`T_r`.

    References
    ----------
    .. [1] B. I. Lee, M. G. Kesler, "A generalized thermodynamic correlation
       based on three-parameter corresponding states", AIChE J. 21 (1975)
       510–527. doi:10.1002/aic.690210313

    Examples
    --------
    Ethylbenzene at 347.2 K, the inputs of the worked example of Reid,
    Prausnitz & Poling, *The Properties of Gases and Liquids*, 4th ed. (1987)
    (Tc = 617.1 K, Pc = 36.0 bar, ω = 0.299; experimental about 13.3 kPa,
    from memory):

    >>> round(float(vapour_pressure_lee_kesler(347.2, 617.1, 36e5, 0.299)))
    13079
    """
    reduced, subcritical = _reduced_temperature_below_critical(temperature, critical_temperature)
    log_reduced = np.log(reduced)
    reduced_6 = reduced**6
    f0 = 5.92714 - 6.09648 / reduced - 1.28862 * log_reduced + 0.169347 * reduced_6
    f1 = 15.2518 - 15.6875 / reduced - 13.4721 * log_reduced + 0.43577 * reduced_6
    pressure = np.asarray(critical_pressure) * np.exp(f0 + np.asarray(acentric_factor) * f1)
    return np.where(subcritical, pressure, np.inf)


def vapour_pressure_ambrose_walton(
    temperature, critical_temperature, critical_pressure, acentric_factor
):
    r"""Vapour pressure from the Ambrose–Walton corresponding-states estimate.

    Parameters
    ----------
    temperature : array_like
        Temperature [K].
    critical_temperature : array_like
        Critical temperature [K].
    critical_pressure : array_like
        Critical pressure [Pa].
    acentric_factor : array_like
        Pitzer acentric factor [-].

    Returns
    -------
    numpy.ndarray
        Saturation pressure [Pa]; ``+inf`` above the critical temperature.

    Notes
    -----
    Ambrose & Walton (1989), with :math:`\tau = 1 - T_r`:

    .. math::

        \ln p_r = f^{(0)} + \omega f^{(1)} + \omega^2 f^{(2)}

        T_r f^{(0)} = -5.97616\,\tau + 1.29874\,\tau^{1.5} - 0.60394\,\tau^{2.5}
                      - 1.06841\,\tau^5

        T_r f^{(1)} = -5.03365\,\tau + 1.11505\,\tau^{1.5} - 5.41217\,\tau^{2.5}
                      - 7.46628\,\tau^5

        T_r f^{(2)} = -0.64771\,\tau + 2.41539\,\tau^{1.5} - 4.26979\,\tau^{2.5}
                      + 3.25259\,\tau^5

    Fitted to the n-alkanes and 1-alkanols from the triple point to the
    critical point; the form of Poling, Prausnitz & O'Connell (2001), eq. 7-4.1.

    References
    ----------
    .. [1] D. Ambrose, J. Walton, "Vapour pressures up to their critical
       temperatures of normal alkanes and 1-alkanols", Pure Appl. Chem. 61
       (1989) 1395–1403. doi:10.1351/pac198961081395
    .. [2] B. E. Poling, J. M. Prausnitz, J. P. O'Connell, *The Properties of
       Gases and Liquids*, 5th ed., McGraw-Hill, New York (2001), Sec. 7-4.

    Examples
    --------
    Ethylbenzene at 347.25 K, the inputs of Example 7-2 of Poling et al.
    (2001) (Tc = 617.15 K, Pc = 36.09 bar, ω = 0.304), which gives 0.1328 bar
    (from memory):

    >>> round(float(vapour_pressure_ambrose_walton(347.25, 617.15, 36.09e5, 0.304)))
    13279
    """
    reduced, subcritical = _reduced_temperature_below_critical(temperature, critical_temperature)
    tau = 1.0 - reduced
    tau_15 = tau * np.sqrt(tau)
    tau_25 = tau_15 * tau
    tau_5 = tau_25 * tau_25
    f0 = (-5.97616 * tau + 1.29874 * tau_15 - 0.60394 * tau_25 - 1.06841 * tau_5) / reduced
    f1 = (-5.03365 * tau + 1.11505 * tau_15 - 5.41217 * tau_25 - 7.46628 * tau_5) / reduced
    f2 = (-0.64771 * tau + 2.41539 * tau_15 - 4.26979 * tau_25 + 3.25259 * tau_5) / reduced
    omega = np.asarray(acentric_factor)
    pressure = np.asarray(critical_pressure) * np.exp(f0 + omega * f1 + omega**2 * f2)
    return np.where(subcritical, pressure, np.inf)


#: Exponents of the Wagner equation's four terms in its two published forms.
WAGNER_EXPONENTS = {"2.5-5": (1.0, 1.5, 2.5, 5.0), "3-6": (1.0, 1.5, 3.0, 6.0)}


def vapour_pressure_wagner(temperature, critical_temperature, critical_pressure, a, b, c, d,
                           form="2.5-5"):
    r"""Vapour pressure from the Wagner equation with a substance's own coefficients [Pa].

    Parameters
    ----------
    temperature : array_like
        Temperature [K], below the critical temperature.
    critical_temperature : array_like
        Critical temperature of the coefficient set [K].
    critical_pressure : array_like
        Critical pressure of the coefficient set [Pa].
    a, b, c, d : array_like
        The substance's Wagner coefficients.
    form : {"2.5-5", "3-6"}
        Exponents of the third and fourth terms: 2.5 and 5 (Poling et al.'s
        tables), or 3 and 6 (Wagner's original form, McGarry's tables).

    Returns
    -------
    numpy.ndarray
        Saturation pressure [Pa].

    Notes
    -----
    .. math:: \ln\frac{p}{p_c} = \frac{a\tau + b\tau^{1.5} + c\tau^{e_3} + d\tau^{e_4}}{T_r},
              \qquad \tau = 1 - T_r

    References
    ----------
    W. Wagner, "New vapour pressure measurements for argon and nitrogen and a
    new method for establishing rational vapour pressure equations", Cryogenics
    13 (1973) 470-482, doi:10.1016/0011-2275(73)90003-9.
    B. E. Poling, J. M. Prausnitz, J. P. O'Connell, The Properties of Gases and
    Liquids, 5th ed., McGraw-Hill, 2001, eq. (7-3.3) and Appendix A.
    J. McGarry, Ind. Eng. Chem. Process Des. Dev. 22 (1983) 313-322.

    Examples
    --------
    Ethanol with Poling et al.'s coefficients (Appendix A: a = −8.68587,
    b = 1.17831, c = −4.8762, d = 1.588, Tc = 513.92 K, pc = 61.32 bar) at its
    normal boiling point, 351.44 K, gives one atmosphere within 0.02 %:

    >>> p = vapour_pressure_wagner(351.44, 513.92, 61.32e5, -8.68587, 1.17831, -4.8762, 1.588)
    >>> round(float(p) / 101325.0, 4)
    1.0001
    """
    _, _, third, fourth = WAGNER_EXPONENTS[form]
    reduced = np.asarray(temperature) / critical_temperature
    tau = 1.0 - reduced
    exponent = (a * tau + b * tau**1.5 + c * tau**third + d * tau**fourth) / reduced
    return critical_pressure * np.exp(exponent)


def vapour_pressure_dippr101(temperature, c1, c2, c3, c4, c5):
    r"""Vapour pressure from the DIPPR 101 equation with a substance's coefficients [Pa].

    Parameters
    ----------
    temperature : array_like
        Temperature [K].
    c1, c2, c3, c4, c5 : array_like
        The substance's coefficients (pressure in Pa, temperature in K).

    Returns
    -------
    numpy.ndarray
        Saturation pressure [Pa].

    Notes
    -----
    .. math:: \ln p = C_1 + \frac{C_2}{T} + C_3 \ln T + C_4 T^{C_5}

    References
    ----------
    D. W. Green, R. H. Perry, Perry's Chemical Engineers' Handbook, 8th ed.,
    McGraw-Hill, 2008, Table 2-8 (coefficients from the DIPPR 801 database).

    Examples
    --------
    Water with the Table 2-8 coefficients (C1 = 73.649, C2 = −7258.2,
    C3 = −7.3037, C4 = 4.1653e-6, C5 = 2) at 373.15 K gives one atmosphere
    within 0.1 %:

    >>> p = vapour_pressure_dippr101(373.15, 73.649, -7258.2, -7.3037, 4.1653e-6, 2.0)
    >>> abs(float(p) / 101325.0 - 1.0) < 1e-3
    True
    """
    temperature = np.asarray(temperature)
    return np.exp(c1 + c2 / temperature + c3 * np.log(temperature) + c4 * temperature**c5)


def vapour_pressure_antoine(temperature, a, b, c):
    r"""Vapour pressure from the Antoine equation with a substance's coefficients [Pa].

    Parameters
    ----------
    temperature : array_like
        Temperature [K], inside the coefficient set's range.
    a, b, c : array_like
        Coefficients for pressure in Pa and temperature in K.

    Returns
    -------
    numpy.ndarray
        Saturation pressure [Pa].

    Notes
    -----
    .. math:: \log_{10} p = A - \frac{B}{T + C}

    Poling et al. tabulate A for p in bar and C for t in °C; in Pa and K,
    A_Pa = A_bar + 5 and C_K = C_°C − 273.15.

    References
    ----------
    C. Antoine, C. R. Acad. Sci. 107 (1888) 681-684, 778-780, 836-837.
    B. E. Poling, J. M. Prausnitz, J. P. O'Connell, The Properties of Gases and
    Liquids, 5th ed., McGraw-Hill, 2001, eq. (7-3.1) and Appendix A.

    Examples
    --------
    Carbon tetrachloride (A = 9.10445, B = 1265.632, C = −41.002 in Pa and K,
    from Poling et al.'s Appendix A) at its normal boiling point, 349.79 K:

    >>> round(float(vapour_pressure_antoine(349.79, 9.10445, 1265.632, -41.002)) / 101325.0, 3)
    1.0
    """
    return 10.0 ** (a - b / (np.asarray(temperature) + c))
