"""An identification as pandas DataFrames, and as a small HTML summary for Jupyter.

Plain functions over an :class:`~molid.pipeline.identify.Identification`; the
result's ``to_frame``, ``inputs_frame``, ``samples_frame``, ``candidates_frame``
and ``_repr_html_`` call them. Numbers leave SI here: molar masses in g/mol, each
column's unit in its name (``_g_per_mol``). Text is as the user typed it (no
spreadsheet-formula neutralising: that belongs to files, :mod:`molid.io.run_csv`).

Column vocabulary
-----------------
``molar_mass_g_per_mol``, ``u_g_per_mol``, ``U_g_per_mol`` (k = 2), ``low_g_per_mol``
and ``high_g_per_mol`` (M ∓ U): the ideal-gas molar mass and its GUM
uncertainties (JCGM 100:2008, 5.1.2 and 6.2); ``candidate``, ``candidate_verdict``
and ``candidate_z``: the best-ranked candidate; ``label_verdict``: the check of the
``expected`` label.
"""

from __future__ import annotations

import html

import numpy as np
import pandas as pd

from molid.methods.registry import headline_models
from molid.uncertainty.propagation import COVERAGE_FACTOR

__all__ = ["run_frame", "inputs_frame", "samples_frame", "candidates_frame", "html_summary"]

_G = 1e3  # kg/mol → g/mol


def _joined(problems, separator):
    """Each row's messages as one text, None where there are none."""
    return [separator.join(row) if row else None for row in problems]


def _best_of_runs(result):
    """Best candidate, its verdict and z, and the label verdict of every run (None where none)."""
    count = len(result.table)
    best = {"candidate": [None] * count, "candidate_verdict": [None] * count,
            "candidate_z": np.full(count, np.nan), "label_verdict": [None] * count}
    ranking = result.ranking
    if ranking is None:
        return best
    for index in np.flatnonzero(result.ok):
        items = ranking.run_candidates(index, 1)
        if items:
            best["candidate"][index] = items[0]["name"]
            best["candidate_verdict"][index] = items[0]["verdict"]
            best["candidate_z"][index] = np.nan if items[0]["z"] is None else items[0]["z"]
    for index in ranking.labels:
        label = ranking.run_extras(index).get("label")
        if label is not None:
            best["label_verdict"][index] = label["verdict"]
    return best


def run_frame(result) -> pd.DataFrame:
    """One row per run: ids, molar mass with u and U [g/mol], best candidate, label check, problems.

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify`.

    Returns
    -------
    pandas.DataFrame
        Index 0..n−1 in file order, the same as :func:`inputs_frame`. Columns:
        ``run``, ``row`` (spreadsheet row, header = 1), ``sample``, ``method``,
        ``molar_mass_g_per_mol``, ``u_g_per_mol``, ``U_g_per_mol``, ``k``,
        ``low_g_per_mol``, ``high_g_per_mol``, ``model``, ``candidate``,
        ``candidate_verdict``, ``candidate_z``, ``expected``, ``label_verdict``,
        ``errors`` and ``warnings`` (messages joined by "; " and " | "). Missing
        values (``pandas.isna``) where there is nothing: runs with an error have
        no numbers and no candidate.
    """
    table = result.table
    text = table.text
    ok = result.ok
    value, u = result.molar_mass * _G, result.u * _G
    expanded = COVERAGE_FACTOR * u
    best = _best_of_runs(result)
    return pd.DataFrame({
        "run": text["run"].to_numpy(dtype=object),
        "row": np.asarray(table.row_numbers, dtype=int),
        "sample": text["sample"].to_numpy(dtype=object),
        "method": text["method"].to_numpy(dtype=object),
        "molar_mass_g_per_mol": value,
        "u_g_per_mol": u,
        "U_g_per_mol": expanded,
        "k": np.where(ok, COVERAGE_FACTOR, np.nan),
        "low_g_per_mol": value - expanded,
        "high_g_per_mol": value + expanded,
        "model": np.where(ok, headline_models(text["method"]), None),
        **best,
        "expected": text["expected"].to_numpy(dtype=object),
        "errors": _joined(result.errors, "; "),
        "warnings": _joined(result.warnings, " | "),
    }, columns=["run", "row", "sample", "method", "molar_mass_g_per_mol", "u_g_per_mol",
                "U_g_per_mol", "k", "low_g_per_mol", "high_g_per_mol", "model", "candidate",
                "candidate_verdict", "candidate_z", "expected", "label_verdict", "errors", "warnings"])


def inputs_frame(result) -> pd.DataFrame:
    """Every cell of the run file as the user wrote it (text, the user's headers), one row per run.

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify`.

    Returns
    -------
    pandas.DataFrame
        The same index as :func:`run_frame`, so ``result.to_frame().join(result.inputs_frame(),
        rsuffix="_input")`` puts them side by side.
    """
    return result.table.raw.reset_index(drop=True).copy()


