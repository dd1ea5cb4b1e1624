"""Ranking: the candidates for each run and sample of an identification, in order.

:func:`rank_identification` evaluates every candidate for every analysed run
(:mod:`molid.candidates.evaluation`), combines the runs' per-candidate values
for each sample, and returns a :class:`Ranking`: the candidates in order with
their verdicts (:mod:`molid.candidates.verdicts`), which of them a run cannot
tell apart and what uncertainty would separate them, and the check of the
run's ``expected`` label.

Candidates are ranked by |z|; those that cannot be the gas (condensing, not a
liquid for a flask, dissolving for a collection over water) come last. The ``expected`` label of a
run is matched against the library and reported, but never used to rank.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from molid.candidates.dissolution import load_henry_table
from molid.candidates.evaluation import evaluate_in_blocks, residual_rows
from molid.candidates.gas_states import DEFAULT_REFERENCE_CONDITIONS, reference_state
from molid.candidates.verdicts import (
    DISSOLVES,
    SEPARATION_FACTOR,
    VERDICTS,
    rank_order,
    relative_difference,
    verdicts,
)
from molid.methods.inputs import INPUT_LABELS
from molid.methods.registry import needs_correction

__all__ = [
    "Ranking",
    "rank_identification",
]

_GRAMS_PER_KILOGRAM = 1e3


class Ranking:
    """Ranked candidates for the runs and samples of one identification."""

    def __init__(self, library, runs, samples, run_index, sample_names, run_budget, labels,
                 sample_labels, sample_budget, reference=None):
        self.library = library.reset_index(drop=True)
        self.reference = reference  # ReferenceState: densities at reference conditions, or None
        self.runs = runs
        self.samples = samples
        self.run_index = run_index  # positions of the evaluated runs in the table
        self.sample_names = sample_names
        self._run_position = {int(i): k for k, i in enumerate(run_index)}
        self._sample_position = {name: k for k, name in enumerate(sample_names)}
        self.run_budget = run_budget
        self.sample_budget = sample_budget
        self.labels = labels
        self.sample_labels = sample_labels
        self._names = self.library["name"].to_numpy(dtype=object)
        self._formulas = self.library["formula"].fillna("").to_numpy(dtype=object)
        self._hill = self.library["hill"].fillna("").to_numpy(dtype=object)
        self._molar_mass = self.library["molar_mass"].to_numpy(dtype=float)
        self._has = self.library["has_critical_data"].to_numpy(dtype=bool)
        henry = load_henry_table()
        self._henry_reasons = [henry.get(str(name).strip().lower(), (0, 0, True, "", ""))[3]
                               for name in self._names]

    # -- candidate lists ---------------------------------------------------------------
    def _candidates(self, block, k, top):
        z = block["z"][k]
        condenses, unfit = block["condenses"][k], block["unfit"][k]
        relative = relative_difference(block["measured"][k], self._molar_mass)
        order = rank_order(z, condenses, unfit, relative)
        codes = verdicts(z, condenses, unfit)
        if top is not None:
            order = order[:top]
        items = []
        for rank, j in enumerate(order, start=1):
            z_value = float(z[j]) if np.isfinite(z[j]) else None
            Z = float(block["Z"][k, j])
            item = {
                "rank": rank,
                "name": self._names[j],
                "formula": self._formulas[j] or None,
                "molar_mass": float(self._molar_mass[j] * _GRAMS_PER_KILOGRAM),
                "measured": {"value": _finite(block["measured"][k, j] * _GRAMS_PER_KILOGRAM),
                             "u": _finite(block["u_total"][k, j] * _GRAMS_PER_KILOGRAM)},
                "z": z_value,
                "relative_difference": _finite(relative[j]),
                "verdict": VERDICTS[codes[j]],
                "Z": _finite(Z),
                "model": "virial, Tsonopoulos" if self._has[j] else "ideal gas (no critical data)",
            }
            if not np.isfinite(Z):
                item["note"] = ("the virial equation has no solution at this pressure: far "
                                "outside its range for this substance")
            elif block["condenses"][k, j]:
                item["note"] = (f"its vapour pressure here is about "
                                f"{block['saturation_pressure'][k, j] / 1000:.3g} kPa, below the "
                                "gas pressure: it would condense")
            elif block["unfit"][k, j] == DISSOLVES:
                item["note"] = ("it cannot be collected over water: "
                                + (self._henry_reasons[j] or "it dissolves in water"))
            elif block["near_saturation"][k, j]:
                item["note"] = (f"close to its vapour pressure (about "
                                f"{block['saturation_pressure'][k, j] / 1000:.3g} kPa): it could "
                                "partly condense on cool surfaces, and its real-gas correction "
                                "is less certain")
            dissolved = block["dissolved"][k, j] if "dissolved" in block else np.nan
            if np.isfinite(dissolved) and dissolved >= 0.001 and "note" not in item:
                item["note"] = (f"dissolves in water: at equilibrium with an equal volume of water "
                                f"about {dissolved * 100:.2g} % of it would dissolve and its result "
                                f"read {dissolved / (1 - dissolved) * 100:.2g} % high (an upper "
                                "bound: a short contact or water saturated with the gas takes up less)")
            if self.reference is not None and codes[j] <= 1:  # consistent or marginal
                item.update(self.reference.entry(j, block["measured"][k, j], block["u_measured"][k, j]))
            items.append(item)
        return items

    def run_candidates(self, index, top=None):
        """Ranked candidate dicts for run ``index`` (table position)."""
        k = self._run_position.get(int(index))
        return [] if k is None else self._candidates(self.runs, k, top)

    def sample_candidates(self, name, top=None):
        """Ranked candidate dicts for sample ``name``."""
        k = self._sample_position.get(name)
        return [] if k is None else self._candidates(self.samples, k, top)

    # -- what the run can and cannot tell apart -----------------------------------------
    def _distinguish(self, block, k, budget):
        z = block["z"][k]
        condenses, unfit = block["condenses"][k], block["unfit"][k]
        relative = relative_difference(block["measured"][k], self._molar_mass)
        order = rank_order(z, condenses, unfit, relative)
        codes = verdicts(z, condenses, unfit)
        notes = []
        consistent = [j for j in order if codes[j] == 0]
        if not consistent:
            notes.append(
                "no candidate is consistent with this result: the gas may be a mixture or "
                "contaminated (for example with air), not in the library, or the run may hold "
                "a mistake"
            )
        if len(consistent) > 1:
            names = ", ".join(self._names[j] for j in consistent[:8])
            more = f" and {len(consistent) - 8} more" if len(consistent) > 8 else ""
            notes.append(f"cannot be told apart by this run: {names}{more}")
        first, second = order[0], order[1] if len(order) > 1 else None
        if second is None or codes[first] > 1 or codes[second] > 1:
            return notes
        if self._hill[first] and self._hill[first] == self._hill[second]:
            notes.append(
                f"{self._names[first]} and {self._names[second]} are isomers ({self._hill[first]}): "
                "no molar-mass measurement separates them; another method (for example infrared "
                "spectroscopy or gas chromatography) is needed"
            )
            return notes
        note = self._separation_note(block, k, first, second, budget)
        if note is not None:
            notes.append(note)
        return notes

    def _separation_note(self, block, k, first, second, budget):
        """Say what u(M) would separate the two leading candidates, when the run's is larger."""
        # Where the second candidate's z would sit if the first were true (its measured value
        # scaled by the ratio of the two compressibility factors).
        Z = block["Z"][k]
        gap = abs(self._molar_mass[first] * Z[second] / Z[first] - self._molar_mass[second])
        u_now = block["u_total"][k, first]
        needed = gap / SEPARATION_FACTOR
        if needed <= 0:
            return None
        dominant = ""
        if budget:
            name, share = budget
            dominant = (f"; the largest share of the uncertainty is the "
                        f"{INPUT_LABELS.get(name, name)} ({share:.0f} %)")
        relative = needed / block["measured"][k, first]
        if not u_now > needed:  # written so that a NaN u(M) gives no note
            return None
        grams = _GRAMS_PER_KILOGRAM
        return (
            f"{self._names[first]} and {self._names[second]} differ by {gap * grams:.4f} g/mol "
            f"here; separating them needs u(M) below {needed * grams:.2g} g/mol "
            f"({relative * 1e6:.0f} ppm), now {u_now * grams:.2g} g/mol{dominant}"
            + (" — beyond what gas weighing achieves" if relative < 5e-5 else "")
        )

    def run_extras(self, index):
        """Extra JSON keys of a run: ``distinguish`` notes and the ``label`` check."""
        k = self._run_position.get(int(index))
        if k is None:
            return {}
        extras = {"distinguish": self._distinguish(self.runs, k, self.run_budget.get(int(index)))}
        label = self.labels.get(int(index))
        if label is not None:
            extras["label"] = self._label(self.runs, k, label)
        return extras

    def sample_extras(self, name):
        """Extra JSON keys of a sample."""
        k = self._sample_position.get(name)
        if k is None:
            return {}
        extras = {"distinguish": self._distinguish(self.samples, k, self.sample_budget.get(name))}
        label = self.sample_labels.get(name)
        if label is not None:
            extras["label"] = self._label(self.samples, k, label)
        return extras

    def _label(self, block, k, label):
        text, j = label
        if j is None:
            return {"expected": text, "name": None, "verdict": "not-in-library",
                    "consistent": None,
                    "note": "the label matches no library entry (or several isomers); add it "
                            "with --candidate FORMULA=NAME or --library"}
        z = block["z"][k]
        condenses, unfit = block["condenses"][k], block["unfit"][k]
        order = list(rank_order(z, condenses, unfit,
                                relative_difference(block["measured"][k], self._molar_mass)))
        verdict = VERDICTS[verdicts(z[j:j + 1], condenses[j:j + 1], unfit[j:j + 1])[0]]
        return {
            "expected": text,
            "name": self._names[j],
            "rank": order.index(j) + 1,
            "z": float(z[j]) if np.isfinite(z[j]) else None,
            "verdict": verdict,
            "consistent": verdict == "consistent",
        }


