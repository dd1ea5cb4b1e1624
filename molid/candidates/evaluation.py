"""Per-candidate evaluation: each run's molar mass as each candidate's real-gas behaviour implies it.

For every candidate the run is re-evaluated under that candidate's own
non-ideality: if the gas is candidate c, its molar mass is ``M·Z_c`` where M is
the ideal-gas result and Z_c solves the virial equation truncated after B_c(T)
in its density form, ``Z = (1 + √(1 + 4x))/2`` with ``x = B_c·p/(R·T)``; a
condensed-vapour flask adds each candidate's residual-vapour correction. The candidate's
correlated second virial coefficient carries a model uncertainty that enters the
budget, and the candidate's vapour pressure tells whether it would condense.
The deviation ``z = (M·Z_c − M_c)/u`` then gives the verdict (see
:mod:`molid.candidates.verdicts`).

References
----------
JCGM 100:2008 (GUM), 5.1.2, for the propagation; J. M. Prausnitz, R. N.
Lichtenthaler, E. Gomes de Azevedo, *Molecular Thermodynamics of Fluid-Phase
Equilibria*, 3rd ed., Prentice Hall (1999), ch. 5, for the virial equation's
density form; C. Tsonopoulos, AIChE J. 20
(1974) 263, for B(T); the substance's own vapour-pressure equation
(:mod:`molid.candidates.vapour_pressures`), or D. Ambrose and J. Walton, Pure Appl.
Chem. 61 (1989) 1395, for the vapour pressure that decides ``condenses``.
"""

from __future__ import annotations

import numpy as np

from molid.candidates.dissolution import dissolved_fraction, henry_constants, not_collectable
from molid.candidates.model_terms import (
    vapour_pressure_relative_uncertainty,
    virial_relative_uncertainty,
    virial_truncation_uncertainty,
    virial_uncertainty,
)
from molid.candidates.vapour_pressures import equation_table, saturation_pressure
from molid.candidates.verdicts import DISSOLVES, NOT_A_LIQUID
from molid.physics.constants import GAS_CONSTANT
from molid.physics.vapour_pressure import vapour_pressure_ambrose_walton
from molid.physics.virial import second_virial
from molid.physics.water import saturation_pressure_water

__all__ = [
    "NEAR_SATURATION",
    "candidate_constants",
    "evaluate_candidates",
    "evaluate_in_blocks",
    "residual_rows",
    "solubility_rows",
]

#: A candidate whose vapour pressure is within this factor above the gas pressure
#: gets a note: close to condensing, its real-gas correction is less certain.
NEAR_SATURATION = 1.25

#: Runs evaluated at once: blocks whose (runs × candidates) arrays fit in the CPU's
#: cache run about twice as fast as one large block.
_BLOCK_ROWS = 2048


