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
from molid.planning.output import heading, input_words, percent, purity_lines, replicate_notes, significant

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
    """Join the unknowns that cannot be told apart into groups; without any, the closest pair.

    Returns
    -------
    list of tuple
        (title, sorted names) of at most three groups to enlarge.
    """
    groups = []
    for pair in document["pairs"]:
        if pair["in_library"] or pair["separable"]:
            continue
        joined = [group for group in groups if pair["a"] in group or pair["b"] in group]
        merged = {pair["a"], pair["b"]}.union(*joined)
        groups = [group for group in groups if group not in joined] + [merged]
    if groups:
        return [("cannot be told apart", sorted(group)) for group in groups][:3]
    inner = [pair for pair in document["pairs"] if not pair["in_library"]]
    if not inner:
        return []
    closest = min(inner, key=lambda pair: pair["separation"])
    return [(f"closest pair: {closest['separation']:.3g} u apart", sorted((closest["a"], closest["b"])))]


def _enlarged(axis, title, group, by_name, replicates):
    """Draw one enlarged group: each member's interval of one run and of N replicates."""
    for row, name in enumerate(group):
        item = by_name[name]
        axis.errorbar(item["molar_mass"], row + 0.1, xerr=item["U"], fmt="o", color="black", capsize=3,
                      label="one run" if row == 0 else None)
        if replicates > 1:
            axis.errorbar(item["molar_mass"], row - 0.1, xerr=item["replicates"]["U"], fmt="s",
                          color="tab:blue", linestyle="--", capsize=3,
                          label=f"{replicates} runs" if row == 0 else None)
    axis.set_yticks(range(len(group)), group, fontsize=7)
    axis.set_ylim(-0.6, len(group) - 0.4)
    axis.tick_params(axis="x", labelsize=7)
    axis.set_xlabel("molar mass [g/mol]", fontsize=7)
    axis.set_title(title, fontsize=8)
    if replicates > 1:
        axis.legend(fontsize=6)


def interval_figure(document):
    """Draw the predicted 95 % intervals (k = 2) of all unknowns on one axis, close groups enlarged."""
    unknowns = sorted(document["unknowns"], key=lambda item: item["molar_mass"])
    groups = _groups(document)
    figure = _figure(7.0, 1.6 + 0.25 * len(unknowns) + (1.9 if groups else 0.0))
    grid = figure.add_gridspec(2 if groups else 1, max(len(groups), 1),
                               height_ratios=[1.6, 1.0] if groups else [1.0])
    main = figure.add_subplot(grid[0, :])
    low = min(item["molar_mass"] for item in unknowns)
    high = max(item["molar_mass"] for item in unknowns)
    for row, item in enumerate(unknowns):
        main.errorbar(item["molar_mass"], row, xerr=item["U"], fmt="o", color="black", capsize=3)
        # labels in the right half go to the left of their point, so none runs past the frame
        right = high > low and item["molar_mass"] > (low + high) / 2
        main.annotate(f"{item['molar_mass']:.3f} ± {item['U']:.2g}", (item["molar_mass"], row),
                      xytext=(-6 if right else 6, 3), textcoords="offset points", fontsize=7,
                      ha="right" if right else "left", va="bottom")
    main.set_yticks(range(len(unknowns)), [item["name"] for item in unknowns], fontsize=7)
    main.set_ylim(-0.6, len(unknowns) - 0.2)
    main.set_xlabel("molar mass [g/mol]; bars: U (k = 2) of one run, too short to see where the "
                    "unknowns are far apart", fontsize=8)
    main.tick_params(axis="x", labelsize=7)
    main.margins(x=0.08)
    by_name = {item["name"]: item for item in unknowns}
    for column, (title, group) in enumerate(groups):
        _enlarged(figure.add_subplot(grid[1, column]), title, group, by_name, document["replicates"])
    return figure


def _confusion_matrix(document, extra_columns=6):
    """Rows: true unknowns; columns: the unknowns, then the library substances runs were taken for."""
    names = [row["true"] for row in document["confusion"]]
    others = {}
    for row in document["confusion"]:
        for name, value in row["taken_for"].items():
            if name not in names:
                others[name] = max(others.get(name, 0.0), value)
    shown = sorted(others, key=lambda name: -others[name])[:extra_columns]
    columns = names + shown + (["any other"] if len(others) > len(shown) else [])
    matrix = []
    for row in document["confusion"]:
        values = [row["first"] if name == row["true"] else row["taken_for"].get(name, 0.0)
                  for name in names + shown]
        if len(columns) > len(names) + len(shown):
            values.append(sum(value for name, value in row["taken_for"].items()
                              if name not in names and name not in shown))
        matrix.append(values)
    return names, columns, matrix


