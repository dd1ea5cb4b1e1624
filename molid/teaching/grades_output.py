"""Outputs of a graded section: the JSON document, the grades CSV and the terminal table."""

from __future__ import annotations

import io
import math
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from molid.methods.mistakes import MISTAKE_CODES, UNEXPLAINED
from molid.teaching.class_summary import json_number

if TYPE_CHECKING:
    from molid.teaching.grading import Grading

__all__ = ["grading_document", "grades_csv", "grades_table"]

#: Column of :attr:`Grading.grades` and its header in the grades CSV, in CSV order.
_CSV_COLUMNS = (
    ("run", "run"), ("row", "row"), ("student", "student"), ("section", "section"),
    ("sample", "sample"), ("method", "method"), ("expected", "expected"),
    ("expected_name", "expected_name"), ("true_molar_mass", "true_molar_mass_g_mol"),
    ("molar_mass", "molar_mass_g_mol"), ("U", "U_g_mol"),
    ("reported_molar_mass", "reported_molar_mass_g_mol"), ("percent_error", "percent_error"),
    ("graded_percent_error", "graded_percent_error"), ("in_interval", "in_interval"),
    ("expected_rank", "expected_rank"), ("expected_z", "expected_z"),
    ("identified", "identified"), ("identified_as", "identified_as"), ("points", "points"),
    ("max_points", "max_points"), ("deduction", "deduction"), ("diagnosis", "diagnosis"),
    ("diagnosis_text", "diagnosis_text"), ("error", "error"),
)


# -- JSON -------------------------------------------------------------------------------

def _grade_entry(row) -> dict:
    """Build the ``"grade"`` object of one run's JSON entry."""
    rank = row["expected_rank"]
    return {
        "expected": row["expected"],
        "expected_name": row["expected_name"],
        "student": row["student"],
        "section": row["section"],
        "percent_error": json_number(row["percent_error"]),
        "graded_percent_error": json_number(row["graded_percent_error"]),
        "in_interval": None if pd.isna(row["in_interval"]) else bool(row["in_interval"]),
        "expected_rank": None if pd.isna(rank) else int(rank),
        "expected_z": json_number(row["expected_z"]),
        "identified": None if pd.isna(row["identified"]) else bool(row["identified"]),
        "identified_as": row["identified_as"],
        "points": json_number(row["points"]),
        "max_points": json_number(row["max_points"]),
        "deduction": json_number(row["deduction"]),
        "diagnosis": list(row["diagnosis"]),
        "diagnosis_text": row["diagnosis_text"] or None,
        "error": row["error"],
    }


def grading_document(grading: Grading, top: int | None = None) -> dict:
    """Build the JSON document of a graded section: identify's plus grades and summary.

    Parameters
    ----------
    grading : Grading
        From :func:`molid.teaching.grading.grade`.
    top : int, optional
        Candidates per run and sample (all when None).

    Returns
    -------
    dict
        The ``molid identify`` document; each result gains ``"grade"`` and the top
        level gains ``"summary"`` and ``"rubric"``.
    """
    from molid.io.json_document import to_document

    document = to_document(grading.identification, top)
    for entry, (_, row) in zip(document["results"], grading.grades.iterrows(), strict=True):
        entry["grade"] = _grade_entry(row)
    document["notes"] = list(document["notes"]) + list(grading.notes)
    document["summary"] = grading.summary
    document["rubric"] = grading.rubric.to_dict()
    return document


# -- CSV --------------------------------------------------------------------------------

