r"""Second virial coefficients and compressibility factors of real gases at laboratory pressures.

The second virial coefficient :math:`B(T)` comes from the Tsonopoulos
corresponding-states correlation with its polar terms (and effective critical
constants for the quantum gases); the compressibility factor from the virial
equation truncated after :math:`B` (pressure form by default, density form on
request). The model uncertainty of each correlation lives with the candidates
(:mod:`molid.candidates.model_terms`).

All functions take plain numbers or numpy arrays in SI base units and broadcast
their arguments against each other, so an array of runs of shape ``(n, 1)``
against candidate properties of shape ``(m,)`` gives ``(n, m)`` results.

Complex-step safety
-------------------
:func:`second_virial_tsonopoulos`, :func:`second_virial_tsonopoulos_derivative`,
:func:`quantum_effective_critical_constants`, :func:`second_virial` and
:func:`compressibility_factor` use only arithmetic on temperature and pressure
(no ``abs``, ``maximum``, ``clip`` or comparisons), so they accept complex
temperature and pressure and give exact complex-step derivatives,
:math:`\partial f/\partial x = \operatorname{Im} f(x + ih)/h`.
"""

from __future__ import annotations

import numpy as np

from molid.physics.constants import GAS_CONSTANT, STANDARD_ATMOSPHERE

__all__ = [
    "POLAR_CLASSES",
    "polar_class_array",
    "reduced_dipole",
    "tsonopoulos_polar_coefficients",
    "second_virial_tsonopoulos",
    "second_virial_tsonopoulos_derivative",
    "QUANTUM_CLASSICAL_CRITICAL_CONSTANTS",
    "classical_critical_constants",
    "quantum_effective_critical_constants",
    "second_virial",
    "compressibility_factor",
]

#: Polar classes known to the model, in the vocabulary of the candidate library.
POLAR_CLASSES = (
    "nonpolar",
    "quantum",
    "ether-ketone-ester",
    "haloalkane",
    "alcohol",
    "water",
    "inorganic-polar",
)

#: "Classical" critical constants (Tc⁰ [K], Pc⁰ [Pa]) of the quantum gases, keyed by
#: Hill formula: the constants the effective-constant correction is meant for
#: (Gunn, Chueh & Prausnitz 1966; tabulated in Prausnitz, Lichtenthaler & de
#: Azevedo 1999, Ch. 5, as He 10.47 K / 6.67 atm, H2 43.6 K / 20.2 atm and
#: Ne 45.5 K / 26.9 atm; from memory). D2 shares the H2 values: the classical
#: constants reflect the intermolecular potential, which isotopes share; the
#: mass enters through the correction itself.
QUANTUM_CLASSICAL_CRITICAL_CONSTANTS = {
    "He": (10.47, 6.67 * STANDARD_ATMOSPHERE),
    "H2": (43.6, 20.2 * STANDARD_ATMOSPHERE),
    "D2": (43.6, 20.2 * STANDARD_ATMOSPHERE),
    "Ne": (45.5, 26.9 * STANDARD_ATMOSPHERE),
}

#: Hill formula of methanol, the one alcohol with its own published b.
_METHANOL = "CH4O"

# Gunn, Chueh & Prausnitz constants of the quantum correction, in K·kg/mol
# (21.8 and 44.2 K·g/mol in the source).
_QUANTUM_TEMPERATURE_CONSTANT = 21.8e-3
_QUANTUM_PRESSURE_CONSTANT = 44.2e-3


