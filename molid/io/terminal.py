"""The plain-text report of an identification, for a terminal (``molid identify``).

A line per run with its two best candidates, then each sample with its ranked
candidates, label check, hazard line and notes, then the errors, warnings and file notes.
"""

from __future__ import annotations

import math

import numpy as np

from molid.candidates.hazards import hazard_line
from molid.candidates.verdicts import LABEL_MEANINGS
from molid.io.display import DEFAULT_CELL_LIMIT, escape_controls, shown, was_cut
from molid.io.json_document import sample_entries
from molid.io.quality_output import conformity_text, hypothesis_text, limiting_text
from molid.io.reference_output import reference_lines
from molid.uncertainty.propagation import COVERAGE_FACTOR
from molid.uncertainty.validation import SUGGESTED_DRAWS

__all__ = ["cut_note", "format_value", "screen_text", "to_table"]

_G = 1e3  # kg/mol → g/mol


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


def _cut(text, width):
    text = "" if text is None else escape_controls(text)  # escaped first: the width is what shows
    return text if len(text) <= width else text[: width - 1] + "…"


def _label_text(label) -> str:
    """One line on whether the ``expected`` label agrees with the result."""
    if label["verdict"] == "not-in-library":
        return f"'{label['expected']}' is not in the candidate library, so it was not checked"
    z = f", z = {label['z']:+.2f}" if label.get("z") is not None else ""
    meaning = LABEL_MEANINGS[label["verdict"]]
    return f"'{label['expected']}' ({label['name']}): {label['verdict']} (rank {label['rank']}{z}): {meaning}"


def _run_lines(result, top) -> list:
    """Give the header and a line per run: ids, method, M ± U and the two best candidates."""
    table = result.table
    header = (f"{'run':<12} {'sample':<10} {'method':<15} {'M ideal gas ± U (k=2)':<26} "
              "best two candidates (M·Z of each)")
    lines = [header, "-" * len(header)]
    # each column once as a list: a cell lookup per run costs more than the run's line
    runs, samples = table.text["run"].tolist(), table.text["sample"].tolist()
    methods, rows = table.text["method"].tolist(), table.row_numbers.tolist()
    for index in range(len(table)):
        run = _cut(runs[index] or f"(row {rows[index]})", 12)
        sample = _cut(samples[index] or "", 10)
        method = _cut(methods[index] or "?", 15)
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
    return lines


def _sample_lines(entry, top) -> list:
    """Give one sample's lines: M ± U, ranked candidates, label check, hazards, notes, warnings."""
    block = entry["molar_mass"]
    value = format_value(block["value"], block["U"]) + " g/mol" if block else "no result"
    extra = ""
    if entry.get("replicates"):
        rep = entry["replicates"]
        extra = f", {rep['n']} run(s)"
        if rep["birge_ratio"] is not None:
            extra += f", Birge ratio {rep['birge_ratio']:.2f}"
    lines = [f"{entry['sample']}: ideal gas {value} (k=2){extra}"]
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
    lines += reference_lines(entry)
    label = entry.get("label")
    if label:
        lines.append(f"    label: {_label_text(label)}")
    if entry.get("purity"):
        lines.append(f"    purity: {entry['purity']['statement']}")
    if entry.get("limiting_density"):
        lines.append(f"    limiting density: {limiting_text(entry['limiting_density'])}")
    if entry.get("mixture_hypotheses"):
        lines.append(f"    hypotheses: {hypothesis_text(entry['mixture_hypotheses'])}")
    if entry.get("conformity"):
        lines.append(f"    specification: {conformity_text(entry['conformity'])}")
    if "hazards" in entry:
        lines.append(f"    hazards: {hazard_line(entry['hazards'])}")
    for note in entry.get("distinguish", []) or []:
        lines.append(f"    note: {note}")
    for warning in entry["warnings"]:
        lines.append(f"    warning: {warning}")
    return lines


def _section(title, body) -> list:
    """Give a titled section (blank line, title, underline), or nothing when it has no lines."""
    if not body:
        return []
    return ["", title, "-" * len(title), *body]


