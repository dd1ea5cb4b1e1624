"""The PDF writer: draws a :class:`~molid.reports.content.Report` with fpdf2.

Every string is drawn as text with fpdf2's cell functions (markdown off); nothing
a user typed is parsed as markup. Plots are matplotlib SVG drawn as vector paths.
The text area is 180 mm × 249 mm, centred, so the same layout prints on A4 and on
US Letter.
"""

from __future__ import annotations

import io
import logging
from pathlib import Path

from molid.reports.content import Bullets, Columns, Fields, Highlight, Plot, Signature, Table

__all__ = ["PAPER_SIZES", "TEXT_WIDTH", "render_pdf", "font_path"]

#: Paper sizes [mm].
PAPER_SIZES = {"a4": (210.0, 297.0), "letter": (215.9, 279.4)}
#: Width of the text area on every paper size [mm].
TEXT_WIDTH = 180.0
_TOP, _BOTTOM = 13.0, 15.0
_FONT = "DejaVu"
_STYLE_COLOURS = {
    "consistent": (27, 120, 55),
    "marginal": (196, 98, 0),
    "excluded": (178, 24, 43),
    "condenses": (111, 111, 111),
    "error": (178, 24, 43),
    "muted": (100, 100, 100),
}
_BOX = {"note": (245, 245, 245), "warning": (255, 244, 214), "error": (253, 226, 226),
        "safety": (255, 236, 224)}
_BOX_EDGE = {"note": (190, 190, 190), "warning": (214, 160, 0), "error": (178, 24, 43),
             "safety": (200, 80, 0)}


def font_path(style="") -> Path:
    """Locate the DejaVu Sans TTF that ships with matplotlib (style '', 'B', 'I' or 'BI')."""
    import matplotlib

    names = {"": "DejaVuSans.ttf", "B": "DejaVuSans-Bold.ttf", "I": "DejaVuSans-Oblique.ttf",
             "BI": "DejaVuSans-BoldOblique.ttf"}
    return Path(matplotlib.get_data_path()) / "fonts" / "ttf" / names[style]


def _document_class():
    from fpdf import FPDF

    class _Document(FPDF):
        report_title = ""
        report_source = ""
        report_footer = ""

        def header(self):
            self.set_font(_FONT, "", 7)
            self.set_text_color(110, 110, 110)
            self.set_xy(self.l_margin, 7)
            self.cell(TEXT_WIDTH / 2, 4, self.report_title)
            self.cell(TEXT_WIDTH / 2, 4, self.report_source, align="R")
            self.set_draw_color(200, 200, 200)
            self.line(self.l_margin, 11.5, self.l_margin + TEXT_WIDTH, 11.5)
            self.set_text_color(0, 0, 0)
            self.set_xy(self.l_margin, _TOP)

        def footer(self):
            self.set_y(-11)
            self.set_font(_FONT, "", 7)
            self.set_text_color(110, 110, 110)
            self.cell(TEXT_WIDTH * 0.75, 4, self.report_footer)
            self.cell(TEXT_WIDTH * 0.25, 4, f"page {self.page_no()} of {{nb}}", align="R")
            self.set_text_color(0, 0, 0)

    return _Document


def render_pdf(report, paper="a4") -> bytes:
    """Draw the report as PDF bytes.

    Parameters
    ----------
    report : Report
        The page model (see :mod:`molid.reports.content`).
    paper : {'a4', 'letter'}
        Paper size.

    Returns
    -------
    bytes
        The PDF file.
    """
    from molid.reports.figures import figure_png, figure_svg, svg_for_pdf

    logging.getLogger("fpdf.svg").setLevel(logging.ERROR)
    width, height = PAPER_SIZES[paper]
    document = _document_class()(orientation="P", unit="mm", format=(width, height))
    for style in ("", "B", "I", "BI"):
        document.add_font(_FONT, style, str(font_path(style)))
    # matplotlib names its SVG fonts "DejaVu Sans"; give fpdf2 that family too.
    for style in ("", "B"):
        document.add_font("DejaVu Sans", style, str(font_path(style)))
    margin = (width - TEXT_WIDTH) / 2
    document.set_margins(margin, _TOP, margin)
    document.set_auto_page_break(True, margin=_BOTTOM + 2)
    document.report_title = report.title
    document.report_source = report.source
    document.report_footer = f"molid {report.version}" + (
        f" · generated {report.generated}" if report.generated else "")
    document.set_title(report.title)
    document.set_creator(f"molid {report.version}")
    if report.generated_datetime is not None:
        document.set_creation_date(report.generated_datetime)
    for page in report.pages:
        document.add_page()
        document.start_section(page.title[:120], strict=False)
        _page(document, page, figure_svg, svg_for_pdf, figure_png)
    return bytes(document.output())