def confusion_figure(document):
    """Draw the simulated confusion table as a heat map, each cell's percentage written in it.

    Each row is a true unknown; each cell the share of its simulated runs (or samples) in
    which a substance ranks first among the whole library. The columns right of the line
    are library substances that are not among the unknowns.
    """
    names, columns, matrix = _confusion_matrix(document)
    width = max(3.2, 0.55 * len(columns) + 2.4)
    height = max(2.4, 0.38 * len(names) + 1.9)
    figure = _figure(min(width, 7.0), height)
    axis = figure.add_subplot()
    image = axis.imshow(matrix, cmap="Blues", vmin=0.0, vmax=1.0, aspect="auto")
    for i, values in enumerate(matrix):
        for j, value in enumerate(values):
            axis.text(j, i, percent(value), ha="center", va="center", fontsize=6.5,
                      color="white" if value > 0.6 else "black")
    if len(columns) > len(names):
        axis.axvline(len(names) - 0.5, color="black", linewidth=1.2)
    axis.set_xticks(range(len(columns)), columns, rotation=40, ha="right", fontsize=7)
    axis.set_yticks(range(len(names)), names, fontsize=7)
    axis.set_xlabel("ranked first among the whole library (right of the line: not an unknown)", fontsize=7)
    axis.set_ylabel("true unknown", fontsize=8)
    bar = figure.colorbar(image, ax=axis, fraction=0.046)
    bar.set_label("share of simulated runs", fontsize=7)
    bar.ax.tick_params(labelsize=6)
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
    axis.axvline(qa["limit"], color="black", linewidth=1.0, label=f"limit {qa['limit']:g} %")
    if qa["rule"] == "guarded" and qa["guard_band"] > 0:
        for sign in (-1, 1):
            axis.axvline(qa["limit"] + sign * qa["guard_band"], color="grey", linewidth=0.9, linestyle="-.",
                         label="limit ± guard band" if sign < 0 else None)
    if document["detection_limit"] is not None and document["detection_limit"] <= max(x):
        axis.axvline(document["detection_limit"], color="tab:purple", linewidth=0.9, linestyle=(0, (1, 3)),
                     label="detection limit")
    axis.set_xlabel(f"true mole fraction of {qa['contaminant']} in {qa['label']} [%]", fontsize=8)
    axis.set_ylabel("probability", fontsize=8)
    axis.tick_params(labelsize=7)
    axis.set_ylim(-0.02, 1.02)
    axis.legend(fontsize=7, title=f"{qa['rule']} acceptance", title_fontsize=7, loc="upper left",
                bbox_to_anchor=(1.01, 1.0))
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


def _block(title, header=None, rows=(), widths=None, lines=()):
    """One block of the page: a title, a table (optional) and lines of text after it."""
    return {"title": title, "header": header, "rows": list(rows), "widths": widths, "lines": list(lines)}


def _predicted_block(document):
    """Give the predicted results and, under them, when replicates cannot help."""
    n = document["replicates"]
    measured = document["conditions"].get("humidity_measured", True)
    header = ["unknown", "M", "u", "U"] + ([f"U, {n} runs"] if n > 1 else []) + ["largest part of u"]
    rows = [[item["name"], f"{item['molar_mass']:.3f}", significant(item["u"]), significant(item["U"])]
            + ([significant(item["replicates"]["U"])] if n > 1 else [])
            + [f"{input_words(item['dominant_input'], measured)} ({item['dominant_percent']:.0f} %)"]
            for item in document["unknowns"]]
    widths = [45, 20, 17, 17] + ([20] if n > 1 else []) + [61 if n > 1 else 81]
    return _block("Predicted result of one run as each unknown (g/mol, k = 2)", header, rows, widths,
                  replicate_notes(document))


def _verdict(pair) -> str:
    if pair["separable"]:
        return "yes"
    if pair["replicates_needed"] is not None:
        return f"no; {pair['replicates_needed']} runs would"
    return "no; " + (pair["reason"] or "")


