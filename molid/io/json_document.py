"""The JSON document of an identification (``molid identify --json``).

Numbers leave the library here, converted from SI to g/mol. The JSON keys are a
contract other programs rely on; see the README.
"""

from __future__ import annotations

import json
import math

import numpy as np

from molid import __version__
from molid.candidates.hazards import hazard_summary, pressure_unit_texts
from molid.io.quality_output import conformity_block, hypotheses_block, limiting_block, purity_block
from molid.io.reference_output import run_density, sample_density
from molid.methods.registry import headline_models
from molid.uncertainty.propagation import COVERAGE_FACTOR

__all__ = ["molar_mass_block", "monte_carlo_block", "to_document", "to_json"]

_G = 1e3  # kg/mol → g/mol


def _float(value):
    """Return a JSON-safe float (None for NaN/inf)."""
    if value is None:
        return None
    value = float(value)
    return value if math.isfinite(value) else None


def molar_mass_block(value, u, model="ideal gas"):
    """Build the JSON ``molar_mass`` object from a value and its u [kg/mol]."""
    if value is None or not np.isfinite(value):
        return None
    expanded = COVERAGE_FACTOR * u
    return {
        "value": _float(value * _G),
        "u": _float(u * _G),
        "U": _float(expanded * _G),
        "k": int(COVERAGE_FACTOR),
        "low": _float((value - expanded) * _G),
        "high": _float((value + expanded) * _G),
        "unit": "g/mol",
        "model": model,
    }


def _budget_list(result, index):
    rows = []
    for name, shares in result.budget.items():
        share = shares[index]
        if result.propagation.uncertainties[name][index] > 0 and np.isfinite(share):
            contribution = result.propagation.contributions[name][index]
            rows.append({
                "input": name,
                "percent": _float(share),
                "u_contribution": _float(abs(contribution) * _G),
            })
    rows.sort(key=lambda row: -row["percent"])
    return rows


def _safety_context(result) -> dict:
    """Give what every ``hazards`` key needs: the library's GHS classes, pressure units, methods."""
    hazards = {}
    if result.ranking is not None:
        library = result.ranking.library
        hazards = {name: list(classes) for name, classes in
                   zip(library["name"], library["ghs_hazards"], strict=True)}
    text = result.table.text
    sample_methods: dict = {}
    for sample, method in zip(text["sample"], text["method"], strict=True):
        sample_methods.setdefault(sample, {})[method] = None
    return {"library_hazards": hazards, "units": pressure_unit_texts(result.table.units),
            "sample_methods": sample_methods}


def _hazards(context, candidates, fetch_all, top, extras, methods, analysed) -> dict:
    """Build a ``hazards`` key from every candidate that is not excluded, not only the top ones.

    Candidates are ranked by |z|, so the shown list holds every consistent and marginal one
    unless it was cut at ``top`` while still in them; then ``fetch_all()`` gives the rest.
    """
    if top is not None and len(candidates) >= top and candidates and \
            candidates[-1]["verdict"] in ("consistent", "marginal"):
        candidates = fetch_all()
    return hazard_summary(candidates, context["library_hazards"], label=extras.get("label"),
                          methods=[m for m in methods if m], units=context["units"],
                          analysed=analysed)


def _run_entry(result, index, top, context) -> dict:
    """Build one run's entry of ``results``: its cells, M ± U, budget and candidates."""
    table = result.table
    ranking = result.ranking
    text = table.text
    error = "; ".join(result.errors[index]) or None
    entry = {
        "run": text["run"].iat[index],
        "row": int(table.row_numbers[index]),
        "sample": text["sample"].iat[index],
        "method": text["method"].iat[index],
        "error": error,
        "warnings": list(result.warnings[index]),
        "molar_mass": None if error else molar_mass_block(
            result.molar_mass[index], result.u[index], headline_models([text["method"].iat[index]])[0]),
        "budget": [] if error else _budget_list(result, index),
        "candidates": [],
    }
    extras = {}
    if ranking is not None and not error:
        entry["candidates"] = ranking.run_candidates(index, top)
        extras = ranking.run_extras(index)
        entry.update(extras)
    if not error:
        propagated = result.propagation.extras
        entry["gas_mass_g"] = _float(propagated["gas_mass"][index] * 1e3)
        entry["air_density_kg_m3"] = _float(propagated["air_density"][index])
        entry["density"] = run_density(result, index)
        _add_quality(entry, getattr(result, "quality", None), index, "runs")
    entry["hazards"] = _hazards(context, entry["candidates"],
                                lambda: ranking.run_candidates(index), top, extras,
                                [entry["method"]], not error)
    return entry