def reduced_dipole(dipole_moment_D, critical_temperature, critical_pressure):
    r"""Reduced dipole moment of Tsonopoulos.

    Parameters
    ----------
    dipole_moment_D : array_like
        Dipole moment of the free molecule [D] (debye).
    critical_temperature : array_like
        Critical temperature [K].
    critical_pressure : array_like
        Critical pressure [Pa].

    Returns
    -------
    numpy.ndarray
        Reduced dipole moment :math:`\mu_r` [-] (dimensionless in the
        correlation's mixed units).

    Notes
    -----
    .. math::

        \mu_r = \frac{10^5\,\mu^2\,p_c}{T_c^2}

    with :math:`\mu` in debye, :math:`p_c` in atm and :math:`T_c` in K
    (Tsonopoulos 1974, definition beside eq. 9); the critical pressure is
    converted from pascals with the standard atmosphere.

    References
    ----------
    .. [1] C. Tsonopoulos, "An empirical correlation of second virial
       coefficients", AIChE J. 20 (1974) 263–272. doi:10.1002/aic.690200209

    Examples
    --------
    Acetone, with the constants of Poling, Prausnitz & O'Connell, *The
    Properties of Gases and Liquids*, 5th ed. (2001), Appendix A
    (Tc = 508.1 K, Pc = 47.0 bar, μ = 2.9 D; from memory):

    >>> round(float(reduced_dipole(2.9, 508.1, 47.0e5)), 1)
    151.1
    """
    dipole = np.asarray(dipole_moment_D, dtype=float)
    pressure_atm = np.asarray(critical_pressure) / STANDARD_ATMOSPHERE
    return 1.0e5 * dipole**2 * pressure_atm / np.asarray(critical_temperature) ** 2


def polar_class_array(polar_class):
    """Check polar class names against :data:`POLAR_CLASSES` and return them as an array."""
    classes = np.asarray(polar_class, dtype=str)
    unknown = ~np.isin(classes, POLAR_CLASSES)
    if np.any(unknown):
        bad = sorted(set(classes[unknown].ravel().tolist()))
        raise ValueError(f"unknown polar class {bad}; expected one of {POLAR_CLASSES}")
    return classes


def tsonopoulos_polar_coefficients(polar_class, reduced_dipole, hill_formula=None):
    r"""Polar coefficients a and b of the Tsonopoulos correlation for each polar class.

    Parameters
    ----------
    polar_class : array_like of str
        Polar class of each substance, one of :data:`POLAR_CLASSES`.
    reduced_dipole : array_like
        Reduced dipole moment :math:`\mu_r` [-] from :func:`reduced_dipole`;
        broadcast against ``polar_class``.
    hill_formula : array_like of str, optional
        Hill formula of each substance; when given, methanol (``CH4O`` in the
        ``alcohol`` class) gets its own published b.

    Returns
    -------
    a : numpy.ndarray
        Coefficient of the :math:`1/T_r^6` term [-].
    b : numpy.ndarray
        Coefficient of the :math:`-1/T_r^8` term [-].

    Raises
    ------
    ValueError
        If a polar class is not in :data:`POLAR_CLASSES`.

    Notes
    -----
    ``nonpolar``, ``quantum``
        :math:`a = b = 0` (Tsonopoulos 1974).
    ``ether-ketone-ester`` (ketones, aldehydes, nitriles, ethers, esters)
        :math:`a = -2.140\times10^{-4}\mu_r - 4.308\times10^{-21}\mu_r^8`,
        :math:`b = 0` (Tsonopoulos 1974; Tsonopoulos & Heidman 1990).
    ``haloalkane`` (alkyl halides and refrigerants; the source also puts
    mercaptans, sulfides and disulfides here)
        :math:`a = -2.188\times10^{-11}\mu_r^4 - 7.831\times10^{-21}\mu_r^8`,
        :math:`b = 0` (Tsonopoulos 1975; Tsonopoulos & Heidman 1990).
    ``alcohol`` (1-alkanols)
        :math:`a = 0.0878`, :math:`b = 0.00908 + 0.0006957\,\mu_r`
        (Tsonopoulos & Heidman 1990; Tsonopoulos & Dymond 1997); methanol
        :math:`b = 0.0525` (same sources), applied when ``hill_formula`` is
        given. Branched alcohols keep the 1-alkanol form.
    ``water``
        :math:`a = -0.0109`, :math:`b = 0` (Tsonopoulos & Heidman 1990;
        Tsonopoulos & Dymond 1997).
    ``inorganic-polar`` (NH3, H2S, SO2, HCl, HBr, HF, PH3, COS, NO2, ...)
        No class-wide rule is published; the aprotic (ketone) form is used, as
        in the ammonia worked example of *Perry's Chemical Engineers'
        Handbook*, 8th ed. (2008), p. 2-499, and the class carries its own,
        larger model uncertainty.

    References
    ----------
    .. [1] C. Tsonopoulos, "An empirical correlation of second virial
       coefficients", AIChE J. 20 (1974) 263–272. doi:10.1002/aic.690200209
    .. [2] C. Tsonopoulos, "Second virial coefficients of polar haloalkanes",
       AIChE J. 21 (1975) 827–829. doi:10.1002/aic.690210435
    .. [3] C. Tsonopoulos, J. L. Heidman, "From the virial to the cubic
       equation of state", Fluid Phase Equilib. 57 (1990) 261–276.
       doi:10.1016/0378-3812(90)85126-U
    .. [4] C. Tsonopoulos, J. H. Dymond, "Second virial coefficients of normal
       alkanes, linear 1-alkanols (and water), alkyl ethers, and their
       mixtures", Fluid Phase Equilib. 133 (1997) 11–34.
       doi:10.1016/S0378-3812(97)00058-7

    Examples
    --------
    Ethanol (μr ≈ 61) and water:

    >>> a, b = tsonopoulos_polar_coefficients(["alcohol", "water"], [61.0, 0.0])
    >>> a.tolist(), [round(x, 5) for x in b.tolist()]
    ([0.0878, -0.0109], [0.05152, 0.0])
    """
    classes = polar_class_array(polar_class)
    classes, dipole = np.broadcast_arrays(classes, np.asarray(reduced_dipole, dtype=float))
    return _select_polar_coefficients(classes, dipole, hill_formula)


