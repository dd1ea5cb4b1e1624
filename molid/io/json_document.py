"""The JSON document of an identification (``molid identify --json``).

Numbers leave the library here, converted from SI to g/mol. The JSON keys are a
contract other programs rely on; see the README.

The document is written one run at a time (:func:`write_json`), so the text of
the whole document is never held in memory, and every per-run column is looked
up once for all runs: time and memory grow linearly with the number of runs.
"""

from __future__ import annotations

import io
import json
import math

import numpy as np

from molid import __version__
from molid.candidates.hazards import hazard_summary, pressure_unit_texts
from molid.io.quality_output import conformity_block, hypotheses_block, limiting_block, purity_block
from molid.io.reference_output import run_density, sample_density
from molid.methods.registry import headline_models
from molid.uncertainty.propagation import COVERAGE_FACTOR

__all__ = ["DocumentWriter", "ITEM_SEPARATOR", "molar_mass_block", "monte_carlo_block", "render_item",
           "run_entries", "sample_entries", "to_document", "to_json", "write_json"]

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


class _RunColumns:
    """Every per-run column the run entries need, converted once for all runs.

    Looking a column up per run (a dict of arrays rebuilt on each access, a pandas
    cell) made the document quadratic in the number of runs; here each is a list.
    """

    def __init__(self, result):
        table = result.table
        text = table.text
        self.run = text["run"].tolist()
        self.sample = text["sample"].tolist()
        self.method = text["method"].tolist()
        self.row = [int(row) for row in table.row_numbers]
        self.model = headline_models(text["method"]).tolist()
        propagation = result.propagation
        contributions = propagation.contributions
        # Only the inputs some run has an uncertainty for can enter a budget.
        self.budget = [(name, np.asarray(result.budget[name]), np.asarray(contributions[name]),
                        np.asarray(propagation.uncertainties[name]) > 0)
                       for name in result.budget if np.any(propagation.uncertainties[name] > 0)]
        extras = propagation.extras
        self.gas_mass = extras["gas_mass"]
        self.air_density = extras["air_density"]


