"""Output of an identification: the JSON document, the per-run CSV, the terminal table.

Numbers leave the library here, converted from SI to g/mol. The JSON keys are a
contract other programs rely on; see the README.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd

from molid import __version__
from molid.candidates.verdicts import VERDICTS, verdicts
from molid.uncertainty.propagation import COVERAGE_FACTOR

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
    """Build the JSON document of an identification, as Python objects.

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify`.
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
    """Return the JSON document as text (deterministic: same input, same bytes)."""
    return json.dumps(to_document(result, top), indent=2, ensure_ascii=False, allow_nan=False) + "\n"


_RESULT_COLUMNS = (
    "molar_mass_g_mol", "u_g_mol", "U_g_mol", "k", "low_g_mol", "high_g_mol", "model",
    "main_contribution", "error", "warnings",
)


def neutralise_column(values) -> pd.Series:
    """Vectorised :func:`molid.io.safe_files.neutralise_cell` for a column of text."""
    if isinstance(values, pd.Series) and values.dtype == "str":
        text = values.reset_index(drop=True)
    else:
        text = pd.Series(values, dtype=object).astype(str)
    starts = text.str.match(r"^[=+\-@\t\r]").to_numpy(dtype=bool)
    if not starts.any():
        return text
    numeric = pd.to_numeric(text.str.replace(",", ".", regex=False), errors="coerce").notna()
    dangerous = starts & ~numeric.to_numpy(dtype=bool)
    return text.where(~dangerous, "'" + text)


def _top_candidates(ranking, n_rows, places):
    """Names, verdicts and z of the best ``places`` candidates of every evaluated run."""
    names = np.full((n_rows, places), "", dtype=object)
    verdict = np.full((n_rows, places), "", dtype=object)
    z_out = np.full((n_rows, places), np.nan)
    rows = np.asarray(ranking.run_index, dtype=int)
    if len(rows) == 0:
        return names, verdict, z_out
    z = ranking.runs["z"]
    condenses = ranking.runs["condenses"]
    key = np.where(np.isnan(z), np.inf, np.abs(z)) + np.where(condenses, 1e300, 0.0)
    count = min(places, key.shape[1])
    best = np.argpartition(key, count - 1, axis=1)[:, :count] if key.shape[1] > count else \
        np.tile(np.arange(key.shape[1]), (len(rows), 1))
    best_key = np.take_along_axis(key, best, axis=1)
    # stable order among the chosen few, as the full ranking sorts them
    best = np.take_along_axis(best, np.lexsort((best, best_key), axis=1), axis=1)[:, :count]
    library_names = ranking.library["name"].to_numpy(dtype=object)
    codes = verdicts(np.take_along_axis(z, best, axis=1), np.take_along_axis(condenses, best, axis=1))
    names[rows, :count] = library_names[best]
    verdict[rows, :count] = np.asarray(VERDICTS, dtype=object)[codes]
    z_out[rows, :count] = np.round(np.take_along_axis(z, best, axis=1), 3)
    return names, verdict, z_out


def csv_frame(result) -> pd.DataFrame:
    """Build the per-run CSV as a DataFrame: the user's cells, then the results."""
    table = result.table
    n = len(table)
    user_columns = list(table.raw.columns)
    columns = {column: neutralise_column(table.raw[column].astype(str)) for column in user_columns}
    ok = result.ok
    value = result.molar_mass * _G
    u = result.u * _G
    expanded = COVERAGE_FACTOR * u
    inputs = list(result.budget)
    shares = np.vstack([result.budget[name] for name in inputs]) if inputs else np.zeros((0, n))
    filled = np.where(np.isfinite(shares), shares, -1.0)
    best = filled.argmax(axis=0) if len(inputs) else np.zeros(n, dtype=int)
    best_share = filled[best, np.arange(n)] if len(inputs) else np.full(n, -1.0)
    percent_text = np.array([f" {share}%" for share in range(101)], dtype=object)
    main = np.where(ok & (best_share >= 0),
                    np.asarray(inputs, dtype=object)[best]
                    + percent_text[np.clip(np.round(best_share), 0, 100).astype(int)], "")
    results = {
        "molar_mass_g_mol": value,
        "u_g_mol": u,
        "U_g_mol": expanded,
        "k": pd.Series(np.where(ok, int(COVERAGE_FACTOR), 0), dtype="Int64").where(ok, pd.NA),
        "low_g_mol": value - expanded,
        "high_g_mol": value + expanded,
        "model": np.where(ok, "ideal gas", ""),
        "main_contribution": main,
        "error": ["; ".join(row) for row in result.errors],
        "warnings": [" | ".join(row) for row in result.warnings],
    }
    for name in _RESULT_COLUMNS:
        column = f"molid_{name}" if name in user_columns else name
        item = results[name]
        columns[column] = neutralise_column(item) if name in ("error", "warnings") else item
    if result.ranking is not None:
        names, verdict, z = _top_candidates(result.ranking, n, CSV_TOP_CANDIDATES)
        for place in range(CSV_TOP_CANDIDATES):
            columns[f"candidate_{place + 1}"] = neutralise_column(names[:, place])
            columns[f"candidate_{place + 1}_verdict"] = verdict[:, place]
            columns[f"candidate_{place + 1}_z"] = z[:, place]
        columns["label_verdict"] = _label_verdicts(result.ranking, n)
    columns = {key: (item.to_numpy() if isinstance(item, pd.Series) and item.dtype != "str"
                     and not isinstance(item.dtype, pd.Int64Dtype) else item)
               for key, item in columns.items()}
    frame = pd.DataFrame({key: (item.reset_index(drop=True) if isinstance(item, pd.Series)
                                else item) for key, item in columns.items()})
    frame.columns = list(neutralise_column(list(frame.columns)))
    return frame


def _label_verdicts(ranking, n_rows):
    out = np.full(n_rows, "", dtype=object)
    if not ranking.labels:
        return out
    position = {int(i): k for k, i in enumerate(ranking.run_index)}
    rows, columns, missing = [], [], []
    for index, (_, j) in ranking.labels.items():
        if j is None:
            missing.append(index)
        else:
            rows.append(index)
            columns.append(j)
    if missing:
        out[np.asarray(missing)] = "not-in-library"
    if rows:
        rows = np.asarray(rows)
        k = np.asarray([position[i] for i in rows])
        columns = np.asarray(columns)
        codes = verdicts(ranking.runs["z"][k, columns], ranking.runs["condenses"][k, columns])
        out[rows] = np.asarray(VERDICTS, dtype=object)[codes]
    return out


def to_csv(result, header: bool = True) -> str:
    """Return the per-run CSV as text (text cells quoted, numbers bare, RFC 4180)."""
    import io

    import pyarrow as pa
    import pyarrow.csv as pa_csv

    frame = csv_frame(result)
    for column in frame.columns:
        if frame[column].dtype == object:
            frame[column] = frame[column].astype("string")
    buffer = io.BytesIO()
    pa_csv.write_csv(pa.Table.from_pandas(frame, preserve_index=False), buffer,
                     pa_csv.WriteOptions(include_header=header, quoting_style="needed"))
    return buffer.getvalue().decode("utf-8")


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
    """Format a plain-text report for a terminal."""
    table = result.table
    lines = []
    header = (f"{'run':<12} {'sample':<10} {'method':<15} {'M ideal gas ± U (k=2)':<26} "
              "best two candidates (M·Z of each)")
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
            # The run line names the two best; samples below list the top N in full.
            items = result.ranking.run_candidates(index, min(top, 2))
            best = "; ".join(f"{item['name']} {item['verdict']} (z {item['z']:+.1f})"
                             if item["z"] is not None else f"{item['name']} {item['verdict']}"
                             for item in items)
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
                u_item = item["measured"]["u"]
                measured = format_value(item["measured"]["value"],
                                        COVERAGE_FACTOR * u_item if u_item is not None else np.nan)
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