def _select_polar_coefficients(classes, dipole, hill_formula=None):
    r"""Pick each substance's a and b by its polar class (rules in :func:`tsonopoulos_polar_coefficients`).

    Parameters
    ----------
    classes : numpy.ndarray of str
        Checked polar classes, broadcast to the shape of ``dipole``.
    dipole : numpy.ndarray
        Reduced dipole moment :math:`\mu_r` [-].
    hill_formula : array_like of str, optional
        Hill formula of each substance; methanol then gets its own b instead
        of the 1-alkanol form.

    Returns
    -------
    a, b : numpy.ndarray
        Polar coefficients [-]; zero for the ``nonpolar`` and ``quantum`` classes.

    Notes
    -----
    Each class's expression is evaluated for every substance and the class
    masks pick among them, so one vectorised pass serves a mixed list of
    candidates; ``inorganic-polar`` shares the aprotic (ketone) form.
    """
    dipole_8 = dipole**8
    a_aprotic = -2.140e-4 * dipole - 4.308e-21 * dipole_8
    a_halo = -2.188e-11 * dipole**4 - 7.831e-21 * dipole_8
    aprotic = (classes == "ether-ketone-ester") | (classes == "inorganic-polar")
    alcohol = classes == "alcohol"
    a = np.select(
        [aprotic, classes == "haloalkane", alcohol, classes == "water"],
        [a_aprotic, a_halo, 0.0878, -0.0109],
        default=0.0,
    )
    b_alcohol = 0.00908 + 0.0006957 * dipole
    if hill_formula is not None:
        methanol = np.broadcast_to(np.asarray(hill_formula, dtype=str), classes.shape) == _METHANOL
        b_alcohol = np.where(methanol, 0.0525, b_alcohol)
    b = np.where(alcohol, b_alcohol, 0.0)
    return a, b


def _reduced_terms(inverse_reduced_temperature, acentric_factor, a, b):
    x = inverse_reduced_temperature
    x2 = x * x
    x3 = x2 * x
    x6 = x3 * x3
    x8 = x6 * x2
    f0 = 0.1445 - 0.330 * x - 0.1385 * x2 - 0.0121 * x3 - 0.000607 * x8
    f1 = 0.0637 + 0.331 * x2 - 0.423 * x3 - 0.008 * x8
    return f0 + acentric_factor * f1 + a * x6 - b * x8