def evaluate_candidates(molar_mass, sensitivities, uncertainties, temperature, pressure, library,
                        residual=None, solubility=None):
    r"""Each run's molar mass as implied by each candidate's real-gas behaviour.

    Parameters
    ----------
    molar_mass : numpy.ndarray
        Ideal-gas molar mass of each run, shape (n,) [kg/mol].
    sensitivities, uncertainties : dict of numpy.ndarray
        The ideal-gas model's sensitivity coefficients and the inputs' standard
        uncertainties, each shape (n,), SI.
    temperature : numpy.ndarray
        Gas temperature, shape (n,) [K].
    pressure : numpy.ndarray
        Partial pressure of the (dry) gas, shape (n,) [Pa].
    library : pandas.DataFrame
        Candidates (see :func:`molid.candidates.library.load_library`), c rows.
    residual : dict, optional
        Condensed-vapour runs (see :func:`molid.pipeline.identify.residual_vapour`).
    solubility : dict, optional
        Runs collected over water: ``rows`` (bool, shape (n,)) and ``gas_volume`` [m³].

    Returns
    -------
    dict of numpy.ndarray, each shape (n, c)
        ``Z``, ``measured`` [kg/mol], ``u_measured`` [kg/mol] (without the
        candidate's own molar-mass uncertainty), ``u_model`` (the model terms'
        contribution, kg/mol), ``u_extra`` (the run-to-run part that the
        residual-vapour correction adds, kg/mol), ``u_total``, ``z``,
        ``saturation_pressure`` [Pa], ``condenses``, ``near_saturation``,
        ``unfit`` (int8: the method's own verdict code, ``not-a-liquid`` or
        ``dissolves``, 0 where none) and ``dissolved`` (float32: over water, the
        fraction of the gas an equal volume of water would take up at
        equilibrium; NaN elsewhere or without a Henry's-law constant).

    Notes
    -----
    The virial equation truncated after B in its density (Leiden) form,
    solved for Z at the measured pressure:

    .. math:: Z = \tfrac{1}{2}\left(1 + \sqrt{1 + 4x}\right), \qquad x = \frac{Bp}{RT},

    which leaves a smaller truncation error than the pressure form
    :math:`Z = 1 + x` (Prausnitz et al. 1999, ch. 5; see the module's references).
    The sensitivities of :math:`MZ` are :math:`Z\,\partial M/\partial x_i` for
    every input, plus :math:`M\,\partial Z/\partial T` and :math:`M\,\partial Z/\partial p`;
    the model term combines u(B) from the correlation with the truncation term of
    :func:`molid.candidates.model_terms.virial_truncation_uncertainty`.
    """
    constants = candidate_constants(library)
    T = np.asarray(temperature, dtype=float)[:, None]
    p = np.asarray(pressure, dtype=float)[:, None]
    M = np.asarray(molar_mass, dtype=float)[:, None]
    with np.errstate(all="ignore"):
        B, slope, u_B = _virial_per_run(T, constants)
        p_over_RT = p / (GAS_CONSTANT * T)  # (n, 1)
        x = B * p_over_RT
        root = np.sqrt(1.0 + 4.0 * x)
        Z = 0.5 * (1.0 + root)
        dZ_dx = 1.0 / root
        measured = M * Z
        variance = _input_variance(sensitivities, uncertainties, M=M, T=T, p_over_RT=p_over_RT,
                                   Z=Z, dZ_dx=dZ_dx, B=B, slope=slope)
        u_model_square = _model_variance(M, x, dZ_dx * u_B * p_over_RT, constants)
        correction, extra_square, model_square, not_liquid = _residual_vapour(
            sensitivities, uncertainties, residual, constants, Z, p,
            scale={"T": dZ_dx * slope * M * p_over_RT, "p": dZ_dx * B * M / (GAS_CONSTANT * T)})
        measured, u_model_square = measured + correction, u_model_square + model_square
        u_measured_square = variance + extra_square + u_model_square
        u_total = np.sqrt(u_measured_square + constants["u_molar_mass"] ** 2)
        z = (measured - constants["molar_mass"]) / u_total
        saturation, condenses, near = _condensation(T, p, constants)
        dissolved, unfit = _solubility(solubility, constants, T, p, not_liquid)
    return {
        "Z": Z, "measured": measured, "u_measured": np.sqrt(u_measured_square),
        "u_model": np.sqrt(u_model_square), "u_extra": np.sqrt(extra_square), "u_total": u_total,
        "z": z,
        "saturation_pressure": saturation, "condenses": condenses, "near_saturation": near,
        "unfit": unfit, "dissolved": dissolved,
    }


def _solubility(solubility, constants, T, p, not_liquid):
    """Dissolved fraction (float32, NaN off rows) of runs over water, and the method verdicts (int8).

    The stated contact is an equal volume of water at equilibrium with the gas
    (see :func:`molid.candidates.dissolution.dissolution_bias`): an order of
    magnitude for the note, not a correction, since the contact is not recorded.
    """
    dissolved = np.full(not_liquid.shape, np.nan, dtype=np.float32)
    unfit = np.where(not_liquid, np.int8(NOT_A_LIQUID), np.int8(0))
    if solubility is None or not np.any(solubility["rows"]):
        return dissolved, unfit
    rows = np.flatnonzero(solubility["rows"])
    volume = np.asarray(solubility["gas_volume"], dtype=float)[rows][:, None]
    dissolved[rows] = dissolved_fraction(T[rows], p[rows], volume, volume, constants["henry_298"],
                                         constants["henry_slope"])
    unfit[rows] = np.where(constants["not_collectable"], np.int8(DISSOLVES), unfit[rows])
    return dissolved, unfit