def _pair_block(document, library):
    """Give the pairs of unknowns (those that cannot be told apart, then the closest), or the library's."""
    pairs = [pair for pair in document["pairs"] if pair["in_library"] == library]
    if not pairs:
        return None
    pairs = sorted(pairs, key=lambda pair: (pair["separable"], pair["separation"]))[:30 if library else 12]
    n = document["replicates"]
    told = any("simulated_told_apart" in pair for pair in pairs)
    header = (["unknown", "library substance"] if library else ["a", "b"]) + ["separation, one run"] \
        + ([f"separation, {n} runs"] if n > 1 else []) + ["separable"] \
        + (["simulated: told apart"] if told else [])
    rows = [[pair["a"], pair["b"], f"{pair['separation_one_run']:.3g} u"]
            + ([f"{pair['separation']:.3g} u"] if n > 1 else []) + [_verdict(pair)]
            + ([percent(pair.get("simulated_told_apart"))] if told else []) for pair in pairs]
    widths = [32, 32, 20] + ([20] if n > 1 else []) + [0] + ([20] if told else [])
    widths[widths.index(0)] = _TEXT_WIDTH - sum(widths)
    title = ("Library substances each unknown could be taken for" if library else
             "Pairs of unknowns, those that cannot be told apart first (5 u tells two apart)")
    return _block(title, header, rows, widths)


def _section_blocks(document):
    """Give the simulated section and its grades."""
    blocks = []
    if document["confusion"]:
        rows = [[row["true"], percent(row["consistent"]), percent(row["first"]),
                 percent(row["first_among_unknowns"]),
                 ", ".join(f"{name} {percent(value)}" for name, value in list(row["taken_for"].items())[:3])
                 or "-"] for row in document["confusion"]]
        simulation = document["simulation"]
        what = "runs" if simulation["replicates"] == 1 else f"samples of {simulation['replicates']} runs"
        blocks.append(_block(
            f"Simulated section: {simulation['outcomes']} {what} per unknown (seed {simulation['seed']})",
            ["true unknown", "consistent", "ranked first", "first among the unknowns",
             "otherwise ranked first"], rows, [40, 22, 22, 30, 66],
            [f"Simulator: {simulation['simulator']}."]))
    grades = document["grades"]
    if grades:
        rows = [[f"{item['points']:g}", percent(item["fraction"])] for item in grades["distribution"]]
        lines = [f"{code}: made in {percent(item['made'])} of runs, diagnosed in "
                 f"{percent(item['diagnosed'])} of those" for code, item in grades["mistakes"].items()]
        blocks.append(_block(
            f"Expected grades (rubric out of {grades['max_points']:g}; {grades['graded']} graded runs): mean "
            f"{grades['mean']:.1f}, median {grades['median']:g}, full marks {percent(grades['full_marks'])}",
            ["points", "share of runs"], rows, [45, 45], lines))
    return blocks


def _blocks(document) -> list:
    """Give the page's blocks, in order, each a title, an optional table and lines of text."""
    blocks = [_predicted_block(document)] if document["unknowns"] else []
    blocks += [block for block in (_pair_block(document, False), _pair_block(document, True)) if block]
    blocks += _section_blocks(document)
    if document["qa"]:
        rows = [[f"{point['x']:.3g}", percent(point["accept"]), percent(point["reject"]),
                 percent(point["undecided"])] for point in document["operating_characteristic"][::2]]
        blocks.append(_block("Purity", lines=purity_lines(document)))
        if rows:
            blocks.append(_block("Operating characteristic: the probability of each decision for a cylinder "
                                 "whose true fraction is x", ["true x %", "accept", "reject", "undecided"],
                                 rows, [30] * 4))
    return blocks


def _heading(document) -> str:
    return heading(document).removeprefix("molid plan: ")


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


