"""The method of limiting densities: a molar mass that needs no real-gas model, from a pressure series.

A gas weighed in the same way at several pressures gives at each pressure its
ideal-gas molar mass y = m R T/(p V) = ρ R T/p, which differs from the true molar
mass M by the gas's compressibility factor Z: y = M/Z. As the pressure falls,
Z → 1, so the value a series extrapolates to at zero density is M itself; no
equation of state and no candidate's data enter. The slope of the extrapolation
is the gas's second virial coefficient B, which is a property of the substance and
so a second, independent check of its identity.

The fit is a weighted straight line through each sample's runs. It is made in the
density form of the virial equation (below), where the line bends only through the
third virial coefficient C. The pressure form, y = M − M·B·p/(R T), bends through
2B² − C, which for heavy or condensable gases is ten to twenty times larger: over
30 to 101 kPa at 293 K it shifts propane's intercept by about 3·10⁻⁴ and its B by
about 5 % (CoolProp's reference equation of state), against 1.5·10⁻⁵ and 0.3 %
in the density form.

References
----------
G. P. Baxter, H. W. Starkweather, "The density of oxygen", Proc. Natl. Acad. Sci.
USA 10 (1924) 479, and "The density of oxygen and its compressibility below one
atmosphere. II", Proc. Natl. Acad. Sci. USA 12 (1926) 699
(densities of one gas in globes of about 1000 mL; the 1926 paper weighs it at
one, three quarters, one half and one quarter of an atmosphere and extrapolates
linearly to zero pressure, the method of limiting densities; the pressures from
memory).

E. A. Mason, T. H. Spurling, The Virial Equation of State (Pergamon, Oxford, 1969),
ch. 1 (the density and pressure forms of the virial series and the relation of
their coefficients; from memory).

P. R. Bevington, D. K. Robinson, Data Reduction and Error Analysis for the Physical
Sciences, 3rd ed. (McGraw-Hill, 2003), ch. 6 (least-squares fit to a straight line
with individual weights, the variances of intercept and slope and their
covariance; from memory).

JCGM 100:2008 (GUM), 5.2.2 (correlated input quantities; used for the intercept and
slope, which are correlated, and for the effects the runs of a sample share).

R. T. Birge, Phys. Rev. 40 (1932) 207-227 (the Birge ratio), as in
:mod:`molid.uncertainty.replicates`.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from molid.physics.constants import GAS_CONSTANT
from molid.uncertainty.replicates import chi_square_p_value

__all__ = ["MIN_RUNS", "MIN_PRESSURE_RATIO", "NOT_ONE_GAS_P_VALUE", "NOT_ONE_GAS", "COLUMNS",
           "series_samples", "fit_limiting_density", "compare_B"]

#: A straight line through two points has no degrees of freedom left to judge it.
MIN_RUNS = 3
#: Below a factor of 2 in pressure the extrapolation to zero is longer than the
#: span measured, and the intercept's uncertainty grows quickly.
MIN_PRESSURE_RATIO = 2.0
#: A series whose χ² is this improbable is not one gas measured with the stated
#: uncertainties; milder excess scatter widens the uncertainty by the Birge ratio
#: (above 1, as in the sample combination) instead.
NOT_ONE_GAS_P_VALUE = 1e-6
NOT_ONE_GAS = "the runs do not lie on one line: they may not be the same gas"

#: Columns of :func:`fit_limiting_density`'s table.
COLUMNS = ("molar_mass", "u_molar_mass", "B", "u_B", "runs", "pressure_min", "pressure_max",
           "temperature", "birge_ratio", "p_value", "widened", "fitted", "reason")


def _groups(sample_ids):
    """Sample code of each run (−1 without a sample) and the samples in order of appearance."""
    codes, labels = pd.factorize(pd.Series(np.asarray(sample_ids, dtype=object)), sort=False)
    return codes, labels


def _series_table(codes, count, pressure, usable):
    """Per sample: the number of usable runs and their lowest and highest pressure [Pa]."""
    codes_used = codes[usable]
    runs = np.bincount(codes_used, minlength=count)
    low = np.full(count, np.inf)
    high = np.full(count, -np.inf)
    np.minimum.at(low, codes_used, pressure[usable])
    np.maximum.at(high, codes_used, pressure[usable])
    return runs, np.where(runs > 0, low, np.nan), np.where(runs > 0, high, np.nan)


def series_samples(sample_ids, pressure, ok, min_runs=MIN_RUNS, min_ratio=MIN_PRESSURE_RATIO):
    """Which runs belong to a pressure series that the method of limiting densities can use.

    Parameters
    ----------
    sample_ids : array_like of str, shape (n,)
        Sample id of each run; runs without one (None or NaN) belong to no series.
    pressure : array_like, shape (n,)
        Gas pressure of each run [Pa].
    ok : array_like of bool, shape (n,)
        Runs that have a usable result.
    min_runs : int, optional
        Usable runs a sample needs (default 3).
    min_ratio : float, optional
        Factor its highest pressure must be of its lowest (default 2).

    Returns
    -------
    numpy.ndarray of bool, shape (n,)
        True for each usable run of a sample that has at least ``min_runs`` usable runs whose
        pressures span a factor of at least ``min_ratio``; False for the rest, including the
        unusable runs of such a sample.

    Examples
    --------
    >>> series_samples(["a", "a", "a", "b", "b"], [30e3, 60e3, 90e3, 30e3, 90e3], [True] * 5)
    array([ True,  True,  True, False, False])
    """
    pressure = np.asarray(pressure, dtype=float)
    codes, labels = _groups(sample_ids)
    usable = np.asarray(ok, dtype=bool) & (codes >= 0) & np.isfinite(pressure) & (pressure > 0)
    runs, low, high = _series_table(codes, len(labels), pressure, usable)
    with np.errstate(invalid="ignore"):
        qualifies = (runs >= min_runs) & (high >= min_ratio * low)
    return usable & qualifies[np.where(codes >= 0, codes, 0)]


def _line_fit(codes, count, x, y, weight):
    """Weighted straight line y = a + b·x per sample, from grouped sums (Bevington & Robinson ch. 6).

    Centred sums keep the normal equations well conditioned: with x̄ = Σwx/Σw and
    S_xx = Σw(x − x̄)², b = Σw(x − x̄)(y − ȳ)/S_xx, a = ȳ − b·x̄, var a = 1/Σw + x̄²/S_xx,
    var b = 1/S_xx, cov(a, b) = −x̄/S_xx. Each run's influence on a and b (``alpha``, ``beta``)
    carries effects shared between runs.
    """
    def total(values):
        return np.bincount(codes, weights=values, minlength=count)

    keep = codes >= 0
    codes, x, y, weight = codes[keep], x[keep], y[keep], weight[keep]
    sum_weight = total(weight)
    with np.errstate(invalid="ignore", divide="ignore"):
        x_mean = total(weight * x) / sum_weight
        y_mean = total(weight * y) / sum_weight
        dx = x - x_mean[codes]
        sxx = total(weight * dx**2)
        slope = total(weight * dx * (y - y_mean[codes])) / sxx
        intercept = y_mean - slope * x_mean
        chi_square = total(weight * (y - intercept[codes] - slope[codes] * x) ** 2)
        alpha = weight * (1.0 / sum_weight[codes] - x_mean[codes] * dx / sxx[codes])
        beta = weight * dx / sxx[codes]
        return {"a": intercept, "b": slope, "var_a": 1.0 / sum_weight + x_mean**2 / sxx,
                "var_b": 1.0 / sxx, "cov_ab": -x_mean / sxx, "chi_square": chi_square,
                "alpha": alpha, "beta": beta, "codes": codes, "keep": keep}


def _shared_effects(u_shared, length):
    """Return the shared effects as name → signed contribution per run [kg/mol]."""
    if u_shared is None:
        return {}
    if isinstance(u_shared, dict):
        return {name: np.broadcast_to(np.asarray(value, dtype=float), (length,))
                for name, value in u_shared.items()}
    return {"shared": np.broadcast_to(np.asarray(u_shared, dtype=float), (length,))}


def _molar_mass_and_B(fit, count, y, series, shared, widen):
    """M = 1/a and B = b·M² with their uncertainties (GUM 5.2.2 for the correlated a and b)."""
    with np.errstate(invalid="ignore", divide="ignore"):
        molar_mass = 1.0 / fit["a"]
        B = fit["b"] * molar_mass**2
        # Sensitivities of M and B to the intercept and the slope.
        dM_da = -molar_mass**2
        dB_da = -2.0 * fit["b"] * molar_mass**3
        dB_db = molar_mass**2
        scale = widen**2
        var_M = dM_da**2 * fit["var_a"] * scale
        var_B = (dB_da**2 * fit["var_a"] + dB_db**2 * fit["var_b"]
                 + 2.0 * dB_da * dB_db * fit["cov_ab"]) * scale
        for contribution in shared.values():
            # A shared error c_i in y_i is −c_i/y_i² in the fitted 1/y_i; through each run's
            # influence it moves a and b together, in full correlation (GUM 5.2.2, r = +1).
            change = np.where(series, -contribution / y**2, 0.0)[fit["keep"]]
            delta_a = np.bincount(fit["codes"], weights=fit["alpha"] * change, minlength=count)
            delta_b = np.bincount(fit["codes"], weights=fit["beta"] * change, minlength=count)
            var_M = var_M + (dM_da * delta_a) ** 2
            var_B = var_B + (dB_da * delta_a + dB_db * delta_b) ** 2
    return molar_mass, np.sqrt(var_M), B, np.sqrt(var_B)


def _reasons(runs, low, high, p_value, min_runs, min_ratio):
    """Why each sample's series is not fitted ('' where it is)."""
    reasons = np.full(len(runs), "", dtype=object)
    for index in np.flatnonzero(runs < min_runs):
        found = {0: "no usable runs", 1: "only 1 usable run"}.get(runs[index],
                                                                  f"only {runs[index]} usable runs")
        reasons[index] = f"{found}; the method of limiting densities needs at least {min_runs}"
    with np.errstate(invalid="ignore", divide="ignore"):
        narrow = (runs >= min_runs) & ~(high >= min_ratio * low)
    for index in np.flatnonzero(narrow):
        reasons[index] = (f"the pressures span a factor of {high[index] / low[index]:.3g} "
                          f"({low[index] / 1e3:.4g} to {high[index] / 1e3:.4g} kPa); the method of "
                          f"limiting densities needs a factor of at least {min_ratio:g}")
    inconsistent = (reasons == "") & (p_value < NOT_ONE_GAS_P_VALUE)
    reasons[inconsistent] = NOT_ONE_GAS
    return reasons