def _add_quality(entry, quality, key, level):
    """Add the ``purity`` and ``conformity`` keys where the result has them."""
    hypotheses = hypotheses_block(quality, key)
    if hypotheses:
        entry["mixture_hypotheses"] = hypotheses
    purity = purity_block(quality, key, level)
    if purity is not None:
        entry["purity"] = purity
        conformity = conformity_block(quality, key, level)
        if conformity is not None:
            entry["conformity"] = conformity


def _sample_entries(result, top, context) -> list:
    """Build the ``samples`` list: each sample's combined M ± U, replicate statistics, candidates."""
    ranking = result.ranking
    samples = []
    frame = result.samples.set_index("sample") if len(result.samples) else None
    for name, members in result.sample_runs.items():
        entry = {"sample": name, "runs": list(members), "molar_mass": None,
                 "warnings": list(result.sample_warnings.get(name, [])), "candidates": []}
        if frame is not None and name in frame.index:
            row = frame.loc[name]
            models = set(headline_models(list(context["sample_methods"].get(name, {}))))
            entry["molar_mass"] = molar_mass_block(row["value"], row["u"],
                                                   models.pop() if len(models) == 1 else "ideal gas")
            entry["replicates"] = {
                "n": int(row["n"]),
                "chi_square": _float(row["chi_square"]),
                "birge_ratio": _float(row["birge_ratio"]),
                "p_value": _float(row["p_value"]),
                "widened": bool(row["widened"]),
                "u_independent": _float(row["u_independent"] * _G),
                "u_shared": _float(row["u_shared"] * _G),
            }
            entry["density"] = sample_density(result, name)
            if ranking is not None:
                entry["candidates"] = ranking.sample_candidates(name, top)
                entry.update(ranking.sample_extras(name))
                _add_quality(entry, getattr(result, "quality", None), name, "samples")
                limiting = limiting_block(getattr(result, "quality", None), name)
                if limiting is not None:
                    entry["limiting_density"] = limiting
        entry["hazards"] = _hazards(
            context, entry["candidates"], lambda name=name: ranking.sample_candidates(name), top,
            entry, list(context["sample_methods"].get(name, {})), entry["molar_mass"] is not None)
        samples.append(entry)
    return samples


def monte_carlo_block(check, index):
    """Build a run's ``monte_carlo`` object from a Monte Carlo check, None where the run has no result.

    Keys: ``N`` (trials), ``seed``, ``low`` and ``high`` (the probabilistically
    symmetric 95 % interval, g/mol) and ``agrees_with_linear`` (both ends within the
    tolerance δ of JCGM 101:2008, 8.1, of the linear 95 % ends; null where the ends
    are too noisy at this N to tell).
    """
    if not check.analysed[index]:
        return None
    return {"N": int(check.draws), "seed": int(check.seed), "low": _float(check.low[index] * _G),
            "high": _float(check.high[index] * _G),
            "agrees_with_linear": bool(check.agrees[index]) if check.decided[index] else None}


def to_document(result, top: int | None = None, monte_carlo=None) -> dict:
    """Build the JSON document of an identification, as Python objects.

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify`.
    top : int, optional
        Limit each candidate list to this many (all candidates when None).
    monte_carlo : MonteCarloCheck, optional
        From :func:`molid.pipeline.monte_carlo.check_runs`: adds a ``monte_carlo`` key
        to each run (see :func:`monte_carlo_block`).

    Returns
    -------
    dict
        ``{"molid": version, "notes": [...], "results": [...], "samples": [...]}``.
    """
    context = _safety_context(result)
    runs = [_run_entry(result, index, top, context) for index in range(len(result.table))]
    if monte_carlo is not None:
        for index, entry in enumerate(runs):
            entry["monte_carlo"] = monte_carlo_block(monte_carlo, index)
    samples = _sample_entries(result, top, context)
    return {"molid": __version__, "notes": list(result.notes), "results": runs, "samples": samples}


def to_json(result, top: int | None = None, monte_carlo=None) -> str:
    """Return the JSON document as text (deterministic: same input, same bytes)."""
    document = to_document(result, top, monte_carlo)
    return json.dumps(document, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
