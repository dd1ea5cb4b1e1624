"""The PDF writer: draws a :class:`~molid.reports.content.Report` with fpdf2.

Every string is drawn as text with fpdf2's cell functions (markdown off); nothing
a user typed is parsed as markup. Plots are vector graphics: the molar-mass axis
is laid out as matplotlib lays it out (:mod:`molid.reports.vector_axis`, no
matplotlib) and painted with fpdf2's lines, circles and text; other plots are
matplotlib SVG drawn as vector paths. The text area is 180 mm × 249 mm, centred,
so the same layout prints on A4 and on US Letter.

Fonts are parsed when a page first uses them: parsing a TrueType font costs about
20 ms, and a report uses three of the four DejaVu Sans faces.
"""

from __future__ import annotations

import importlib.util
import io
import logging
import math
import os
import re
from dataclasses import dataclass
from pathlib import Path

from molid.reports.content import Bullets, Columns, Fields, Highlight, Plot, Signature, Table

__all__ = ["PAPER_SIZES", "TEXT_WIDTH", "PARALLEL_MINIMUM", "render_pdf", "font_path",
           "printable"]

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
    "not-a-liquid": (111, 111, 111),
    "dissolves": (111, 111, 111),
    "error": (178, 24, 43),
    "muted": (100, 100, 100),
}
_BOX = {"note": (245, 245, 245), "warning": (255, 244, 214), "error": (253, 226, 226),
        "safety": (255, 236, 224)}
_BOX_EDGE = {"note": (190, 190, 190), "warning": (214, 160, 0), "error": (178, 24, 43),
             "safety": (200, 80, 0)}


#: The family matplotlib's SVG names its text in; registered only when such a figure is drawn.
_SVG_FONT = "DejaVu Sans"


def font_path(style="") -> Path:
    """Locate the DejaVu Sans TTF that ships with matplotlib (style '', 'B', 'I' or 'BI').

    Found beside matplotlib's installed files (its ``mpl-data`` folder, as
    ``matplotlib.get_data_path()`` gives it) without importing matplotlib.
    """
    names = {"": "DejaVuSans.ttf", "B": "DejaVuSans-Bold.ttf", "I": "DejaVuSans-Oblique.ttf",
             "BI": "DejaVuSans-BoldOblique.ttf"}
    spec = importlib.util.find_spec("matplotlib")
    if spec is None or not spec.submodule_search_locations:  # pragma: no cover - a dependency
        raise FileNotFoundError("matplotlib, whose DejaVu Sans fonts the report uses, is not installed")
    return Path(spec.submodule_search_locations[0]) / "mpl-data" / "fonts" / "ttf" / names[style]


def _fit_left(document, text, width) -> str:
    """Shorten text from the left ("…" first) to fit a width [mm]; a path keeps its end."""
    if document.get_string_width(text) <= width:
        return text
    while len(text) > 1 and document.get_string_width("…" + text) > width:
        text = text[1:]
    return "…" + text


def _document_class():
    from fpdf import FPDF

    class _Document(FPDF):
        report_title = ""
        report_source = ""
        report_footer = ""

        def set_font(self, family=None, style="", size=0):
            if family in (_FONT, _SVG_FONT):
                _register_font(self, family, style)
            super().set_font(family, style, size)

        def header(self):
            self.set_font(_FONT, "", 7)
            self.set_text_color(110, 110, 110)
            self.set_xy(self.l_margin, 7)
            self.cell(TEXT_WIDTH / 2, 4, self.report_title)
            self.cell(TEXT_WIDTH / 2, 4, _fit_left(self, printable(self.report_source),
                                                   TEXT_WIDTH / 2), align="R")
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
    logging.getLogger("fpdf.svg").setLevel(logging.ERROR)
    width, height = PAPER_SIZES[paper]
    document = _document_class()(orientation="P", unit="mm", format=(width, height))
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
    source = _FigureSource(report.pages)
    try:
        for page in report.pages:
            document.add_page()
            document.start_section(page.title[:120], strict=False)
            _page(document, page, source)
    finally:
        source.close()
    return bytes(document.output())


