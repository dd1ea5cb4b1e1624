r"""Conformity to a purity specification, decided by a stated rule (JCGM 106:2012).

The measurand is the contaminant's mole fraction x, with an upper tolerance
limit T_U (a maximum contaminant fraction, or 100 % less a minimum purity). Its
state of knowledge is taken as normal with the estimate x̂ and standard
uncertainty u (JCGM 106:2012, 7.2), so the probability that the item conforms is

.. math:: p_c = \Phi\left(\frac{T_U - \hat{x}}{u}\right)

(JCGM 106:2012, 7.3, eq. 14, for a single upper limit). Two decision rules:

``guarded`` (the default)
    guarded acceptance with the guard band w = U = 2u (JCGM 106:2012, 8.3.2):
    the acceptance limit is A_U = T_U − U. A result with x̂ ≤ A_U conforms;
    one with x̂ > T_U + U (the guard band mirrored, guarded rejection, 8.3.3) does
    not conform; in between the measurement cannot decide.
``simple``
    simple acceptance, A_U = T_U (JCGM 106:2012, 8.2): x̂ ≤ T_U conforms,
    otherwise it does not.

Identity comes first: a sample whose gas is not the labelled one does not
conform, whatever its fraction of contaminant.

References
----------
JCGM 106:2012, Evaluation of measurement data -- The role of measurement
uncertainty in conformity assessment, sections 7 and 8.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["RULES", "OUTCOMES", "conformity_probability", "decide"]

#: The decision rules and their words for a reader.
RULES = {
    "guarded": "guarded acceptance, guard band w = U (k = 2), JCGM 106:2012 8.3",
    "simple": "simple acceptance, acceptance limit = tolerance limit, JCGM 106:2012 8.2",
}

#: The outcomes and what each says.
OUTCOMES = {
    "conforms": "the sample meets the specification under the stated rule",
    "does-not-conform": "the sample does not meet the specification under the stated rule",
    "undecided": "the measurement cannot decide: its interval straddles the limit beyond the guard band",
}


def conformity_probability(estimate, u, upper_limit):
    r"""Return the probability that the true fraction is at or below the upper limit.

    Parameters
    ----------
    estimate, u : array_like
        Estimate x̂ and standard uncertainty u of the contaminant fraction [1].
    upper_limit : array_like
        Upper tolerance limit T_U [1].

    Returns
    -------
    numpy.ndarray
        :math:`p_c = \Phi((T_U - \hat{x})/u)` (JCGM 106:2012, eq. 14).

    Examples
    --------
    An estimate one standard uncertainty below the limit: Φ(1) = 0.8413 (any table
    of the standard normal distribution).

    >>> round(float(conformity_probability(0.004, 0.001, 0.005)), 4)
    0.8413
    """
    estimate = np.asarray(estimate, dtype=float)
    scale = np.asarray(u, dtype=float) * math.sqrt(2.0)
    with np.errstate(all="ignore"):
        standard = (np.asarray(upper_limit, dtype=float) - estimate) / scale
    return 0.5 * (1.0 + _erf(standard))


def _erf(values):
    """Return the error function of each value (math.erf, vectorised; ±inf give ±1)."""
    flat = np.asarray(values, dtype=float)
    return np.vectorize(math.erf, otypes=[float])(flat) if flat.size else flat


def decide(estimate, u, upper_limit, rule="guarded", identity_ok=True):
    """Decide conformity of each result to an upper limit on the contaminant fraction.

    Parameters
    ----------
    estimate, u : array_like
        Estimate and standard uncertainty of the contaminant fraction [1].
    upper_limit : array_like
        Upper tolerance limit [1]; NaN where no specification applies.
    rule : {"guarded", "simple"}
        The decision rule (see the module's docstring).
    identity_ok : array_like of bool
        False where the gas is not the labelled one.

    Returns
    -------
    outcome : numpy.ndarray of str
        One of :data:`OUTCOMES` ('' where no specification applies); ``does-not-conform``
        with probability 0 where the gas is not the labelled one.
    probability : numpy.ndarray
        The probability of conformity p_c (0 for the wrong gas, NaN without a limit).

    Examples
    --------
    Limit 0.5 %, U = 0.2 %: 0.2 % conforms, 0.5 % cannot be decided, 0.8 % does not conform.

    >>> outcome, p = decide([0.002, 0.005, 0.008], 0.001, 0.005)
    >>> outcome.tolist(), [round(float(v), 3) for v in p]
    (['conforms', 'undecided', 'does-not-conform'], [0.999, 0.5, 0.001])
    """
    if rule not in RULES:
        raise ValueError(f"unknown decision rule {rule!r}; accepted: {', '.join(RULES)}")
    estimate = np.asarray(estimate, dtype=float)
    u = np.broadcast_to(np.asarray(u, dtype=float), estimate.shape)
    limit = np.broadcast_to(np.asarray(upper_limit, dtype=float), estimate.shape)
    identity_ok = np.broadcast_to(np.asarray(identity_ok, dtype=bool), estimate.shape)
    probability = conformity_probability(estimate, u, limit)
    guard = 2.0 * u if rule == "guarded" else np.zeros_like(u)
    with np.errstate(invalid="ignore"):
        accept = estimate <= limit - guard
        reject = estimate > limit + guard
    outcome = np.where(accept, "conforms", np.where(reject, "does-not-conform", "undecided"))
    outcome = np.where(identity_ok, outcome, "does-not-conform")
    outcome = np.where(np.isfinite(limit) & (np.isfinite(estimate) | ~identity_ok), outcome, "")
    probability = np.where(identity_ok, probability, 0.0)
    probability = np.where(np.isfinite(limit), probability, np.nan)
    return outcome.astype(object), probability