def _sample_model(result, members) -> str:
    """Name the headline model of a sample: its runs' one model, else the ideal gas."""
    text = result.table.text
    methods = text["method"][text["run"].isin(members)].dropna().unique()
    models = set(headline_models(list(methods)))
    return models.pop() if len(models) == 1 else "ideal gas"


def samples_frame(result) -> pd.DataFrame:
    """One row per sample: the combined molar mass [g/mol], replicate statistics, best candidate, label.

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify`.

    Returns
    -------
    pandas.DataFrame
        Columns ``sample``, ``n`` (runs combined), ``runs`` (their ids, joined by ", "),
        ``molar_mass_g_per_mol``, ``u_g_per_mol``, ``U_g_per_mol``, ``low_g_per_mol``,
        ``high_g_per_mol``, ``u_independent_g_per_mol`` (after any widening),
        ``u_shared_g_per_mol``, ``birge_ratio``, ``p_value``, ``widened``, ``model``,
        ``candidate``, ``candidate_verdict``, ``candidate_z``, ``expected``,
        ``label_verdict`` and ``warnings``; a sample none of whose runs could be analysed
        has NaN numbers.
    """
    combined = result.samples.set_index("sample") if len(result.samples) else pd.DataFrame()
    rows = []
    for name, members in result.sample_runs.items():
        found = name in combined.index
        stats = combined.loc[name] if found else {}
        value = float(stats["value"]) * _G if found else np.nan
        u = float(stats["u"]) * _G if found else np.nan
        items = result.ranking.sample_candidates(name, 1) if result.ranking is not None and found else []
        label = (result.ranking.sample_extras(name).get("label")
                 if result.ranking is not None and found else None)
        rows.append({
            "sample": name, "n": int(stats["n"]) if found else 0, "runs": ", ".join(members),
            "molar_mass_g_per_mol": value, "u_g_per_mol": u, "U_g_per_mol": COVERAGE_FACTOR * u,
            "low_g_per_mol": value - COVERAGE_FACTOR * u, "high_g_per_mol": value + COVERAGE_FACTOR * u,
            "u_independent_g_per_mol": float(stats["u_independent"]) * _G if found else np.nan,
            "u_shared_g_per_mol": float(stats["u_shared"]) * _G if found else np.nan,
            "birge_ratio": float(stats["birge_ratio"]) if found else np.nan,
            "p_value": float(stats["p_value"]) if found else np.nan,
            "widened": bool(stats["widened"]) if found else False,
            "model": _sample_model(result, members) if found else None,
            "candidate": items[0]["name"] if items else None,
            "candidate_verdict": items[0]["verdict"] if items else None,
            "candidate_z": items[0]["z"] if items and items[0]["z"] is not None else np.nan,
            "expected": label["expected"] if label else None,
            "label_verdict": label["verdict"] if label else None,
            "warnings": " | ".join(result.sample_warnings.get(name, [])) or None,
        })
    columns = ["sample", "n", "runs", "molar_mass_g_per_mol", "u_g_per_mol", "U_g_per_mol",
               "low_g_per_mol", "high_g_per_mol", "u_independent_g_per_mol", "u_shared_g_per_mol",
               "birge_ratio", "p_value", "widened", "model", "candidate", "candidate_verdict",
               "candidate_z", "expected", "label_verdict", "warnings"]
    return pd.DataFrame(rows, columns=columns)


_CANDIDATE_COLUMNS = ["rank", "candidate", "formula", "molar_mass_g_per_mol", "measured_g_per_mol",
                      "U_measured_g_per_mol", "z", "verdict", "Z", "model", "note"]


def _candidate_rows(items) -> list:
    """Rows of a candidate table from the ranking's candidate dicts (already in g/mol)."""
    rows = []
    for item in items:
        u = item["measured"]["u"]
        rows.append({
            "rank": item["rank"], "candidate": item["name"], "formula": item["formula"],
            "molar_mass_g_per_mol": item["molar_mass"],
            "measured_g_per_mol": np.nan if item["measured"]["value"] is None else item["measured"]["value"],
            "U_measured_g_per_mol": np.nan if u is None else COVERAGE_FACTOR * u,
            "z": np.nan if item["z"] is None else item["z"], "verdict": item["verdict"],
            "Z": np.nan if item["Z"] is None else item["Z"], "model": item["model"],
            "note": item.get("note"),
        })
    return rows