#: From this many plots on, they are drawn in worker processes while the pages are laid out.
PARALLEL_MINIMUM = 16


class _FigureSource:
    """Each plot: laid out for painting directly, or drawn as SVG here or ahead in worker processes.

    The molar-mass axis is laid out directly (:mod:`molid.reports.vector_axis`), which
    takes a millisecond, and painted by :func:`_paint`. Other plots are drawn with matplotlib, which takes
    most of a page's time and needs nothing from the layout, so for a long report
    they are handed to a process pool in page order and collected as the pages reach
    them. Any failure of the pool falls back to drawing in this process.
    """

    def __init__(self, pages):
        import molid.reports.figures as figures

        self.figures = figures
        self.pool = None
        self.futures = {}
        self.written = {}
        plots = []
        for page in pages:
            for block in page.blocks:
                for item in (block.left, block.right) if isinstance(block, Columns) else (block,):
                    if isinstance(item, Plot) and item.spec is not None and not item.raster_in_pdf:
                        plots.append(item)
        plots = [plot for plot in plots if not self._write(plot)]
        workers = min(os.cpu_count() or 1, 4)
        if len(plots) < PARALLEL_MINIMUM or workers < 2:
            return
        try:
            from concurrent.futures import ProcessPoolExecutor

            self.pool = ProcessPoolExecutor(max_workers=workers)
            for plot in plots:
                self.futures[id(plot)] = self.pool.submit(figures.spec_svg_for_pdf, plot.spec)
        except Exception:  # noqa: BLE001 - no processes here (sandbox, frozen app): draw serially
            self.close()

    def _write(self, plot) -> bool:
        """Lay out a plot as shapes to paint directly where that reproduces it; tell whether it did."""
        if plot.spec[0] != "axis":
            return False
        from molid.reports.vector_axis import axis_shapes

        shapes = axis_shapes(*plot.spec[1:])
        if shapes is not None:
            self.written[id(plot)] = shapes
        return shapes is not None

    def shapes(self, block):
        """Return the shapes of a plot laid out for direct painting, or None."""
        return self.written.pop(id(block), None)

    def svg(self, block) -> bytes:
        """Return the SVG of a plot drawn by matplotlib."""
        future = self.futures.pop(id(block), None)
        if future is not None:
            try:
                return future.result()
            except Exception:  # noqa: BLE001 - a worker that died: draw it here instead
                pass
        return self.figures.svg_for_pdf(self.figures.figure_svg(block.make()))

    def png(self, block, dpi) -> bytes:
        return self.figures.figure_png(block.make(), dpi=dpi)

    def close(self):
        if self.pool is not None:
            self.pool.shutdown(wait=True, cancel_futures=True)
        self.pool = None
        self.futures = {}


def _register_font(document, family, style):
    """Parse a DejaVu Sans face for fpdf2 the first time a family and style are asked for."""
    style = "".join(sorted(style.upper().replace("U", "")))
    registered = document.__dict__.setdefault("_molid_fonts", set())
    if (family, style) not in registered:
        document.add_font(family, style, str(font_path(style)))
        registered.add((family, style))
        character_map = getattr(document.fonts.get(family.lower()), "cmap", None)
        if not _GLYPHS and style == "" and isinstance(character_map, dict):
            _GLYPHS.append(frozenset(character_map))


def _room(document) -> float:
    return document.page_break_trigger - document.get_y()


def _measurer(document):
    """Return a string-width function for the current font, cached across pages."""
    cache = document.__dict__.setdefault("_molid_widths", {})
    key = (document.font_family, document.font_style, document.font_size_pt)
    widths = cache.setdefault(key, {})
    measure = document.get_string_width

    def width(text):
        value = widths.get(text)
        if value is None:
            value = widths[text] = measure(text)
        return value

    return width