def _room(document) -> float:
    return document.page_break_trigger - document.get_y()


def _page(document, page, figure_svg, svg_for_pdf, figure_png):
    document.set_font(_FONT, "B", 13)
    document.multi_cell(TEXT_WIDTH, 6.5, page.title, new_x="LMARGIN", new_y="NEXT", align="L")
    if page.subtitle:
        document.set_font(_FONT, "", 7.5)
        document.set_text_color(90, 90, 90)
        document.multi_cell(TEXT_WIDTH, 4, page.subtitle, new_x="LMARGIN", new_y="NEXT", align="L")
        document.set_text_color(0, 0, 0)
    document.ln(1.5)
    for block in page.blocks:
        document.set_fill_color(255, 255, 255)
        document.set_draw_color(0, 0, 0)
        document.set_text_color(0, 0, 0)
        if isinstance(block, Columns):
            _columns(document, block, figure_svg, svg_for_pdf, figure_png)
        elif isinstance(block, Fields):
            _fields(document, block)
        elif isinstance(block, Highlight):
            _highlight(document, block)
        elif isinstance(block, Table):
            _table(document, block)
        elif isinstance(block, Plot):
            _plot(document, block, figure_svg, svg_for_pdf, figure_png)
        elif isinstance(block, Bullets):
            _bullets(document, block)
        elif isinstance(block, Signature):
            _signature(document, block)


def _fields(document, block):
    half = TEXT_WIDTH / 2
    label_width = 20.0
    items = list(block.items)
    for start in range(0, len(items), 2):
        top = document.get_y()
        bottom = top
        for column, (label, value) in enumerate(items[start:start + 2]):
            x = document.l_margin + column * half
            document.set_xy(x, top)
            document.set_font(_FONT, "B", 8)
            document.cell(label_width, 4.2, label)
            document.set_font(_FONT, "", 8)
            document.multi_cell(half - label_width - 2, 4.2, str(value), new_x="LMARGIN",
                                new_y="NEXT", align="L")
            bottom = max(bottom, document.get_y())
        document.set_xy(document.l_margin, bottom)
    document.ln(1.5)


def _highlight(document, block):
    lines = list(block.lines)
    document.set_font(_FONT, "", 8)
    line_count = 0
    for k, line in enumerate(lines):
        document.set_font(_FONT, "B" if k == 0 else "", 10 if k == 0 else 8)
        line_count += len(document.multi_cell(TEXT_WIDTH - 6, 4.6 if k == 0 else 4, line,
                                              dry_run=True, output="LINES", align="L"))
    box = 3 + line_count * 4.3
    if _room(document) < box:
        document.add_page()
    top = document.get_y()
    document.set_fill_color(232, 240, 250)
    document.set_draw_color(74, 119, 180)
    document.rect(document.l_margin, top, TEXT_WIDTH, box, style="DF")
    document.set_xy(document.l_margin + 3, top + 1.5)
    for k, line in enumerate(lines):
        document.set_font(_FONT, "B" if k == 0 else "", 10 if k == 0 else 8)
        document.set_x(document.l_margin + 3)
        document.multi_cell(TEXT_WIDTH - 6, 4.6 if k == 0 else 4, line, new_x="LMARGIN",
                            new_y="NEXT", align="L")
    document.set_y(max(document.get_y(), top + box) + 2)


