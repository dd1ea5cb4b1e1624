"""The graded report: a sheet per student, then the class summary with its plots.

Each sheet shows the student's readings as entered, their result beside molid's
recomputation, the percent error, the points and, in plain words, the classic
mistake that explains the difference (see :mod:`molid.teaching.diagnosis`). The class
summary gives the statistics per unknown and per section and the two class plots
of :mod:`molid.teaching.class_plots`.
"""

from __future__ import annotations

import numpy as np

from molid.candidates.hazards import (
    SAFETY_FOOTNOTE,
    hazard_cautions,
    method_cautions,
    pressure_unit_texts,
    substance_cautions,
    unit_cautions,
)
from molid.reports.content import (
    Bullets,
    Columns,
    Fields,
    Highlight,
    Page,
    Plot,
    Report,
    Signature,
    Table,
    _budget_rows,
    _budget_table,
    _free_column,
    _inputs_table,
    _joined,
    _nearby,
    _plot_block,
    _signed,
    format_with_uncertainty,
    precautions_text,
)
from molid.uncertainty.propagation import COVERAGE_FACTOR

__all__ = ["graded_report"]

_G = 1e3


def _number(value, places=2, unit="") -> str:
    if value is None or not np.isfinite(value):
        return "–"
    return f"{value:.{places}f}{unit}".replace("-", "−")


def _percent(value) -> str:
    if value is None or not np.isfinite(value):
        return "–"
    places = 2 if abs(value) < 10 else 1 if abs(value) < 1000 else 0
    return f"{value:+.{places}f} %".replace("-", "−")


def _groups(grades):
    """Group rows into sheets: one per student (runs together), a run without a student alone."""
    order, groups = [], {}
    for position, student in enumerate(grades["student"].to_numpy(dtype=object)):
        key = ("student", student) if student else ("run", position)
        if key not in groups:
            groups[key] = []
            order.append(key)
        groups[key].append(position)
    return [(key, groups[key]) for key in order]


def _reported(row, typed) -> str:
    """Show the student's reported molar mass as they wrote it, else formatted."""
    written = typed.get(int(row.row), "")
    if written:
        return written
    return _number(row.reported_molar_mass, 3) if np.isfinite(row.reported_molar_mass) else "–"


def _grade_table(frame, typed) -> Table:
    rows, styles = [], []
    for row in frame.itertuples(index=False):
        if row.error:
            rows.append([row.run, "–", "–", "–", "–", "–", "–", "–", "–", "not graded"])
            styles.append([None] * 9 + ["error"])
            continue
        inside = bool(row.in_interval) if row.in_interval is not None else None
        rank = (f"{int(row.expected_rank)} (z = {_signed(row.expected_z)})"
                if row.expected_rank is not None and np.isfinite(row.expected_rank) else "–")
        rows.append([
            row.run,
            _reported(row, typed),
            format_with_uncertainty(row.molar_mass, row.U),
            _percent(row.percent_error),
            _number(row.graded_percent_error, 2, " %"),
            "yes" if inside else "no" if inside is False else "–",
            rank,
            row.identified_as or "–",
            _number(row.deduction, 0) if row.deduction else "0",
            f"{row.points:g} / {row.max_points:g}",
        ])
        share = row.points / row.max_points if row.max_points else 0.0
        level = "consistent" if share >= 0.8 else "marginal" if share >= 0.5 else "excluded"
        styles.append([None] * 5 + ["consistent" if inside else "excluded"] + [None] * 3
                      + [level])
    return Table(
        "Your result and the grade",
        ["run", "your M [g/mol]", "recomputed M ± U [g/mol]", "error", "error for points",
         "true M in interval", "rank of true gas", "identified as", "deduction", "points"],
        rows, [12.0, 16.0, 26.0, 14.0, 15.0, 13.0, 20.0, 22.0, 14.0, 16.0], "LRRRRLLLRR",
        styles,
        "Error = 100·(your M − true M)/true M. Error for points: the smaller of the errors "
        "against the true molar mass and against what perfect readings of the true gas give "
        "with the ideal gas law (non-ideality costs nothing); after a diagnosed mistake it is "
        "measured from the result the mistake explains. Interval: the recomputed result for "
        "the true gas's real-gas behaviour, ±U (k = 2).",
    )


