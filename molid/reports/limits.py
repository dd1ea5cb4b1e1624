"""Bounds on a report: pages per report, characters per cell.

A report is for reading and filing: past a few hundred pages nobody reads it, and
a file with hundreds of thousands of runs would take hours and gigabytes to
draw. Beyond ``page_limit`` pages (samples, runs or students), the rest is
summarised on one page: how many, how many with errors, and, for an
identification, every sample or run whose gas is unidentified (a hazard), by name.
The per-run CSV and the JSON document keep every run.

Text a user wrote is cut at ``cell_limit`` characters, with a mark giving its full
length, and its control characters escaped (:mod:`molid.io.display`); the writers
then never measure, wrap or draw more than that.
"""

from __future__ import annotations

from dataclasses import fields, is_dataclass

import numpy as np

from molid.io.display import DEFAULT_CELL_LIMIT, shown, was_cut

__all__ = ["DEFAULT_PAGE_LIMIT", "MOST_NAMED", "bound_text", "group_identified"]

#: Pages (samples, runs or students) a report draws before summarising the rest.
DEFAULT_PAGE_LIMIT = 500
#: Names of unidentified samples or runs listed on the summary page.
MOST_NAMED = 200


def _bounded(value, limit, counter):
    if isinstance(value, str):
        text = shown(value, limit)
        if len(value) > limit and was_cut(text):
            counter[0] += 1
        return text
    if isinstance(value, list):
        return [_bounded(item, limit, counter) for item in value]
    if isinstance(value, tuple):
        return tuple(_bounded(item, limit, counter) for item in value)
    if is_dataclass(value) and not isinstance(value, type):
        for item in fields(value):
            if item.name not in ("make", "spec", "styles", "generated_datetime"):
                setattr(value, item.name, _bounded(getattr(value, item.name), limit, counter))
    return value


def bound_text(report, cell_limit: int = DEFAULT_CELL_LIMIT) -> int:
    """Cut every text of a page model to ``cell_limit`` characters and escape its control characters.

    Parameters
    ----------
    report : Report
        The page model (changed in place).
    cell_limit : int
        The most characters of one text.

    Returns
    -------
    int
        How many texts were cut.
    """
    counter = [0]
    _bounded(report, cell_limit, counter)
    return counter[0]


def _identified(block, count) -> np.ndarray:
    """For each row of a ranking block, whether some candidate is consistent or marginal."""
    from molid.candidates.verdicts import VERDICTS, verdicts

    if count == 0:
        return np.zeros(0, dtype=bool)
    codes = verdicts(block["z"], block["condenses"], block["unfit"])
    kept = [VERDICTS.index("consistent"), VERDICTS.index("marginal")]
    return np.isin(codes, kept).any(axis=1)


def group_identified(result, groups) -> list:
    """Whether each (key, positions) group's result identifies the gas; None where it has none."""
    ranking = result.ranking
    if ranking is None:
        return [None] * len(groups)
    run_ok = _identified(ranking.runs, len(ranking.run_index))
    sample_ok = _identified(ranking.samples, len(ranking.sample_names))
    run_position = {int(index): k for k, index in enumerate(ranking.run_index)}
    sample_position = {name: k for k, name in enumerate(ranking.sample_names)}
    found = []
    for (kind, ident), _ in groups:
        k = (sample_position if kind == "sample" else run_position).get(ident)
        found.append(None if k is None else bool((sample_ok if kind == "sample" else run_ok)[k]))
    return found