class _LazyBudget:
    """Run → (largest budget input, its share); built on demand, not for every run."""

    def __init__(self, index, best, share, names):
        self._position = None
        self._index, self._best, self._share, self._names = index, best, share, names

    def get(self, run):
        if self._position is None:
            self._position = {int(i): k for k, i in enumerate(self._index)}
        k = self._position.get(int(run))
        if k is None or self._share[k] < 0:
            return None
        return self._names[self._best[k]], float(self._share[k])


def _finite(value):
    """Return a float, or None where it is not finite (JSON has no NaN)."""
    value = float(value)
    return value if np.isfinite(value) else None


class _GroupSums:
    """The (samples × runs) sum matrix of the runs' samples, applied with ``@``.

    ``sums @ values`` adds the rows of ``values`` (one per run) by sample, each
    sample's runs in file order starting from zero: the order a compressed-row
    sparse product sums them in, so the sums are the same to the last bit, without
    the import of scipy.sparse.
    """

    def __init__(self, codes, groups):
        self.codes = np.asarray(codes, dtype=np.intp)
        self.groups = groups

    def __matmul__(self, values):
        values = np.asarray(values, dtype=float)
        sums = np.zeros((self.groups, *values.shape[1:]))
        np.add.at(sums, self.codes, values)
        return sums


