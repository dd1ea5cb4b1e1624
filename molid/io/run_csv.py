"""The per-run CSV of an identification: the user's cells, then one block of result columns.

Columns and bytes are a contract (``molid identify -o``, and the chunked writer
of :mod:`molid.pipeline.streaming` must give the same bytes); see the README.
Numbers leave the library here, converted from SI to g/mol.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from molid.candidates.verdicts import VERDICTS, rank_key, relative_difference, verdicts
from molid.io.quality_output import csv_columns
from molid.io.reference_output import reference_columns
from molid.methods.registry import headline_models
from molid.uncertainty.propagation import COVERAGE_FACTOR

__all__ = ["to_csv", "CSV_TOP_CANDIDATES"]

#: How many candidates the per-run CSV carries.
CSV_TOP_CANDIDATES = 3
_G = 1e3  # kg/mol → g/mol


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
    condenses, unfit = ranking.runs["condenses"], ranking.runs["unfit"]
    key = rank_key(z, condenses, unfit, relative_difference(
        ranking.runs["measured"], ranking.library["molar_mass"].to_numpy(dtype=float)))
    count = min(places, key.shape[1])
    best = np.argpartition(key, count - 1, axis=1)[:, :count] if key.shape[1] > count else \
        np.tile(np.arange(key.shape[1]), (len(rows), 1))
    best_key = np.take_along_axis(key, best, axis=1)
    # stable order among the chosen few, as the full ranking sorts them
    best = np.take_along_axis(best, np.lexsort((best, best_key), axis=1), axis=1)[:, :count]
    library_names = ranking.library["name"].to_numpy(dtype=object)
    codes = verdicts(np.take_along_axis(z, best, axis=1), np.take_along_axis(condenses, best, axis=1),
                     np.take_along_axis(unfit, best, axis=1))
    names[rows, :count] = library_names[best]
    verdict[rows, :count] = np.asarray(VERDICTS, dtype=object)[codes]
    z_out[rows, :count] = np.round(np.take_along_axis(z, best, axis=1), 3)
    return names, verdict, z_out


def csv_frame(result, monte_carlo=None) -> pd.DataFrame:
    """Build the per-run CSV as a DataFrame: the user's cells, then the results.

    With ``monte_carlo`` (a :class:`~molid.pipeline.monte_carlo.MonteCarloCheck`), the
    columns of :func:`_monte_carlo_columns` come last.
    """
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
        "model": np.where(ok, headline_models(result.table.text["method"]), ""),
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
    quality = getattr(result, "quality", None)
    if quality is not None:
        for name, item in csv_columns(quality, n).items():
            columns[f"molid_{name}" if name in user_columns else name] = item
    if result.ranking is not None:
        for name, item in reference_columns(result, n).items():
            columns[f"molid_{name}" if name in user_columns else name] = item
    if monte_carlo is not None:
        for name, item in _monte_carlo_columns(monte_carlo).items():
            columns[f"molid_{name}" if name in user_columns else name] = item
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
        codes = verdicts(ranking.runs["z"][k, columns], ranking.runs["condenses"][k, columns],
                         ranking.runs["unfit"][k, columns])
        out[rows] = np.asarray(VERDICTS, dtype=object)[codes]
    return out


def _monte_carlo_columns(check) -> dict:
    """Monte Carlo columns: trials, seed, the 95 % interval [g/mol] and whether it agrees with the linear one.

    Empty cells for runs without a result; ``monte_carlo_agrees_with_linear`` is
    ``yes`` when both ends lie within the tolerance δ of JCGM 101:2008, 8.1, ``no`` when
    not, ``undecided`` when the ends are too noisy at this number of draws to tell.
    """
    analysed = check.analysed

    def whole(number):
        return pd.Series(np.full(len(analysed), number), dtype="Int64").where(analysed, pd.NA)

    return {
        "monte_carlo_draws": whole(check.draws),
        "monte_carlo_seed": whole(check.seed),
        "monte_carlo_low_g_mol": check.low * _G,
        "monte_carlo_high_g_mol": check.high * _G,
        "monte_carlo_agrees_with_linear": np.where(
            analysed, np.where(check.decided, np.where(check.agrees, "yes", "no"), "undecided"), ""),
    }


def to_csv(result, header: bool = True, monte_carlo=None) -> str:
    """Return the per-run CSV as text (text cells quoted, numbers bare, RFC 4180)."""
    import io

    import pyarrow as pa
    import pyarrow.csv as pa_csv

    frame = csv_frame(result, monte_carlo)
    for column in frame.columns:
        if frame[column].dtype == object:
            frame[column] = frame[column].astype("string")
    buffer = io.BytesIO()
    pa_csv.write_csv(pa.Table.from_pandas(frame, preserve_index=False), buffer,
                     pa_csv.WriteOptions(include_header=header, quoting_style="needed"))
    return buffer.getvalue().decode("utf-8")