#: The code points the report font can draw, once known (see :func:`_glyphs`).
_GLYPHS: list = []


def _glyphs() -> frozenset:
    """Return the code points the report font can draw.

    Taken from the character map fpdf2 read when the regular face was registered, else
    read from the font file.
    """
    if not _GLYPHS:
        from fontTools.ttLib import TTFont

        with TTFont(str(font_path("")), lazy=True) as font:
            _GLYPHS.append(frozenset(font.getBestCmap()))
    return _GLYPHS[0]


def printable(text) -> str:
    """Replace characters the font has no glyph for by a visible ``[U+XXXX]`` code.

    A run id in a script DejaVu Sans does not cover would otherwise print as
    nothing at all; on a filed record the code point is better than a gap.

    Examples
    --------
    >>> printable("CO₂ ± 0.1 °C"), printable("测")
    ('CO₂ ± 0.1 °C', '[U+6D4B]')
    """
    text = str(text)
    glyphs = _glyphs()
    if all(ord(character) in glyphs or character in "\n" for character in text):
        return text
    return "".join(character if ord(character) in glyphs or character == "\n"
                   else f"[U+{ord(character):04X}]" for character in text)


def _wrap(document, text, width) -> list:
    """Break text into lines that fit a width [mm] in the current font.

    Word widths are measured once and added up, so the cost grows linearly with
    the text (fpdf2's own line breaker re-measures each line as it grows).
    """
    text = printable(text)
    measure = _measurer(document)
    space = measure(" ")
    lines = []
    for paragraph in str(text).split("\n"):
        current, used = "", 0.0
        for word in paragraph.split(" "):
            size = measure(word)
            while size > width and len(word) > 1:  # a word longer than the line: cut it
                cut = max(1, int(len(word) * width / size))
                while cut > 1 and measure(word[:cut]) > width:
                    cut -= 1
                if current:
                    lines.append(current)
                lines.append(word[:cut])
                current, used = "", 0.0
                word = word[cut:]
                size = measure(word)
            if not current:
                current, used = word, size
            elif used + space + size <= width:
                current, used = f"{current} {word}", used + space + size
            else:
                lines.append(current)
                current, used = word, size
        lines.append(current)
    return lines


def _line(document, width, height, text, align="L"):
    """Draw one line of text in a cell, as ``cell(..., new_x="LEFT", new_y="NEXT")`` draws it.

    fpdf2's ``cell`` lays each line out as styled fragments, which costs about 40 µs a
    line, most of a report's layout time; a line of plain text is placed here the
    same way (``c_margin`` from the left edge, or the right one; baseline half the
    height plus 0.3 of the font size below the top) and written with ``text``. A
    line that would cross the page break, or a document in a state the shortcut does
    not reproduce (underline, character spacing, text shaping, the page-count alias),
    goes through ``cell``.
    """
    plain = (not document.underline and not document.strikethrough and not document.char_spacing
             and document.font_stretching == 100 and not getattr(document, "text_shaping", None)
             and document.str_alias_nb_pages not in text)
    if not plain or document.y + height > document.page_break_trigger:
        document.cell(width, height, text, align=align, new_x="LEFT", new_y="NEXT")
        return
    x, y = document.x, document.y
    if text:
        offset = (document.c_margin if align != "R"
                  else width - document.c_margin - document.get_string_width(text))
        document.text(x + offset, y + 0.5 * height + 0.3 * document.font_size, text)
    document.x, document.y = x, y + height


def _text(document, text, width, height, align="L", x=None):
    """Draw wrapped text line by line from the current position; return the line count."""
    x = document.get_x() if x is None else x
    lines = _wrap(document, text, width)
    for line in lines:
        document.set_x(x)
        _line(document, width, height, line, align)
    return len(lines)