def _group_matrix(codes, groups, size):
    """Return the sum matrix of ``size`` runs (``codes``: each run's sample) into ``groups`` samples."""
    if len(codes) != size:  # a programming error: one code per run
        raise ValueError(f"{len(codes)} sample codes for {size} runs")
    return _GroupSums(codes, groups)


def _evaluate_runs(result, index, library):
    """Evaluate every candidate for the analysed runs (see :mod:`molid.candidates.evaluation`)."""
    prop = result.propagation
    sensitivities = {name: prop.sensitivities[name][index] for name in prop.sensitivities}
    uncertainties = {name: prop.uncertainties[name][index] for name in prop.uncertainties}
    temperature = result.table.values["temperature"][index]
    pressure = prop.extras["dry_pressure"][index]
    residual = residual_rows(result.residual, index) if result.residual else None
    over_water = needs_correction(result.table.text["method"].to_numpy(dtype=object)[index], "solubility")
    solubility = {"rows": over_water, "gas_volume": result.table.values["volume"][index]} \
        if over_water.any() else None
    return evaluate_in_blocks(prop.value[index], sensitivities, uncertainties, temperature,
                              pressure, library, residual, solubility)


def _sample_groups(sample_ids, names):
    """Which runs belong to a listed sample, and the (samples × those runs) sum matrix."""
    position = pd.Series(np.arange(len(names)), index=pd.Index(names, dtype=object))
    mapped = pd.Series(sample_ids, dtype=object).map(position)
    in_sample = mapped.notna().to_numpy()
    codes = mapped[in_sample].to_numpy(dtype=int)
    return in_sample, _group_matrix(codes, len(names), int(in_sample.sum()))