def _monte_carlo_lines(lines, check) -> list:
    """Add a line under each run whose Monte Carlo interval differs, and a summary after the runs."""
    flagged = check.flagged
    out = list(lines[:2])
    for index, line in enumerate(lines[2:]):
        out.append(line)
        if flagged[index]:
            tolerance = check.tolerance[index] * _G
            # the tolerance to its one digit: δ = 0.05 gives two decimals
            places = max(0, 1 - math.floor(math.log10(2 * tolerance)))
            low, high = check.low[index] * _G, check.high[index] * _G
            linear_low, linear_high = check.linear_low[index] * _G, check.linear_high[index] * _G
            out.append(
                f"{'':<12} Monte Carlo 95 %: {low:.{places}f} to {high:.{places}f} g/mol; linear "
                f"{linear_low:.{places}f} to {linear_high:.{places}f} (ends differ by "
                f"{abs(low - linear_low):.{places}f} and {abs(high - linear_high):.{places}f}, "
                f"tolerance {tolerance:.{places}f})")
    analysed, differ = int(check.analysed.sum()), int(flagged.sum())
    head = f"Monte Carlo check (GUM Supplement 1, {check.draws:,} draws per run, seed {check.seed}): "
    agree = int((check.analysed & check.agrees).sum())
    verdict = (f"the 95 % intervals of {agree} of {analysed} analysed runs agree with the linear "
               "ones (M ± 1.96u) within the tolerance of JCGM 101 8.1" if not differ else
               f"{differ} of {analysed} analysed runs have a 95 % interval that differs from the "
               "linear one (M ± 1.96u) beyond the tolerance of JCGM 101 8.1 (marked above)")
    undecided = int(check.undecided.sum())
    if undecided:
        verdict += (f"; {undecided} undecided: their Monte Carlo ends are too noisy at this number "
                    "of draws (JCGM 101 7.9); give more")
    elif check.draws < SUGGESTED_DRAWS:
        verdict += f" (fewer draws than the {SUGGESTED_DRAWS:,} JCGM 101 7.2.2 suggests)"
    return out + ["", head + verdict]


def to_table(result, top: int = 5, monte_carlo=None, cell_limit: int = DEFAULT_CELL_LIMIT) -> str:
    """Format a plain-text report for a terminal.

    With ``monte_carlo`` (a :class:`~molid.pipeline.monte_carlo.MonteCarloCheck`), a
    line under each run whose Monte Carlo interval differs from the linear one, and
    a one-line summary after the runs. Control characters in the user's text are
    shown escaped, and a line longer than ``cell_limit`` characters (a message
    quoting an over-long cell) is cut there with a note (see :mod:`molid.io.display`).
    """
    table = result.table
    lines = _run_lines(result, top)
    if monte_carlo is not None:
        lines = _monte_carlo_lines(lines, monte_carlo)
    if result.sample_runs:
        lines += _section("Samples (replicates combined)", [
            line for entry in sample_entries(result, top) for line in _sample_lines(entry, top)])
    lines += _section("Errors (these rows were not analysed)",
                      [message for index in range(len(table)) for message in result.errors[index]])
    runs, rows = table.text["run"].tolist(), table.row_numbers.tolist()
    lines += _section("Warnings", [
        f"row {rows[index]} ({runs[index]}): {message}"
        for index in range(len(table)) for message in result.warnings[index]])
    lines += _section("Notes", [f"- {note}" for note in result.notes])
    return screen_text(lines, cell_limit)


def screen_text(lines, cell_limit: int = DEFAULT_CELL_LIMIT) -> str:
    """Join lines for a terminal: control characters escaped, over-long lines cut, with a note if any was."""
    shown_lines = [shown(line, cell_limit) for line in lines]
    if any(len(line) > cell_limit and was_cut(text) for line, text in zip(lines, shown_lines,
                                                                          strict=True)):
        shown_lines += ["", cut_note(cell_limit)]
    return "\n".join(shown_lines) + "\n"


def cut_note(cell_limit: int) -> str:
    """Say that a display cut some text, and where to find it whole."""
    return (f"- some text is longer than {cell_limit:,} characters and is cut in this display; the "
            "CSV and JSON outputs keep it whole (--cell-limit N shows more)")
