"""Purity and conformity of every run and sample of a ranked identification.

For each run and sample the main gas is its label's library entry (the
``expected`` column), or, without a label, its leading candidate that can be the
gas; the contaminant is the run's or sample's own (a ``contaminant`` column) or
the one asked for (air by default). :func:`molid.quality.purity.contaminant_fraction`
solves the result for the contaminant's fraction; where an upper limit applies,
:func:`molid.quality.conformity.decide` states the decision under the chosen rule.
Runs of a condensed-vapour flask get none (their substance is a liquid's vapour,
not a gas that air could contaminate).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from molid.candidates.search import find_candidate
from molid.candidates.verdicts import UNFIT_VERDICTS, VERDICTS, rank_order, relative_difference, verdicts
from molid.methods.registry import needs_correction
from molid.quality.conformity import RULES, decide
from molid.quality.purity import contaminant_fraction

__all__ = ["PURITY_COLUMNS", "QualityResult", "analyse_quality"]

#: Columns of the per-run and per-sample purity tables.
PURITY_COLUMNS = ("main", "contaminant", "x", "u", "low", "high", "detection_limit", "limited_by",
                  "detected", "main_verdict", "best_pure", "limit", "rule", "outcome", "probability",
                  "reason")

#: Contaminants tried for the mixture hypotheses of a result no pure candidate explains.
HYPOTHESIS_CONTAMINANTS = ("air", "water", "carbon dioxide")
#: Candidates tried as the main gas of those hypotheses (the nearest in molar mass that can be the gas).
HYPOTHESIS_MAIN_GASES = 6


class QualityResult:
    """Purity and conformity per run (indexed by table position) and per sample (by name).

    ``hypotheses`` maps a run's position or a sample's name, for results without a label
    that no pure candidate fits, to the binary mixtures that explain them (dicts with
    ``main``, ``contaminant``, ``x``, ``low``, ``high``), fewest contaminant first.
    """

    def __init__(self, runs: pd.DataFrame, samples: pd.DataFrame, rule: str, notes: list,
                 hypotheses: dict | None = None):
        self.runs = runs
        self.samples = samples
        self.rule = rule
        self.notes = notes
        self.hypotheses = hypotheses or {}
        #: Method of limiting densities per sample (filled by the pipeline; empty when none).
        self.limiting = pd.DataFrame()


def analyse_quality(ranking, run_inputs, sample_inputs, *, contaminant, rule="guarded"):
    """Estimate the contaminant fraction of every run and sample, and decide conformity.

    Parameters
    ----------
    ranking : molid.candidates.ranking.Ranking
        The ranked candidates of an identification.
    run_inputs : dict
        Per analysed run (in ``ranking.run_index`` order): ``temperature`` [K],
        ``pressure`` (dry) [Pa], ``method`` (str), ``contaminant`` (library row or -1
        for the default), ``limit`` (upper limit of the contaminant fraction, NaN
        where none) and ``budget`` (the dominant input's name, '' where none).
    sample_inputs : dict
        The same per sample (in ``ranking.sample_names`` order).
    contaminant : int
        Library row of the default contaminant.
    rule : {"guarded", "simple"}
        The decision rule (:data:`molid.quality.conformity.RULES`).

    Returns
    -------
    QualityResult
        Tables with :data:`PURITY_COLUMNS`; rows without a result are absent.
    """
    notes = []
    runs = _block_quality(ranking, ranking.runs, ranking.run_index, ranking.labels, run_inputs,
                          contaminant, rule)
    sample_keys = np.asarray(ranking.sample_names, dtype=object)
    samples = _block_quality(ranking, ranking.samples, sample_keys, ranking.sample_labels, sample_inputs,
                             contaminant, rule)
    hypotheses = _hypotheses(ranking, ranking.runs, ranking.run_index, ranking.labels, run_inputs)
    hypotheses.update(_hypotheses(ranking, ranking.samples, sample_keys, ranking.sample_labels,
                                  sample_inputs))
    return QualityResult(runs, samples, rule, notes, hypotheses)


def _hypotheses(ranking, block, keys, labels, inputs):
    """Binary mixtures of the nearest candidates with the usual contaminants that explain a result.

    Only for results without a label that no candidate fits as a pure gas; a mixture
    explains a result when its fraction is found (x − 2u > 0), at most one half, and the
    contaminant's partial pressure is below its vapour pressure.
    """
    keys = np.asarray(keys, dtype=object)
    if len(keys) == 0:
        return {}
    _, labelled = _main_gas(ranking, block, keys, labels)
    open_rows = np.flatnonzero(~labelled & (_best_pure(ranking, block) == "")
                               & ~needs_correction(inputs["method"], "residual-vapour"))
    library = ranking.library
    contaminants = [row for row in (find_candidate(library, name) for name in HYPOTHESIS_CONTAMINANTS)
                    if row is not None]
    if not len(open_rows) or not contaminants:
        return {}
    # the candidates nearest in molar mass to the result (rank by z favours wide model terms)
    molar_mass = library["molar_mass"].to_numpy(dtype=float)
    cannot = block["condenses"][open_rows] | (block["unfit"][open_rows] > 0)
    distance = np.abs(molar_mass[None, :] - block["measured"][open_rows] / block["Z"][open_rows])
    order = np.argsort(np.where(cannot, np.inf, distance), axis=1, kind="stable")[:, :HYPOTHESIS_MAIN_GASES]
    rows = np.repeat(open_rows, order.shape[1] * len(contaminants))
    mains = np.repeat(order.ravel(), len(contaminants))
    others = np.tile(contaminants, len(open_rows) * order.shape[1])
    estimate = contaminant_fraction(
        block["measured"][rows, mains], block["u_total"][rows, mains], block["Z"][rows, mains],
        np.asarray(inputs["temperature"])[rows], np.asarray(inputs["pressure"])[rows], mains, others,
        library)
    # a contaminant above its own vapour pressure would condense (water beyond saturation)
    room = block["saturation_pressure"][rows, others] >= estimate["x"] * np.asarray(inputs["pressure"])[rows]
    keep = (mains != others) & (estimate["x"] - 2 * estimate["u"] > 0) & (estimate["x"] <= 0.5) & room
    names = library["name"].to_numpy(dtype=object)
    found = {}
    for k in np.flatnonzero(keep):
        key = keys[rows[k]]
        found.setdefault(key if isinstance(key, str) else int(key), []).append({
            "main": names[mains[k]], "contaminant": names[others[k]], "x": float(estimate["x"][k]),
            "low": float(estimate["low"][k]), "high": float(estimate["high"][k])})
    return {key: _best_per_gas(items) for key, items in found.items()}


def _best_per_gas(items):
    """Keep each main gas's smallest explaining fraction; fewest contaminant first."""
    best = {}
    for item in sorted(items, key=lambda item: item["x"]):
        best.setdefault(item["main"], item)
    return list(best.values())


def _relative(ranking, block):
    """Each candidate's relative difference, which orders the excluded ones."""
    return relative_difference(block["measured"], ranking.library["molar_mass"].to_numpy(dtype=float))


def _main_gas(ranking, block, keys, labels):
    """Library row of each result's main gas: its label's entry, else its leading possible candidate."""
    count = len(keys)
    main = np.full(count, -1)
    if count == 0:
        return main, np.zeros(count, dtype=bool)
    order = rank_order(block["z"], block["condenses"], block["unfit"], _relative(ranking, block))
    main[:] = order[:, 0]
    rows = {key: label[1] for key, label in labels.items() if label[1] is not None}
    found = pd.Series(keys, dtype=object).map(rows).to_numpy(dtype=float)
    labelled = np.isfinite(found)
    main = np.where(labelled, np.nan_to_num(found), main).astype(int)
    return main, labelled


def _best_pure(ranking, block):
    """Name of each result's leading candidate where it is consistent as a pure gas, else ''."""
    order = rank_order(block["z"], block["condenses"], block["unfit"], _relative(ranking, block))[:, 0]
    rows = np.arange(len(order))
    codes = verdicts(block["z"][rows, order], block["condenses"][rows, order], block["unfit"][rows, order])
    names = ranking.library["name"].to_numpy(dtype=object)
    return np.where(codes == VERDICTS.index("consistent"), names[order], "")


def _identity(labelled, main_verdict, best_pure, estimate, main_names, contaminant_names):
    """Whether each result can be its labelled gas, pure or contaminated, and why not.

    Identity comes first (a cylinder that holds another gas does not conform, whatever
    its purity). A label the result fits as a pure gas is the gas; a label it does not fit
    is still the gas when the contaminant explains the difference (a fraction whose
    interval reaches into 0 to 1) and no other candidate fits as a pure gas.
    """
    fits = np.isin(main_verdict, ("consistent", "marginal"))
    explains = (estimate["x"] + 2.0 * estimate["u"] >= 0) & (estimate["x"] - 2.0 * estimate["u"] <= 1) \
        & ~np.isin(main_verdict, UNFIT_VERDICTS)
    identity_ok = ~labelled | fits | ((best_pure == "") & explains)
    reason = np.where(best_pure != "", "the result agrees with " + best_pure.astype(object)
                      + " as a pure gas, not with the labelled " + main_names.astype(object),
                      "the labelled " + main_names.astype(object) + " with "
                      + contaminant_names.astype(object) + " does not explain the result")
    return identity_ok, np.where(identity_ok, "", reason)


def _block_quality(ranking, block, keys, labels, inputs, default_contaminant, rule):
    """Purity and conformity of one block (the runs, or the samples) as a DataFrame."""
    keys = np.asarray(keys, dtype=object)
    if len(keys) == 0:
        return pd.DataFrame(columns=PURITY_COLUMNS)
    main, labelled = _main_gas(ranking, block, keys, labels)
    best_pure = _best_pure(ranking, block)
    contaminant = np.where(np.asarray(inputs["contaminant"]) >= 0, inputs["contaminant"],
                           default_contaminant)
    rows = np.arange(len(keys))
    codes = verdicts(block["z"][rows, main], block["condenses"][rows, main], block["unfit"][rows, main])
    main_verdict = np.asarray(VERDICTS, dtype=object)[codes]
    applicable = (main != contaminant) & ~needs_correction(inputs["method"], "residual-vapour")
    estimate = contaminant_fraction(
        block["measured"][rows, main], block["u_total"][rows, main], block["Z"][rows, main],
        inputs["temperature"], inputs["pressure"], main, contaminant, ranking.library)
    names = ranking.library["name"].to_numpy(dtype=object)
    limited_by = np.where(estimate["model_share"] > 0.5, "model: cross second virial coefficient",
                          np.asarray(inputs["budget"], dtype=object))
    identity_ok, reason = _identity(labelled, main_verdict, best_pure, estimate, names[main],
                                    names[contaminant])
    outcome, probability = decide(estimate["x"], estimate["u"], inputs["limit"], rule, identity_ok)
    frame = pd.DataFrame({
        "main": names[main], "contaminant": names[contaminant],
        "x": estimate["x"], "u": estimate["u"], "low": estimate["low"], "high": estimate["high"],
        "detection_limit": estimate["detection_limit"], "limited_by": limited_by,
        "detected": estimate["x"] - 2.0 * estimate["u"] > 0, "main_verdict": main_verdict,
        "best_pure": best_pure,
        "limit": np.asarray(inputs["limit"], dtype=float),
        "rule": np.where(np.isfinite(inputs["limit"]), RULES[rule], ""),
        "outcome": outcome, "probability": probability, "reason": reason,
    }, index=pd.Index(keys, dtype=object))
    return frame[applicable & np.isfinite(estimate["x"])]