def _reduced_terms_slope(inverse_reduced_temperature, acentric_factor, a, b):
    # d/dx of _reduced_terms, with x = Tc/T.
    x = inverse_reduced_temperature
    x2 = x * x
    x5 = x2 * x2 * x
    x7 = x5 * x2
    df0 = -0.330 - 0.277 * x - 0.0363 * x2 - 0.004856 * x7
    df1 = 0.662 * x - 1.269 * x2 - 0.064 * x7
    return df0 + acentric_factor * df1 + 6.0 * a * x5 - 8.0 * b * x7


def second_virial_tsonopoulos(
    temperature, critical_temperature, critical_pressure, acentric_factor, a=0.0, b=0.0
):
    r"""Second virial coefficient from the Tsonopoulos correlation.

    Parameters
    ----------
    temperature : array_like
        Gas temperature [K].
    critical_temperature : array_like
        Critical temperature [K].
    critical_pressure : array_like
        Critical pressure [Pa].
    acentric_factor : array_like
        Pitzer acentric factor [-].
    a, b : array_like, optional
        Polar coefficients [-] from :func:`tsonopoulos_polar_coefficients`;
        zero for nonpolar substances.

    Returns
    -------
    numpy.ndarray
        Second virial coefficient B [m³/mol].

    Notes
    -----
    Tsonopoulos (1974), eqs. 3–5 and 9:

    .. math::

        \frac{B p_c}{R T_c} = f^{(0)} + \omega f^{(1)} + a f^{(2)} + b f^{(3)}

        f^{(0)} = 0.1445 - \frac{0.330}{T_r} - \frac{0.1385}{T_r^2}
                  - \frac{0.0121}{T_r^3} - \frac{0.000607}{T_r^8}

        f^{(1)} = 0.0637 + \frac{0.331}{T_r^2} - \frac{0.423}{T_r^3}
                  - \frac{0.008}{T_r^8}

        f^{(2)} = \frac{1}{T_r^6}, \qquad f^{(3)} = -\frac{1}{T_r^8}

    with :math:`T_r = T/T_c`. Fitted to data for :math:`0.4 \lesssim T_r
    \lesssim 4`; for quantum gases use effective critical constants
    (:func:`quantum_effective_critical_constants`). Complex-step safe in
    ``temperature``.

    References
    ----------
    .. [1] C. Tsonopoulos, "An empirical correlation of second virial
       coefficients", AIChE J. 20 (1974) 263–272. doi:10.1002/aic.690200209

    Examples
    --------
    Ammonia at 430 K with the aprotic polar term, the inputs of the worked
    example of *Perry's Chemical Engineers' Handbook*, 8th ed. (2008),
    p. 2-499 (Tc = 405.65 K, Pc = 11.28 MPa, ω = 0.2526, μ = 1.469 D), which
    reports about −96.8 cm³/mol:

    >>> mu_r = reduced_dipole(1.469, 405.65, 11.28e6)
    >>> a, b = tsonopoulos_polar_coefficients("ether-ketone-ester", mu_r)
    >>> B = second_virial_tsonopoulos(430.0, 405.65, 11.28e6, 0.252608, a, b)
    >>> round(float(B) * 1e6, 1)  # cm³/mol
    -96.8
    """
    x = np.asarray(critical_temperature) / np.asarray(temperature)
    scale = GAS_CONSTANT * np.asarray(critical_temperature) / np.asarray(critical_pressure)
    return scale * _reduced_terms(x, acentric_factor, a, b)