def _table(document, block):
    from fpdf.fonts import FontFace

    if _room(document) < 16:
        document.add_page()
    document.set_font(_FONT, "B", 8)
    document.cell(TEXT_WIDTH, 4.5, block.title, new_x="LMARGIN", new_y="NEXT", align="L")
    document.set_font(_FONT, "", 7)
    total = sum(block.widths)
    width = min(TEXT_WIDTH, total) if total > 100 else total
    align = block.align or "L" * len(block.columns)
    headings = FontFace(emphasis="BOLD", fill_color=(230, 230, 230))
    document.set_draw_color(170, 170, 170)
    document.set_line_width(0.15)
    with document.table(col_widths=block.widths, width=width, align="LEFT",
                        line_height=3.4, headings_style=headings, markdown=False,
                        borders_layout="HORIZONTAL_LINES", padding=(0.6, 1.0),
                        text_align=tuple("RIGHT" if a == "R" else "LEFT" for a in align)) as table:
        row = table.row()
        for name in block.columns:
            row.cell(str(name))
        for index, cells in enumerate(block.rows):
            row = table.row()
            styles = block.styles[index] if block.styles else None
            for column, cell in enumerate(cells):
                style = styles[column] if styles else None
                if style in _STYLE_COLOURS:
                    face = FontFace(color=_STYLE_COLOURS[style],
                                    emphasis="BOLD" if style != "muted" else None)
                    row.cell(str(cell), style=face)
                else:
                    row.cell(str(cell))
    if block.note:
        document.set_font(_FONT, "I", 6.5)
        document.set_text_color(90, 90, 90)
        document.multi_cell(TEXT_WIDTH, 3.2, block.note, new_x="LMARGIN", new_y="NEXT", align="L")
        document.set_text_color(0, 0, 0)
    document.ln(2)


def _columns(document, block, figure_svg, svg_for_pdf, figure_png):
    """Draw a bar table on the left and a plot on the right, top-aligned."""
    needed = max(_compact_height(block.left), block.right.height)  # keep the pair together
    if _room(document) < needed + 2:
        document.add_page()
    top = document.get_y()
    _compact_table(document, block.left, document.l_margin, block.split - 2)
    left_bottom = document.get_y()
    document.set_y(top)
    _plot(document, block.right, figure_svg, svg_for_pdf, figure_png,
          x=document.l_margin + block.split)
    document.set_y(max(left_bottom, top + block.right.height) + 2)


def _compact_height(block) -> float:
    return 4.5 + 4.2 + 3.6 * len(block.rows) + (7 if block.note else 0)


def _fit(document, text, width) -> str:
    """Shorten text with an ellipsis to fit a width [mm] in the current font."""
    text = str(text)
    if document.get_string_width(text) <= width:
        return text
    while text and document.get_string_width(text + "…") > width:
        text = text[:-1]
    return text + "…"


def _compact_table(document, block, x, width):
    """Draw a table of one-line rows; the ``bars`` column gets a bar beside its number."""
    scale = width / sum(block.widths)
    widths = [w * scale for w in block.widths]
    align = block.align or "L" * len(block.columns)
    document.set_xy(x, document.get_y())
    document.set_font(_FONT, "B", 8)
    document.cell(width, 4.5, _fit(document, block.title, width), new_x="LEFT", new_y="NEXT")
    document.set_font(_FONT, "B", 6.2)
    document.set_fill_color(230, 230, 230)
    top = document.get_y()
    header_lines = [document.multi_cell(w - 1, 2.8, str(name), dry_run=True, output="LINES",
                                        align="L")
                    for w, name in zip(widths, block.columns, strict=True)]
    header = 1.2 + 2.8 * max(len(lines) for lines in header_lines)
    document.rect(x, top, width, header, style="F")
    left = x
    for w, lines, a in zip(widths, header_lines, align, strict=False):
        document.set_xy(left + 0.5, top + 0.6)
        document.multi_cell(w - 1, 2.8, "\n".join(lines), align="R" if a == "R" else "L")
        left += w
    y = top + header
    document.set_font(_FONT, "", 6.8)
    document.set_draw_color(190, 190, 190)
    document.set_line_width(0.15)
    for cells in block.rows:
        left = x
        for column, (w, cell, a) in enumerate(zip(widths, cells, align, strict=False)):
            if column == block.bars:
                try:
                    share = float(cell)
                except ValueError:
                    share = None
                if share is not None:
                    document.set_fill_color(74, 119, 180)
                    bar = max(0.0, min(share, 100.0)) / 100.0 * (w - 9.5)
                    if bar > 0.05:
                        document.rect(left + 0.5, y + 0.7, bar, 2.2, style="F")
            document.set_xy(left + 0.5, y)
            document.cell(w - 1, 3.6, _fit(document, cell, w - 1), align="R" if a == "R" else "L")
            left += w
        y += 3.6
        document.line(x, y, x + width, y)
    document.set_xy(x, y + 0.6)
    if block.note:
        document.set_font(_FONT, "I", 6.2)
        document.set_text_color(90, 90, 90)
        document.multi_cell(width, 3.0, block.note, align="L", new_x="LEFT", new_y="NEXT")
        document.set_text_color(0, 0, 0)
    document.set_x(document.l_margin)


