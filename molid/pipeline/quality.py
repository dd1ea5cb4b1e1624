"""The QA step of the pipeline: gather each run's and sample's conditions and specification.

Reads the specification columns of the run file and the ``--spec`` file
(:mod:`molid.io.specifications`), takes the conditions of every analysed run and
the means of every sample, and hands them to :func:`molid.quality.analysis.analyse_quality`.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from molid.candidates.evaluation import candidate_constants
from molid.candidates.search import find_candidate
from molid.io.problems import InputError
from molid.io.specifications import load_specifications, specification_columns
from molid.methods.inputs import INPUT_LABELS
from molid.physics.virial import second_virial
from molid.quality.analysis import analyse_quality
from molid.quality.conformity import RULES
from molid.quality.limiting_density import compare_B, fit_limiting_density, series_samples

__all__ = ["DEFAULT_CONTAMINANT", "assess_quality"]

#: The contaminant assumed when neither the file nor the options name one.
DEFAULT_CONTAMINANT = "air"


def assess_quality(result, *, contaminant=DEFAULT_CONTAMINANT, specifications=None, rule="guarded"):
    """Estimate purity and decide conformity for a ranked identification; store and return it.

    Parameters
    ----------
    result : molid.pipeline.identify.Identification
        A ranked identification (``result.ranking`` set).
    contaminant : str
        The default contaminant: a library name, formula or CAS number.
    specifications : path or dict, optional
        A specification file (:func:`molid.io.specifications.load_specifications`) or
        its loaded form.
    rule : {"guarded", "simple"}
        The decision rule.

    Returns
    -------
    molid.quality.analysis.QualityResult
        Also stored as ``result.quality``; row warnings (an unknown contaminant in a
        cell, a limit outside 0-100 %) are added to ``result.warnings``.

    Raises
    ------
    InputError
        An unknown default contaminant or decision rule, or a bad specification file.
    """
    ranking = result.ranking
    library = ranking.library
    default = find_candidate(library, contaminant)
    if default is None:
        raise InputError(f"contaminant '{contaminant}' is no library gas; give a name, formula or "
                         "CAS number that `molid library` lists (air, nitrogen, oxygen, water, "
                         "carbon dioxide, ...)")
    if rule not in RULES:
        raise InputError(f"decision rule '{rule}' is not known; accepted: {', '.join(RULES)}")
    if specifications is not None and not isinstance(specifications, dict):
        specifications = load_specifications(specifications, library)
    columns = specification_columns(result.table, library)
    for index, messages in enumerate(columns["warnings"]):
        if messages:
            result.warnings[index] = result.warnings[index] + messages
    run_inputs = _run_inputs(result, columns, specifications or {})
    sample_inputs = _sample_inputs(result, run_inputs, specifications or {})
    result.quality = analyse_quality(ranking, run_inputs, sample_inputs, contaminant=default, rule=rule)
    result.quality.limiting = limiting_densities(result)
    return result.quality


def limiting_densities(result) -> pd.DataFrame:
    """Fit the method of limiting densities to every sample whose runs span pressures by a factor 2.

    Returns
    -------
    pandas.DataFrame
        :data:`molid.quality.limiting_density.COLUMNS` by sample, plus ``candidates``:
        for the sample's consistent and marginal candidates, their B at the fit's
        temperature with its model uncertainty and the z of the measured B against it
        (list of dicts); empty when no sample qualifies.
    """
    table = result.table
    if not len(result.samples):
        return pd.DataFrame()
    sample_ids = table.text["sample"].to_numpy(dtype=object)
    pressure = result.propagation.extras["dry_pressure"]
    series = series_samples(sample_ids, pressure, result.ok)
    if not series.any():
        return pd.DataFrame()
    u_run = result.u
    shared = {name: part for name, part in result.shared.items()}
    shared_square = sum(np.nan_to_num(part) ** 2 for part in shared.values()) if shared else 0.0
    floor = (1e-9 * result.molar_mass) ** 2  # a run whose whole u is shared keeps a finite weight
    independent = np.sqrt(np.maximum(np.nan_to_num(u_run) ** 2 - shared_square, floor))
    fits = fit_limiting_density(sample_ids, result.molar_mass, independent, pressure,
                                table.values["temperature"], u_shared=shared or None, ok=result.ok)
    fits = fits[fits.index.isin(set(sample_ids[series]))].copy()
    members = pd.Series(pressure[series], index=pd.Index(sample_ids[series], dtype=object))
    fits["pressures"] = [members.loc[[name]].tolist() for name in fits.index]
    _explain_series_scatter(result, fits)
    fits["candidates"] = [_candidate_B(result.ranking, name, row) for name, row in fits.iterrows()]
    return fits


def _explain_series_scatter(result, fits):
    """Say why a pressure series' ideal-gas values scatter, instead of blaming its runs.

    At different pressures a real gas's ideal-gas values differ by its Z, so the
    ideal-gas combination of a series scatters whatever the runs' quality; the
    candidates' values (each at its own Z per run) and the limiting density do not.
    """
    for name, row in fits.iterrows():
        if not row["fitted"]:
            continue
        kept = [text for text in result.sample_warnings.get(name, [])
                if "scatter more than their stated uncertainties" not in text
                and not text.startswith("the runs disagree strongly")]
        low, high = min(row["pressures"]) / 1e3, max(row["pressures"]) / 1e3
        kept.append(f"the runs span {low:.3g} to {high:.3g} kPa: "
                    "their ideal-gas values differ by the gas's non-ideality, so the ideal-gas combination "
                    "scatters; read each candidate's value (its own Z in every run) or the limiting density, "
                    f"whose line fits the runs (Birge ratio {row['birge_ratio']:.2f})")
        result.sample_warnings[name] = kept


def _candidate_B(ranking, name, row):
    """Give the sample's consistent and marginal candidates' own B at the fit's T, and the measured B's z."""
    if ranking is None or not row["fitted"]:
        return []
    items = [item for item in ranking.sample_candidates(name)
             if item["verdict"] in ("consistent", "marginal")]
    if not items:
        return []
    library = ranking.library
    position = {value: k for k, value in enumerate(library["name"])}
    rows = np.array([position[item["name"]] for item in items])
    constants = candidate_constants(library)
    T = np.array([[row["temperature"]]])
    B = second_virial(T, constants["critical_temperature"][rows], constants["critical_pressure"][rows],
                      constants["acentric_factor"][rows], constants["dipole_moment"][rows],
                      constants["classes"][rows], constants["molar_mass"][rows], constants["hill"][rows])[0]
    B = np.where(constants["has"][rows], B, np.nan)
    u_B = np.sqrt((constants["relative_B"][rows] * B) ** 2 + constants["absolute_B"][rows] ** 2)
    z = compare_B(row["B"], row["u_B"], B, u_B)
    return [{"name": item["name"], "B": float(b), "u_B": float(u), "z": float(value)}
            for item, b, u, value in zip(items, B, u_B, z, strict=True) if np.isfinite(b)]


def _by_label(labels, keys, specifications, limit, contaminant):
    """Fill a blank limit and contaminant from the specification of each result's label."""
    if not specifications:
        return
    position = {key: k for k, key in enumerate(keys)}
    for key, (_, row) in labels.items():
        k = position.get(key)
        if k is None or row not in specifications or np.isfinite(limit[k]):
            continue
        limit[k], file_contaminant = specifications[row]
        if contaminant[k] < 0:
            contaminant[k] = file_contaminant