def _usable_runs(sample_ids, ideal_molar_mass, u_independent, pressure, temperature, ok):
    """Return y, u, p, T as float arrays and which runs may take part (finite and positive, ok)."""
    y, u, p, T = (np.asarray(values, dtype=float) for values in
                  (ideal_molar_mass, u_independent, pressure, temperature))
    if not all(len(values) == len(y) for values in (u, p, T, np.asarray(sample_ids, dtype=object))):
        raise ValueError("sample_ids, ideal_molar_mass, u_independent, pressure and temperature "
                         "must have one value per run")
    usable = np.ones(len(y), dtype=bool) if ok is None else np.asarray(ok, dtype=bool).copy()
    with np.errstate(invalid="ignore"):
        for values in (y, u, p, T):
            usable &= np.isfinite(values) & (values > 0)
    return y, u, p, T, usable


def _fit_series(codes, count, y, u, p, T, series, min_runs):
    """Fit 1/y on ρ = y p/(R T) with weights y⁴/u²; return the fit, mean T, Birge ratio and p-value."""
    with np.errstate(invalid="ignore", divide="ignore"):
        weight = np.where(series, (y**2 / u) ** 2, 0.0)
        density = y * p / (GAS_CONSTANT * T)
        fit = _line_fit(codes, count, np.where(series, density, 0.0), np.where(series, 1.0 / y, 0.0),
                        weight)
        # Only a qualifying series has a χ²; the others get NaN rather than a perfect fit.
        fitted_runs = np.bincount(codes[series], minlength=count)
        dof = np.where(fitted_runs >= min_runs, fitted_runs - 2, 0)
        birge = np.where(dof > 0, np.sqrt(fit["chi_square"] / np.where(dof > 0, dof, 1)), np.nan)
        mean_T = (np.bincount(fit["codes"], weights=(weight * T)[fit["keep"]], minlength=count)
                  / np.bincount(fit["codes"], weights=weight[fit["keep"]], minlength=count))
    return fit, mean_T, birge, chi_square_p_value(fit["chi_square"], dof)


