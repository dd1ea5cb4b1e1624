r"""How much of a contaminant a gas holds: a binary mixture solved from the measured density.

If a sample is gas 1 (its label, or the leading candidate) with a mole fraction x
of a contaminant 2 (air by default), its molar mass is
:math:`M_{mix} = (1-x) M_1 + x M_2` and its second virial coefficient

.. math:: B_{mix} = (1-x)^2 B_{11} + 2x(1-x) B_{12} + x^2 B_{22}

(the exact composition dependence of B, statistical mechanics; Prausnitz et al.
1999, eq. 5-30). The run measures :math:`M_{id} = \rho R T/p`, the ideal-gas
molar mass, and a mixture of composition x gives
:math:`M_{id} = M_{mix}(x)/Z_{mix}(x)` with Z from the virial equation in its
density form, :math:`Z = (1 + \sqrt{1 + 4 B p/(R T)})/2`. The equation
:math:`g(x) = M_{id} Z_{mix}(x) - M_{mix}(x) = 0` is solved by Newton's method
(it is nearly linear in x).

The cross coefficient B_12 comes from the Tsonopoulos correlation with the
combining rules recommended for it (Tsonopoulos 1974; Prausnitz et al. 1999,
eqs. 5-46 to 5-49): :math:`T_{c,12} = \sqrt{T_{c,1} T_{c,2}}` (k_12 = 0),
:math:`\omega_{12} = (\omega_1 + \omega_2)/2`,
:math:`V_{c,12} = ((V_{c,1}^{1/3} + V_{c,2}^{1/3})/2)^3`,
:math:`Z_{c,12} = (Z_{c,1} + Z_{c,2})/2` and :math:`p_{c,12} = Z_{c,12} R T_{c,12}/V_{c,12}`,
with the polar terms left out of the cross coefficient (Tsonopoulos 1974: a
polar molecule's a and b do not apply to its interaction with another). The
critical compressibility factor, which the library does not hold, comes from
the Pitzer correlation :math:`Z_c = 0.291 - 0.080\,\omega` (Reid, Prausnitz and
Poling 1987, eq. 2-3.3) and :math:`V_c = Z_c R T_c/p_c`.

Uncertainty. The measured value of gas 1 (the run's or sample's value read as gas
1, with every input's contribution, shared effects, the Birge widening of a
sample and gas 1's own virial model term) carries the measurement; B_12 and B_22
add model terms (B_12: :data:`CROSS_VIRIAL_RELATIVE_UNCERTAINTY` of its value).
With :math:`\partial g/\partial x` the slope,
:math:`u(x) = \sqrt{\sum_i (\partial g/\partial q_i\, u(q_i))^2}/|\partial g/\partial x|`
(GUM, JCGM 100:2008, 5.1.2). The interval x ± U (U = 2u) is cut to [0, 1], the
physically possible fractions: a true fraction inside [0, 1] that lies in
x ± U also lies in the cut interval, so the cut never lowers the coverage.

Detection limit. The smallest fraction whose interval would exclude zero, x_DL =
k·u(x = 0) with k = 2 (ISO 11843-1:1997 calls this the critical value of the net
state variable); a contamination of twice x_DL is then found with a probability
of about 98 % (normal distribution).

References
----------
J. M. Prausnitz, R. N. Lichtenthaler, E. Gomes de Azevedo, *Molecular
Thermodynamics of Fluid-Phase Equilibria*, 3rd ed., Prentice Hall (1999), ch. 5.
C. Tsonopoulos, "An empirical correlation of second virial coefficients",
AIChE J. 20 (1974) 263-272.
R. C. Reid, J. M. Prausnitz, B. E. Poling, *The Properties of Gases and
Liquids*, 4th ed., McGraw-Hill (1987), ch. 2.
JCGM 100:2008 (GUM); ISO 11843-1:1997, Capability of detection, Part 1.
"""

from __future__ import annotations

import numpy as np

from molid.physics.constants import GAS_CONSTANT
from molid.physics.virial import second_virial, second_virial_tsonopoulos

__all__ = [
    "CROSS_VIRIAL_RELATIVE_UNCERTAINTY",
    "critical_compressibility",
    "cross_second_virial",
    "cross_virial_uncertainty",
    "mixture_compressibility",
    "solve_contaminant",
    "contaminant_fraction",
]

