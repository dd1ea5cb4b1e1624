"""Verdicts on candidates, and the order they are ranked in.

The deviation ``z = (M·Z_c − M_c)/u`` of a candidate c (see
:mod:`molid.candidates.evaluation`) gives the verdict:

========== =====================================================
consistent |z| ≤ 2
marginal   2 < |z| < 3
excluded   |z| ≥ 3
condenses  the pure substance would be liquid at the run's T and p
not-a-liquid  (condensed-vapour flask) the substance is a gas at room temperature, so it
           cannot be the liquid that was vaporised
dissolves  (gas collected over water) the gas dissolves in or reacts with water so much
           that it cannot be collected over water
========== =====================================================

The bands are those of the z-score performance statistic in proficiency testing:
ISO 13528:2015, 9.4.1 (unchanged in ISO 13528:2022) calls |z| ≤ 2.0
satisfactory, 2.0 < |z| < 3.0 questionable (a warning signal) and |z| ≥ 3.0
unsatisfactory (an action signal) (from memory). At exactly |z| = 3.0 molid says
``marginal`` where ISO 13528 would say unsatisfactory; for a continuous z the two
differ on a single point.

Ranking: consistent and marginal candidates by |z|; then the excluded ones by
the relative difference between the candidate's molar mass and the result read
as that candidate, |M_c − M_as_c|/M_c, so that the runners-up are the nearest in
molar mass (ordering excluded candidates by |z| would put a polar candidate with a
wide model term, 40 g/mol away, before one 7 g/mol away); those that cannot be the
gas (the last three verdicts) come after all others.

References
----------
ISO 13528:2015, Statistical methods for use in proficiency testing by
interlaboratory comparison, 9.4.1 (evaluation of z scores).
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "VERDICTS",
    "UNFIT_VERDICTS",
    "CONSISTENT_LIMIT",
    "MARGINAL_LIMIT",
    "SEPARATION_FACTOR",
    "LABEL_MEANINGS",
    "verdicts",
    "rank_key",
    "rank_order",
    "relative_difference",
]

VERDICTS = ("consistent", "marginal", "excluded", "condenses", "not-a-liquid", "dissolves")

#: Verdicts that say a candidate cannot be the gas whatever its z.
UNFIT_VERDICTS = ("condenses", "not-a-liquid", "dissolves")

#: Codes of the method-specific verdicts, as carried in the ``unfit`` arrays (0: none).
NOT_A_LIQUID, DISSOLVES = VERDICTS.index("not-a-liquid"), VERDICTS.index("dissolves")

#: What each verdict says of a label (the ``expected`` column) in plain words.
LABEL_MEANINGS = {
    "consistent": "the result agrees with the label",
    "marginal": "the result is at the edge of agreeing with the label",
    "excluded": "the result does NOT agree with the label",
    "condenses": "the labelled substance would be liquid at these conditions",
    "not-a-liquid": "the labelled substance is a gas at room temperature, not a liquid that "
                    "a condensed-vapour flask can be filled with",
    "dissolves": "the labelled substance dissolves in or reacts with water too much to be "
                 "collected over water",
}
#: |z| at or below which a candidate is consistent: ISO 13528:2015, 9.4.1, "satisfactory" |z| ≤ 2.0.
CONSISTENT_LIMIT = 2.0
#: |z| at or above which a candidate is excluded: ISO 13528:2015, 9.4.1, "action signal" at |z| ≥ 3.0.
MARGINAL_LIMIT = 3.0
#: The true candidate within 2u and the other beyond 3u: the gap must be 5u.
SEPARATION_FACTOR = CONSISTENT_LIMIT + MARGINAL_LIMIT


def verdicts(z, condenses, unfit=None) -> np.ndarray:
    """Verdict codes (index into :data:`VERDICTS`) from z, the condensation flags and the method's own.

    Parameters
    ----------
    z : numpy.ndarray
        Deviations.
    condenses : numpy.ndarray of bool
        Whether each candidate would condense; same shape as ``z``.
    unfit : numpy.ndarray of int, optional
        A method's own verdict code for a candidate that cannot be its substance
        (``not-a-liquid``, ``dissolves``), 0 where none; same shape as ``z``.

    Returns
    -------
    numpy.ndarray of int
        Indices into :data:`VERDICTS`.

    Examples
    --------
    >>> [VERDICTS[code] for code in verdicts(np.array([0.5, -2.5, 4.0, 0.1]),
    ...                                      np.array([False, False, False, True]))]
    ['consistent', 'marginal', 'excluded', 'condenses']
    """
    size = np.abs(z)
    codes = np.where(size <= CONSISTENT_LIMIT, 0, np.where(size < MARGINAL_LIMIT, 1, 2))
    codes = np.where(np.isnan(size), 2, codes)
    codes = np.where(condenses, 3, codes)
    return codes if unfit is None else np.where((unfit > 0) & ~condenses, unfit, codes)


def relative_difference(measured, molar_mass):
    """Return |M_c − M_as_c|/M_c: how far the result read as each candidate is from its molar mass [1].

    Parameters
    ----------
    measured : numpy.ndarray
        The result read as each candidate [kg/mol] (candidates along the last axis).
    molar_mass : numpy.ndarray
        Each candidate's molar mass [kg/mol].

    Returns
    -------
    numpy.ndarray
        Same shape as ``measured``.

    Examples
    --------
    >>> relative_difference(np.array([0.102, 0.044]), np.array([0.10203, 0.04401])).round(5).tolist()
    [0.00029, 0.00023]
    """
    with np.errstate(all="ignore"):
        return np.abs(np.asarray(measured, dtype=float) - molar_mass) / molar_mass


def rank_key(z, condenses, unfit=None, relative=None) -> np.ndarray:
    """Sort key of each candidate (smaller first).

    Parameters
    ----------
    z : numpy.ndarray
        Deviations.
    condenses : numpy.ndarray of bool
        Whether each candidate would condense; same shape as ``z``.
    unfit : numpy.ndarray of int, optional
        The method's own verdict codes of :func:`verdicts` (0 where none).
    relative : numpy.ndarray, optional
        :func:`relative_difference` of each candidate; without it excluded candidates
        are ordered by |z| too.

    Returns
    -------
    numpy.ndarray
        Consistent and marginal candidates by |z| (below 3); excluded ones after them by
        ``relative`` (10 + relative); those that cannot be the gas last; NaN z last of all.
    """
    size = np.where(np.isnan(z), np.inf, np.abs(z))
    if relative is not None:
        excluded = size >= MARGINAL_LIMIT
        size = np.where(excluded & np.isfinite(size), 10.0 + np.nan_to_num(relative, nan=np.inf), size)
    cannot = condenses if unfit is None else (condenses | (unfit > 0))
    return size + np.where(cannot, 1e300, 0.0)


def rank_order(z, condenses, unfit=None, relative=None) -> np.ndarray:
    """Candidate positions in ranked order: by |z|, those that cannot be the gas after the rest, no z last.

    Parameters
    ----------
    z : numpy.ndarray
        Deviations, one per candidate along the last axis.
    condenses : numpy.ndarray of bool
        Whether each candidate would condense; same shape as ``z``.
    unfit : numpy.ndarray of int, optional
        The method's own verdict codes of :func:`verdicts` (0 where none).
    relative : numpy.ndarray, optional
        :func:`relative_difference`, which orders the excluded candidates.

    Returns
    -------
    numpy.ndarray of int
        Indices that sort the last axis; ties keep library order.
    """
    return np.argsort(rank_key(z, condenses, unfit, relative), axis=-1, kind="stable")