def _budget_list(columns, index):
    rows = []
    for name, shares, contributions, has_u in columns.budget:
        share = shares[index]
        if has_u[index] and np.isfinite(share):
            rows.append({
                "input": name,
                "percent": _float(share),
                "u_contribution": _float(abs(contributions[index]) * _G),
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


def _run_entry(result, index, top, context, columns) -> dict:
    """Build one run's entry of ``results``: its cells, M ± U, budget and candidates."""
    ranking = result.ranking
    error = "; ".join(result.errors[index]) or None
    entry = {
        "run": columns.run[index],
        "row": columns.row[index],
        "sample": columns.sample[index],
        "method": columns.method[index],
        "error": error,
        "warnings": list(result.warnings[index]),
        "molar_mass": None if error else molar_mass_block(
            result.molar_mass[index], result.u[index], columns.model[index]),
        "budget": [] if error else _budget_list(columns, index),
        "candidates": [],
    }
    extras = {}
    if ranking is not None and not error:
        entry["candidates"] = ranking.run_candidates(index, top)
        extras = ranking.run_extras(index)
        entry.update(extras)
    if not error:
        entry["gas_mass_g"] = _float(columns.gas_mass[index] * 1e3)
        entry["air_density_kg_m3"] = _float(columns.air_density[index])
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


def _sample_entry(result, name, members, top, context, frame) -> dict:
    """Build one sample's entry: its combined M ± U, replicate statistics and candidates."""
    ranking = result.ranking
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
        context, entry["candidates"], lambda: ranking.sample_candidates(name), top,
        entry, list(context["sample_methods"].get(name, {})), entry["molar_mass"] is not None)
    return entry


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


def run_entries(result, top: int | None = None, monte_carlo=None):
    """Yield the entries of ``results``, one run at a time, in the file's order.

    Parameters and entries as in :func:`to_document`.
    """
    context = _safety_context(result)
    columns = _RunColumns(result)
    for index in range(len(result.table)):
        entry = _run_entry(result, index, top, context, columns)
        if monte_carlo is not None:
            entry["monte_carlo"] = monte_carlo_block(monte_carlo, index)
        yield entry


def sample_entries(result, top: int | None = None):
    """Yield the entries of ``samples``, one sample at a time, in order of first appearance."""
    context = _safety_context(result)
    frame = result.samples.set_index("sample") if len(result.samples) else None
    for name, members in result.sample_runs.items():
        yield _sample_entry(result, name, members, top, context, frame)


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
        ``{"molid": version, "results": [...], "samples": [...], "notes": [...]}``: the notes
        last, as a file read in chunks knows them only at its end.
    """
    return {"molid": __version__, "results": list(run_entries(result, top, monte_carlo)),
            "samples": list(sample_entries(result, top)), "notes": list(result.notes)}


def _dumps(value) -> str:
    return json.dumps(value, indent=2, ensure_ascii=False, allow_nan=False)


#: The keys of most candidates (in order), which :func:`_candidates_text` writes directly.
_CANDIDATE_KEYS = ("rank", "name", "formula", "molar_mass", "measured", "z", "relative_difference",
                   "verdict", "Z", "model")
_PLACEHOLDER = "molid candidates"
_encode_text = json.encoder.encode_basestring


_NUMBER_TYPES = frozenset((float, int, type(None)))


def _numbers(*values) -> list:
    """Numbers or nulls as ``json.dumps`` writes them (``repr`` of a float is its JSON).

    One ``repr`` of the tuple is much faster than a call per number; TypeError for a
    value of another type (a bool, a numpy scalar), ValueError for NaN or infinity.
    """
    for value in values:
        if type(value) not in _NUMBER_TYPES:
            raise TypeError(type(value).__name__)
    text = repr(values)[1:-1]
    if "n" in text:  # None, nan or inf
        text = text.replace("None", "null")
        if "nan" in text or "inf" in text:
            raise ValueError("Out of range float values are not JSON compliant")
    return text.rstrip(",").split(", ")


def _text_or_null(value) -> str:
    if value is None:
        return "null"
    if type(value) is not str:
        raise TypeError(type(value).__name__)
    return _encode_text(value)


def _candidates_text(candidates):
    """Write a list of candidates as ``json.dumps(indent=2)`` writes it as a top-level key's value.

    The candidate lists are most of a document's bytes (about a hundred per run);
    formatting the usual keys directly is several times faster than the general
    encoder, which still writes any candidate of another shape (one with densities at
    reference conditions). None when a value is not of a known type (the caller then
    dumps the entry).
    """
    parts = []
    try:
        for item in candidates:
            measured = item.get("measured")
            keys = tuple(item)
            note = keys[-1:] == ("note",)
            if keys[:len(keys) - note] != _CANDIDATE_KEYS or type(measured) is not dict \
                    or tuple(measured) != ("value", "u") or type(item["rank"]) is not int:
                parts.append("    " + _dumps(item).replace("\n", "\n    "))
                continue
            rank, molar_mass, value, u, z, relative, compressibility = _numbers(
                item["rank"], item["molar_mass"], measured["value"], measured["u"], item["z"],
                item["relative_difference"], item["Z"])
            parts.append(
                f'    {{\n      "rank": {rank},\n      "name": {_text_or_null(item["name"])},'
                f'\n      "formula": {_text_or_null(item["formula"])},\n      "molar_mass": {molar_mass},'
                f'\n      "measured": {{\n        "value": {value},\n        "u": {u}\n      }},'
                f'\n      "z": {z},\n      "relative_difference": {relative},'
                f'\n      "verdict": {_text_or_null(item["verdict"])},'
                f'\n      "Z": {compressibility},\n      "model": {_text_or_null(item["model"])}'
                + (f',\n      "note": {_text_or_null(item["note"])}' if note else "") + "\n    }")
    except (TypeError, KeyError, AttributeError):
        return None
    return "[\n" + ",\n".join(parts) + "\n  ]"


def _entry_text(entry) -> str:
    """Dump a run's or a sample's entry as ``json.dumps(indent=2)`` does, its candidates fast."""
    candidates = entry.get("candidates")
    rendered = _candidates_text(candidates) if candidates else None
    if rendered is None:
        return _dumps(entry)
    text = _dumps({**entry, "candidates": _PLACEHOLDER})
    # User text never holds a raw line break, so only the entry's own key starts a line like this.
    marker = '\n  "candidates": "' + _PLACEHOLDER + '"'
    return text.replace(marker, '\n  "candidates": ' + rendered, 1)


class DocumentWriter:
    """Write a JSON object key by key, and its lists item by item, as ``json.dumps(indent=2)`` would.

    The bytes are those of dumping the whole object at once, but only one item is
    ever held as text. JSON strings never hold a raw line break, so indenting an
    item is indenting each of its lines.

    Parameters
    ----------
    stream : text file
        Where to write.
    """

    def __init__(self, stream):
        self.stream = stream
        self._keys = 0
        self._items = None  # items written to the open list, None when no list is open

    def _key(self, key):
        self.stream.write(("{\n" if not self._keys else ",\n") + "  " + _dumps(key) + ": ")
        self._keys += 1

    def value(self, key, value) -> None:
        """Write one key and its whole value."""
        self._key(key)
        self.stream.write(_dumps(value).replace("\n", "\n  "))

    def open_list(self, key) -> None:
        """Start a key whose value is a list written by :meth:`item`."""
        self._key(key)
        self.stream.write("[")
        self._items = 0

    def item(self, value) -> None:
        """Write one item of the open list."""
        self.rendered(render_item(value), 1)

    def rendered(self, text: str, count: int) -> None:
        """Write ``count`` items of the open list, rendered by :func:`render_item`.

        Several items come joined by :data:`ITEM_SEPARATOR`.
        """
        if count:
            self.stream.write(("\n    " if not self._items else ITEM_SEPARATOR) + text)
            self._items += count

    def copied(self, source, count: int, block: int = 1 << 20) -> None:
        """Write ``count`` rendered items of the open list from a text file, a block at a time."""
        if count:
            self.stream.write("\n    " if not self._items else ITEM_SEPARATOR)
            while text := source.read(block):
                self.stream.write(text)
            self._items += count

    def close_list(self) -> None:
        """End the open list."""
        self.stream.write("\n  ]" if self._items else "]")
        self._items = None

    def close(self) -> None:
        """End the object (and its line)."""
        self.stream.write("\n}\n" if self._keys else "{}\n")


#: What separates two items of a list written by :class:`DocumentWriter`.
ITEM_SEPARATOR = ",\n    "


def render_item(entry) -> str:
    """Render a run's or a sample's entry as an item of a :class:`DocumentWriter` list."""
    return _entry_text(entry).replace("\n", "\n    ")


def write_json(result, stream, top: int | None = None, monte_carlo=None) -> None:
    """Write the JSON document of :func:`to_document` to a text stream, one run at a time.

    The same bytes as :func:`to_json`, in memory that does not hold the document's text.
    """
    writer = DocumentWriter(stream)
    writer.value("molid", __version__)
    writer.open_list("results")
    for entry in run_entries(result, top, monte_carlo):
        writer.item(entry)
    writer.close_list()
    writer.open_list("samples")
    for entry in sample_entries(result, top):
        writer.item(entry)
    writer.close_list()
    writer.value("notes", list(result.notes))
    writer.close()


def to_json(result, top: int | None = None, monte_carlo=None) -> str:
    """Return the JSON document as text (deterministic: same input, same bytes)."""
    buffer = io.StringIO()
    write_json(result, buffer, top, monte_carlo)
    return buffer.getvalue()
