"""The planning page: the plan's summary, tables and figures as a PDF (fpdf2) or self-contained HTML.

Figures are drawn with matplotlib (imported here, only when a page is written):
the predicted intervals of all unknowns on one molar-mass axis, with close groups
enlarged; the confusion table of a simulated section as a heat map with each
cell's percentage written in it (never colour alone); and the operating
characteristic of a purity decision, its three curves told apart by line style
as well as colour. Every string is drawn as plain text (fpdf2 cells with markup
off, escaped HTML).
"""

from __future__ import annotations

import html
import io
from pathlib import Path

from molid.planning.conditions import PlanError
from molid.planning.output import input_words, percent

__all__ = ["PAGE_FORMATS", "page_format", "interval_figure", "confusion_figure", "characteristic_figure",
           "render_pdf", "render_html"]

#: File name endings of the two page formats.
PAGE_FORMATS = {".pdf": "pdf", ".html": "html", ".htm": "html"}
_TEXT_WIDTH = 180.0  # mm, the printable width on A4 and US Letter alike


def page_format(path) -> str:
    """Return 'pdf' or 'html' from a page's file name; refuse any other ending."""
    suffix = Path(str(path)).suffix.lower()
    if suffix not in PAGE_FORMATS:
        raise PlanError(f"-o {path}: the planning page is written as .pdf or .html; give a name ending "
                        "in one of them")
    return PAGE_FORMATS[suffix]


def _figure(width, height):
    from matplotlib.figure import Figure

    return Figure(figsize=(width, height), dpi=100, layout="constrained")


def _groups(document):
    """Join the unknowns that cannot be told apart into groups (two or more members each)."""
    groups = []
    for pair in document["pairs"]:
        if pair["in_library"] or pair["separable"]:
            continue
        joined = [group for group in groups if pair["a"] in group or pair["b"] in group]
        merged = {pair["a"], pair["b"]}.union(*joined)
        groups = [group for group in groups if group not in joined] + [merged]
    return [sorted(group) for group in groups][:3]


def interval_figure(document):
    """Draw the predicted 95 % intervals (k = 2) of all unknowns on one axis, close groups enlarged."""
    unknowns = sorted(document["unknowns"], key=lambda item: item["molar_mass"])
    groups = _groups(document)
    figure = _figure(7.0, 2.2 + 0.22 * len(unknowns) + (1.8 if groups else 0.0))
    grid = figure.add_gridspec(2 if groups else 1, max(len(groups), 1),
                               height_ratios=[1.6, 1.0] if groups else [1.0])
    main = figure.add_subplot(grid[0, :])
    replicates = document["replicates"]
    for row, item in enumerate(unknowns):
        main.errorbar(item["molar_mass"], row, xerr=item["U"], fmt="o", color="black", capsize=3)
        main.annotate(f"{item['molar_mass']:.3f} ± {item['U']:.2g}",
                      (item["molar_mass"], row), xytext=(6, 4), textcoords="offset points", fontsize=7)
    main.set_yticks(range(len(unknowns)), [item["name"] for item in unknowns], fontsize=7)
    main.set_xlabel("molar mass [g/mol]; bars: U (k = 2) of one run")
    main.margins(x=0.15)
    by_name = {item["name"]: item for item in unknowns}
    for column, group in enumerate(groups):
        axis = figure.add_subplot(grid[1, column])
        for row, name in enumerate(group):
            item = by_name[name]
            axis.errorbar(item["molar_mass"], row + 0.1, xerr=item["U"], fmt="o", color="black", capsize=3,
                          label="one run" if row == 0 else None)
            if replicates > 1:
                axis.errorbar(item["molar_mass"], row - 0.1, xerr=item["replicates"]["U"], fmt="s",
                              color="tab:blue", linestyle="none", capsize=3,
                              label=f"{replicates} runs" if row == 0 else None)
        axis.set_yticks(range(len(group)), group, fontsize=7)
        axis.set_ylim(-0.6, len(group) - 0.4)
        axis.tick_params(axis="x", labelsize=7)
        axis.set_title("cannot be told apart", fontsize=8)
        if replicates > 1:
            axis.legend(fontsize=6)
    return figure


def confusion_figure(document):
    """Draw the simulated confusion table as a heat map, each cell's percentage written in it."""
    names = [row["true"] for row in document["confusion"]]
    matrix = []
    for row in document["confusion"]:
        taken = row["taken_for_among_unknowns"]
        matrix.append([row["first_among_unknowns"] if name == row["true"] else taken.get(name, 0.0)
                       for name in names])
    size = max(2.5, 0.42 * len(names) + 1.4)
    figure = _figure(size + 1.2, size)
    axis = figure.add_subplot()
    image = axis.imshow(matrix, cmap="Blues", vmin=0.0, vmax=1.0)
    for i, values in enumerate(matrix):
        for j, value in enumerate(values):
            axis.text(j, i, percent(value), ha="center", va="center", fontsize=7,
                      color="white" if value > 0.6 else "black")
    axis.set_xticks(range(len(names)), names, rotation=45, ha="right", fontsize=7)
    axis.set_yticks(range(len(names)), names, fontsize=7)
    axis.set_xlabel("ranked first among the unknowns")
    axis.set_ylabel("true unknown")
    figure.colorbar(image, ax=axis, fraction=0.046, label="fraction of simulated runs")
    return figure