def _student_fields(frame, key, positions, columns) -> Fields:
    """Give the sheet header: student, section, runs, unknown, method and date."""
    kind, ident = key
    fields = [("Student", ident if kind == "student" else "–")]
    sections = ", ".join(dict.fromkeys(s for s in frame["section"] if s))
    if sections:
        fields.append(("Section", sections))
    fields.append(("Runs" if len(frame) > 1 else "Run", ", ".join(frame["run"].astype(str))))
    unknowns = ", ".join(dict.fromkeys(s for s in frame["sample"] if s))
    fields.append(("Unknown", unknowns or "–"))
    fields.append(("Method", ", ".join(dict.fromkeys(m for m in frame["method"] if m)) or "–"))
    date = _joined(columns["date"], positions)
    if date:
        fields.append(("Date", date))
    return Fields(fields)


def _grade_lines(frame, typed) -> list:
    """Write the highlighted grade: points, then per run the truth, the error and the interval."""
    lines = []
    graded = frame[frame["error"].isna()]
    if len(graded):
        points = graded["points"].sum()
        most = graded["max_points"].sum()
        lines.append(f"Points: {points:g} of {most:g}" + (
            f" ({len(graded)} runs)" if len(graded) > 1 else ""))
    else:
        lines.append("Not graded: no run on this sheet could be analysed (see below).")
    for row in graded.itertuples(index=False):
        truth = (f"{row.expected_name} ({row.expected}), M = {row.true_molar_mass:.3f} g/mol"
                 if row.expected_name else f"{row.expected or 'not given'}")
        prefix = f"{row.run}: " if len(graded) > 1 else ""
        reported = (f"you reported {_reported(row, typed)} g/mol, an error of "
                    f"{_percent(row.percent_error)}" if np.isfinite(row.reported_molar_mass)
                    else f"recomputed error {_percent(row.percent_error)}")
        lines.append(f"{prefix}Unknown {row.sample or '–'} is {truth}; {reported}.")
        if np.isfinite(row.true_gas_molar_mass):
            inside = "contains" if row.in_interval else "does not contain"
            lines.append(
                f"{prefix}Recomputed from your readings: "
                f"{format_with_uncertainty(row.molar_mass, row.U)} g/mol (ideal gas, k = 2); "
                f"for {row.expected_name}'s real-gas behaviour "
                f"{format_with_uncertainty(row.true_gas_molar_mass, row.true_gas_U)} g/mol, "
                f"which {inside} the true value.")
    return lines


def _diagnosis_items(frame) -> list:
    """Say per graded run which mistake explains the result, or that none was found."""
    diagnosis = []
    for row in frame.itertuples(index=False):
        prefix = f"{row.run}: " if len(frame) > 1 else ""
        if row.error:
            continue
        text = row.diagnosis_text or ""
        if text:
            diagnosis.append(prefix + text[0].upper() + text[1:] + ("" if text.endswith(".")
                                                                      else "."))
        else:
            diagnosis.append(prefix + "No mistake found: your result follows from your readings.")
    return diagnosis


def _readings_blocks(grading, frame, table_positions, run_labels) -> list:
    """Give the readings table and, for the first analysed run, its budget beside the axis plot."""
    result = grading.identification
    notes = list(result.notes) + list(grading.notes)
    blocks = [_inputs_table(result, table_positions, run_labels, notes)]
    ok = [p for p in table_positions if not result.errors[p]]
    if ok and result.ranking is not None:
        position = ok[0]
        value, u = result.molar_mass[position] * _G, result.u[position] * _G
        candidates = result.ranking.run_candidates(position)
        first = frame.iloc[0]
        label = first["expected_name"] if first["expected_name"] else None
        budget = _budget_rows(result, [position])
        nearby = _nearby(candidates, value, COVERAGE_FACTOR * u, label)
        left = _budget_table(budget, 1)
        left.title = "Uncertainty budget" + (f" ({run_labels[position]})"
                                              if len(ok) > 1 else "")
        blocks.append(Columns(left, _plot_block(value, COVERAGE_FACTOR * u, nearby, label)))
    return blocks


def _unknown_safety(frame, hazards, units) -> Bullets:
    """List the hazard classes of the sheet's true gases; cautions for them, the method and the units."""
    gases = [name for name in dict.fromkeys(frame["expected_name"]) if name]
    items = []
    cautions = []
    for name in gases:
        classes = hazards.get(name, [])
        items.append(f"{name}: {'; '.join(classes) or 'no GHS hazard class in the library'}")
        cautions += [c for c in hazard_cautions(classes) if c not in cautions]
    extra = (substance_cautions(gases) + method_cautions(m for m in frame["method"] if m)
             + unit_cautions(units))
    cautions += [c for c in dict.fromkeys(extra) if c not in cautions]
    if cautions:
        items.append(precautions_text(cautions))
    return Bullets("Safety: the unknown's hazard classes (GHS)", items, "safety",
                   SAFETY_FOOTNOTE)


