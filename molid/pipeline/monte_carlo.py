"""Monte Carlo check of each run's linear interval (GUM Supplement 1), vectorised over runs.

For every analysed run the inputs are drawn M times from Gaussian distributions
with the run's values and the standard uncertainties the linear propagation used,
the full measurement model is evaluated on the draws, and the probabilistically
symmetric 95 % coverage interval (the 2.5 and 97.5 percentiles, JCGM 101:2008,
7.7.1) is compared with the linear one (see :mod:`molid.uncertainty.validation`).

What it checks and what it does not: the non-linearity of the model over the
input uncertainties (a division by a poorly known volume, for example). Every
input is drawn as a Gaussian (JCGM 101:2008, 6.4.7), including those the profile
describes by a rectangular half-width, so the check says nothing about inputs
whose distributions are far from normal. Each run is checked alone: the samples'
combined values are not (their Birge-ratio widening is not a propagation of the
inputs' distributions).

Each end's own Monte Carlo noise is estimated from :data:`BATCHES` batches of the
draws, as JCGM 101:2008, 7.9.4, estimates it from repeated calculations: the
standard deviation of the batches' ends over √h. A verdict the noise could change is
left undecided (see :func:`molid.uncertainty.validation.compare_intervals`).

The draws are made in blocks of runs so that memory stays bounded; the total M ×
runs is refused above :data:`MAX_DRAWS`.

References
----------
JCGM 101:2008, Evaluation of measurement data -- Supplement 1 to the GUM: Propagation of
distributions using a Monte Carlo method, 6.4.7, 7.2.2, 7.7 and 8.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from molid.methods.model import measurement_model
from molid.uncertainty.propagation import monte_carlo_draws
from molid.uncertainty.validation import COVERAGE_PROBABILITY, SUGGESTED_DRAWS, compare_intervals

__all__ = ["MAX_DRAWS", "MIN_DRAWS", "BATCHES", "SUGGESTED_DRAWS", "DrawsRefused", "MonteCarloCheck",
           "check_runs"]

#: Largest number of trials over all runs (M × runs) done in one call.
MAX_DRAWS = 20_000_000
#: Fewest trials per run: fewer leave under 25 draws beyond each end of a 95 % interval.
MIN_DRAWS = 1000
#: Batches h the draws are split into to estimate the noise of the interval's ends.
BATCHES = 10
#: Values drawn per model evaluation (bounds the memory of one block).
_BLOCK = 1 << 19


class DrawsRefused(ValueError):
    """A Monte Carlo request that is too small or too large, with what to change."""


@dataclass
class MonteCarloCheck:
    """Monte Carlo 95 % intervals of the runs beside the linear ones, arrays over all runs [kg/mol].

    Attributes
    ----------
    runs : numpy.ndarray of object
        Run ids.
    draws : int
        Trials per run, M.
    seed : int
        Seed of the random generator.
    analysed : numpy.ndarray of bool
        Runs with a result (the others have NaN and ``agrees`` False).
    low, high : numpy.ndarray
        Probabilistically symmetric 95 % coverage interval from the draws.
    noise_low, noise_high : numpy.ndarray
        Standard deviation of each end from the finite number of draws.
    linear_low, linear_high : numpy.ndarray
        y ∓ 1.960·u, the linear 95 % interval.
    tolerance : numpy.ndarray
        δ of JCGM 101:2008, 8.1 (u to one significant digit).
    decided : numpy.ndarray of bool
        False where the ends are too noisy at this M to say (more draws needed).
    agrees : numpy.ndarray of bool
        Decided, and both ends within δ of the linear ends.
    """

    runs: np.ndarray
    draws: int
    seed: int
    analysed: np.ndarray
    low: np.ndarray
    high: np.ndarray
    noise_low: np.ndarray
    noise_high: np.ndarray
    linear_low: np.ndarray
    linear_high: np.ndarray
    tolerance: np.ndarray
    decided: np.ndarray
    agrees: np.ndarray

    @property
    def flagged(self) -> np.ndarray:
        """Analysed runs whose Monte Carlo interval differs from the linear one beyond δ."""
        return self.analysed & self.decided & ~self.agrees

    @property
    def undecided(self) -> np.ndarray:
        """Analysed runs whose Monte Carlo ends are too noisy at this M for a verdict."""
        return self.analysed & ~self.decided

    def to_frame(self) -> pd.DataFrame:
        """One row per run: the two 95 % intervals, δ and the verdict [g/mol]."""
        grams = 1e3
        return pd.DataFrame({
            "run": self.runs,
            "mc_low_g_per_mol": self.low * grams,
            "mc_high_g_per_mol": self.high * grams,
            "linear_low_g_per_mol": self.linear_low * grams,
            "linear_high_g_per_mol": self.linear_high * grams,
            "tolerance_g_per_mol": self.tolerance * grams,
            "agrees_with_linear": pd.array(np.where(self.analysed & self.decided, self.agrees, None),
                                           dtype="boolean"),
            "draws": self.draws,
            "seed": self.seed,
        })


def _refuse_counts(draws: int, runs: int) -> None:
    if draws < MIN_DRAWS:
        raise DrawsRefused(
            f"Monte Carlo: {draws} draws per run are too few for a 95 % interval; give at least "
            f"{MIN_DRAWS} (JCGM 101:2008, 7.2.2, suggests {SUGGESTED_DRAWS:,})")
    if draws * runs > MAX_DRAWS:
        raise DrawsRefused(
            f"Monte Carlo: {draws:,} draws per run × {runs} analysed runs = {draws * runs:,} draws, "
            f"more than {MAX_DRAWS:,}; give at most {max(MAX_DRAWS // max(runs, 1), 1):,} draws per "
            "run for this file, or split it")


def _draw_block(values, uncertainties, static, rows, draws, rng) -> np.ndarray:
    """Model outputs of the runs ``rows``, shape (draws, len(rows)), in slices of bounded size."""
    chosen = {name: item[rows] for name, item in values.items()}
    spread = {name: np.asarray(uncertainties[name])[rows] for name in values}
    flags = {name: (np.asarray(item)[rows] if np.ndim(item) else item) for name, item in static.items()}
    step = max(1, _BLOCK // len(rows))
    parts = [monte_carlo_draws(measurement_model, chosen, spread, flags, "molar_mass",
                               min(step, draws - start), rng)
             for start in range(0, draws, step)]
    return parts[0] if len(parts) == 1 else np.concatenate(parts)


def _ends(outputs, tail) -> np.ndarray:
    """Give each column's 95 % ends and their standard deviations (from :data:`BATCHES` batches)."""
    percentiles = [tail, 100.0 - tail]
    ends = np.percentile(outputs, percentiles, axis=0)
    batches = np.stack([np.percentile(part, percentiles, axis=0)
                        for part in np.array_split(outputs, BATCHES, axis=0)])
    noise = batches.std(axis=0, ddof=1) / np.sqrt(BATCHES)
    return np.concatenate([ends, noise])