def second_virial_tsonopoulos_derivative(
    temperature, critical_temperature, critical_pressure, acentric_factor, a=0.0, b=0.0
):
    r"""Temperature derivative of the Tsonopoulos second virial coefficient.

    Parameters
    ----------
    temperature : array_like
        Gas temperature [K].
    critical_temperature : array_like
        Critical temperature [K].
    critical_pressure : array_like
        Critical pressure [Pa].
    acentric_factor : array_like
        Pitzer acentric factor [-].
    a, b : array_like, optional
        Polar coefficients [-] from :func:`tsonopoulos_polar_coefficients`.

    Returns
    -------
    numpy.ndarray
        dB/dT [m³/(mol·K)].

    Notes
    -----
    Analytic derivative of :func:`second_virial_tsonopoulos`; with
    :math:`x = T_c/T` and :math:`F(x) = B p_c/(R T_c)`,

    .. math::

        \frac{dB}{dT} = -\frac{R T_c}{p_c}\,\frac{x}{T}\,\frac{dF}{dx}.

    References
    ----------
    .. [1] C. Tsonopoulos, "An empirical correlation of second virial
       coefficients", AIChE J. 20 (1974) 263–272. doi:10.1002/aic.690200209

    Examples
    --------
    Argon near 298 K (Tc = 150.687 K, Pc = 4.863 MPa, ω = −0.00219, the
    constants of the Tegeler–Span–Wagner equation; from memory); that
    reference equation gives 0.204 cm³/(mol K):

    >>> dB = second_virial_tsonopoulos_derivative(298.15, 150.687, 4.863e6, -0.00219)
    >>> round(float(dB) * 1e6, 3)  # cm³/(mol K)
    0.209
    """
    temperature = np.asarray(temperature)
    x = np.asarray(critical_temperature) / temperature
    scale = GAS_CONSTANT * np.asarray(critical_temperature) / np.asarray(critical_pressure)
    return -scale * x / temperature * _reduced_terms_slope(x, acentric_factor, a, b)


def classical_critical_constants(hill_formula, critical_temperature, critical_pressure):
    r"""Replace the critical constants of H2, He and Ne by their "classical" values.

    Parameters
    ----------
    hill_formula : array_like of str
        Hill formula of each substance.
    critical_temperature : array_like
        Critical temperature [K], broadcast against ``hill_formula``.
    critical_pressure : array_like
        Critical pressure [Pa], broadcast against ``hill_formula``.

    Returns
    -------
    critical_temperature : numpy.ndarray
        Tc, with Tc⁰ for the gases in :data:`QUANTUM_CLASSICAL_CRITICAL_CONSTANTS` [K].
    critical_pressure : numpy.ndarray
        Pc, with Pc⁰ for those gases [Pa].

    Notes
    -----
    The effective-constant correction of
    :func:`quantum_effective_critical_constants` was fitted with these
    classical constants, not with the measured critical points; with the
    measured ones the Tsonopoulos B of helium at 20 °C comes out more than
    twice the reference value.

    References
    ----------
    .. [1] R. D. Gunn, P. L. Chueh, J. M. Prausnitz, "Prediction of
       thermodynamic properties of dense gases and liquids using the theory
       of corresponding states", AIChE J. 12 (1966) 937–941.
    .. [2] J. M. Prausnitz, R. N. Lichtenthaler, E. Gomes de Azevedo,
       *Molecular Thermodynamics of Fluid-Phase Equilibria*, 3rd ed.,
       Prentice Hall, Upper Saddle River (1999), Ch. 5.

    Examples
    --------
    >>> Tc, pc = classical_critical_constants(["He", "N2"], [5.195, 126.19], [2.275e5, 33.96e5])
    >>> Tc.tolist()
    [10.47, 126.19]
    """
    hill = np.asarray(hill_formula, dtype=str)
    hill, temperature, pressure = np.broadcast_arrays(
        hill,
        np.asarray(critical_temperature, dtype=float),
        np.asarray(critical_pressure, dtype=float),
    )
    temperature = temperature.copy()
    pressure = pressure.copy()
    for formula, (
        classical_temperature,
        classical_pressure,
    ) in QUANTUM_CLASSICAL_CRITICAL_CONSTANTS.items():
        match = hill == formula
        temperature[match] = classical_temperature
        pressure[match] = classical_pressure
    return temperature, pressure