def _student_page(grading, key, positions, run_labels, columns, hazards, top, typed) -> Page:
    frame = grading.grades.iloc[positions]
    result = grading.identification
    kind, ident = key
    title = f"Student: {ident}" if kind == "student" else f"Run {frame.iloc[0]['run']}"
    blocks = [_student_fields(frame, key, positions, columns),
              Highlight(_grade_lines(frame, typed)),
              _grade_table(frame, typed)]
    diagnosis = _diagnosis_items(frame)
    if diagnosis:
        blocks.append(Bullets("Diagnosis", diagnosis, "note"))
    table_positions = [_table_position(result, row, columns.get("positions"))
                       for row in frame.itertuples(index=False)]
    table_positions = [p for p in table_positions if p is not None]
    if table_positions:
        blocks += _readings_blocks(grading, frame, table_positions, run_labels)
    errors = [f"{row.run}: {row.error}" for row in frame.itertuples(index=False) if row.error]
    if errors:
        blocks.append(Bullets("Not graded", errors, "error"))
    warnings = [f"{run_labels[p]}: {message}" for p in table_positions
                for message in result.warnings[p]]
    if warnings:
        blocks.append(Bullets("Warnings", warnings, "warning"))
    blocks.append(_unknown_safety(frame, hazards,
                                  pressure_unit_texts(result.table.units)))
    blocks.append(Signature(("Graded by",)))
    return Page(title, "", blocks, key=str(ident))


def _table_position(result, row, positions=None):
    """Find the identification's table position of a graded row (by spreadsheet row)."""
    if positions is not None:
        return positions.get(int(row.row))
    matches = np.flatnonzero(result.table.row_numbers == int(row.row))
    return int(matches[0]) if len(matches) else None


def _summary_rows(groups, label):
    rows = []
    for group in groups:
        rows.append([
            str(group[label]), str(group["count"]), str(group["graded"]),
            _percent(group["median_percent_error"]),
            _number(group["robust_spread_percent"], 2, " %"),
            f"{group['identified']} of {group['graded']}",
            f"{group['in_interval']} of {group['graded']}",
            _number(group["mean_points"], 1),
            str(len(group["outliers"])),
        ])
    return rows


_SUMMARY_COLUMNS = ["", "runs", "graded", "median error", "robust spread", "identified",
                    "true M in interval", "mean points", "outliers"]
_SUMMARY_WIDTHS = [34.0, 11.0, 12.0, 18.0, 18.0, 18.0, 20.0, 16.0, 14.0]


def _summary_pages(grading) -> list:
    from molid.methods.mistakes import DESCRIPTIONS
    from molid.teaching import class_plots

    summary = grading.summary
    overall = summary["overall"]
    lines = [
        f"{summary['graded']} of {summary['runs']} runs graded; mean points "
        f"{_number(overall['mean_points'], 1)} of {_number(summary['max_points'], 0)}",
        f"Median error {_percent(overall['median_percent_error'])}; robust spread "
        f"{_number(overall['robust_spread_percent'], 2, ' %')}; gas identified in "
        f"{overall['identified']} runs; true molar mass inside the recomputed interval in "
        f"{overall['in_interval']} runs.",
    ]
    blocks = [Highlight(lines)]
    by_unknown = Table("By unknown", ["unknown"] + _SUMMARY_COLUMNS[1:],
                       _summary_rows(summary["by_unknown"], "unknown"), _SUMMARY_WIDTHS,
                       "LRRRRRRRR", note=summary["statistics"][0].upper()
                       + summary["statistics"][1:] + ".")
    blocks.append(by_unknown)
    if len(summary["by_section"]) > 1 or (summary["by_section"] and
                                          summary["by_section"][0]["section"] != "(no section)"):
        blocks.append(Table("By section", ["section"] + _SUMMARY_COLUMNS[1:],
                            _summary_rows(summary["by_section"], "section"), _SUMMARY_WIDTHS,
                            "LRRRRRRRR"))
    if summary["diagnoses"]:
        blocks.append(Table(
            "Mistakes found", ["mistake", "what it means", "runs", "which runs"],
            [[item["code"], DESCRIPTIONS.get(item["code"], ""), str(item["count"]),
              ", ".join(map(str, item["runs"]))] for item in summary["diagnoses"]],
            [28.0, 90.0, 10.0, 52.0], "LLRL"))
    outliers = overall["outliers"]
    if outliers:
        blocks.append(Bullets("Outliers (|robust z| above the limit)", [
            f"{item['run']} ({item['student'] or 'no name'}): error "
            f"{_percent(item['percent_error'])}, robust z {_number(item['robust_z'], 1)}"
            for item in outliers], "warning"))
    first = Page("Class summary", "", blocks, key="class summary")
    pages = [first]
    plots = []
    for maker, alt in ((class_plots.percent_error_figure,
                        "Percent error of every graded run, grouped by unknown."),
                       (class_plots.interval_figure,
                        "Each run's recomputed interval against the true molar mass.")):
        figure = maker(grading)
        width, height = figure.get_size_inches()
        # These figures clip markers and use mathtext ticks, which fpdf2's SVG reader skips.
        size = 170.0 if not plots else 180.0
        plots.append(Plot(lambda figure=figure: figure, size, min(size * height / width, 235.0),
                          alt, raster_in_pdf=True))
    first.blocks.insert(1, plots[0])
    pages.append(Page("Class summary: intervals", "", [plots[1]], key="class intervals"))
    return pages