def check_runs(result, values: dict, static: dict, draws: int, seed: int = 0) -> MonteCarloCheck:
    """Draw every analysed run's inputs M times and compare the 95 % intervals with the linear ones.

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify`.
    values, static : dict
        The model's input values and flags for every run (from
        :func:`molid.pipeline.identify.model_inputs`).
    draws : int
        Trials per run, M (at least :data:`MIN_DRAWS`; M × runs at most :data:`MAX_DRAWS`).
    seed : int
        Seed of the random generator: the same seed, file and M give the same numbers.

    Returns
    -------
    MonteCarloCheck
        Intervals, tolerances and verdicts over all runs [kg/mol].

    Raises
    ------
    DrawsRefused
        When M is below :data:`MIN_DRAWS` or M × runs above :data:`MAX_DRAWS`.

    Notes
    -----
    The standard uncertainties are those of ``result.propagation``, the ones the linear
    interval was computed with, so the two intervals differ only by the method.

    References
    ----------
    JCGM 101:2008, 7 (the Monte Carlo method) and 8 (validation of the GUM uncertainty framework).
    """
    analysed = np.asarray(result.ok, dtype=bool)
    index = np.flatnonzero(analysed)
    _refuse_counts(draws, len(index))
    count = len(analysed)
    ends = np.full((4, count), np.nan)  # low, high and their noise
    if len(index):
        uncertainties = result.propagation.uncertainties
        # An input the propagation did not differentiate has no uncertainty: it is passed as is.
        static = {**static, **{name: item for name, item in values.items() if name not in uncertainties}}
        values = {name: item for name, item in values.items() if name in uncertainties}
        rng = np.random.default_rng(seed)
        tail = 100.0 * (1.0 - COVERAGE_PROBABILITY) / 2.0
        per_block = max(1, _BLOCK // draws)
        for start in range(0, len(index), per_block):
            rows = index[start:start + per_block]
            outputs = _draw_block(values, uncertainties, static, rows, draws, rng)
            ends[:, rows] = _ends(outputs, tail)
    low, high, noise_low, noise_high = ends
    compared = compare_intervals(result.molar_mass, result.u, low, high, noise_low, noise_high)
    return MonteCarloCheck(
        runs=result.table.text["run"].to_numpy(dtype=object), draws=int(draws), seed=int(seed),
        analysed=analysed, low=low, high=high, noise_low=noise_low, noise_high=noise_high,
        linear_low=compared["linear_low"], linear_high=compared["linear_high"],
        tolerance=compared["tolerance"], decided=compared["decided"] & analysed,
        agrees=compared["agrees"] & analysed,
    )