def quantum_effective_critical_constants(
    temperature, critical_temperature, critical_pressure, molar_mass
):
    r"""Temperature-dependent effective critical constants of a quantum gas.

    Parameters
    ----------
    temperature : array_like
        Gas temperature [K].
    critical_temperature : array_like
        "Classical" critical temperature Tc⁰ [K]
        (:func:`classical_critical_constants`).
    critical_pressure : array_like
        "Classical" critical pressure Pc⁰ [Pa].
    molar_mass : array_like
        Molar mass M [kg/mol].

    Returns
    -------
    effective_critical_temperature : numpy.ndarray
        Effective critical temperature [K].
    effective_critical_pressure : numpy.ndarray
        Effective critical pressure [Pa].

    Notes
    -----
    Gunn, Chueh & Prausnitz (1966), as given by Prausnitz, Lichtenthaler &
    de Azevedo (1999), Ch. 5:

    .. math::

        T_c^\mathrm{eff} = \frac{T_c^0}{1 + \dfrac{21.8\ \mathrm{K\,g/mol}}{M T}},
        \qquad
        p_c^\mathrm{eff} = \frac{p_c^0}{1 + \dfrac{44.2\ \mathrm{K\,g/mol}}{M T}}.

    Meant for the light quantum gases (H2, D2, He, Ne), used with the
    acentric factor set to zero. Complex-step safe in ``temperature``.

    References
    ----------
    .. [1] J. M. Prausnitz, R. N. Lichtenthaler, E. Gomes de Azevedo,
       *Molecular Thermodynamics of Fluid-Phase Equilibria*, 3rd ed.,
       Prentice Hall, Upper Saddle River (1999), Ch. 5.
    .. [2] R. D. Gunn, P. L. Chueh, J. M. Prausnitz, "Prediction of
       thermodynamic properties of dense gases and liquids using the theory
       of corresponding states", AIChE J. 12 (1966) 937–941.

    Examples
    --------
    Hydrogen at 298.15 K with the classical constants of the source
    (Tc⁰ = 43.6 K, Pc⁰ = 20.2 atm; from memory):

    >>> Tc, pc = quantum_effective_critical_constants(298.15, 43.6, 20.2 * 101325, 2.016e-3)
    >>> round(float(Tc), 2), round(float(pc) / 1e5, 2)
    (42.07, 19.07)
    """
    temperature = np.asarray(temperature)
    mass_temperature = np.asarray(molar_mass) * temperature
    effective_temperature = np.asarray(critical_temperature) / (
        1.0 + _QUANTUM_TEMPERATURE_CONSTANT / mass_temperature
    )
    effective_pressure = np.asarray(critical_pressure) / (
        1.0 + _QUANTUM_PRESSURE_CONSTANT / mass_temperature
    )
    return effective_temperature, effective_pressure