def _independent_uncertainty(u_run, shared, value):
    """Each run's uncertainty without the inputs its sample's runs share, kept above zero."""
    shared_square = np.zeros_like(u_run)
    for part in shared.values():
        shared_square += part**2
    independent = np.sqrt(np.maximum(u_run**2 - shared_square, 0.0))
    # A floor, so that a run whose whole uncertainty is shared still gets a finite weight.
    return np.maximum(independent, 1e-9 * np.abs(value) + 1e-300)


def _candidate_birge(matrix, values, mean, u_independent):
    """Each sample's Birge ratio per candidate, from its runs read as that candidate, at least 1.

    The runs are compared as each candidate reads them (its own Z at each run's pressure), so
    that a series of runs at different pressures scatters only as its readings do; where the
    ratio exceeds 1 the independent part is widened by it (as for the ideal-gas combination,
    see :mod:`molid.uncertainty.replicates`).
    """
    counts = matrix @ np.ones(values.shape[0])
    per_run_mean = mean[matrix.codes]
    with np.errstate(all="ignore"):
        chi_square = matrix @ (((values - per_run_mean) / u_independent) ** 2)
        birge = np.sqrt(chi_square / (counts - 1)[:, None])
    return np.where(np.isfinite(birge) & (birge > 1.0), birge, 1.0)


def _combine_samples(result, index, runs, library, sample_ids, names):
    """Per-candidate values of each sample, from its runs' per-candidate values.

    The runs are combined with the weights of the ideal-gas combination; shared
    inputs and the candidate's model term do not average out, and a sample whose
    runs scatter more than their uncertainties allow keeps its widened uncertainty.
    """
    prop = result.propagation
    in_sample, matrix = _sample_groups(sample_ids, names)
    shared = {name: part[index][in_sample] for name, part in result.shared.items()}
    independent = _independent_uncertainty(prop.standard_uncertainty[index][in_sample], shared,
                                           prop.value[index][in_sample])
    weight = 1.0 / independent**2
    total_weight = matrix @ weight
    Z = runs["Z"][in_sample]

    def mean(values):
        return (matrix @ (weight[:, None] * values)) / total_weight[:, None]

    measured = mean(runs["measured"][in_sample])
    # the residual-vapour correction's input part is read afresh in each run
    u_ind_run = np.sqrt((Z * independent[:, None]) ** 2 + runs["u_extra"][in_sample] ** 2)
    widen = _candidate_birge(matrix, runs["measured"][in_sample], measured, u_ind_run)
    u_independent = np.sqrt(matrix @ ((weight[:, None] * u_ind_run) ** 2)) / total_weight[:, None]
    u_model = mean(runs["u_model"][in_sample])
    shared_total = np.zeros_like(measured)
    for part in shared.values():
        shared_total += mean(Z * part[:, None]) ** 2
    shared_total += u_model**2
    u_measured = np.sqrt((u_independent * widen) ** 2 + shared_total)
    u_candidate = library["u_molar_mass"].to_numpy(dtype=float)
    u_total = np.sqrt(u_measured**2 + u_candidate**2)
    z = (measured - library["molar_mass"].to_numpy(dtype=float)) / u_total
    # A sample condenses for a candidate if any of its runs does.
    condenses = (matrix @ runs["condenses"][in_sample].astype(float)) > 0
    # A method's own verdict holds for the sample if any run has it (the larger code if two).
    unfit = np.zeros(condenses.shape, dtype=np.int8)
    for code in np.unique(runs["unfit"][in_sample]):
        if code > 0:
            unfit = np.where((matrix @ (runs["unfit"][in_sample] == code).astype(float)) > 0,
                             np.int8(code), unfit)
    near = (matrix @ runs["near_saturation"][in_sample].astype(float)) > 0
    saturation = mean(runs["saturation_pressure"][in_sample])
    return {
        "Z": mean(Z), "measured": measured, "u_measured": u_measured, "u_model": u_model,
        "u_total": u_total, "z": z, "saturation_pressure": saturation, "condenses": condenses,
        "unfit": unfit, "near_saturation": near,
        "dissolved": mean(runs["dissolved"][in_sample].astype(float)).astype(np.float32),
    }


