"""What the results page shows, as plain data: the report's page model and the grades, made picklable.

The page shows what a printed report shows (:mod:`molid.reports.content`): per sample
the molar mass with its interval, the inputs, the uncertainty budget, the
molar-mass axis, the ranked candidates with their verdicts, what the run cannot
tell apart, warnings and the safety cautions. For a graded section it shows the
grades table and the class summary and plots. Plots are written as SVG files into the
analysis's folder and shown as images (an image cannot run script).

Every text is cut to the display limit with its control characters escaped
(:func:`shown`); the page's templates escape it for HTML.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

__all__ = ["CELL_LIMIT", "GRADES_SHOWN", "draw_figure", "grading_page", "identification_page", "shown",
           "texts"]

#: Rows of the grades table shown on the page (the grades CSV holds every one).
GRADES_SHOWN = 2000
#: Rows with errors listed on the page (the CSV's error column holds every one).
_ERRORS_SHOWN = 100


#: Characters of one text the page shows before cutting it (the downloads keep it whole).
CELL_LIMIT = 10_000
#: Control characters, and Unicode's bidirectional controls (which reorder what is shown; N. Boucher and
#: R. Anderson, "Trojan Source", USENIX Security 2023), are shown as escapes, not obeyed.
_CONTROLS = str.maketrans({code: (f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}")
                           for code in [*range(0x00, 0x09), 0x0B, 0x0C, *range(0x0E, 0x20), 0x7F,
                                        *range(0x80, 0xA0), 0x061C, 0x200E, 0x200F, *range(0x202A, 0x202F),
                                        *range(0x2066, 0x206A)]})


def shown(text, limit: int = CELL_LIMIT) -> str:
    r"""Make a text safe to show: control characters escaped, cut at ``limit`` characters with a note.

    HTML escaping is the templates' (Jinja's autoescape); tabs and line breaks stay.

    Examples
    --------
    >>> shown("A1\x1b[2J\u202e")
    'A1\\x1b[2J\\u202e'
    >>> shown("x" * 12, 5)
    'xxxxx… [cut: 12 characters in all]'
    """
    text = str(text)
    if len(text) > limit:
        text = text[:limit] + f"… [cut: {len(text):,} characters in all]"
    return text.translate(_CONTROLS)


def texts(value):
    r"""Make every text in a value (a str, or lists and dicts of them) safe to show.

    Examples
    --------
    >>> texts({"a": ["x\x1by", 2]})
    {'a': ['x\\x1by', 2]}
    """
    if isinstance(value, str):
        return shown(value)
    if isinstance(value, dict):
        return {key: texts(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [texts(item) for item in value]
    return value


class _Figures:
    """Keep the plots of a page model as files, numbered in order.

    A plot with a picklable description (``spec``) is kept as that description (JSON) and drawn
    when the browser first asks for it (:func:`draw_figure`): drawing a plot costs about a
    fifth of a second, and a page of 25 samples need not wait for 25 of them. Others are drawn
    here, as SVG.
    """

    def __init__(self, folder: Path):
        self.folder = Path(folder) / "plots"
        self.folder.mkdir(exist_ok=True)
        self.count = 0

    def write(self, block) -> dict:
        import json

        from molid.reports.figures import figure_svg

        self.count += 1
        name = f"figure-{self.count}.svg"
        if block.spec is not None:
            (self.folder / f"figure-{self.count}.json").write_text(json.dumps(block.spec), encoding="utf-8")
        else:
            (self.folder / name).write_bytes(figure_svg(block.make()))
        return {"type": "plot", "src": name, "alt": texts(block.alt), "title": texts(block.title)}


def draw_figure(svg: Path) -> bool:
    """Draw a plot kept as its description (see :class:`_Figures`) into its SVG file, once.

    Parameters
    ----------
    svg : pathlib.Path
        ``plots/figure-N.svg`` of an analysis; its description is ``figure-N.json`` beside it.

    Returns
    -------
    bool
        True when the SVG file is there (drawn now or before).
    """
    import json

    from molid.io.safe_files import write_atomic
    from molid.reports.figures import figure_svg, spec_figure

    if svg.is_file():
        return True
    description = svg.with_suffix(".json")
    if not description.is_file():
        return False
    write_atomic(svg, figure_svg(spec_figure(json.loads(description.read_text(encoding="utf-8")))))
    return True


def _table(block) -> dict:
    align = block.align or "L" * len(block.columns)
    rows = []
    for index, cells in enumerate(block.rows):
        styles = block.styles[index] if block.styles else None
        row = []
        for column, cell in enumerate(cells):
            bar = None
            if column == block.bars:
                try:
                    bar = max(0.0, min(float(cell), 100.0))
                except ValueError:
                    bar = None
            row.append({"text": texts(str(cell)), "style": (styles[column] if styles and column < len(styles)
                                                            else None) or "",
                        "align": align[column] if column < len(align) else "L", "bar": bar})
        rows.append(row)
    return {"type": "table", "title": texts(block.title), "columns": texts([str(c) for c in block.columns]),
            "align": align, "rows": rows, "note": texts(block.note)}


def _block(block, figures, plots: bool = True):
    from molid.reports.content import Bullets, Columns, Fields, Highlight, Plot, Table

    if isinstance(block, Columns):
        left, right = _block(block.left, figures, plots), _block(block.right, figures, plots)
        return {"type": "columns", "left": left, "right": right} if left or right else None
    if isinstance(block, Fields):
        return {"type": "fields", "items": [[texts(str(label)), texts(str(value))]
                                            for label, value in block.items]}
    if isinstance(block, Highlight):
        return {"type": "highlight", "lines": texts(list(block.lines))}
    if isinstance(block, Table):
        return _table(block)
    if isinstance(block, Plot):
        return figures.write(block) if plots else None
    if isinstance(block, Bullets):
        if not block.items and not block.footnote:
            return None
        return {"type": "bullets", "title": texts(block.title), "items": texts(list(block.items)),
                "kind": block.kind, "footnote": texts(block.footnote), "lead": texts(block.lead)}
    return None  # signature lines belong on paper


def _page(page, number: int, figures, plots: bool = True) -> dict:
    blocks = [item for item in (_block(block, figures, plots) for block in page.blocks) if item]
    return {"title": texts(page.title), "subtitle": texts(page.subtitle), "anchor": f"page-{number}",
            "blocks": blocks, "glance": _glance(blocks)}


_LABEL = re.compile(r"Label '(?P<label>.*)' \((?P<name>.*)\): (?P<verdict>[A-Z][A-Z-]+)\b")


def _glance(blocks) -> dict:
    """Give the line of the overview table: the result, the best candidate, the label check."""
    flat = []
    for block in blocks:
        flat += [block["left"], block["right"]] if block["type"] == "columns" else [block]
    flat = [block for block in flat if block]
    result = next((block["lines"][0] for block in flat if block["type"] == "highlight"), "")
    result = result.split(": ", 1)[-1].split("  (U", 1)[0]  # the value ± U; the header says the rest
    glance = {"result": result, "candidate": "", "verdict": "", "style": "", "label": "", "label_verdict": "",
              "label_style": ""}
    best = next((block["rows"][0] for block in flat if block["type"] == "table"
                 and block["title"].startswith("Candidates") and block["rows"]), None)
    if best is not None:
        verdict = next((cell for cell in best if cell["style"]), {"text": "", "style": ""})
        glance.update(candidate=best[1]["text"] if len(best) > 1 else "", verdict=verdict["text"],
                      style=verdict["style"])
    lines = [line for block in flat if block["type"] == "bullets" for line in block["items"]]
    found = next((match for match in map(_LABEL.match, lines) if match), None)
    if found is not None:
        word = found["verdict"].lower()
        glance.update(label=found["label"], label_verdict=word, label_style=word)
    return glance


def _run_errors(result) -> list:
    rows = result.table.row_numbers
    run_ids = result.table.text["run"].to_numpy(dtype=object)
    listed = []
    for index, problems in enumerate(result.errors):
        if problems and len(listed) < _ERRORS_SHOWN:
            listed.append({"run": texts(str(run_ids[index] or "")), "row": int(rows[index]),
                           "messages": texts(list(problems))})
    return listed


def identification_page(result, folder, top: int, limit: int) -> dict:
    """Give the results page of an identification: an overview, then a section per sample or run.

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify`.
    folder : pathlib.Path
        The analysis's private folder (plots are written under ``plots/``).
    top : int
        Ranked candidates per sample.
    limit : int
        Samples and runs drawn in full; one section counts the rest.

    Returns
    -------
    dict
        Picklable: counts, the sections, rows with errors, the file's notes.
    """
    import inspect

    from molid.reports.content import identify_report

    # a report model that can draw only the first pages is asked to (it then counts the rest)
    limited = "page_limit" in inspect.signature(identify_report).parameters
    report = identify_report(result, top=top, **({"page_limit": limit} if limited else {}))
    figures = _Figures(folder)
    ok = result.ok
    pages = [_page(page, number, figures) for number, page in enumerate(report.pages[:limit + 1], start=1)]
    return {"kind": "identify", "source": texts(report.source), "runs": len(ok), "analysed": int(ok.sum()),
            "with_errors": int((~ok).sum()), "with_warnings": sum(1 for row in result.warnings if row),
            "samples": len(result.samples), "pages": pages, "more": max(0, len(report.pages) - len(pages)),
            "errors": _run_errors(result), "notes": texts(list(result.notes))}


def _number(value, places: int, sign: bool = False) -> str:
    try:
        value = float(value)
    except (TypeError, ValueError):
        return ""
    if not math.isfinite(value):
        return ""
    return f"{value:{'+' if sign else ''}.{places}f}".replace("-", "−")


def _missing(value) -> bool:
    import pandas as pd

    return value is None or bool(pd.isna(value)) if not isinstance(value, (list, tuple)) else False


def _yes_no(value) -> str:
    return "" if _missing(value) else ("yes" if bool(value) else "no")


def _grade_row(row) -> dict:
    text = {name: "" if _missing(value) else str(value)
            for name, value in (("run", row.run), ("student", row.student), ("section", row.section),
                                ("sample", row.sample), ("method", row.method),
                                ("identified_as", row.identified_as),
                                ("diagnosis", row.diagnosis_text), ("error", row.error))}
    recomputed = _number(row.molar_mass, 3)
    return {**texts(text), "row": int(row.row),
            "gas": texts(next((str(value) for value in (row.expected_name, row.expected)
                               if not _missing(value) and str(value)), "")),
            "reported": _number(row.reported_molar_mass, 3),
            "recomputed": f"{recomputed} ± {_number(row.U, 3)}" if recomputed else "",
            "percent_error": f"{_number(row.percent_error, 2, sign=True)} %" if _number(row.percent_error, 2)
            else "",
            "in_interval": _yes_no(row.in_interval), "identified": _yes_no(row.identified),
            "points": f"{_number(row.points, 0)} / {_number(row.max_points, 0)}" if _number(row.points, 1)
            else ""}


def _section_safety(grading):
    """Give the safety block of a graded report's sheet, for the whole section's unknowns."""
    from molid.candidates.hazards import pressure_unit_texts
    from molid.reports.graded import _unknown_safety

    result = grading.identification
    hazards = {}
    if result.ranking is not None:
        library = result.ranking.library
        hazards = {name: list(classes) for name, classes in
                   zip(library["name"], library["ghs_hazards"], strict=True)}
    return _unknown_safety(grading.grades, hazards, pressure_unit_texts(result.table.units))


def grading_page(grading) -> dict:
    """Give the results page of a graded section: the grades, the class summary, the class plots.

    Parameters
    ----------
    grading : Grading
        From :func:`molid.teaching.grading.grade`.

    Returns
    -------
    dict
        Picklable: the grades rows (at most :data:`GRADES_SHOWN`), the sections, the summary
        sections and the class plots (files written by :func:`molid.teaching.class_plots.write_class_plots`).
    """
    from molid.reports.graded import _summary_pages  # the class summary exactly as a report prints it

    grades = grading.grades
    rows = [_grade_row(row) for row in grades.head(GRADES_SHOWN).itertuples(index=False)]
    sections = sorted({row["section"] for row in rows if row["section"]})
    summary = [_page(page, number, None, plots=False)
               for number, page in enumerate(_summary_pages(grading), start=1)]
    summary = [page for page in summary if page["blocks"]]
    identification = grading.identification
    return {"kind": "grade", "runs": len(grades), "graded": int(grades["error"].isna().sum()),
            "rows": rows, "shown": len(rows), "sections": sections, "summary": summary,
            "safety": _block(_section_safety(grading), None),
            "notes": texts(list(grading.notes) + list(identification.notes)),
            "plots": [{"src": "percent_error.svg", "alt": "Percent error of every graded run, grouped by "
                       "unknown; runs with a diagnosed mistake marked."},
                      {"src": "intervals.svg", "alt": "Each run's recomputed interval against the true "
                       "molar mass."}]}