def _pdf_block(pdf, block):
    """Draw one block: a bold title, the table (bold header row; long cells wrap), the lines after it."""
    from fpdf.fonts import FontFace

    pdf.set_font("DejaVu", "B", 9)
    pdf.multi_cell(_TEXT_WIDTH, 5, block["title"], align="L", new_x="LMARGIN", new_y="NEXT")
    if block["header"]:
        pdf.set_font("DejaVu", "", 7.5)
        widths = block["widths"] or [_TEXT_WIDTH / len(block["header"])] * len(block["header"])
        with pdf.table(col_widths=widths, line_height=4, text_align="LEFT", width=sum(widths), align="LEFT",
                       headings_style=FontFace(emphasis="BOLD"), borders_layout="HORIZONTAL_LINES",
                       markdown=False) as table:
            for cells in [block["header"]] + block["rows"]:
                line = table.row()
                for cell in cells:
                    line.cell(str(cell))
    pdf.set_font("DejaVu", "", 7.5)
    for text in block["lines"]:
        pdf.multi_cell(_TEXT_WIDTH, 4, text, align="L", new_x="LMARGIN", new_y="NEXT")
    pdf.ln(3)


def _pdf_lines(pdf, title, lines, size=8.0):
    """Draw a bold title and bulleted lines, left-aligned."""
    if not lines:
        return
    pdf.set_font("DejaVu", "B", 9)
    pdf.cell(_TEXT_WIDTH, 5, title, new_x="LMARGIN", new_y="NEXT")
    pdf.set_font("DejaVu", "", size)
    for line in lines:
        pdf.multi_cell(_TEXT_WIDTH, 4, f"• {line}", align="L", new_x="LMARGIN", new_y="NEXT")
    pdf.ln(2)


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
    pdf.multi_cell(_TEXT_WIDTH, 4.5, _heading(document), align="L", new_x="LMARGIN", new_y="NEXT")
    pdf.ln(2)
    _pdf_lines(pdf, "In short", document["summary"], 8.5)
    for block in _blocks(document):
        _pdf_block(pdf, block)
    for title, figure in _figures(document):
        width_in, height_in = figure.get_size_inches()
        shown = min(_TEXT_WIDTH, width_in * 25.4)
        tall = shown * height_in / width_in
        if pdf.get_y() + tall + 8 > height - 15:
            pdf.add_page()
        pdf.set_font("DejaVu", "B", 9)
        pdf.cell(_TEXT_WIDTH, 5, title, new_x="LMARGIN", new_y="NEXT")
        pdf.image(io.BytesIO(_png(figure)), x=margin, w=shown, h=tall)
        pdf.ln(3)
    _pdf_lines(pdf, "Notes", document["notes"])
    _pdf_lines(pdf, "Safety", document["cautions"])
    return bytes(pdf.output())


def render_html(document: dict) -> str:
    """Write the planning page as one self-contained HTML file (figures as inline SVG)."""
    escape = html.escape
    parts = ["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
             "<title>molid measurement plan</title>",
             "<style>body{font-family:sans-serif;max-width:60em;margin:2em auto;font-size:14px}"
             "table{border-collapse:collapse;margin:0.5em 0 1em}td,th{border-bottom:1px solid #ccc;"
             "padding:2px 8px;text-align:left;vertical-align:top}"
             ".safety{background:#fff0e6;padding:0.5em 1em}</style>", "</head><body>",
             "<h1>Measurement plan</h1>", f"<p>{escape(_heading(document))}</p>"]
    parts.append("<ul>" + "".join(f"<li>{escape(line)}</li>" for line in document["summary"]) + "</ul>")
    for block in _blocks(document):
        parts.append(f"<h2>{escape(block['title'])}</h2>")
        if block["header"]:
            parts.append("<table><tr>" + "".join(f"<th>{escape(cell)}</th>" for cell in block["header"])
                         + "</tr>" + "".join("<tr>" + "".join(f"<td>{escape(str(cell))}</td>" for cell in row)
                                             + "</tr>" for row in block["rows"]) + "</table>")
        parts += [f"<p>{escape(line)}</p>" for line in block["lines"]]
    for title, figure in _figures(document):
        parts.append(f"<h2>{escape(title)}</h2><figure>{_svg(figure)}</figure>")
    if document["notes"]:
        parts.append("<h2>Notes</h2><ul>" + "".join(f"<li>{escape(line)}</li>" for line in document["notes"])
                     + "</ul>")
    parts.append('<div class="safety"><h2>Safety</h2><ul>'
                 + "".join(f"<li>{escape(line)}</li>" for line in document["cautions"]) + "</ul></div>")
    parts.append("</body></html>")
    return "\n".join(parts) + "\n"
