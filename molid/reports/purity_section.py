"""The purity and specification part of a report page: the statement, the decision, its plot.

A page whose sample (or run) carries a purity estimate gets its statement among
the findings; where a specification applies, a block states the decision and the
rule in plain words and draws the contaminant's interval against the limit, with
the guard band of guarded acceptance shaded (JCGM 106:2012, 8.3).
"""

from __future__ import annotations

from molid.io.quality_output import conformity_text, purity_statement

__all__ = ["purity_finding", "specification_parts"]

_PERCENT = 100.0


def _row(result, key):
    """Return the page's purity row (sample by name, run by table position), or None."""
    quality = getattr(result, "quality", None)
    if quality is None:
        return None
    kind, ident = key
    table = quality.samples if kind == "sample" else quality.runs
    return table.loc[ident] if ident in table.index else None


def purity_finding(result, key, position=None):
    """Return the page's purity sentence for the findings where a contaminant is found or needed, else None.

    Parameters
    ----------
    result : molid.pipeline.identify.Identification
        The identification.
    key : tuple
        The page's ("sample", name) or ("run", label).
    position : int, optional
        Table position of a run page's run.
    """
    row = _row(result, key if key[0] == "sample" else ("run", position))
    # a clean, identified gas says nothing new here (its detection limit is in the JSON and CSV)
    if row is None or (not row["detected"] and row["main_verdict"] in ("consistent", "marginal")):
        return None
    sentence = purity_statement(row)
    return "Purity: " + sentence[0].lower() + sentence[1:] + "."


def specification_parts(result, key, position=None):
    """Return the decision's sentences, the plot's description and its alt text, or None.

    For a page whose result has a specification: ``(sentences, spec, alt)`` where
    ``spec`` is the ``("purity", ...)`` description :func:`molid.reports.figures.spec_figure` draws.
    """
    row = _row(result, key if key[0] == "sample" else ("run", position))
    if row is None or not row["outcome"]:
        return None
    block = {"rule": row["rule"], "limit": row["limit"] * _PERCENT, "contaminant": row["contaminant"],
             "outcome": row["outcome"], "probability": row["probability"], "reason": row["reason"]}
    guarded = "guarded" in row["rule"]
    spec = ("purity", float(row["x"]) * _PERCENT, float(row["low"]) * _PERCENT,
            float(row["high"]) * _PERCENT, float(row["limit"]) * _PERCENT,
            (2.0 * float(row["u"]) * _PERCENT) if guarded else 0.0, str(row["contaminant"]), 120.0, 15.0)
    alt = (f"The {row['contaminant']} fraction's interval (k = 2) against the specification's limit "
           "(line), with the guard band shaded.")
    return [conformity_text(block)], spec, alt