def _budget_shares(result):
    """Give the budget's input names and their shares [%], shape (inputs, rows); None without inputs."""
    input_names = list(result.budget)
    shares = np.vstack([result.budget[name] for name in input_names]) if input_names else None
    return input_names, shares


def _run_budget(index, input_names, shares):
    """Each analysed run's largest budget input and its share, looked up on demand."""
    if shares is None or not len(index):
        return {}
    filled = np.where(np.isfinite(shares[:, index]), shares[:, index], -1.0)
    best = filled.argmax(axis=0)
    best_share = filled[best, np.arange(len(index))]
    return _LazyBudget(index, best, best_share, input_names)


def _sample_budget(index, input_names, shares, sample_ids, names):
    """Each sample's largest budget input and its share, averaged over the sample's runs."""
    sample_budget = {}
    if not names or shares is None:
        return sample_budget
    grouped = pd.DataFrame(shares[:, index].T, columns=input_names)
    grouped["sample"] = sample_ids
    means = grouped.groupby("sample", sort=False).mean()
    for name in names:
        if name in means.index:
            row = means.loc[name].to_numpy(dtype=float)
            if np.isfinite(row).any():
                j = int(np.nanargmax(row))
                sample_budget[name] = (input_names[j], float(row[j]))
    return sample_budget


def _labels(table, index, library, sample_ids, names):
    """Match the ``expected`` label of each run and sample with the library row it names.

    A sample gets a label only when all its labelled runs agree on one.
    """
    from molid.candidates.search import find_candidate

    expected = pd.Series(table.text["expected"].to_numpy(dtype=object)[index], dtype=object)
    matches = {text: find_candidate(library, text) for text in expected.dropna().unique()}
    labels = {int(i): (text, matches[text])
              for i, text in zip(index, expected, strict=True) if text is not None}
    sample_labels = {}
    if names:
        label_frame = pd.DataFrame({"sample": sample_ids, "expected": expected})
        label_sets = label_frame.dropna().groupby("sample")["expected"].unique()
        for name, texts in label_sets.items():
            if len(texts) == 1:
                sample_labels[name] = (texts[0], matches[texts[0]])
    return labels, sample_labels


def rank_identification(result, library=None):
    """Evaluate and rank the candidates for every run and sample of an identification.

    Fills ``result.ranking`` in place and returns it.
    """
    from molid.candidates.library import load_library

    if library is None:
        library = load_library()
    library = library.reset_index(drop=True)
    index = np.flatnonzero(result.ok)
    runs = _evaluate_runs(result, index, library)
    sample_ids = result.table.text["sample"].to_numpy(dtype=object)[index]
    names = [name for name in result.samples["sample"]] if len(result.samples) else []
    samples = {key: np.zeros((0, len(library))) for key in runs}
    if names:
        samples = _combine_samples(result, index, runs, library, sample_ids, names)
    input_names, shares = _budget_shares(result)
    run_budget = _run_budget(index, input_names, shares)
    sample_budget = _sample_budget(index, input_names, shares, sample_ids, names)
    labels, sample_labels = _labels(result.table, index, library, sample_ids, names)
    reference = reference_state(library, getattr(result, "reference_conditions", None)
                                or DEFAULT_REFERENCE_CONDITIONS)
    result.ranking = Ranking(library, runs, samples, index, names, run_budget, labels,
                             sample_labels, sample_budget, reference)
    return result.ranking
