"""Combining replicate runs of one sample: weighted mean, consistency, shared effects.

Runs that share a ``sample`` id measure one gas. Their results are combined by an
inverse-variance weighted mean of the run-specific (independent) parts of their
uncertainties. Effects that every run of the sample shares (the same bulb's
volume calibration, an assumed humidity, the air-density formula) do not average
out; their contribution is carried through the weights and added after
averaging. When the runs scatter more than their stated independent
uncertainties explain (Birge ratio above 1), the independent part is widened by
the Birge ratio.

References
----------
R. T. Birge, "The calculation of errors by the method of least squares",
Phys. Rev. 40 (1932) 207-227, doi:10.1103/PhysRev.40.207.

P. J. Mohr, D. B. Newell, B. N. Taylor, "CODATA recommended values of the
fundamental physical constants: 2014", Rev. Mod. Phys. 88 (2016) 035009,
doi:10.1103/RevModPhys.88.035009 (the Birge ratio R_B = √(χ²/ν) in the
appendix on least squares).

JCGM 100:2008 (GUM), 4.2 (Type A evaluation), 5.2.2 (correlated input
quantities) and F.1.2 (correlated inputs).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["SHAREABLE_INPUTS", "shared_inputs", "combine_replicates", "chi_square_p_value"]

#: Inputs that replicate runs of a sample share when they have one value and one
#: uncertainty across the sample: the vessel's volume, assumed ambient values and
#: the model's own corrections. Balance readings, temperatures and pressures are
#: read afresh for each run and count as independent.
SHAREABLE_INPUTS = ("volume", "humidity", "co2", "air_density_formula", "water_vapour")


def chi_square_p_value(chi_square, degrees_of_freedom):
    """Probability of a chi-squared at least this large by chance.

    Parameters
    ----------
    chi_square : array_like
        Observed chi-squared.
    degrees_of_freedom : array_like
        Degrees of freedom (n − 1 for n runs).

    Returns
    -------
    numpy.ndarray
        The upper-tail probability Q(ν/2, χ²/2), NaN where ν < 1. Computed by scipy's
        regularised upper incomplete gamma function, imported only when some ν ≥ 1.

    Examples
    --------
    Chi-squared 3.841 on one degree of freedom is the 5 % point (common practice:
    statistical tables):

    >>> round(float(chi_square_p_value(3.841, 1)), 3)
    0.05
    """
    chi_square = np.asarray(chi_square, dtype=float)
    degrees_of_freedom = np.asarray(degrees_of_freedom, dtype=float)
    if not np.any(degrees_of_freedom >= 1):
        # No sample has replicates: skip importing scipy, which costs more than the rest of a
        # one-run analysis.
        return np.full(np.broadcast(chi_square, degrees_of_freedom).shape, np.nan)
    from scipy.special import gammaincc

    with np.errstate(invalid="ignore"):
        safe = np.where(degrees_of_freedom >= 1, degrees_of_freedom, 1.0)
        return np.where(degrees_of_freedom >= 1, gammaincc(safe / 2.0, chi_square / 2.0), np.nan)


def _one_run_each(sample) -> bool:
    """Tell whether no two of these runs share a sample (and every run has one)."""
    return bool(len(sample)) and not pd.isna(sample).any() and len(set(sample.tolist())) == len(sample)


def _sum_of_one(values):
    """Sum a group of one value as pandas' grouped sum does: 0 + x, and 0 for NaN."""
    return np.where(np.isnan(values), 0.0, 0.0 + values)


def _single_runs(sample, value, weight, contributions: dict) -> pd.DataFrame:
    """Combine samples of one run each: :func:`combine_replicates` without grouping, to the bit.

    The same arithmetic, element by element, as the grouped sums of one term each give;
    no degrees of freedom, so no Birge ratio, no widening and no p-value.
    """
    weights = _sum_of_one(weight)
    mean = _sum_of_one(weight * value) / weights
    chi_square = _sum_of_one(weight * (value - mean) ** 2)
    u_independent = (1.0 / np.sqrt(weights)) * 1.0
    u_shared_square = 0.0
    for name in contributions:
        u_shared_square = u_shared_square + (_sum_of_one(weight * contributions[name]) / weights) ** 2
    u_shared = np.sqrt(u_shared_square) if len(contributions) else 0.0 * mean
    nothing = np.full(len(sample), np.nan)
    return pd.DataFrame({
        "sample": np.asarray(sample, dtype=object), "n": np.ones(len(sample), dtype=np.int64), "value": mean,
        "u": np.sqrt(u_independent**2 + u_shared**2), "u_independent": u_independent, "u_shared": u_shared,
        "chi_square": chi_square, "birge_ratio": nothing, "p_value": nothing.copy(),
        "widened": np.zeros(len(sample), dtype=bool),
    })


def shared_inputs(sample, values: dict, uncertainties: dict, ok) -> dict:
    """For each shareable input, whether it has one value and one u across each sample.

    Parameters
    ----------
    sample : array_like of str
        Sample id of each run.
    values, uncertainties : dict of numpy.ndarray
        Input values and standard uncertainties.
    ok : array_like of bool
        Runs taking part.

    Returns
    -------
    dict of numpy.ndarray of bool
        Per input, per run: True where that run's sample shares the input.
    """
    chosen = np.asarray(ok, dtype=bool)
    if _one_run_each(np.asarray(sample, dtype=object)[chosen]):
        # a sample of one run has one value and one u of every input: all are shared
        return {name: chosen.copy() for name in SHAREABLE_INPUTS if name in values and name in uncertainties}
    return _shared_by_grouping(sample, values, uncertainties, ok)