def _page(document, page, source):
    document.set_font(_FONT, "B", 13)
    _text(document, page.title, TEXT_WIDTH, 6.5, x=document.l_margin)
    if page.subtitle:
        document.set_font(_FONT, "", 7.5)
        document.set_text_color(90, 90, 90)
        _text(document, page.subtitle, TEXT_WIDTH, 4, x=document.l_margin)
        document.set_text_color(0, 0, 0)
    document.ln(1.5)
    for block in page.blocks:
        document.set_fill_color(255, 255, 255)
        document.set_draw_color(0, 0, 0)
        document.set_text_color(0, 0, 0)
        document.set_line_width(0.2)
        if isinstance(block, Columns):
            _columns(document, block, source)
        elif isinstance(block, Fields):
            _fields(document, block)
        elif isinstance(block, Highlight):
            _highlight(document, block)
        elif isinstance(block, Table):
            _table(document, block, document.l_margin, TEXT_WIDTH)
        elif isinstance(block, Plot):
            _plot(document, block, source)
        elif isinstance(block, Bullets):
            _bullets(document, block)
        elif isinstance(block, Signature):
            _signature(document, block)
        document.set_x(document.l_margin)


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
            _text(document, value, half - label_width - 2, 4.2, x=x + label_width)
            bottom = max(bottom, document.get_y())
        document.set_xy(document.l_margin, bottom)
    document.ln(1.5)


def _highlight_font(document, k):
    document.set_font(_FONT, "B" if k == 0 else "", 10 if k == 0 else 8)
    return 4.8 if k == 0 else 4.0


def _highlight(document, block):
    inner = TEXT_WIDTH - 6
    box = 3.0
    for k, line in enumerate(block.lines):
        box += _highlight_font(document, k) * len(_wrap(document, line, inner))
    if _room(document) < box:
        document.add_page()
    top = document.get_y()
    document.set_fill_color(232, 240, 250)
    document.set_draw_color(74, 119, 180)
    document.rect(document.l_margin, top, TEXT_WIDTH, box, style="DF")
    document.set_y(top + 1.5)
    for k, line in enumerate(block.lines):
        height = _highlight_font(document, k)
        _text(document, line, inner, height, x=document.l_margin + 3)
    document.set_y(top + box + 2)


def _row_heights(document, cells, widths, line_height, padding):
    wrapped = [_wrap(document, cell, w - 2 * padding) for cell, w in
               zip(cells, widths, strict=False)]
    return wrapped, 0.8 + line_height * max((len(lines) for lines in wrapped), default=1)


@dataclass(frozen=True)
class _GridLayout:
    """Where a table's columns go: left edge and width [mm], column widths, alignment, font."""

    x: float
    width: float
    widths: list
    align: str
    size: float
    line_height: float
    padding: float = 0.6


def _cell_lines(document, layout, lines, left, top, column_width, alignment, height):
    """Draw one cell's wrapped lines from its top-left corner, inside the padding."""
    document.set_xy(left + layout.padding, top + 0.4)
    for line in lines:
        document.set_x(left + layout.padding)
        _line(document, column_width - 2 * layout.padding, height, line, "R" if alignment == "R" else "L")


def _grid_header(document, layout, header, header_height):
    """Draw the header row (grey band, bold) at the current position."""
    top = document.get_y()
    document.set_font(_FONT, "B", layout.size - 0.6)
    document.set_fill_color(230, 230, 230)
    document.rect(layout.x, top, layout.width, header_height, style="F")
    left = layout.x
    for column_width, lines, alignment in zip(layout.widths, header, layout.align, strict=False):
        _cell_lines(document, layout, lines, left, top, column_width, alignment,
                    layout.line_height - 0.4)
        left += column_width
    document.set_y(top + header_height)