def _csv_cell(value):
    """Write one grades value as a spreadsheet cell: blank, TRUE/FALSE, a number or text."""
    if value is None or value is pd.NA:
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "TRUE" if value else "FALSE"
    if isinstance(value, (list, tuple)):
        return "; ".join(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        return "" if not math.isfinite(value) else float(f"{value:.8g}")
    return str(value)


def grades_csv(grading: Grading) -> str:
    """Write the grades CSV: one row per run, safe to open in a spreadsheet.

    Text cells a spreadsheet would run as a formula are neutralised
    (:func:`molid.io.safe_files.neutralise_cell`); numbers stay numbers.
    """
    import csv

    from molid.io.safe_files import neutralise_cell

    # The csv module quotes a field holding a character of its line terminator: with "\r\n"
    # a carriage return inside a cell is quoted too (RFC 4180, 2.6); each line then ends "\n".
    row = io.StringIO()
    writer = csv.writer(row, lineterminator="\r\n")
    lines = []

    def write(cells):
        row.seek(0)
        row.truncate()
        writer.writerow(cells)
        lines.append(row.getvalue()[:-2] + "\n")

    write([header for _, header in _CSV_COLUMNS])
    frame = grading.grades
    columns = [frame[name].tolist() for name, _ in _CSV_COLUMNS]
    for index in range(len(frame)):
        write([neutralise_cell(_csv_cell(column[index])) for column in columns])
    return "".join(lines)


# -- terminal table ---------------------------------------------------------------------

def _cut(text, width) -> str:
    """Shorten a text to a column width, marking the cut with an ellipsis."""
    from molid.io.display import escape_controls

    text = "" if text is None else escape_controls(text)  # escaped first: the width is what shows
    return text if len(text) <= width else text[: width - 1] + "…"


def _number_text(value, digits=2, sign=False) -> str:
    """Format a number with fixed decimals (four significant digits when huge), ``-`` when missing."""
    if value is None or not np.isfinite(value):
        return "-"
    style = f".{digits}f" if abs(value) < 1e9 else ".4g"  # a 1e308 typed in fits the column
    return f"{value:+{style}}" if sign else f"{value:{style}}"


def _spread_text(value) -> str:
    """Format a robust spread to two significant figures, or ``-`` when it is missing."""
    return "-" if value is None or not np.isfinite(value) else f"{value:.2g}"


def _run_lines(frame: pd.DataFrame) -> list:
    """Lay out one line per run: result, error, rank, points and diagnosis."""
    from molid.io.terminal import format_value

    lines = [f"{'run':<10} {'student':<20} {'sample':<8} {'true gas':<16} "
             f"{'recomputed M ± U':<18} {'reported':>9} {'error %':>8} {'rank':>4} "
             f"{'points':>9}  diagnosis"]
    lines.append("-" * len(lines[0]))
    for row in frame.itertuples(index=False):
        value = format_value(row.molar_mass, row.U)
        rank = "-" if pd.isna(row.expected_rank) else str(int(row.expected_rank))
        points = ("-" if not np.isfinite(row.points)
                  else f"{row.points:g}/{row.max_points:g}")
        diagnosis = ", ".join(row.diagnosis) if row.diagnosis else ("not graded" if row.error
                                                                     else "")
        lines.append(
            f"{_cut(row.run, 10):<10} {_cut(row.student, 20):<20} {_cut(row.sample, 8):<8} "
            f"{_cut(row.expected_name or row.expected, 16):<16} {_cut(value, 18):<18} "
            f"{_number_text(row.reported_molar_mass, 3):>9} "
            f"{_number_text(row.percent_error, 2, sign=True):>8} {rank:>4} {points:>9}  "
            f"{diagnosis}")
    return lines


def _summary_lines(summary: dict) -> list:
    """Lay out the class summary: a line per unknown and per section, then the diagnoses."""
    lines = ["", "Summary (percent error of the students' results; robust spread = 1.4826 MAD)",
             "-" * 77]
    header = (f"  {'group':<24} {'runs':>4} {'graded':>6} {'median %':>9} {'spread %':>9} "
              f"{'identified':>10} {'mean pts':>8}  outliers")
    for title, groups, key in (("by unknown", summary["by_unknown"], "unknown"),
                               ("by section", summary["by_section"], "section")):
        lines.append(title)
        lines.append(header)
        for group in groups:
            outliers = ", ".join(str(item["run"]) for item in group["outliers"]) or "-"
            lines.append(
                f"  {_cut(group[key], 24):<24} {group['count']:>4} {group['graded']:>6} "
                f"{_number_text(group['median_percent_error'], 2, True):>9} "
                f"{_spread_text(group['robust_spread_percent']):>9} "
                f"{group['identified']:>10} {_number_text(group['mean_points'], 1):>8}  {outliers}")
    if summary["diagnoses"]:
        lines.append("most common diagnoses: " + ", ".join(
            f"{item['code']} ({item['count']})" for item in summary["diagnoses"]))
    else:
        lines.append("no mistakes diagnosed")
    return lines


def _remark_lines(grading: Grading) -> list:
    """Lay out the diagnoses in words, the runs not graded, the notes and the rubric used."""
    frame = grading.grades
    lines = []
    explained = frame[frame["diagnosis_text"].astype(bool)]
    if len(explained):
        lines += ["", "Diagnoses", "---------"]
        for row in explained.itertuples(index=False):
            lines.append(f"{row.run} ({row.student or 'no name'}): {row.diagnosis_text}")
    failed = frame[frame["error"].notna()]
    if len(failed):
        lines += ["", "Not graded", "----------"]
        lines.extend(f"{row.run or '(no run id)'}: {row.error}" for row in failed.itertuples())
    notes = list(grading.identification.notes) + list(grading.notes)
    if notes:
        lines += ["", "Notes", "-----"]
        lines.extend(f"- {note}" for note in notes)
    lines.append(f"rubric: {grading.rubric.source}; codes: " + ", ".join(
        (*MISTAKE_CODES, UNEXPLAINED)))
    return lines


def grades_table(grading: Grading, cell_limit: int | None = None) -> str:
    """Format the grades and the summary as plain text for a terminal.

    Control characters in the user's text are shown escaped and a line longer than
    ``cell_limit`` characters is cut (see :func:`molid.io.terminal.screen_text`).
    """
    from molid.io.display import DEFAULT_CELL_LIMIT
    from molid.io.terminal import screen_text

    lines = (_run_lines(grading.grades) + _summary_lines(grading.summary)
             + _remark_lines(grading))
    return screen_text(lines, DEFAULT_CELL_LIMIT if cell_limit is None else cell_limit)