def _shared_by_grouping(sample, values: dict, uncertainties: dict, ok) -> dict:
    """Find the shared inputs of each sample by grouping its runs (see :func:`shared_inputs`)."""
    frame = pd.DataFrame({"sample": np.asarray(sample, dtype=object)})
    frame = frame[np.asarray(ok)]
    result = {}
    for name in SHAREABLE_INPUTS:
        if name not in values or name not in uncertainties:
            continue  # an input with no uncertainty anywhere is passed through undifferentiated
        frame["value"] = np.asarray(values[name])[np.asarray(ok)]
        frame["u"] = np.asarray(uncertainties[name])[np.asarray(ok)]
        grouped = frame.groupby("sample", sort=False)
        one = (grouped["value"].transform("nunique") <= 1) & (grouped["u"].transform("nunique") <= 1)
        flags = np.zeros(len(ok), dtype=bool)
        flags[np.flatnonzero(ok)] = one.to_numpy()
        result[name] = flags
    return result


def combine_replicates(sample, value, u, shared_contributions: dict, ok) -> pd.DataFrame:
    """Combine the runs of each sample into one result.

    Parameters
    ----------
    sample : array_like of str
        Sample id of each run (runs without one are not combined).
    value : numpy.ndarray
        Each run's result.
    u : numpy.ndarray
        Each run's combined standard uncertainty.
    shared_contributions : dict of numpy.ndarray
        For each input shared within the run's sample, its contribution c·u to the
        run's uncertainty (0 where not shared).
    ok : array_like of bool
        Runs that have a result.

    Returns
    -------
    pandas.DataFrame
        One row per sample: ``sample``, ``n``, ``value``, ``u``, ``u_independent``
        (after any widening), ``u_shared``, ``chi_square``, ``birge_ratio``,
        ``p_value``, ``widened`` (bool).

    Notes
    -----
    With w_i = 1/u_ind,i², the mean is Σw_i x_i/Σw_i, its independent
    uncertainty 1/√Σw_i times max(1, R_B), where R_B = √(χ²/(n−1)) and
    χ² = Σw_i (x_i − x̄)². Each shared input k adds (Σw_i c_ik u_k/Σw_i)².

    References
    ----------
    R. T. Birge, Phys. Rev. 40 (1932) 207-227; Mohr, Newell, Taylor, Rev. Mod. Phys. 88
    (2016) 035009 (Birge ratio); GUM 5.2.2 (a shared input is fully correlated between runs).
    """
    ok = np.asarray(ok, dtype=bool)
    sample = np.asarray(sample, dtype=object)
    keep = ok & pd.notna(sample)
    shared_square = np.zeros_like(value)
    for contribution in shared_contributions.values():
        shared_square = shared_square + contribution**2
    independent = np.sqrt(np.maximum(u**2 - shared_square, 0.0))
    # A run whose uncertainty is all shared still needs a finite weight.
    independent = np.maximum(independent, 1e-9 * np.abs(value) + 1e-300)
    weight = 1.0 / independent**2
    runs = (sample[keep], value[keep], weight[keep],
            {name: contribution[keep] for name, contribution in shared_contributions.items()})
    return _single_runs(*runs) if _one_run_each(sample[keep]) else _grouped(*runs)


def _grouped(sample, value, weight, contributions: dict) -> pd.DataFrame:
    """Combine the runs of each sample by grouped sums (see :func:`combine_replicates`)."""
    frame = pd.DataFrame({"sample": sample, "weight": weight, "weighted": weight * value})
    for name, contribution in contributions.items():
        frame[f"shared_{name}"] = weight * contribution
    grouped = frame.groupby("sample", sort=False)
    sums = grouped.sum()
    counts = grouped.size()
    mean = sums["weighted"] / sums["weight"]
    frame["deviation"] = weight * (value - frame["sample"].map(mean).to_numpy()) ** 2
    chi_square = frame.groupby("sample", sort=False)["deviation"].sum()
    dof = counts - 1
    with np.errstate(invalid="ignore", divide="ignore"):
        birge = np.sqrt(chi_square / dof.where(dof > 0))
    internal = 1.0 / np.sqrt(sums["weight"])
    widened = birge > 1.0
    u_independent = internal * np.where(widened, birge, 1.0)
    u_shared_square = 0.0
    for name in contributions:
        u_shared_square = u_shared_square + (sums[f"shared_{name}"] / sums["weight"]) ** 2
    u_shared = np.sqrt(u_shared_square) if len(contributions) else 0.0 * mean
    return pd.DataFrame({
        "sample": mean.index.to_numpy(dtype=object),
        "n": counts.to_numpy(),
        "value": mean.to_numpy(),
        "u": np.sqrt(u_independent**2 + u_shared**2).to_numpy(),
        "u_independent": np.asarray(u_independent),
        "u_shared": np.asarray(u_shared),
        "chi_square": chi_square.to_numpy(),
        "birge_ratio": np.asarray(birge),
        "p_value": chi_square_p_value(chi_square.to_numpy(), dof.to_numpy()),
        "widened": np.asarray(widened.fillna(False) if hasattr(widened, "fillna") else widened),
    })