def _virial_per_run(T, constants):
    """B, its slope dB/dT − B/T and u(B) of every candidate at each run's temperature.

    Parameters
    ----------
    T : numpy.ndarray
        Run temperatures, shape (n, 1) [K].
    constants : dict
        From :func:`candidate_constants`.

    Returns
    -------
    tuple of numpy.ndarray, each shape (n, c)
        B [m³/mol], dB/dT − B/T [m³/(mol·K)] and u(B) [m³/mol]; zero for
        candidates without critical data.
    """
    has = constants["has"]
    # B depends on T alone: evaluate it once per distinct temperature (runs recorded
    # to 0.01 K share values) and gather; the result is the same, bit for bit.
    distinct, back = np.unique(T[:, 0], return_inverse=True)
    B, dB_dT = second_virial(distinct[:, None], constants["critical_temperature"],
                             constants["critical_pressure"], constants["acentric_factor"],
                             constants["dipole_moment"], constants["classes"],
                             constants["molar_mass"], constants["hill"], return_derivative=True)
    if not has.all():
        B = np.where(has, B, 0.0)
        dB_dT = np.where(has, dB_dT, 0.0)
    # Everything that depends on T alone is done on the distinct rows, then gathered.
    u_B_distinct = np.sqrt((constants["relative_B"] * B) ** 2 + constants["absolute_B"] ** 2)
    slope_distinct = dB_dT - B / distinct[:, None]
    return B[back], slope_distinct[back], u_B_distinct[back]


def _input_variance(sensitivities, uncertainties, *, M, T, p_over_RT, Z, dZ_dx, B, slope):
    """Variance of M·Z from the measured inputs [kg²/mol²], shape (n, c).

    Z changes only the temperature and pressure sensitivities (through x = B·p/(R·T));
    every other input's contribution scales with Z.
    """
    u_ideal_square = sum((sensitivities[name] * uncertainties[name]) ** 2
                         for name in sensitivities)[:, None]
    c_T = (sensitivities["temperature"] * uncertainties["temperature"])[:, None]
    c_p = (sensitivities["pressure"] * uncertainties["pressure"])[:, None]
    # M·∂Z/∂T·u_T and M·∂Z/∂p·u_p, with the (n, 1) factors combined first
    scale_T = M * p_over_RT * uncertainties["temperature"][:, None]
    scale_p = M * uncertainties["pressure"][:, None] / (GAS_CONSTANT * T)
    rest = np.maximum(u_ideal_square - c_T**2 - c_p**2, 0.0)
    term_T = Z * c_T + dZ_dx * slope * scale_T
    term_p = Z * c_p + dZ_dx * B * scale_p
    return Z * Z * rest + term_T * term_T + term_p * term_p


def _model_variance(M, x, u_Z_from_B, constants):
    """Variance of M·Z from the virial model [kg²/mol²]: u(B) and the truncation after B.

    ``u_Z_from_B`` is ∂Z/∂x·u(B)·p/(R·T), the uncertainty of Z that u(B) causes.
    """
    u_truncation = constants["truncation"] * x * x
    return (M * M) * (u_Z_from_B * u_Z_from_B + u_truncation * u_truncation)