def _run_inputs(result, columns, specifications):
    """Conditions, contaminant, limit and dominant input of every analysed run."""
    ranking = result.ranking
    index = ranking.run_index
    limit = columns["limit"][index].copy()
    contaminant = columns["contaminant"][index].copy()
    _by_label(ranking.labels, [int(i) for i in index], specifications, limit, contaminant)
    budget = []
    for i in index:
        found = ranking.run_budget.get(int(i))
        budget.append("" if found is None else INPUT_LABELS.get(found[0], found[0]))
    return {
        "temperature": result.table.values["temperature"][index],
        "pressure": result.propagation.extras["dry_pressure"][index],
        "method": result.table.text["method"].to_numpy(dtype=object)[index],
        "contaminant": contaminant, "limit": limit, "budget": np.asarray(budget, dtype=object),
    }


def _sample_inputs(result, run_inputs, specifications):
    """Each sample's mean conditions, its runs' contaminant and limit, its dominant input."""
    ranking = result.ranking
    names = list(ranking.sample_names)
    empty = {"temperature": np.zeros(0), "pressure": np.zeros(0), "method": np.zeros(0, dtype=object),
             "contaminant": np.zeros(0, dtype=int), "limit": np.zeros(0), "budget": np.zeros(0, dtype=object)}
    if not names:
        return empty
    frame = pd.DataFrame({key: run_inputs[key] for key in ("temperature", "pressure", "method", "limit")})
    frame["contaminant"] = np.where(run_inputs["contaminant"] >= 0, run_inputs["contaminant"], np.nan)
    frame["sample"] = result.table.text["sample"].to_numpy(dtype=object)[ranking.run_index]
    grouped = frame.dropna(subset=["sample"]).groupby("sample", sort=False)
    means = grouped[["temperature", "pressure"]].mean().reindex(names)
    firsts = grouped[["method", "limit", "contaminant"]].first().reindex(names)
    limit = firsts["limit"].to_numpy(dtype=float)
    contaminant = firsts["contaminant"].fillna(-1).to_numpy(dtype=int)
    _by_label(ranking.sample_labels, names, specifications, limit, contaminant)
    budget = [ranking.sample_budget.get(name) for name in names]
    return {
        "temperature": means["temperature"].to_numpy(dtype=float),
        "pressure": means["pressure"].to_numpy(dtype=float),
        "method": firsts["method"].to_numpy(dtype=object), "contaminant": contaminant, "limit": limit,
        "budget": np.asarray(["" if item is None else INPUT_LABELS.get(item[0], item[0]) for item in budget],
                             dtype=object),
    }