def _share_bar(document, layout, cell, left, top, column_width):
    """Draw a percentage cell's bar behind its number (a bar chart inside the table)."""
    try:
        share = max(0.0, min(float(cell), 100.0))
    except ValueError:
        share = 0.0
    bar = share / 100.0 * (column_width - 9.5)
    if bar > 0.05:
        document.set_fill_color(74, 119, 180)
        document.rect(left + layout.padding, top + 0.8, bar, layout.line_height - 1.0, style="F")


def _grid_row(document, layout, cells, wrapped, styles, bars):
    """Draw one body row's cells at the current height, each in its style's colour."""
    top = document.get_y()
    left = layout.x
    for column, (column_width, lines, alignment) in enumerate(
            zip(layout.widths, wrapped, layout.align, strict=False)):
        style = styles[column] if styles else None
        if column == bars:
            _share_bar(document, layout, cells[column], left, top, column_width)
        colour = _STYLE_COLOURS.get(style)
        document.set_font(_FONT, "B" if colour and style != "muted" else "", layout.size)
        if colour:
            document.set_text_color(*colour)
        _cell_lines(document, layout, lines, left, top, column_width, alignment,
                    layout.line_height)
        document.set_text_color(0, 0, 0)
        left += column_width
    return top


def _grid(document, block, x, width, size=7.0, line_height=3.3):
    """Draw a table's header and rows at x; long cells wrap, a full page repeats the header."""
    scale = width / sum(block.widths)
    layout = _GridLayout(x, width, [w * scale for w in block.widths],
                         block.align or "L" * len(block.columns), size, line_height)
    document.set_font(_FONT, "B", size - 0.6)
    header, header_height = _row_heights(document, block.columns, layout.widths,
                                         line_height - 0.4, layout.padding)
    _grid_header(document, layout, header, header_height)
    document.set_draw_color(190, 190, 190)
    document.set_line_width(0.15)
    for index, cells in enumerate(block.rows):
        styles = block.styles[index] if block.styles else None
        document.set_font(_FONT, "", size)
        wrapped, height = _row_heights(document, cells, layout.widths, line_height,
                                       layout.padding)
        if _room(document) < height:
            document.add_page()
            _grid_header(document, layout, header, header_height)
        top = _grid_row(document, layout, cells, wrapped, styles, block.bars)
        document.line(x, top + height, x + width, top + height)
        document.set_y(top + height)
    document.set_font(_FONT, "", size)


def _table(document, block, x, width, size=7.0):
    if _room(document) < 18:
        document.add_page()
    document.set_font(_FONT, "B", 8)
    _text(document, block.title, width, 4.5, x=x)
    _grid(document, block, x, width, size=size)
    if block.note:
        document.set_font(_FONT, "I", 6.3)
        document.set_text_color(90, 90, 90)
        document.set_y(document.get_y() + 0.5)
        _text(document, block.note, width, 3.0, x=x)
        document.set_text_color(0, 0, 0)
    document.set_y(document.get_y() + 1.5)


def _columns(document, block, source):
    """Draw a table on the left and a plot on the right, top-aligned."""
    needed = max(_compact_height(block.left), block.right.height)  # keep the pair together
    if _room(document) < needed + 2:
        document.add_page()
    top = document.get_y()
    _table(document, block.left, document.l_margin, block.split - 2, size=6.6)
    left_bottom = document.get_y()
    document.set_y(top)
    _plot(document, block.right, source, x=document.l_margin + block.split)
    document.set_y(max(left_bottom, top + block.right.height) + 1)


def _compact_height(block) -> float:
    return 4.5 + 7.0 + 3.8 * len(block.rows) + (7 if block.note else 0)