def _residual_vapour(sensitivities, uncertainties, residual, constants, Z, p, scale):
    r"""Each candidate's residual-vapour correction for the runs that need it, with its variances.

    Parameters
    ----------
    sensitivities, uncertainties : dict of numpy.ndarray
        The ideal-gas model's sensitivity coefficients and the inputs' standard
        uncertainties, shape (n,).
    residual : dict or None
        ``rows``, ``factor`` f [kg/(mol·Pa)], its ``sensitivities`` and the
        ``room_temperature`` [K], shape (n,); None when no run needs it.
    constants : dict
        From :func:`candidate_constants`.
    Z : numpy.ndarray
        The candidates' compressibility factors, shape (n, c).
    p : numpy.ndarray
        The runs' gas pressure, shape (n, 1) [Pa].
    scale : dict of numpy.ndarray
        M·∂Z/∂T and M·∂Z/∂p per unit of T and p, shape (n, c).

    Returns
    -------
    correction, extra_square, model_square : numpy.ndarray, shape (n, c)
        Z·f·p_sat(T_room) [kg/mol], the variance it adds through the inputs (its own
        sensitivities and their cross terms with M·Z), and the variance from the
        vapour-pressure equation's uncertainty [kg²/mol²]; zero on other rows.
    not_liquid : numpy.ndarray of bool, shape (n, c)
        Candidates whose vapour pressure at room temperature reaches the pressure:
        gases, which cannot be the liquid a flask was filled with.

    Notes
    -----
    .. math:: M_c = Z_c\,\bigl(M + f\,p_{sat,c}(T_{room})\bigr), \qquad
              f = \frac{\rho_a V R T}{p^2 V_T}

    Where a candidate's vapour pressure at room temperature reaches the
    pressure, the cooled flask holds no air at all and p is used instead.
    The sensitivity of the correction to input i is
    :math:`e_i = Z\,(\partial f/\partial x_i)\,p_{sat}` (plus
    :math:`Z f\,dp_{sat}/dT` for the room temperature); it adds
    :math:`(2 s_i e_i + e_i^2)\,u_i^2` to the variance, s_i being the
    sensitivity of M·Z. A candidate without critical data gets no correction.
    """
    shape = Z.shape
    correction, extra, model = np.zeros(shape), np.zeros(shape), np.zeros(shape)
    not_liquid = np.zeros(shape, dtype=bool)
    if residual is None or not np.any(residual["rows"]):
        return correction, extra, model, not_liquid
    index = np.flatnonzero(residual["rows"])
    columns = np.flatnonzero(constants["has"])
    room = np.asarray(residual["room_temperature"], dtype=float)[index][:, None]
    relative = constants["relative_saturation"][columns]
    saturation, u_relative = saturation_pressure(room, constants, columns, relative)
    above, _ = saturation_pressure(room + 0.05, constants, columns, relative)
    below, _ = saturation_pressure(room - 0.05, constants, columns, relative)
    pressure = p[index]
    held = np.minimum(saturation, pressure)
    slope = np.where(saturation < pressure, (above - below) / 0.1, 0.0)
    factor = residual["factor"][index][:, None]
    Z_rows = Z[np.ix_(index, columns)]
    part = Z_rows * factor * held
    extra_rows = np.zeros_like(part)
    for name, u in uncertainties.items():
        derivative = residual["sensitivities"].get(name)
        if derivative is None:
            continue
        e = Z_rows * derivative[index][:, None] * held
        if name == "air_temperature":
            e = e + Z_rows * factor * slope
        s = Z_rows * sensitivities[name][index][:, None]
        if name in ("temperature", "pressure"):
            s = s + scale["T" if name == "temperature" else "p"][np.ix_(index, columns)]
        extra_rows += (2.0 * s * e + e * e) * u[index][:, None] ** 2
    correction[np.ix_(index, columns)] = part
    extra[np.ix_(index, columns)] = np.maximum(extra_rows, 0.0)
    model[np.ix_(index, columns)] = (part * np.where(saturation < pressure, u_relative, 0.0)) ** 2
    # boiling at room temperature: it would have left the flask before the tare was taken
    not_liquid[np.ix_(index, columns)] = saturation >= pressure
    return correction, extra, model, not_liquid


def _condensation(T, p, constants):
    """Vapour pressure [Pa] of each candidate in each run, and whether it condenses or nearly does."""
    saturation, u_relative_saturation = _saturation(T, p, constants)
    # Condenses only when even the high end of the estimate is below p.
    condenses = saturation * (1.0 + 2.0 * u_relative_saturation) < p
    near = ~condenses & (saturation < p * NEAR_SATURATION)
    return saturation, condenses, near


_CONSTANTS_CACHE: dict = {}


def candidate_constants(library) -> dict:
    """Per-candidate arrays the evaluation needs, computed once per library table.

    Candidates without critical data get harmless stand-ins (and zero model
    terms), so that they come out as ideal gases.
    """
    key = id(library)
    cached = _CONSTANTS_CACHE.get(key)
    if cached is not None and cached[0] is library:
        return cached[1]
    has = library["has_critical_data"].to_numpy(dtype=bool)
    raw = {name: library[name].to_numpy(dtype=float) for name in (
        "critical_temperature", "critical_pressure", "acentric_factor", "dipole_moment",
        "molar_mass", "u_molar_mass")}
    classes = library["polar_class"].fillna("nonpolar").to_numpy(dtype=object)
    classes = np.where(has, classes, "nonpolar")
    # With B·p/(R·T) = 1 the truncation term returns its factor k itself.
    truncation = virial_truncation_uncertainty(classes, 1.0, GAS_CONSTANT, 1.0, form="density")
    constants = {
        "has": has,
        "classes": classes,
        "hill": library["hill"].fillna("").to_numpy(dtype=object),
        "critical_temperature": np.where(has, raw["critical_temperature"], 100.0),
        "critical_pressure": np.where(has, raw["critical_pressure"], 1e6),
        "acentric_factor": np.where(has, raw["acentric_factor"], 0.0),
        "dipole_moment": np.nan_to_num(raw["dipole_moment"]),
        "molar_mass": raw["molar_mass"],
        "u_molar_mass": raw["u_molar_mass"],
        "relative_B": np.where(has, virial_relative_uncertainty(classes), 0.0),
        "absolute_B": np.where(has, virial_uncertainty(classes, 0.0), 0.0),
        "truncation": np.where(has, truncation, 0.0),
        "relative_saturation": vapour_pressure_relative_uncertainty(classes),
        "vapour_equations": equation_table(library["name"].to_numpy(dtype=object),
                                           library["cas"].to_numpy(dtype=object)),
    }
    names = library["name"].to_numpy(dtype=object)
    constants["henry_298"], constants["henry_slope"] = henry_constants(names)
    constants["not_collectable"] = not_collectable(names)
    _CONSTANTS_CACHE.clear()
    _CONSTANTS_CACHE[key] = (library, constants)
    return constants