def second_virial(temperature, critical_temperature, critical_pressure, acentric_factor,
                  dipole_moment_D, polar_class, molar_mass, hill_formula=None,
                  return_derivative=False):
    r"""Second virial coefficient of each candidate, with the rule of its polar class.

    Parameters
    ----------
    temperature : array_like
        Gas temperature [K].
    critical_temperature : array_like
        Critical temperature [K].
    critical_pressure : array_like
        Critical pressure [Pa].
    acentric_factor : array_like
        Pitzer acentric factor [-].
    dipole_moment_D : array_like
        Dipole moment [D]; used only for the polar classes.
    polar_class : array_like of str
        Polar class, one of :data:`POLAR_CLASSES`.
    molar_mass : array_like
        Molar mass [kg/mol]; used only for the quantum class.
    hill_formula : array_like of str, optional
        Hill formula of each candidate. When given, H2, He and Ne use their
        classical critical constants (:func:`classical_critical_constants`)
        and methanol its own polar b, as the sources intend; the model
        uncertainties in ``virial_model.csv`` were sized that way.
    return_derivative : bool, optional
        Also return dB/dT.

    Returns
    -------
    B : numpy.ndarray
        Second virial coefficient [m³/mol].
    dB_dT : numpy.ndarray
        Its temperature derivative [m³/(mol·K)], only if ``return_derivative``.

    Notes
    -----
    Combines :func:`tsonopoulos_polar_coefficients`,
    :func:`second_virial_tsonopoulos` and, for the ``quantum`` class,
    :func:`quantum_effective_critical_constants` with :math:`\omega = 0`.
    With :math:`T_c^\mathrm{eff} = T_c T/(T + c_1)` and
    :math:`p_c^\mathrm{eff} = p_c T/(T + c_2)` (:math:`c_i` = constant/M), the
    quantum branch is

    .. math::

        B = \frac{R T_c}{p_c}\,\frac{T + c_2}{T + c_1}\,F\!\left(\frac{T_c}{T + c_1}\right),

    differentiated analytically; every other class has :math:`c_1 = c_2 = 0`.
    Complex-step safe in ``temperature``.

    References
    ----------
    .. [1] C. Tsonopoulos, "An empirical correlation of second virial
       coefficients", AIChE J. 20 (1974) 263–272. doi:10.1002/aic.690200209
    .. [2] J. M. Prausnitz, R. N. Lichtenthaler, E. Gomes de Azevedo,
       *Molecular Thermodynamics of Fluid-Phase Equilibria*, 3rd ed.,
       Prentice Hall (1999), Ch. 5.

    Examples
    --------
    Two runs (rows) against nitrogen and ethanol (columns); constants of
    Poling, Prausnitz & O'Connell (2001), Appendix A (from memory):

    >>> T = np.array([[293.15], [373.15]])
    >>> B = second_virial(T, [126.2, 513.92], [33.98e5, 61.48e5], [0.037, 0.649],
    ...                   [0.0, 1.7], ["nonpolar", "alcohol"], [0.028013, 0.046069])
    >>> B.shape
    (2, 2)
    """
    classes = polar_class_array(polar_class)
    constants = _class_constants(classes, critical_temperature, critical_pressure, acentric_factor,
                                 dipole_moment_D, hill_formula)
    shifts = _quantum_shifts(classes == "quantum", molar_mass)
    return _shifted_second_virial(np.asarray(temperature), *constants, *shifts, return_derivative)


def _class_constants(classes, critical_temperature, critical_pressure, acentric_factor,
                     dipole_moment_D, hill_formula=None):
    """Apply each polar class's rule to the constants the correlation takes.

    Parameters
    ----------
    classes : numpy.ndarray of str
        Checked polar classes (:func:`polar_class_array`).
    critical_temperature, critical_pressure, acentric_factor, dipole_moment_D, hill_formula
        As for :func:`second_virial`.

    Returns
    -------
    critical_temperature : numpy.ndarray
        Tc [K]; the classical Tc⁰ for the quantum class when ``hill_formula`` is given.
    critical_pressure : numpy.ndarray
        Pc [Pa]; the classical Pc⁰ likewise.
    acentric_factor : numpy.ndarray
        ω [-]; zero for the quantum class, as the effective-constant correction assumes.
    a, b : numpy.ndarray
        Polar coefficients [-] (:func:`tsonopoulos_polar_coefficients`).
    """
    critical_temperature = np.asarray(critical_temperature, dtype=float)
    critical_pressure = np.asarray(critical_pressure, dtype=float)
    mu_r = reduced_dipole(dipole_moment_D, critical_temperature, critical_pressure)
    a, b = tsonopoulos_polar_coefficients(classes, mu_r, hill_formula)
    quantum = classes == "quantum"
    if hill_formula is not None:
        classical_temperature, classical_pressure = classical_critical_constants(
            hill_formula, critical_temperature, critical_pressure
        )
        critical_temperature = np.where(quantum, classical_temperature, critical_temperature)
        critical_pressure = np.where(quantum, classical_pressure, critical_pressure)
    omega = np.where(quantum, 0.0, np.asarray(acentric_factor, dtype=float))
    return critical_temperature, critical_pressure, omega, a, b


def _quantum_shifts(quantum, molar_mass):
    """Temperature shifts c1, c2 [K] of the effective critical constants; zero outside ``quantum``.

    Ordinary substances get c1 = c2 = 0, which reduces the quantum form to the
    plain correlation; one expression keeps the code complex-safe and free of
    per-class branches on temperature.
    """
    inverse_mass = np.where(quantum, 1.0 / np.asarray(molar_mass, dtype=float), 0.0)
    return _QUANTUM_TEMPERATURE_CONSTANT * inverse_mass, _QUANTUM_PRESSURE_CONSTANT * inverse_mass