#: Relative standard uncertainty of a cross second virial coefficient from the combining
#: rules with k_12 = 0, at least: for molecules of unlike size the rules overstate the
#: attraction (k_12 > 0), by more the more the critical temperatures differ, so the term
#: grows as 0.5·|ln(T_c1/T_c2)|. Sized against CoolProp's mixture models (GERG-2008 and
#: Kunz–Wagner) at 293 K: argon–nitrogen +2 %, CO2–N2 +8 %, CO2–O2 −14 %, methane–N2 −15 %,
#: ethane–N2 −14 %, CO2–methane −13 %, propane–N2 −66 %, n-butane–N2 −256 % (the last
#: outside 2u; its effect on x is below 1e-4 at x = 0.05).
CROSS_VIRIAL_RELATIVE_UNCERTAINTY = 0.15

#: Newton steps for g(x) = 0: g is nearly linear, three steps reach rounding.
_NEWTON_STEPS = 6


def critical_compressibility(acentric_factor):
    r"""Return the critical compressibility factor from the Pitzer correlation [1].

    Parameters
    ----------
    acentric_factor : array_like
        Pitzer acentric factor ω [1].

    Returns
    -------
    numpy.ndarray
        :math:`Z_c = 0.291 - 0.080\,\omega` [1].

    References
    ----------
    R. C. Reid, J. M. Prausnitz, B. E. Poling, *The Properties of Gases and
    Liquids*, 4th ed. (1987), eq. 2-3.3.

    Examples
    --------
    Argon (ω ≈ 0): 0.291, against its measured 0.291 (the book's Appendix A, from memory).

    >>> round(float(critical_compressibility(0.0)), 3)
    0.291
    """
    return 0.291 - 0.080 * np.asarray(acentric_factor, dtype=float)


def cross_second_virial(temperature, critical_temperature, critical_pressure, acentric_factor):
    r"""Return the cross second virial coefficient B_12 of every pair by the Tsonopoulos combining rules.

    Parameters
    ----------
    temperature : array_like
        Temperature [K], broadcast against the pairs.
    critical_temperature, critical_pressure, acentric_factor : tuple of two array_like
        The constants of component 1 and component 2 [K], [Pa], [1].

    Returns
    -------
    numpy.ndarray
        B_12 [m³/mol].

    Notes
    -----
    See the module's docstring: k_12 = 0, Z_c from the Pitzer correlation,
    no polar terms in the cross coefficient.

    Examples
    --------
    Argon with nitrogen at 300 K (Tc, pc, ω: 150.687 K, 4.863 MPa, −0.0022 and 126.192 K,
    3.3958 MPa, 0.0372): about −10 cm³/mol, as CoolProp's
    mixture model (−10.0 cm³/mol; checked in the tests).

    >>> B = cross_second_virial(300.0, (150.687, 126.192), (4.863e6, 3.3958e6), (-0.0022, 0.0372))
    >>> round(float(B) * 1e6)
    -10
    """
    (Tc1, Tc2), (pc1, pc2), (w1, w2) = (
        [np.asarray(value, dtype=float) for value in pair]
        for pair in (critical_temperature, critical_pressure, acentric_factor))
    Zc1, Zc2 = critical_compressibility(w1), critical_compressibility(w2)
    Vc1, Vc2 = Zc1 * GAS_CONSTANT * Tc1 / pc1, Zc2 * GAS_CONSTANT * Tc2 / pc2
    Tc12 = np.sqrt(Tc1 * Tc2)
    Vc12 = ((np.cbrt(Vc1) + np.cbrt(Vc2)) / 2.0) ** 3
    Zc12 = (Zc1 + Zc2) / 2.0
    pc12 = Zc12 * GAS_CONSTANT * Tc12 / Vc12
    return second_virial_tsonopoulos(temperature, Tc12, pc12, (w1 + w2) / 2.0)


def mixture_compressibility(x, B11, B12, B22, pressure, temperature):
    """Return Z of a binary mixture (density form of the virial equation) and dZ/dB_mix [mol/m³].

    Parameters
    ----------
    x : array_like
        Mole fraction of component 2 [1].
    B11, B12, B22 : array_like
        Second virial coefficients [m³/mol].
    pressure, temperature : array_like
        [Pa], [K].

    Returns
    -------
    Z, dZ_dB : numpy.ndarray
        Z [1] and its derivative with respect to B_mix [mol/m³].

    Examples
    --------
    Pure component 1 with B = −100 cm³/mol at 100 kPa and 300 K: 1 − Z ≈ 0.004.

    >>> Z, _ = mixture_compressibility(0.0, -100e-6, 0.0, 0.0, 1e5, 300.0)
    >>> round(float(Z), 5)
    0.99597
    """
    B = (1 - x) ** 2 * B11 + 2 * x * (1 - x) * B12 + x**2 * B22
    p_over_RT = pressure / (GAS_CONSTANT * temperature)
    root = np.sqrt(1.0 + 4.0 * B * p_over_RT)
    return 0.5 * (1.0 + root), p_over_RT / root