def candidates_frame(result, sample=None, top: int | None = None) -> pd.DataFrame:
    """Ranked candidates of one sample, or of every sample and run stacked.

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify` (with ``rank=True``).
    sample : str, optional
        A sample id; when None, every sample and then every analysed run, with two
        key columns in front: ``level`` ("sample" or "run") and ``key`` (its id).
    top : int, optional
        Keep the best ``top`` of each list (all when None).

    Returns
    -------
    pandas.DataFrame
        ``rank``, ``candidate``, ``formula``, ``molar_mass_g_per_mol`` (the
        candidate's own), ``measured_g_per_mol`` (the measured molar mass if the gas
        is this candidate: its real-gas and method corrections applied),
        ``U_measured_g_per_mol`` (k = 2, with the candidate's model term),
        ``z``, ``verdict``, ``Z``, ``model`` and ``note``. Empty when nothing was ranked.

    Raises
    ------
    KeyError
        When ``sample`` names no sample of the result.
    """
    ranking = result.ranking
    if sample is not None:
        if sample not in result.sample_runs:
            known = ", ".join(map(str, result.sample_runs))
            raise KeyError(f"no sample {sample!r}; the samples are: {known}")
        items = ranking.sample_candidates(sample, top) if ranking is not None else []
        return pd.DataFrame(_candidate_rows(items), columns=_CANDIDATE_COLUMNS)
    rows = []
    if ranking is not None:
        for name in result.sample_runs:
            rows += [{"level": "sample", "key": name, **row}
                     for row in _candidate_rows(ranking.sample_candidates(name, top))]
        runs = result.table.text["run"].to_numpy(dtype=object)
        for index in np.flatnonzero(result.ok):
            rows += [{"level": "run", "key": runs[index], **row}
                     for row in _candidate_rows(ranking.run_candidates(index, top))]
    return pd.DataFrame(rows, columns=["level", "key", *_CANDIDATE_COLUMNS])


def _html_table(items) -> str:
    """Render a ranked candidate list as a small HTML table, every text escaped."""
    from molid.io.terminal import format_value

    cells = []
    for item in items:
        u = item["measured"]["u"]
        measured = format_value(item["measured"]["value"], COVERAGE_FACTOR * u if u is not None else np.nan)
        z = "" if item["z"] is None else f"{item['z']:+.2f}"
        cells.append(f"<tr><td>{item['rank']}</td><td>{html.escape(str(item['name']))}</td>"
                     f"<td>{item['molar_mass']:.3f}</td><td>{html.escape(measured)}</td>"
                     f"<td>{z}</td><td>{html.escape(item['verdict'])}</td></tr>")
    head = ("<tr><th>rank</th><th>candidate</th><th>M / (g/mol)</th>"
            "<th>if it is this gas: M ± U</th><th>z</th><th>verdict</th></tr>")
    return f"<table><thead>{head}</thead><tbody>{''.join(cells)}</tbody></table>"


def _html_blocks(result, top):
    """(heading, candidate items) of each sample, then of each analysed run without a sample."""
    from molid.io.terminal import format_value

    combined = result.samples.set_index("sample") if len(result.samples) else pd.DataFrame()
    for name in result.sample_runs:
        if name in combined.index:
            row = combined.loc[name]
            value = format_value(row["value"] * _G, COVERAGE_FACTOR * row["u"] * _G)
            heading = f"Sample {name}: {value} g/mol (k = 2), {int(row['n'])} run(s)"
        else:
            heading = f"Sample {name}: no run could be analysed"
        items = result.ranking.sample_candidates(name, top) if result.ranking is not None else []
        yield heading, items
    text = result.table.text
    alone = result.ok & text["sample"].isna().to_numpy()
    for index in np.flatnonzero(alone):
        value = format_value(result.molar_mass[index] * _G, result.U[index] * _G)
        items = result.ranking.run_candidates(index, top) if result.ranking is not None else []
        yield f"Run {text['run'].iat[index]}: {value} g/mol (k = 2)", items


def html_summary(result, top: int = 5, limit: int = 20) -> str:
    """Render a small HTML summary for Jupyter: each sample's ranked candidates (or each lone run's).

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify`.
    top : int
        Candidates per table.
    limit : int
        Tables shown at most; the rest are counted.

    Returns
    -------
    str
        An HTML fragment; every text from the user's file or library is escaped.
    """
    count, bad = len(result.table), int((~result.ok).sum())
    parts = [f"<div class=\"molid-identification\"><p><b>molid</b>: {count} run(s), "
             f"{count - bad} analysed, {bad} with errors; ideal-gas molar mass ± U (k = 2). "
             "Frames: <code>to_frame()</code>, <code>samples_frame()</code>, "
             "<code>candidates_frame()</code>.</p>"]
    shown = 0
    for heading, items in _html_blocks(result, top):
        shown += 1
        if shown > limit:
            continue
        parts.append(f"<p><b>{html.escape(heading)}</b></p>")
        if items:
            parts.append(_html_table(items))
    if shown > limit:
        parts.append(f"<p>… and {shown - limit} more; see <code>candidates_frame()</code>.</p>")
    if bad:
        parts.append("<p>Rows with errors: see the <code>errors</code> column of "
                     "<code>to_frame()</code>.</p>")
    parts.append("<p>Gas work can hurt: follow the site's safety rules and each substance's "
                 "SDS.</p></div>")
    return "".join(parts)