def _plot(document, block, figure_svg, svg_for_pdf, figure_png, x=None):
    if x is None and _room(document) < block.height + 1:
        document.add_page()
    figure = block.make()
    if x is None:
        x = document.l_margin + (TEXT_WIDTH - block.width) / 2
    y = document.get_y()
    try:
        document.image(io.BytesIO(svg_for_pdf(figure_svg(figure))), x=x, y=y, w=block.width,
                       h=block.height)
    except Exception:  # noqa: BLE001 - an SVG fpdf2 cannot read still prints, as a bitmap
        document.image(io.BytesIO(figure_png(figure, dpi=250)), x=x, y=y, w=block.width,
                       h=block.height)
    document.set_y(y + block.height + 1.5)


def _bullets(document, block):
    if not block.items and not block.footnote:
        return
    document.set_font(_FONT, "", 7.2)
    inner = TEXT_WIDTH - 8
    lines = 1 + sum(len(document.multi_cell(inner, 3.3, item, dry_run=True, output="LINES"))
                    for item in block.items)
    if block.footnote:
        lines += len(document.multi_cell(inner + 4, 3.3, block.footnote, dry_run=True,
                                         output="LINES"))
    box = 2.5 + lines * 3.3 + 1.5
    if _room(document) < min(box, 40):
        document.add_page()
    top = document.get_y()
    fits = _room(document) >= box
    if fits:
        document.set_fill_color(*_BOX[block.kind])
        document.set_draw_color(*_BOX_EDGE[block.kind])
        document.rect(document.l_margin, top, TEXT_WIDTH, box, style="F")
        document.set_line_width(0.8)
        document.line(document.l_margin, top, document.l_margin, top + box)
        document.set_line_width(0.2)
    document.set_xy(document.l_margin + 2.5, top + 1.2)
    document.set_font(_FONT, "B", 8)
    document.cell(inner, 3.8, block.title, new_x="LMARGIN", new_y="NEXT", align="L")
    document.set_font(_FONT, "", 7.2)
    for item in block.items:
        document.set_x(document.l_margin + 2.5)
        document.cell(3, 3.3, "•")
        document.multi_cell(inner, 3.3, item, new_x="LMARGIN", new_y="NEXT", align="L")
    if block.footnote:
        document.set_font(_FONT, "B", 7.2)
        document.set_x(document.l_margin + 2.5)
        document.multi_cell(inner + 4, 3.3, block.footnote, new_x="LMARGIN", new_y="NEXT",
                            align="L")
    end = max(document.get_y(), top + box) if fits else document.get_y()
    document.set_y(end + 1.5)


def _signature(document, block):
    if _room(document) < 11:
        document.add_page()
    document.ln(1.5)
    top = document.get_y()
    half = TEXT_WIDTH / 2
    document.set_font(_FONT, "", 8)
    document.set_draw_color(0, 0, 0)
    for column, role in enumerate(block.roles[:2]):
        x = document.l_margin + column * half
        document.set_xy(x, top)
        document.cell(22, 6, f"{role}:")
        document.line(x + 22, top + 5, x + half - 30, top + 5)
        document.set_xy(x + half - 28, top)
        document.cell(10, 6, "Date:")
        document.line(x + half - 18, top + 5, x + half - 3, top + 5)
    document.set_xy(document.l_margin, top + 7)
    document.set_font(_FONT, "", 6.5)
    document.set_text_color(110, 110, 110)
    document.cell(TEXT_WIDTH, 3.5, "Name and signature", new_x="LMARGIN", new_y="NEXT", align="L")
    document.set_text_color(0, 0, 0)