def solve_contaminant(ideal_molar_mass, M1, M2, B11, B12, B22, pressure, temperature):
    """Solve M_id·Z_mix(x) = M_mix(x) for the contaminant's mole fraction x, by Newton's method.

    Parameters
    ----------
    ideal_molar_mass : array_like
        The measured ρRT/p [kg/mol].
    M1, M2 : array_like
        Molar masses of the main gas and the contaminant [kg/mol].
    B11, B12, B22 : array_like
        Second virial coefficients [m³/mol].
    pressure, temperature : array_like
        The gas's (dry) pressure [Pa] and temperature [K].

    Returns
    -------
    x, slope, dZ_dB : numpy.ndarray
        The fraction [1] (unbounded: negative when the density is on the other side
        of the pure gas), ∂g/∂x [kg/mol], and dZ_mix/dB_mix [mol/m³] at the solution.

    Examples
    --------
    Ideal gases (B = 0): M_id = 0.9·44 + 0.1·28.96 g/mol gives back x = 0.1.

    >>> x, _, _ = solve_contaminant(0.9 * 44e-3 + 0.1 * 28.96e-3, 44e-3, 28.96e-3, 0, 0, 0, 1e5, 293.15)
    >>> round(float(x), 12)
    0.1
    """
    difference = M2 - M1
    with np.errstate(all="ignore"):
        x = np.where(difference != 0, (ideal_molar_mass - M1) / np.where(difference != 0, difference, 1.0),
                     np.nan)
        for _ in range(_NEWTON_STEPS):
            Z, dZ_dB = mixture_compressibility(x, B11, B12, B22, pressure, temperature)
            dB_dx = -2 * (1 - x) * B11 + 2 * (1 - 2 * x) * B12 + 2 * x * B22
            slope = ideal_molar_mass * dZ_dB * dB_dx - difference
            x = x - (ideal_molar_mass * Z - (M1 + x * difference)) / slope
        Z, dZ_dB = mixture_compressibility(x, B11, B12, B22, pressure, temperature)
        dB_dx = -2 * (1 - x) * B11 + 2 * (1 - 2 * x) * B12 + 2 * x * B22
        slope = ideal_molar_mass * dZ_dB * dB_dx - difference
    return x, slope, dZ_dB


def contaminant_fraction(measured, u_measured, Z1, temperature, pressure, main, contaminant, library):
    """Estimate the contaminant's mole fraction, its uncertainty and the detection limit.

    Parameters
    ----------
    measured, u_measured : array_like, shape (k,)
        The result read as the main gas (M·Z_1 and any correction) and its standard
        uncertainty with every measurement and gas-1 model term [kg/mol].
    Z1 : array_like, shape (k,)
        The main gas's compressibility factor at the result's conditions.
    temperature, pressure : array_like, shape (k,)
        The gas's temperature [K] and (dry) pressure [Pa].
    main, contaminant : array_like of int, shape (k,)
        Library rows of the main gas and of the contaminant.
    library : pandas.DataFrame
        The candidate library.

    Returns
    -------
    dict of numpy.ndarray, shape (k,)
        ``x``, ``u`` [1], ``low``, ``high`` (x ± 2u cut to [0, 1]),
        ``detection_limit`` [1], ``u_at_zero`` [1] and ``model_share`` (the share of
        u(x = 0)² from the B_12 and B_22 model terms).
    """
    T = np.asarray(temperature, dtype=float)
    p = np.asarray(pressure, dtype=float)
    B11, B22, B12, M1, M2 = _pair_constants(T, main, contaminant, library)
    ideal = np.asarray(measured, dtype=float) / np.asarray(Z1, dtype=float)
    x, slope, dZ_dB = solve_contaminant(ideal, M1, M2, B11, B12, B22, p, T)
    Tc = library["critical_temperature"].to_numpy(dtype=float)
    u_B12 = cross_virial_uncertainty(B12, Tc[np.asarray(main, dtype=int)],
                                     Tc[np.asarray(contaminant, dtype=int)])
    u = _fraction_uncertainty(x, slope, dZ_dB, ideal, u_measured, Z1, B12, B22, B11, p, T, u_B12)
    # at x = 0 the slope and the model terms are those of the pure main gas
    slope0 = _slope(0.0, ideal, B11, B12, B22, p, T, M2 - M1)
    u0_measure = np.abs(np.asarray(u_measured, dtype=float) / slope0)
    u0 = _fraction_uncertainty(np.zeros_like(x), slope0, mixture_compressibility(
        0.0, B11, B12, B22, p, T)[1], ideal, u_measured, Z1, B12, B22, B11, p, T, u_B12)
    with np.errstate(all="ignore"):
        model_share = np.clip(1.0 - (u0_measure / u0) ** 2, 0.0, 1.0)
    expanded = 2.0 * u
    return {"x": x, "u": u, "low": np.clip(x - expanded, 0.0, 1.0), "high": np.clip(x + expanded, 0.0, 1.0),
            "detection_limit": 2.0 * u0, "u_at_zero": u0, "model_share": model_share}


