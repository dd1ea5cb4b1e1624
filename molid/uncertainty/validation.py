r"""Checking the law of propagation against a Monte Carlo calculation (GUM Supplement 1, section 8).

The linear (GUM) 95 % interval of a run is y ± k_p·u(y) with k_p = 1.960, the
97.5 % point of the standard normal distribution, which the GUM uncertainty
framework takes for the output when the degrees of freedom are large (every
uncertainty of a run here is Type B). A Monte Carlo calculation gives its own
95 % interval [y_low, y_high]. The two agree when both endpoint differences

.. math:: d_\text{low} = |y - U_p - y_\text{low}|, \qquad d_\text{high} = |y + U_p - y_\text{high}|

are no larger than the numerical tolerance δ of u(y): u(y) written with
n_dig significant decimal digits as c × 10^l, δ = ½ × 10^l.

References
----------
JCGM 101:2008, Evaluation of measurement data -- Supplement 1 to the GUM: Propagation of
distributions using a Monte Carlo method, 7.7 (coverage intervals), 7.9.2 (numerical
tolerance) and 8 (validation of the GUM uncertainty framework).

JCGM 100:2008 (GUM), G.1.3 and Table G.1 (k_p = 1.960 for p = 95 % of a normal distribution).
"""

from __future__ import annotations

import numpy as np

__all__ = ["COVERAGE_PROBABILITY", "NORMAL_COVERAGE_FACTOR", "SUGGESTED_DRAWS", "numerical_tolerance",
           "compare_intervals"]

#: Coverage probability of the Monte Carlo interval.
COVERAGE_PROBABILITY = 0.95
#: Trials M = 10⁴/(1 − p) = 200 000 for p = 95 % (JCGM 101:2008, 7.2.2).
SUGGESTED_DRAWS = 200_000
#: k_p of a normal distribution for p = 95 % (GUM Table G.1: 1.960).
NORMAL_COVERAGE_FACTOR = 1.959963984540054


def numerical_tolerance(u, digits: int = 1) -> np.ndarray:
    """Numerical tolerance δ of a standard uncertainty given to ``digits`` significant digits.

    Parameters
    ----------
    u : array_like
        Standard uncertainties (any unit; δ comes out in the same unit).
    digits : int
        n_dig, the significant decimal digits regarded as meaningful in u (1 or 2, JCGM 101:2008, 8.1).

    Returns
    -------
    numpy.ndarray
        δ = ½ × 10^l where u rounded to ``digits`` digits is c × 10^l, c an integer of
        ``digits`` digits; NaN where u is not positive and finite.

    Notes
    -----
    The exponent is taken after rounding, so 0.096 to one digit is 0.1 = 1 × 10⁻¹
    and δ = 0.05.

    References
    ----------
    JCGM 101:2008, 7.9.2 (numerical tolerance associated with a numerical value) and 8.1.

    Examples
    --------
    By the definition: u = 0.0025 to two digits is 25 × 10⁻⁴, so δ = 0.00005; to one
    digit it is 0.003 = 3 × 10⁻³, so δ = 0.0005:

    >>> [float(x) for x in numerical_tolerance([0.0025, 0.0025], digits=2)]
    [5e-05, 5e-05]
    >>> float(numerical_tolerance(0.0025)), float(numerical_tolerance(0.096))
    (0.0005, 0.05)
    """
    u = np.asarray(u, dtype=float)
    good = np.isfinite(u) & (u > 0)
    safe = np.where(good, u, 1.0)
    exponent = np.floor(np.log10(safe)) - (digits - 1)
    # rounding to n_dig digits can carry into one more digit (0.096 → 0.1)
    leading = np.round(safe / 10.0**exponent)
    exponent = np.where(leading >= 10.0**digits, exponent + 1, exponent)
    return np.where(good, 0.5 * 10.0**exponent, np.nan)


def compare_intervals(value, u, low, high, noise_low=0.0, noise_high=0.0, digits: int = 1) -> dict:
    """Compare Monte Carlo 95 % intervals with the linear ones (GUM Supplement 1, 8).

    Parameters
    ----------
    value, u : array_like
        The GUM estimate y and its standard uncertainty u(y).
    low, high : array_like
        The Monte Carlo 95 % coverage interval, same unit.
    noise_low, noise_high : array_like
        Standard deviations of the two Monte Carlo ends from the finite number of
        trials (0 for exact ends).
    digits : int
        n_dig for the tolerance (see :func:`numerical_tolerance`).

    Returns
    -------
    dict of numpy.ndarray
        ``linear_low``, ``linear_high`` (y ∓ 1.960·u), ``difference_low``,
        ``difference_high`` (d_low, d_high), ``tolerance`` (δ), ``stable`` (both
        ends' 2s within δ), ``decided`` and ``agrees`` (see Notes).

    Notes
    -----
    A Monte Carlo end is trusted to δ when twice its standard deviation is within δ
    (JCGM 101:2008, 7.9.4). Then, as in 8.2, the intervals agree when
    d_low ≤ δ and d_high ≤ δ. When an end is noisier, the verdict is given only
    where the noise cannot change it: they differ where d − 2s > δ at either end,
    agree where d + 2s ≤ δ at both; otherwise ``decided`` is False (more trials
    are needed) and ``agrees`` is False. Anything not finite is undecided.

    References
    ----------
    JCGM 101:2008, 7.9.4, 8.1 and 8.2.

    Examples
    --------
    A Gaussian output: the Monte Carlo ends sit at y ∓ 1.96u and agree.

    >>> bool(compare_intervals(10.0, 0.4, 9.216, 10.784)["agrees"])
    True
    """
    value, u = np.asarray(value, dtype=float), np.asarray(u, dtype=float)
    expanded = NORMAL_COVERAGE_FACTOR * u
    linear_low, linear_high = value - expanded, value + expanded
    difference_low = np.abs(linear_low - np.asarray(low, dtype=float))
    difference_high = np.abs(linear_high - np.asarray(high, dtype=float))
    margin_low = 2.0 * np.asarray(noise_low, dtype=float)
    margin_high = 2.0 * np.asarray(noise_high, dtype=float)
    tolerance = numerical_tolerance(u, digits)
    with np.errstate(invalid="ignore"):
        stable = (margin_low <= tolerance) & (margin_high <= tolerance)
        within = (difference_low <= tolerance) & (difference_high <= tolerance)
        beyond = (difference_low - margin_low > tolerance) | (difference_high - margin_high > tolerance)
        inside = (difference_low + margin_low <= tolerance) & (difference_high + margin_high <= tolerance)
    decided = stable | beyond | inside
    agrees = np.where(stable, within, inside) & decided
    return {"linear_low": linear_low, "linear_high": linear_high, "difference_low": difference_low,
            "difference_high": difference_high, "tolerance": tolerance, "stable": stable,
            "decided": decided, "agrees": agrees}