def _shifted_second_virial(temperature, critical_temperature, critical_pressure, acentric_factor,
                           a, b, c1, c2, return_derivative=False):
    """Evaluate B, and dB/dT on request, in the shifted form given in :func:`second_virial`'s Notes.

    The derivative is analytic: product and chain rules through T + c1 and
    T + c2. Complex-step safe in ``temperature``.
    """
    shifted_1 = temperature + c1
    shifted_2 = temperature + c2
    scale = GAS_CONSTANT * critical_temperature / critical_pressure
    ratio = shifted_2 / shifted_1
    x = critical_temperature / shifted_1
    reduced = _reduced_terms(x, acentric_factor, a, b)
    B = scale * ratio * reduced
    if not return_derivative:
        return B
    slope = _reduced_terms_slope(x, acentric_factor, a, b)
    d_ratio = (c1 - c2) / (shifted_1 * shifted_1)
    dx = -x / shifted_1
    dB = scale * (d_ratio * reduced + ratio * slope * dx)
    return B, dB


def compressibility_factor(temperature, pressure, second_virial, form="pressure"):
    r"""Compressibility factor from the virial equation truncated after B.

    Parameters
    ----------
    temperature : array_like
        Gas temperature [K].
    pressure : array_like
        Gas pressure [Pa].
    second_virial : array_like
        Second virial coefficient B [m³/mol].
    form : {"pressure", "density"}, optional
        Which series is truncated: the pressure series (default) or the
        density (volume-explicit) series.

    Returns
    -------
    numpy.ndarray
        Compressibility factor Z [-].

    Notes
    -----
    With :math:`\beta = B p/(R T)`, the pressure form is

    .. math::

        Z = 1 + \beta,

    and the density form :math:`Z = 1 + B/V_m = 1 + \beta/Z`, solved for Z,

    .. math::

        Z = \tfrac{1}{2}\left(1 + \sqrt{1 + 4\beta}\right) = 1 + \beta - \beta^2 + \dots

    The two differ in what they neglect: the pressure form drops
    :math:`(C - B^2)(p/RT)^2`, the density form about :math:`C (p/RT)^2`.
    Near 1 atm, at the reduced temperatures where gases and vapours are
    weighed, :math:`|C| \ll B^2`, so the density form is closer to the full
    equation of state (against CoolProp the neglected part was about
    :math:`1.0\,\beta^2` for the pressure form and below :math:`0.5\,\beta^2`
    for the density form, except for water and methanol); see
    :func:`virial_truncation_uncertainty`. Either is adequate while
    :math:`|\beta| \lesssim 0.05`. Complex-step safe in temperature and
    pressure.

    References
    ----------
    .. [1] J. M. Prausnitz, R. N. Lichtenthaler, E. Gomes de Azevedo,
       *Molecular Thermodynamics of Fluid-Phase Equilibria*, 3rd ed.,
       Prentice Hall (1999), Ch. 5.
    .. [2] E. A. Mason, T. H. Spurling, *The Virial Equation of State*,
       Pergamon, Oxford (1969).

    Examples
    --------
    Carbon dioxide at 298.15 K and 1 atm with B = −124 cm³/mol (Dymond &
    Smith 1980 tabulate about −120 to −126 cm³/mol; from memory):

    >>> round(float(compressibility_factor(298.15, 101325.0, -124e-6)), 4)
    0.9949
    >>> round(float(compressibility_factor(298.15, 101325.0, -124e-6, form="density")), 5)
    0.99491
    """
    beta = (
        np.asarray(second_virial) * np.asarray(pressure) / (GAS_CONSTANT * np.asarray(temperature))
    )
    if form == "pressure":
        return 1.0 + beta
    if form == "density":
        return 0.5 * (1.0 + np.sqrt(1.0 + 4.0 * beta))
    raise ValueError(f"unknown form {form!r}; expected 'pressure' or 'density'")