def _saturation(T, p, constants):
    """Vapour pressure of each candidate at each run's T [Pa], and its relative uncertainty.

    The vapour pressure rises with temperature, so a candidate whose estimate at
    the coldest run is already far above the highest pressure cannot condense in
    any run; only the others are evaluated run by run, with their own equations where
    known (:func:`molid.candidates.vapour_pressures.saturation_pressure`).
    """
    has, hill = constants["has"], constants["hill"]
    critical_temperature = constants["critical_temperature"]
    critical_pressure = constants["critical_pressure"]
    acentric = constants["acentric_factor"]
    shape = np.broadcast_shapes(T.shape, critical_temperature.shape)
    saturation = np.full(shape, np.inf)
    u_relative = np.zeros(shape)
    if T.size == 0:
        return saturation, u_relative
    coldest, highest = float(np.nanmin(T)), float(np.nanmax(p))
    estimate_cold = vapour_pressure_ambrose_walton(coldest, critical_temperature,
                                                   critical_pressure, acentric)
    water = hill == "H2O"
    if water.any():
        estimate_cold = np.where(water, saturation_pressure_water(min(coldest, 647.0)),
                                 estimate_cold)
    relative = constants["relative_saturation"]
    # a margin for the substance's own equation, which can sit a few percent from the estimate
    needed = has & (estimate_cold * (1.0 - 3.0 * relative) < highest * NEAR_SATURATION * 1.2)
    columns = np.flatnonzero(needed)
    if len(columns):
        saturation[:, columns], u_relative[:, columns] = saturation_pressure(
            T, constants, columns, relative[columns])
    return saturation, u_relative


def residual_rows(residual, part):
    """Take the rows ``part`` (a slice or an index array) of a residual-vapour dict; None stays None."""
    if residual is None:
        return None
    return {"rows": residual["rows"][part], "factor": residual["factor"][part],
            "room_temperature": residual["room_temperature"][part],
            "sensitivities": {name: item[part] for name, item in residual["sensitivities"].items()}}


def solubility_rows(solubility, part):
    """Take the rows ``part`` of a solubility dict; None stays None."""
    if solubility is None:
        return None
    return {"rows": solubility["rows"][part], "gas_volume": solubility["gas_volume"][part]}


def evaluate_in_blocks(molar_mass, sensitivities, uncertainties, temperature, pressure, library,
                       residual=None, solubility=None):
    """Run :func:`evaluate_candidates` on blocks of runs and join the results.

    Takes and returns the same as :func:`evaluate_candidates`; blocks of
    ``_BLOCK_ROWS`` runs keep the (runs × candidates) arrays small enough to
    stay in the CPU's cache.
    """
    n = len(molar_mass)
    if n <= _BLOCK_ROWS:
        return evaluate_candidates(molar_mass, sensitivities, uncertainties, temperature,
                                   pressure, library, residual, solubility)
    out = None
    for start in range(0, n, _BLOCK_ROWS):
        part = slice(start, start + _BLOCK_ROWS)
        block = evaluate_candidates(
            molar_mass[part], {name: item[part] for name, item in sensitivities.items()},
            {name: item[part] for name, item in uncertainties.items()}, temperature[part],
            pressure[part], library, residual_rows(residual, part), solubility_rows(solubility, part))
        if out is None:  # filled in place: no second copy of the (runs × candidates) arrays
            out = {key: np.empty((n,) + item.shape[1:], dtype=item.dtype)
                   for key, item in block.items()}
        for key, item in block.items():
            out[key][part] = item
    return out