def _plot(document, block, source, x=None):
    if x is None and _room(document) < block.height + 1:
        document.add_page()
    if x is None:
        x = document.l_margin + (TEXT_WIDTH - block.width) / 2
    y = document.get_y()
    shapes = None if block.raster_in_pdf else source.shapes(block)
    if shapes is not None:
        _paint(document, shapes, x, y, block.width / shapes.width)
        document.set_y(y + block.height + 1.5)
        return
    try:
        data = source.png(block, 220) if block.raster_in_pdf else source.svg(block)
        if not block.raster_in_pdf:
            _register_font(document, _SVG_FONT, "")
        document.image(io.BytesIO(data), x=x, y=y, w=block.width, h=block.height)
    except Exception:  # noqa: BLE001 - an SVG fpdf2 cannot read still prints, as a bitmap
        document.image(io.BytesIO(source.png(block, 250)), x=x, y=y, w=block.width,
                       h=block.height)
    document.set_y(y + block.height + 1.5)


def _colour(text) -> tuple:
    return tuple(int(text[index:index + 2], 16) for index in (1, 3, 5))


def _stroke(document, points, colour, width, scale, square=False):
    """Stroke a two-point line [mm on the page] of a width [pt]; square caps reach half the width past it."""
    (x1, y1), (x2, y2) = points
    if square:
        length = math.hypot(x2 - x1, y2 - y1) or 1.0
        reach = width * scale / 2
        reach_x, reach_y = (x2 - x1) / length * reach, (y2 - y1) / length * reach
        x1, y1, x2, y2 = x1 - reach_x, y1 - reach_y, x2 + reach_x, y2 + reach_y
    document.set_draw_color(*_colour(colour))
    document.set_line_width(width * scale)
    document.line(x1, y1, x2, y2)


def _paint(document, figure, x, y, scale):
    """Paint the shapes of a figure laid out by :func:`molid.reports.vector_axis.axis_shapes`.

    Figure coordinates are points from the figure's top-left corner; the page's are
    millimetres, ``scale`` millimetres per point. The same picture as its SVG: what is
    clipped to the axes is painted inside one clip: the band, value line and grid lines
    together, where the first of them comes (the tick marks and labels drawn between
    them in the SVG lie outside the axes), then the points.
    """
    def at(point):
        return x + point[0] * scale, y + point[1] * scale

    left, top, width, height = figure.axes
    clip = (x + left * scale, y + top * scale, width * scale, height * scale)
    font = (document.font_family, document.font_style, document.font_size_pt)
    inside = [shape for shape in figure.shapes if shape[0] in ("area", "line") and shape[-1]]
    for shape in figure.shapes:
        group = shape[1] if shape[0] == "points" else inside if shape is inside[0] else None
        if group is not None:
            with document.rect_clip(*clip):
                for item in group:
                    _paint_shape(document, item, at, scale)
        elif not any(shape is member for member in inside):
            _paint_shape(document, shape, at, scale)
    if font[0]:
        document.set_font(*font)


def _paint_shape(document, shape, at, scale):
    """Paint one shape (see :class:`molid.reports.vector_axis.AxisShapes`) in page millimetres."""
    kind = shape[0]
    if kind == "area":
        document.set_fill_color(*_colour(shape[2]))
        document.polygon([at(point) for point in shape[1]], style="F")
    elif kind in ("line", "spine"):
        colour, width = (shape[2], shape[3]) if kind == "line" else ("#000000", 0.6)
        _stroke(document, [at(point) for point in shape[1]], colour, width, scale, square=True)
    elif kind == "mark":
        _stroke(document, [at(shape[1:3]), at((shape[1] + shape[3], shape[2] + shape[4]))], "#000000", 0.6,
                scale)
    elif kind == "text":
        # white space collapsed as an SVG reader collapses it (the key has double spaces)
        text = re.sub(r"\s+", " ", shape[5])
        if not text.strip():
            return
        document.set_font(_FONT, "", shape[3])
        document.set_text_color(0, 0, 0)
        shift = {"start": 0.0, "middle": 0.5, "end": 1.0}[shape[4]] * document.get_string_width(text)
        left, baseline = at(shape[1:3])
        document.text(left - shift, baseline, text)
    elif kind == "bar":
        _stroke(document, [at((shape[1], shape[3])), at((shape[2], shape[3]))], shape[4], 1.0, scale)
    elif kind == "cap":
        ends = [at((shape[1], shape[2] - 2.0)), at((shape[1], shape[2] + 2.0))]
        _stroke(document, ends, shape[3], 1.0, scale)
    elif kind == "dot":
        document.set_draw_color(*_colour(shape[3]))
        document.set_fill_color(*_colour(shape[3]))
        document.set_line_width(1.0 * scale)
        document.circle(*at(shape[1:3]), 1.6 * scale, style="DF")
    else:  # the diamond of a candidate's molar mass
        half = 2.969848
        corners = [(shape[1], shape[2] + half), (shape[1] + half, shape[2]), (shape[1], shape[2] - half),
                   (shape[1] - half, shape[2])]
        document.set_draw_color(0, 0, 0)
        document.set_line_width(0.9 * scale)
        document.polygon([at(corner) for corner in corners], style="D")