def characteristic_figure(document):
    """Draw the operating characteristic: probability of accept, reject, undecided against the true x."""
    points = document["operating_characteristic"]
    qa = document["qa"]
    figure = _figure(7.0, 3.0)
    axis = figure.add_subplot()
    x = [point["x"] for point in points]
    for key, style in (("accept", "-"), ("reject", "--"), ("undecided", ":")):
        axis.plot(x, [point[key] for point in points], style, linewidth=1.8, label=key)
    axis.axvline(qa["limit"], color="black", linewidth=0.8)
    axis.annotate("limit", (qa["limit"], 1.02), ha="center", fontsize=7, annotation_clip=False)
    axis.set_xlabel(f"true mole fraction of {qa['contaminant']} [%]")
    axis.set_ylabel("probability")
    axis.set_ylim(-0.02, 1.05)
    axis.legend(fontsize=7, title=f"{qa['rule']} acceptance", title_fontsize=7)
    return figure


def _figures(document) -> list:
    """Each figure the document calls for, as (title, matplotlib figure)."""
    found = []
    if document["unknowns"]:
        found.append(("Predicted intervals", interval_figure(document)))
    if document["confusion"]:
        found.append(("Simulated confusion", confusion_figure(document)))
    if document["operating_characteristic"]:
        found.append(("Operating characteristic", characteristic_figure(document)))
    return found


def _tables(document) -> list:
    """Give the page's tables as (title, header, rows) of text."""
    tables = []
    if document["unknowns"]:
        n = document["replicates"]
        header = ["unknown", "M g/mol", "u", "U"] + ([f"U, {n} runs"] if n > 1 else []) \
            + ["largest part of u"]
        rows = [[item["name"], f"{item['molar_mass']:.3f}", f"{item['u']:.2g}", f"{item['U']:.2g}"]
                + ([f"{item['replicates']['U']:.2g}"] if n > 1 else [])
                + [f"{input_words(item['dominant_input'])} ({item['dominant_percent']:.0f} %)"]
                for item in document["unknowns"]]
        tables.append(("Predicted result of one run as each unknown (g/mol, k = 2)", header, rows))
    pairs = sorted((pair for pair in document["pairs"] if not pair["separable"]),
                   key=lambda pair: (pair["in_library"], pair["separation"]))
    if pairs:
        rows = [[pair["a"], pair["b"], f"{pair['separation']:.2g}",
                 str(pair["replicates_needed"]) if pair["replicates_needed"] is not None
                 else (pair["reason"] or "")] for pair in pairs[:40]]
        tables.append(("Pairs that cannot be told apart (separation in u; 5 needed)",
                       ["a", "b", "separation", "replicates needed, or why none"], rows))
    if document["confusion"]:
        rows = [[row["true"], percent(row["consistent"]), percent(row["first"]),
                 ", ".join(f"{name} {percent(value)}" for name, value in list(row["taken_for"].items())[:3])
                 or "-"] for row in document["confusion"]]
        tables.append(("Simulated section", ["true unknown", "consistent", "first", "otherwise taken for"],
                       rows))
    if document["operating_characteristic"]:
        rows = [[f"{point['x']:.3g}", percent(point["accept"]), percent(point["reject"]),
                 percent(point["undecided"])] for point in document["operating_characteristic"][::2]]
        tables.append(("Operating characteristic", ["true x %", "accept", "reject", "undecided"], rows))
    return tables


def _heading(document) -> str:
    conditions = document["conditions"]
    return (f"{document['method']}: {conditions['volume']} at {conditions['temperature']} and "
            f"{conditions['pressure']}; {document['replicates']} run(s) per unknown; profile: "
            f"{document['profile']}")


def _png(figure) -> bytes:
    stream = io.BytesIO()
    figure.savefig(stream, format="png", dpi=150, metadata={"Software": None})
    return stream.getvalue()


def _svg(figure) -> str:
    stream = io.StringIO()
    figure.savefig(stream, format="svg", metadata={"Date": None, "Creator": None})
    text = stream.getvalue()
    return text[text.index("<svg"):]


def _font(style=""):
    import matplotlib

    names = {"": "DejaVuSans.ttf", "B": "DejaVuSans-Bold.ttf"}
    return str(Path(matplotlib.get_data_path()) / "fonts" / "ttf" / names[style])