def _slope(x, ideal, B11, B12, B22, p, T, difference):
    """∂g/∂x at x [kg/mol]."""
    _, dZ_dB = mixture_compressibility(x, B11, B12, B22, p, T)
    dB_dx = -2 * (1 - x) * B11 + 2 * (1 - 2 * x) * B12 + 2 * x * B22
    return ideal * dZ_dB * dB_dx - difference


def cross_virial_uncertainty(B12, critical_temperature_1, critical_temperature_2):
    """Return the standard uncertainty of a cross coefficient from the combining rules [m³/mol].

    Parameters
    ----------
    B12 : array_like
        The cross coefficient [m³/mol].
    critical_temperature_1, critical_temperature_2 : array_like
        Critical temperatures of the pair [K].

    Returns
    -------
    numpy.ndarray
        max(0.15, 0.5·|ln(T_c1/T_c2)|)·|B_12| (see
        :data:`CROSS_VIRIAL_RELATIVE_UNCERTAINTY`).

    Examples
    --------
    Propane with nitrogen (369.89 K, 126.19 K): 0.54 of B_12.

    >>> round(float(cross_virial_uncertainty(-1.0, 369.89, 126.19)), 2)
    0.54
    """
    spread = 0.5 * np.abs(np.log(np.asarray(critical_temperature_1, dtype=float)
                                 / np.asarray(critical_temperature_2, dtype=float)))
    return np.maximum(CROSS_VIRIAL_RELATIVE_UNCERTAINTY, spread) * np.abs(B12)


def _fraction_uncertainty(x, slope, dZ_dB, ideal, u_measured, Z1, B12, B22, B11, p, T, u_B12):
    """u(x) from the measured value and the B_12, B_22 model terms (GUM 5.1.2)."""
    Z_mix, _ = mixture_compressibility(x, B11, B12, B22, p, T)
    # g = M_id·Z_mix − M_mix with M_id = measured/Z1: ∂g/∂measured = Z_mix/Z1
    from_measurement = Z_mix / np.asarray(Z1, dtype=float) * np.asarray(u_measured, dtype=float)
    from_cross = ideal * dZ_dB * 2 * x * (1 - x) * u_B12
    # B_22's own model term: the cross term's relative size, conservatively
    from_contaminant = ideal * dZ_dB * x * x * CROSS_VIRIAL_RELATIVE_UNCERTAINTY * np.abs(B22)
    with np.errstate(all="ignore"):
        return np.sqrt(from_measurement**2 + from_cross**2 + from_contaminant**2) / np.abs(slope)


def _pair_constants(T, main, contaminant, library):
    """B_11, B_22, B_12 at T and the two molar masses, for each (main, contaminant) pair."""
    main = np.asarray(main, dtype=int)
    contaminant = np.asarray(contaminant, dtype=int)
    columns = {name: library[name].to_numpy(dtype=float) for name in (
        "critical_temperature", "critical_pressure", "acentric_factor", "dipole_moment", "molar_mass")}
    classes = library["polar_class"].fillna("nonpolar").to_numpy(dtype=object)
    hill = library["hill"].fillna("").to_numpy(dtype=object)
    has = library["has_critical_data"].to_numpy(dtype=bool)

    def own(rows):
        B = second_virial(T, columns["critical_temperature"][rows], columns["critical_pressure"][rows],
                          columns["acentric_factor"][rows], np.nan_to_num(columns["dipole_moment"][rows]),
                          np.where(has[rows], classes[rows], "nonpolar"), columns["molar_mass"][rows],
                          hill[rows])
        return np.where(has[rows], B, 0.0)

    B11, B22 = own(main), own(contaminant)
    B12 = cross_second_virial(*(T, *((columns[name][main], columns[name][contaminant]) for name in (
        "critical_temperature", "critical_pressure", "acentric_factor"))))
    B12 = np.where(has[main] & has[contaminant], B12, 0.0)
    return B11, B22, B12, columns["molar_mass"][main], columns["molar_mass"][contaminant]
