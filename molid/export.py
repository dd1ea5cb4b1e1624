"""Output of an identification: the JSON document, the per-run CSV, the terminal table.

Numbers leave the library here, converted from SI to g/mol. The JSON keys are a
contract other programs rely on; see the README.
"""

from __future__ import annotations

import csv
import io
import json
import math

import numpy as np

from molid import __version__
from molid.safeio import neutralise_cell
from molid.uncertainty import COVERAGE_FACTOR

__all__ = [
    "format_value",
    "molar_mass_block",
    "to_document",
    "to_json",
    "to_csv",
    "to_table",
    "CSV_TOP_CANDIDATES",
]

#: How many candidates the per-run CSV carries.
CSV_TOP_CANDIDATES = 3
_G = 1e3  # kg/mol → g/mol


def _float(value):
    """A JSON-safe float (None for NaN/inf)."""
    if value is None:
        return None
    value = float(value)
    return value if math.isfinite(value) else None


def molar_mass_block(value, u, model="ideal gas"):
    """The JSON ``molar_mass`` object from a value and standard uncertainty [kg/mol]."""
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


def format_value(value, expanded, unit=""):
    """Round a value to the precision of its expanded uncertainty (two significant digits).

    Examples
    --------
    >>> format_value(44.0123456, 0.0456)
    '44.012 ± 0.046'
    """
    if value is None or not np.isfinite(value):
        return "-"
    if not np.isfinite(expanded) or expanded <= 0:
        return f"{value:.6g}{unit}"
    decimals = max(0, 1 - int(math.floor(math.log10(expanded))))
    return f"{value:.{decimals}f} ± {expanded:.{decimals}f}{unit}"


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


def to_document(result, top: int | None = None) -> dict:
    """The JSON document of an identification, as Python objects.

    Parameters
    ----------
    result : Identification
        From :func:`molid.identify.identify`.
    top : int, optional
        Limit each candidate list to this many (all candidates when None).

    Returns
    -------
    dict
        ``{"molid": version, "notes": [...], "results": [...], "samples": [...]}``.
    """
    table = result.table
    ranking = result.ranking
    runs = []
    text = table.text
    for index in range(len(table)):
        error = "; ".join(result.errors[index]) or None
        entry = {
            "run": text["run"].iat[index],
            "row": int(table.row_numbers[index]),
            "sample": text["sample"].iat[index],
            "method": text["method"].iat[index],
            "error": error,
            "warnings": list(result.warnings[index]),
            "molar_mass": None if error else molar_mass_block(result.molar_mass[index],
                                                               result.u[index]),
            "budget": [] if error else _budget_list(result, index),
            "candidates": [],
        }
        if ranking is not None and not error:
            entry["candidates"] = ranking.run_candidates(index, top)
            entry.update(ranking.run_extras(index))
        if not error:
            extras = result.propagation.extras
            entry["gas_mass_g"] = _float(extras["gas_mass"][index] * 1e3)
            entry["air_density_kg_m3"] = _float(extras["air_density"][index])
        runs.append(entry)
    samples = []
    frame = result.samples.set_index("sample") if len(result.samples) else None
    for name, members in result.sample_runs.items():
        entry = {"sample": name, "runs": list(members), "molar_mass": None,
                 "warnings": list(result.sample_warnings.get(name, [])), "candidates": []}
        if frame is not None and name in frame.index:
            row = frame.loc[name]
            entry["molar_mass"] = molar_mass_block(row["value"], row["u"])
            entry["replicates"] = {
                "n": int(row["n"]),
                "chi_square": _float(row["chi_square"]),
                "birge_ratio": _float(row["birge_ratio"]),
                "p_value": _float(row["p_value"]),
                "widened": bool(row["widened"]),
                "u_independent": _float(row["u_independent"] * _G),
                "u_shared": _float(row["u_shared"] * _G),
            }
            if ranking is not None:
                entry["candidates"] = ranking.sample_candidates(name, top)
                entry.update(ranking.sample_extras(name))
        samples.append(entry)
    return {"molid": __version__, "notes": list(result.notes), "results": runs, "samples": samples}


def to_json(result, top: int | None = None) -> str:
    """The JSON document as text (deterministic: same input, same bytes)."""
    return json.dumps(to_document(result, top), indent=2, ensure_ascii=False, allow_nan=False) + "\n"


_RESULT_COLUMNS = (
    "molar_mass_g_mol", "u_g_mol", "U_g_mol", "k", "low_g_mol", "high_g_mol", "model",
    "main_contribution", "error", "warnings",
)


def csv_rows(result):
    """Header and rows of the per-run CSV: the user's cells, then the results."""
    table = result.table
    user_columns = list(table.raw.columns)
    result_columns = []
    for name in _RESULT_COLUMNS:
        result_columns.append(f"molid_{name}" if name in user_columns else name)
    candidate_columns = []
    if result.ranking is not None:
        for place in range(1, CSV_TOP_CANDIDATES + 1):
            candidate_columns += [f"candidate_{place}", f"candidate_{place}_verdict",
                                  f"candidate_{place}_z"]
        candidate_columns += ["label_verdict"]
    header = user_columns + result_columns + candidate_columns
    raw = table.raw.to_numpy(dtype=object)
    rows = []
    for index in range(len(table)):
        error = "; ".join(result.errors[index])
        if error:
            numbers = [""] * 7
            main = ""
        else:
            block = molar_mass_block(result.molar_mass[index], result.u[index])
            numbers = [block["value"], block["u"], block["U"], block["k"], block["low"],
                       block["high"], block["model"]]
            budget = _budget_list(result, index)
            main = f"{budget[0]['input']} {budget[0]['percent']:.0f}%" if budget else ""
        row = list(raw[index]) + numbers + [main, error, " | ".join(result.warnings[index])]
        if result.ranking is not None:
            candidates = [] if error else result.ranking.run_candidates(index, CSV_TOP_CANDIDATES)
            for place in range(CSV_TOP_CANDIDATES):
                if place < len(candidates):
                    item = candidates[place]
                    row += [item["name"], item["verdict"], round(item["z"], 3)
                            if item["z"] is not None else ""]
                else:
                    row += ["", "", ""]
            label = {} if error else result.ranking.run_extras(index).get("label") or {}
            row.append(label.get("verdict", "") if label else "")
        rows.append([neutralise_cell(cell) for cell in row])
    return header, rows