def _pdf_table(document, title, header, rows):
    """Draw one table: a bold title, a bold header row, then the rows; long cells wrap."""
    from fpdf.fonts import FontFace

    document.set_font("DejaVu", "B", 9)
    document.multi_cell(_TEXT_WIDTH, 5, title, new_x="LMARGIN", new_y="NEXT")
    widths = [_TEXT_WIDTH / len(header)] * len(header)
    if len(header) > 3:  # the first column holds names, the last words
        widths = [40.0] + [(_TEXT_WIDTH - 90.0) / (len(header) - 2)] * (len(header) - 2) + [50.0]
    document.set_font("DejaVu", "", 7.5)
    with document.table(col_widths=widths, line_height=4, text_align="LEFT", width=_TEXT_WIDTH,
                        headings_style=FontFace(emphasis="BOLD"), borders_layout="HORIZONTAL_LINES",
                        markdown=False) as table:
        for cells in [header] + rows:
            line = table.row()
            for cell in cells:
                line.cell(str(cell))
    document.ln(3)


def render_pdf(document: dict, paper: str = "a4") -> bytes:
    """Draw the planning page as a PDF with fpdf2; returns the file's bytes."""
    from fpdf import FPDF

    width, height = {"a4": (210.0, 297.0), "letter": (215.9, 279.4)}[paper]
    pdf = FPDF(orientation="P", unit="mm", format=(width, height))
    pdf.add_font("DejaVu", "", _font(""))
    pdf.add_font("DejaVu", "B", _font("B"))
    margin = (width - _TEXT_WIDTH) / 2
    pdf.set_margins(margin, 14, margin)
    pdf.set_auto_page_break(True, margin=15)
    pdf.set_title("molid measurement plan")
    pdf.add_page()
    pdf.set_font("DejaVu", "B", 14)
    pdf.cell(_TEXT_WIDTH, 8, "Measurement plan", new_x="LMARGIN", new_y="NEXT")
    pdf.set_font("DejaVu", "", 8.5)
    pdf.multi_cell(_TEXT_WIDTH, 4.5, _heading(document), new_x="LMARGIN", new_y="NEXT")
    pdf.ln(2)
    for line in document["summary"]:
        pdf.multi_cell(_TEXT_WIDTH, 4.5, f"• {line}", new_x="LMARGIN", new_y="NEXT")
    pdf.ln(3)
    for title, header, rows in _tables(document):
        _pdf_table(pdf, title, header, rows)
    for title, figure in _figures(document):
        data = _png(figure)
        width_in, height_in = figure.get_size_inches()
        shown = min(_TEXT_WIDTH, width_in * 25.4)
        tall = shown * height_in / width_in
        if pdf.get_y() + tall + 8 > height - 15:
            pdf.add_page()
        pdf.set_font("DejaVu", "B", 9)
        pdf.cell(_TEXT_WIDTH, 5, title, new_x="LMARGIN", new_y="NEXT")
        pdf.image(io.BytesIO(data), x=margin, w=shown, h=tall)
        pdf.ln(3)
    for heading, lines in (("Notes", document["notes"]), ("Safety", document["cautions"])):
        if lines:
            pdf.set_font("DejaVu", "B", 9)
            pdf.cell(_TEXT_WIDTH, 5, heading, new_x="LMARGIN", new_y="NEXT")
            pdf.set_font("DejaVu", "", 8)
            for line in lines:
                pdf.multi_cell(_TEXT_WIDTH, 4, f"• {line}", new_x="LMARGIN", new_y="NEXT")
            pdf.ln(2)
    return bytes(pdf.output())


def render_html(document: dict) -> str:
    """Write the planning page as one self-contained HTML file (figures as inline SVG)."""
    escape = html.escape
    parts = ["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
             "<title>molid measurement plan</title>",
             "<style>body{font-family:sans-serif;max-width:60em;margin:2em auto;font-size:14px}"
             "table{border-collapse:collapse;margin:0.5em 0 1.5em}td,th{border-bottom:1px solid #ccc;"
             "padding:2px 8px;text-align:left}.safety{background:#fff0e6;padding:0.5em 1em}</style>",
             "</head><body>", "<h1>Measurement plan</h1>", f"<p>{escape(_heading(document))}</p>"]
    parts.append("<ul>" + "".join(f"<li>{escape(line)}</li>" for line in document["summary"]) + "</ul>")
    for title, header, rows in _tables(document):
        parts.append(f"<h2>{escape(title)}</h2><table><tr>"
                     + "".join(f"<th>{escape(cell)}</th>" for cell in header) + "</tr>"
                     + "".join("<tr>" + "".join(f"<td>{escape(str(cell))}</td>" for cell in row) + "</tr>"
                               for row in rows) + "</table>")
    for title, figure in _figures(document):
        parts.append(f"<h2>{escape(title)}</h2><figure>{_svg(figure)}</figure>")
    if document["notes"]:
        parts.append("<h2>Notes</h2><ul>" + "".join(f"<li>{escape(line)}</li>" for line in document["notes"])
                     + "</ul>")
    parts.append('<div class="safety"><h2>Safety</h2><ul>'
                 + "".join(f"<li>{escape(line)}</li>" for line in document["cautions"]) + "</ul></div>")
    parts.append("</body></html>")
    return "\n".join(parts) + "\n"