def _omitted_page(grades, groups, page_limit) -> Page:
    """Count the students' sheets beyond the page limit on one page (the class summary follows)."""
    positions = [p for _, members in groups for p in members]
    not_graded = int(grades["error"].iloc[positions].notna().sum()) if positions else 0
    return Page("Sheets not drawn", "", [
        Highlight([f"{len(groups):,} more sheets are not drawn",
                   f"This report draws the first {page_limit:,} sheets (--max-pages); the class "
                   "summary that follows covers every run, and the grades CSV (molid grade FILE "
                   "-o grades.csv) lists each one."]),
        Fields([("Not drawn", f"{len(groups):,} sheets"),
                ("Their runs", f"{len(positions):,}, of which {not_graded:,} not graded")]),
    ], key="not drawn")


def graded_report(source, *, key=None, rubric=None, profile=None, library=None, top=5,
                  page_limit=None):
    """Build the page model of a graded file: a sheet per student, then the class summary.

    Parameters
    ----------
    source : str, pathlib.Path, file-like or pandas.DataFrame
        The section's run file.
    key, rubric, profile, library
        As for :func:`molid.teaching.grading.grade`.
    top : int
        Ranked candidates considered for each sheet's plot.
    page_limit : int, optional
        Draw at most this many students' sheets; one page counts the rest (the class
        summary covers every run).

    Returns
    -------
    report : Report
        The pages.
    ok : bool
        False when some runs could not be graded.
    """
    from molid.teaching.grading import grade

    grading = grade(source, key=key, rubric=rubric, profile=profile, library=library)
    result = grading.identification
    table = result.table
    run_ids = table.text["run"].to_numpy(dtype=object)
    run_labels = [run if run is not None else f"row {table.row_numbers[k]}"
                  for k, run in enumerate(run_ids)]
    columns = {"date": _free_column(table.raw, ("date", "run_date"))}
    hazards = {}
    if result.ranking is not None:
        library_frame = result.ranking.library
        hazards = {name: list(classes) for name, classes in
                   zip(library_frame["name"], library_frame["ghs_hazards"], strict=True)}
    cells = _free_column(table.raw, ("reported_molar_mass",))
    typed = {} if cells is None else {int(number): cell for number, cell in
                                      zip(table.row_numbers, cells, strict=True) if cell}
    # each graded row's place in the identification, found once (not by a scan per row)
    columns["positions"] = {int(row): k for k, row in enumerate(table.row_numbers)}
    groups = _groups(grading.grades)
    drawn = groups if page_limit is None else groups[:page_limit]
    pages = [_student_page(grading, group, positions, run_labels, columns, hazards, top, typed)
             for group, positions in drawn]
    if len(drawn) < len(groups):
        pages.append(_omitted_page(grading.grades, groups[len(drawn):], page_limit))
    pages += _summary_pages(grading)
    ok = bool(grading.grades["error"].isna().all())
    return Report("Graded lab report", table.source or "data", pages), ok