def to_csv(result) -> str:
    """The per-run CSV as text."""
    header, rows = csv_rows(result)
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow([neutralise_cell(cell) for cell in header])
    writer.writerows(rows)
    return buffer.getvalue()


def _cut(text, width):
    text = "" if text is None else str(text)
    return text if len(text) <= width else text[: width - 1] + "…"


def _label_text(label) -> str:
    """One line on whether the ``expected`` label agrees with the result."""
    if label["verdict"] == "not-in-library":
        return f"'{label['expected']}' is not in the candidate library, so it was not checked"
    z = f", z = {label['z']:+.2f}" if label.get("z") is not None else ""
    meaning = {
        "consistent": "the result agrees with the label",
        "marginal": "the result is at the edge of agreeing with the label",
        "excluded": "the result does NOT agree with the label",
        "condenses": "the labelled substance would be liquid at these conditions",
    }[label["verdict"]]
    return f"'{label['expected']}' ({label['name']}): {label['verdict']} (rank {label['rank']}{z}): {meaning}"


def to_table(result, top: int = 5) -> str:
    """A plain-text report for a terminal."""
    table = result.table
    lines = []
    header = f"{'run':<12} {'sample':<10} {'method':<15} {'M / (g/mol), U (k=2)':<26} {'best candidates'}"
    lines.append(header)
    lines.append("-" * len(header))
    for index in range(len(table)):
        run = _cut(table.text["run"].iat[index] or f"(row {table.row_numbers[index]})", 12)
        sample = _cut(table.text["sample"].iat[index] or "", 10)
        method = _cut(table.text["method"].iat[index] or "?", 15)
        if result.errors[index]:
            lines.append(f"{run:<12} {sample:<10} {method:<15} {'error':<26} see below")
            continue
        value = format_value(result.molar_mass[index] * _G, result.U[index] * _G)
        best = ""
        if result.ranking is not None:
            items = result.ranking.run_candidates(index, top)
            best = ", ".join(f"{item['name']} ({item['verdict']}, z={item['z']:+.1f})"
                             if item["z"] is not None else f"{item['name']} ({item['verdict']})"
                             for item in items[:top])
        lines.append(f"{run:<12} {sample:<10} {method:<15} {value:<26} {best}")
    document = None
    if result.sample_runs:
        lines.append("")
        lines.append("Samples (replicates combined)")
        lines.append("-----------------------------")
        document = to_document(result, top)
        for entry in document["samples"]:
            block = entry["molar_mass"]
            value = format_value(block["value"], block["U"]) + " g/mol" if block else "no result"
            extra = ""
            if entry.get("replicates"):
                rep = entry["replicates"]
                extra = f", {rep['n']} run(s)"
                if rep["birge_ratio"] is not None:
                    extra += f", Birge ratio {rep['birge_ratio']:.2f}"
            lines.append(f"{entry['sample']}: ideal gas {value} (k=2){extra}")
            if entry["candidates"]:
                lines.append(f"    {'rank':>4}  {'candidate':<24} {'M/(g/mol)':>10}  "
                             f"{'if it is this gas: M ± U':<24} {'z':>8}  verdict")
            for item in entry["candidates"][:top]:
                z = f"{item['z']:+8.2f}" if item["z"] is not None else f"{'-':>8}"
                measured = format_value(item["measured"]["value"],
                                        COVERAGE_FACTOR * item["measured"]["u"])
                lines.append(f"    {item['rank']:>4}  {_cut(item['name'], 24):<24} "
                             f"{item['molar_mass']:>10.3f}  {measured:<24} {z}  {item['verdict']}")
            label = entry.get("label")
            if label:
                lines.append(f"    label: {_label_text(label)}")
            for note in entry.get("distinguish", []) or []:
                lines.append(f"    note: {note}")
            for warning in entry["warnings"]:
                lines.append(f"    warning: {warning}")
    problems = [(index, message) for index in range(len(table)) for message in result.errors[index]]
    if problems:
        lines.append("")
        lines.append("Errors (these rows were not analysed)")
        lines.append("-------------------------------------")
        lines.extend(message for _, message in problems)
    warned = [(index, message) for index in range(len(table)) for message in result.warnings[index]]
    if warned:
        lines.append("")
        lines.append("Warnings")
        lines.append("--------")
        for index, message in warned:
            lines.append(f"row {table.row_numbers[index]} ({table.text['run'].iat[index]}): {message}")
    if result.notes:
        lines.append("")
        lines.append("Notes")
        lines.append("-----")
        lines.extend(f"- {note}" for note in result.notes)
    return "\n".join(lines) + "\n"
