"""Verdicts on candidates, and the order they are ranked in.

The deviation ``z = (M·Z_c − M_c)/u`` of a candidate c (see
:mod:`molid.candidates.evaluation`) gives the verdict:

========== =====================================================
consistent |z| ≤ 2
marginal   2 < |z| < 3
excluded   |z| ≥ 3
condenses  the pure substance would be liquid at the run's T and p
========== =====================================================

The bands are those of the z-score performance statistic in proficiency testing:
ISO 13528:2015, 9.4.1 (unchanged in ISO 13528:2022) calls |z| ≤ 2.0
satisfactory, 2.0 < |z| < 3.0 questionable (a warning signal) and |z| ≥ 3.0
unsatisfactory (an action signal) (from memory). At exactly |z| = 3.0 molid says
``marginal`` where ISO 13528 would say unsatisfactory; for a continuous z the two
differ on a single point.

Candidates are ranked by |z|, condensing ones last.

References
----------
ISO 13528:2015, Statistical methods for use in proficiency testing by
interlaboratory comparison, 9.4.1 (evaluation of z scores).
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "VERDICTS",
    "CONSISTENT_LIMIT",
    "MARGINAL_LIMIT",
    "SEPARATION_FACTOR",
    "verdicts",
    "rank_order",
]

VERDICTS = ("consistent", "marginal", "excluded", "condenses")
#: |z| at or below which a candidate is consistent: ISO 13528:2015, 9.4.1, "satisfactory" |z| ≤ 2.0.
CONSISTENT_LIMIT = 2.0
#: |z| at or above which a candidate is excluded: ISO 13528:2015, 9.4.1, "action signal" at |z| ≥ 3.0.
MARGINAL_LIMIT = 3.0
#: The true candidate within 2u and the other beyond 3u: the gap must be 5u.
SEPARATION_FACTOR = CONSISTENT_LIMIT + MARGINAL_LIMIT


def verdicts(z, condenses) -> np.ndarray:
    """Verdict codes (index into :data:`VERDICTS`) from z and the condensation flag.

    Examples
    --------
    >>> [VERDICTS[code] for code in verdicts(np.array([0.5, -2.5, 4.0, 0.1]),
    ...                                      np.array([False, False, False, True]))]
    ['consistent', 'marginal', 'excluded', 'condenses']
    """
    size = np.abs(z)
    codes = np.where(size <= CONSISTENT_LIMIT, 0, np.where(size < MARGINAL_LIMIT, 1, 2))
    codes = np.where(np.isnan(size), 2, codes)
    return np.where(condenses, 3, codes)


def rank_order(z, condenses) -> np.ndarray:
    """Candidate positions in ranked order: by |z|, condensing ones after the rest, no z last.

    Parameters
    ----------
    z : numpy.ndarray
        Deviations, one per candidate along the last axis.
    condenses : numpy.ndarray of bool
        Whether each candidate would condense; same shape as ``z``.

    Returns
    -------
    numpy.ndarray of int
        Indices that sort the last axis; ties keep library order.
    """
    size = np.where(np.isnan(z), np.inf, np.abs(z))
    key = size + np.where(condenses, 1e300, 0.0)
    return np.argsort(key, axis=-1, kind="stable")