def fit_limiting_density(sample_ids, ideal_molar_mass, u_independent, pressure, temperature,
                         u_shared=None, ok=None, min_runs=MIN_RUNS, min_ratio=MIN_PRESSURE_RATIO):
    """Molar mass and second virial coefficient of each sample by the method of limiting densities.

    Parameters
    ----------
    sample_ids : array_like of str, shape (n,)
        Sample id of each run; runs without one are left out.
    ideal_molar_mass : array_like, shape (n,)
        Each run's ideal-gas molar mass y = m R T/(p V) [kg/mol].
    u_independent : array_like, shape (n,)
        The part of u(y) that is each run's own (balance, thermometer and barometer readings) [kg/mol].
    pressure, temperature : array_like, shape (n,)
        The gas's pressure [Pa] and temperature [K] in each run.
    u_shared : array_like or dict of array_like, optional
        Effects every run of a sample shares (a bulb's volume, a barometer's calibration). An array:
        one effect, its contribution to each run's y [kg/mol], moving every run of the sample the
        same way. A dict: several independent effects, name → signed contribution c·u per run, as
        :func:`molid.uncertainty.replicates.combine_replicates` takes them.
    ok : array_like of bool, shape (n,), optional
        Runs that may take part (default all); never a run with a non-finite or non-positive y, u, p or T.
    min_runs, min_ratio : optional
        What a series needs: usable runs (3) and the factor between its pressures (2).

    Returns
    -------
    pandas.DataFrame
        Indexed by sample, in order of appearance, with :data:`COLUMNS`: ``molar_mass`` M [kg/mol]
        and ``u_molar_mass``, ``B`` [m³/mol] and ``u_B`` (standard uncertainties, widened and with
        the shared effects), ``runs`` (usable runs), ``pressure_min`` and ``pressure_max`` [Pa],
        ``temperature`` (the fit's weighted mean temperature, where B applies) [K], ``birge_ratio``
        √(χ²/(n − 2)) and ``p_value`` of the fit, ``widened`` (u scaled by the Birge ratio),
        ``fitted`` and ``reason`` ('' when fitted). M, B and their u are NaN where not fitted.

    Notes
    -----
    The virial equation in density truncated after B, Z = 1 + B ρ/M, and y = M/Z give the line
    1/y = 1/M + (B/M²)·ρ in the measured density ρ = y p/(R T), fitted with weights y⁴/u_independent²:
    M = 1/a, B = b·M². The term C ρ²/M³ bends it, which limits the method (at most 1.5·10⁻⁵ in M
    over 30 to 101 kPa for CO2, SF6 and propane); errors in ρ enter only through B ρ/M and are
    neglected. A Birge ratio R_B > 1 scales the fit's covariance by R_B², as in the sample
    combination; χ² with p < :data:`NOT_ONE_GAS_P_VALUE` is not fitted (:data:`NOT_ONE_GAS`).
    Shared effects move a and b through each run's influence and are added after any widening.

    References
    ----------
    Baxter and Starkweather, Proc. Natl. Acad. Sci. USA 10 (1924) 479 and 12 (1926) 699; Bevington
    and Robinson (2003) ch. 6 (from memory); GUM 5.2.2; Birge (1932): in full in the module.

    Examples
    --------
    Three runs built on the line of M = 44.0 g/mol and B = −130 cm³/mol (a check of the algebra,
    not measured data) give both back:

    >>> rho = np.array([0.5, 1.0, 1.8])
    >>> y = 1 / (1 / 0.044 + (-130e-6 / 0.044**2) * rho)
    >>> table = fit_limiting_density(["s"] * 3, y, [1e-6] * 3, rho * 8.314462618 * 293.15 / y,
    ...                              [293.15] * 3)
    >>> round(float(table.loc["s", "molar_mass"]) * 1e3, 6), round(float(table.loc["s", "B"]) * 1e6, 3)
    (44.0, -130.0)
    """
    y, u, p, T, usable = _usable_runs(sample_ids, ideal_molar_mass, u_independent, pressure, temperature, ok)
    codes, labels = _groups(sample_ids)
    count = len(labels)
    series = series_samples(sample_ids, p, usable, min_runs, min_ratio)
    runs, low, high = _series_table(codes, count, p, usable & (codes >= 0))
    fit, mean_T, birge, p_value = _fit_series(codes, count, y, u, p, T, series, min_runs)
    reasons = _reasons(runs, low, high, p_value, min_runs, min_ratio)
    fitted = reasons == ""
    widened = fitted & (birge > 1.0)
    molar_mass, u_M, B, u_B = _molar_mass_and_B(fit, count, y, series, _shared_effects(u_shared, len(y)),
                                                np.where(widened, birge, 1.0))
    blank = np.where(fitted, 1.0, np.nan)
    return pd.DataFrame({
        "molar_mass": molar_mass * blank, "u_molar_mass": u_M * blank, "B": B * blank, "u_B": u_B * blank,
        "runs": runs, "pressure_min": low, "pressure_max": high, "temperature": mean_T * blank,
        "birge_ratio": birge, "p_value": p_value, "widened": widened, "fitted": fitted,
        "reason": reasons,
    }, index=pd.Index(np.asarray(labels, dtype=object), name="sample"))


def compare_B(B, u_B, candidate_B, candidate_u_B):
    """How far a measured second virial coefficient lies from each candidate's, in standard uncertainties.

    Parameters
    ----------
    B, u_B : array_like
        Measured B and its standard uncertainty [m³/mol].
    candidate_B, candidate_u_B : array_like
        Each candidate's B at the series' temperature and its standard uncertainty (the
        correlation's model uncertainty) [m³/mol]; broadcast against ``B``.

    Returns
    -------
    numpy.ndarray
        z = (B − B_c)/√(u_B² + u_c²) per candidate (the measured and the predicted B are
        independent: the fit uses no candidate's data).

    Examples
    --------
    >>> compare_B(-130e-6, 10e-6, [-125e-6, -400e-6], [5e-6, 20e-6]).round(3)
    array([-0.447, 12.075])
    """
    B, u_B, candidate_B, candidate_u_B = (np.asarray(values, dtype=float)
                                          for values in (B, u_B, candidate_B, candidate_u_B))
    with np.errstate(invalid="ignore", divide="ignore"):
        return (B - candidate_B) / np.sqrt(u_B**2 + candidate_u_B**2)
