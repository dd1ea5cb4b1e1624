r"""What one run, or N replicate runs, can tell apart: predicted uncertainties and pair separations.

Every substance of interest is "measured" at the nominal conditions without
noise: its nominal readings (:mod:`molid.planning.simulation`) go through
:func:`molid.pipeline.identify.identify` as a sample of one run and as a sample
of two identical runs. The identify pipeline then gives, for every library
candidate, the result read as that candidate, its uncertainty with every
input's contribution, the real-gas model terms, the shared effects that
replicates do not average, and z. Nothing is re-derived here.

Replicates. For N runs of one sample the pipeline's combination (inverse-variance
weighted mean of the independent parts, shared parts added after averaging,
:mod:`molid.uncertainty.replicates`) gives

.. math:: u_N^2 = \frac{A}{N} + F

with A the independent variance of one run and F the shared one; the samples of
one and two runs give :math:`A = 2(u_1^2 - u_2^2)` and :math:`F = 2u_2^2 - u_1^2`.

Separation. If gas a is true, candidate b reads as :math:`M_a Z_b/Z_a` (with a
flask's residual-vapour correction), a gap :math:`g = |M_a Z_b/Z_a - M_b|` from
b's own molar mass. The separation is :math:`g/u_N`, which is |z| of b in a's
noise-free result; a pair is separable when each of the two is at least
:data:`molid.candidates.verdicts.SEPARATION_FACTOR` (5) from the other: the true
gas then falls within 2u of its value (|z| ≤ 2, consistent) in about 95 % of
runs, and the other beyond 3u (excluded) in at least 97.7 % (normal
distribution). The smallest N with :math:`g/u_N \ge 5` is
:math:`N = \lceil A / ((g/5)^2 - F) \rceil`; none exists when
:math:`F \ge (g/5)^2`: the shared part alone is too large.

References
----------
JCGM 100:2008 (GUM), 5.1.2 and 5.2.2; ISO 13528:2015, 9.4.1 (the z bands).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from molid.candidates.verdicts import SEPARATION_FACTOR, VERDICTS, verdicts
from molid.methods.registry import METHODS
from molid.pipeline.identify import identify
from molid.planning.simulation import gas_properties, run_frame

__all__ = ["MOST_REPLICATES", "NominalTable", "evaluate_nominal", "replicate_parts", "uncertainty_with",
           "replicates_for", "pair_separation", "dominant_input", "shared_part", "replicate_split"]

#: More replicates than this are not proposed: a plan that needs them needs better equipment.
MOST_REPLICATES = 100


@dataclass
class NominalTable:
    """Noise-free results of every evaluated substance, read as every library candidate.

    Attributes
    ----------
    rows : numpy.ndarray of int
        Library rows evaluated, in order; arrays below are (rows,) or (rows, candidates).
    ok : numpy.ndarray of bool
        The substance's own run could be analysed.
    errors : list of str
        The first error of each run that could not ('' where none).
    verdict : numpy.ndarray of str
        Each substance's verdict for itself (``consistent`` for a measurable gas).
    gap : numpy.ndarray
        |result read as candidate − candidate's molar mass| [kg/mol].
    u_one, u_two : numpy.ndarray
        u of the result read as each candidate, one run and two runs [kg/mol].
    u_measured, u_model : numpy.ndarray
        Of the substance read as itself: all terms but its molar mass's own, and the
        real-gas model's part [kg/mol].
    u_model_as : numpy.ndarray
        The real-gas model's part of the result read as each candidate [kg/mol].
    dissolved : numpy.ndarray
        Over water, the fraction of the substance an equal volume of water would take up
        at equilibrium [1] (NaN for other methods or without a Henry's-law constant).
    budget : dict of numpy.ndarray
        Each input's share of the ideal-gas variance of the one run [%].
    shared : dict of numpy.ndarray
        Each input's contribution common to replicate runs [kg/mol] (ideal gas).
    u_ideal : numpy.ndarray
        The ideal-gas u of one run [kg/mol].
    """

    rows: np.ndarray
    ok: np.ndarray
    errors: list
    verdict: np.ndarray
    gap: np.ndarray
    u_one: np.ndarray
    u_two: np.ndarray
    u_measured: np.ndarray
    u_model: np.ndarray
    u_model_as: np.ndarray
    dissolved: np.ndarray
    budget: dict
    shared: dict
    u_ideal: np.ndarray

    def position(self, row: int) -> int:
        """Return the position of a library row in this table."""
        return int(np.flatnonzero(self.rows == row)[0])


def _nominal_frame(method, conditions, library, rows, profile):
    """Three noise-free runs per substance: a sample of one and a sample of two."""
    repeated = np.repeat(rows, 3)
    count = len(repeated)
    gas = gas_properties(library, repeated, conditions.temperature, conditions.room_temperature)
    runs = [f"n{index}" for index in range(count)]
    samples = [f"s{index // 3}-{1 if index % 3 == 0 else 2}" for index in range(count)]
    return run_frame(method, conditions.as_dict(), gas, runs=runs, samples=samples, profile=profile)


def evaluate_nominal(conditions, library, rows, profile) -> NominalTable:
    """Put every substance's noise-free runs through identify and gather what the plan needs.

    Parameters
    ----------
    conditions : molid.planning.conditions.Conditions
        The method and nominal conditions.
    library : pandas.DataFrame
        The candidate library (index 0..c-1).
    rows : sequence of int
        Library rows to evaluate.
    profile : molid.io.profiles.InstrumentProfile
        The instrument profile.

    Returns
    -------
    NominalTable
    """
    rows = np.asarray(rows, dtype=int)
    method = METHODS[conditions.method]
    frame = _nominal_frame(method, conditions, library, rows, profile)
    with np.errstate(all="ignore"):
        result = identify(frame, profile=profile, library=library)
    ranking = result.ranking
    position = {name: index for index, name in enumerate(ranking.sample_names)}
    count, candidates = len(rows), len(library)
    one = np.array([position.get(f"s{index}-1", -1) for index in range(count)])
    two = np.array([position.get(f"s{index}-2", -1) for index in range(count)])
    ok = (one >= 0) & (two >= 0) & result.ok[0::3]
    block = ranking.samples
    safe_one, safe_two = np.where(ok, one, 0), np.where(ok, two, 0)
    nan = np.full((count, candidates), np.nan)
    molar_masses = library["molar_mass"].to_numpy(dtype=float)
    gap = np.where(ok[:, None], np.abs(block["measured"][safe_one] - molar_masses), nan) \
        if len(block["measured"]) else nan
    u_one = np.where(ok[:, None], block["u_total"][safe_one], nan) if len(block["measured"]) else nan
    u_two = np.where(ok[:, None], block["u_total"][safe_two], nan) if len(block["measured"]) else nan
    own = np.arange(count), rows
    codes = verdicts(block["z"][safe_one][own], block["condenses"][safe_one][own],
                     block["unfit"][safe_one][own]) if len(block["measured"]) else np.full(count, 2)
    verdict = np.where(ok, np.asarray(VERDICTS, dtype=object)[codes], "")
    single = np.arange(count) * 3
    has = len(block["measured"]) > 0
    dissolved = np.where(ok, block["dissolved"][safe_one][own], np.nan) if has and "dissolved" in block \
        else np.full(count, np.nan)
    return NominalTable(
        rows=rows, ok=ok, errors=[problems[0] if problems else "" for problems in result.errors[0::3]],
        verdict=verdict, gap=gap, u_one=u_one, u_two=u_two,
        u_measured=np.where(ok, block["u_measured"][safe_one][own], np.nan) if len(block["measured"])
        else np.full(count, np.nan),
        u_model=np.where(ok, block["u_model"][safe_one][own], np.nan) if has else np.full(count, np.nan),
        u_model_as=np.where(ok[:, None], block["u_model"][safe_one], nan) if has else nan,
        dissolved=dissolved.astype(float),
        budget={name: share[single] for name, share in result.budget.items()},
        shared={name: part[single + 1] for name, part in result.shared.items()},
        u_ideal=result.u[single])


def replicate_parts(u_one, u_two):
    """Split the variance of one run into its independent part A and its shared part F (module notes).

    Parameters
    ----------
    u_one, u_two : array_like
        u of a sample of one run and of two identical runs.

    Returns
    -------
    tuple of numpy.ndarray
        A and F [u²], neither below 0.

    Examples
    --------
    With A = 0.0016 and F = 0.0009, one run has u = √(A + F) = 0.05 and two √(A/2 + F):

    >>> A, F = replicate_parts(0.05, (0.0016 / 2 + 0.0009) ** 0.5)
    >>> round(float(A), 6), round(float(F), 6)
    (0.0016, 0.0009)
    """
    one, two = np.asarray(u_one, dtype=float) ** 2, np.asarray(u_two, dtype=float) ** 2
    return np.maximum(2.0 * (one - two), 0.0), np.maximum(2.0 * two - one, 0.0)


def uncertainty_with(u_one, u_two, replicates):
    """Return the u of a sample of N identical runs, from the samples of one and two runs."""
    independent, shared = replicate_parts(u_one, u_two)
    return np.sqrt(independent / replicates + shared)


def replicates_for(gap, u_one, u_two):
    """Return the smallest number of replicates whose separation reaches 5, NaN where none does.

    Parameters
    ----------
    gap, u_one, u_two : array_like
        The gap and the uncertainties of one and two runs, same units.

    Returns
    -------
    numpy.ndarray
        Whole numbers from 1; NaN where the shared part alone is too large.

    Examples
    --------
    A gap of 0.5 needs u below 0.1: with A = 0.04 and F = 0.0036, N = ⌈0.04/(0.01 − 0.0036)⌉ = 7.

    >>> float(replicates_for(0.5, (0.04 + 0.0036) ** 0.5, (0.02 + 0.0036) ** 0.5))
    7.0
    """
    independent, shared = replicate_parts(u_one, u_two)
    room = (np.asarray(gap, dtype=float) / SEPARATION_FACTOR) ** 2 - shared
    with np.errstate(all="ignore"):
        needed = np.ceil(independent / room * (1 - 1e-12))
    return np.where(room > 0, np.maximum(needed, 1.0), np.nan)


def pair_separation(table: NominalTable, first: int, second: int, replicates: int) -> dict:
    """Separation of two evaluated substances both ways, and the replicates that would separate them.

    Parameters
    ----------
    table : NominalTable
        The nominal results.
    first, second : int
        Library rows (both evaluated).
    replicates : int
        The planned number of replicate runs.

    Returns
    -------
    dict
        ``separation`` (with the planned replicates; the smaller of the two ways),
        ``separation_one_run``, ``needed`` (NaN where no number does), ``shared_limited``
        (the shared part alone prevents it), ``gap`` [kg/mol] and ``limiting``, the way
        that needs the most replicates as (position of the substance, row of the candidate
        it is read as).
    """
    a, b = table.position(first), table.position(second)
    ways = ((a, second), (b, first))
    gaps = np.array([table.gap[i, j] for i, j in ways])
    ones = np.array([table.u_one[i, j] for i, j in ways])
    twos = np.array([table.u_two[i, j] for i, j in ways])
    with np.errstate(all="ignore"):
        planned = np.min(gaps / uncertainty_with(ones, twos, replicates))
        one_run = np.min(gaps / ones)
    needed = replicates_for(gaps, ones, twos)
    # the way that limits: one no number of replicates separates, else the one needing the most
    limiting = int(np.argmax(np.where(np.isfinite(needed), needed, np.inf)))
    return {"separation": float(planned), "separation_one_run": float(one_run),
            "needed": float(np.max(needed)) if np.all(np.isfinite(needed)) else float("nan"),
            "shared_limited": bool(np.any(~np.isfinite(needed))), "gap": float(np.min(gaps)),
            "limiting": ways[limiting]}


def dominant_input(table: NominalTable, position: int, replicates: int = 1) -> tuple:
    """Find the largest part of a substance's uncertainty read as itself: (input, share in %).

    Each input's variance in the ideal-gas budget is split into its part common to all
    runs and the rest; with N replicates the rest is divided by N (as identify combines
    replicates), and the sum is scaled to the result read as the substance, whose
    variance also holds the real-gas model's term (``model``, common to all runs).

    Parameters
    ----------
    table : NominalTable
        The nominal results.
    position : int
        The substance's position in the table.
    replicates : int
        Runs per sample.

    Returns
    -------
    tuple
        The input's name (or ``model``) and its share of the variance [%].
    """
    total, model = table.u_measured[position] ** 2, table.u_model[position] ** 2
    ideal = table.u_ideal[position] ** 2
    scale = (total - model) / ideal if ideal > 0 else 0.0
    variances = {"model": float(np.nan_to_num(model))}
    for name, shares in table.budget.items():
        whole = float(np.nan_to_num(shares[position])) / 100.0 * ideal
        common = min(float(np.nan_to_num(table.shared[name][position])) ** 2, whole) \
            if name in table.shared else 0.0
        variances[name] = (common + (whole - common) / replicates) * scale
    summed = sum(variances.values())
    best = max(variances, key=variances.get)
    return best, (100.0 * variances[best] / summed if summed > 0 else 0.0)


def shared_part(table: NominalTable, position: int, candidate: int) -> tuple:
    """Find the part of u common to every run of a substance read as a candidate, and its largest piece.

    Parameters
    ----------
    table : NominalTable
        The nominal results.
    position : int
        The substance's position in the table.
    candidate : int
        The library row of the candidate it is read as.

    Returns
    -------
    tuple
        u of the common part [kg/mol] and the name of its largest piece: an input's, or
        ``model`` for the candidate's real-gas model term.
    """
    _, shared = replicate_parts(table.u_one[position, candidate], table.u_two[position, candidate])
    parts = {name: abs(float(np.nan_to_num(values[position]))) for name, values in table.shared.items()}
    parts["model"] = float(np.nan_to_num(table.u_model_as[position, candidate]))
    return float(np.sqrt(shared)), max(parts, key=parts.get)


def replicate_split(table: NominalTable, position: int, row: int, replicates: int) -> dict:
    """Split a substance's u with N replicates into the common and the averaging parts [kg/mol].

    Returns
    -------
    dict
        ``shared`` (√F), ``independent`` (√(A/N)), ``dominates`` (the common part is at
        least the averaging part: more replicates cannot help much) and ``largest``
        (the name of the common part's largest piece, see :func:`shared_part`).
    """
    independent, shared = replicate_parts(table.u_one[position, row], table.u_two[position, row])
    _, largest = shared_part(table, position, row)
    return {"shared": float(np.sqrt(shared)), "independent": float(np.sqrt(independent / replicates)),
            "dominates": bool(shared > 0 and shared >= independent / replicates), "largest": largest}