def _bullets(document, block):
    if not block.items and not block.footnote:
        return
    inner = TEXT_WIDTH - 8
    line = 3.3
    document.set_font(_FONT, "", 7.2)
    wrapped = [_wrap(document, item, inner) for item in block.items]
    document.set_font(_FONT, "B", 7.2)
    footnote = _wrap(document, block.footnote, inner + 3) if block.footnote else []
    lead = _wrap(document, block.lead, inner + 3) if block.lead else []
    box = 2.6 + 3.8 + line * (sum(len(lines) for lines in wrapped) + len(footnote) + len(lead))
    if _room(document) < min(box, 40):
        document.add_page()
    top = document.get_y()
    fits = _room(document) >= box
    if fits:  # a box that runs over a page break is drawn without its background
        document.set_fill_color(*_BOX[block.kind])
        document.set_draw_color(*_BOX_EDGE[block.kind])
        document.rect(document.l_margin, top, TEXT_WIDTH, box, style="F")
        document.set_line_width(0.8)
        document.line(document.l_margin, top, document.l_margin, top + box)
        document.set_line_width(0.2)
    document.set_xy(document.l_margin + 2.5, top + 1.2)
    document.set_font(_FONT, "B", 8)
    _line(document, inner, 3.8, printable(block.title))
    document.set_font(_FONT, "B", 7.2)
    for text in lead:
        document.set_x(document.l_margin + 2.5)
        _line(document, inner + 3, line, text)
    document.set_font(_FONT, "", 7.2)
    for lines in wrapped:
        document.set_x(document.l_margin + 2.5)
        document.cell(3, line, "•")
        for text in lines:
            document.set_x(document.l_margin + 5.5)
            _line(document, inner, line, text)
    document.set_font(_FONT, "B", 7.2)
    for text in footnote:
        document.set_x(document.l_margin + 2.5)
        _line(document, inner + 3, line, text)
    end = max(document.get_y(), top + box) if fits else document.get_y()
    document.set_xy(document.l_margin, end + 1.5)


def _signature(document, block):
    if _room(document) < 9:
        document.add_page()
    document.ln(1.0)
    top = document.get_y()
    half = TEXT_WIDTH / 2
    document.set_draw_color(0, 0, 0)
    for column, role in enumerate(block.roles[:2]):
        x = document.l_margin + column * half
        document.set_font(_FONT, "", 8)
        document.set_xy(x, top)
        document.cell(22, 6, f"{role}:")
        document.line(x + 22, top + 5, x + half - 30, top + 5)
        document.set_xy(x + half - 28, top)
        document.cell(10, 6, "Date:")
        document.line(x + half - 18, top + 5, x + half - 3, top + 5)
        document.set_font(_FONT, "", 6)
        document.set_text_color(110, 110, 110)
        document.set_xy(x + 22, top + 5.2)
        document.cell(half - 52, 2.6, "name and signature")
        document.set_text_color(0, 0, 0)
    document.set_xy(document.l_margin, top + 8)
