"""The molar-mass axis figure laid out by matplotlib's rules, without matplotlib.

Importing matplotlib and drawing a figure with it costs more than the rest of a
short PDF report, and the axis figure (:func:`molid.reports.figures.axis_figure`)
is a few lines, dots, diamonds and labels. This module computes what matplotlib
computes for that figure — the axes' box, the tick positions of its automatic
locator, the tick labels of its scalar formatter, the baselines of its texts — as
a list of shapes (:func:`axis_shapes`), which the PDF writer paints, and which
:func:`axis_svg` writes as the SVG document matplotlib's SVG backend writes for the
figure, element for element (the tests compare the two). It gives up (returns None),
and the caller draws with matplotlib, whenever the figure is outside what is
reproduced here: values that are not finite, tick labels that would need an
exponent, or a label with a character whose height is not known here.

References
----------
J. D. Hunter, "Matplotlib: A 2D graphics environment", Computing in Science &
Engineering 9 (2007) 90-95, doi:10.1109/MCSE.2007.55; the layout rules are those of
matplotlib 3.x: ``ticker.MaxNLocator`` (automatic ticks), ``ticker.ScalarFormatter``
(tick labels), ``text.Text`` (alignment) and ``axis.XAxis`` (label placement).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from html import escape

import numpy as np

from molid.reports.figures import VERDICT_COLOURS, axis_layout

__all__ = ["AxisShapes", "axis_shapes", "axis_svg", "tick_values", "tick_format"]

_POINTS_PER_MM = 72.0 / 25.4
# Where matplotlib puts the baselines of the figure's texts (DejaVu Sans, its hinted metrics at
# these sizes), read from the SVG it writes [pt]: x tick labels (6.5 pt) below the axes' bottom,
# the axis label (7 pt) below it, y tick labels (6.5 pt) below their tick, the key (5.8 pt)
# below its top.
_X_TICK_BASELINE = 11.938476
_X_LABEL_BASELINE = 22.818906
_Y_TICK_BASELINE = 2.469238
_KEY_BASELINE = 4.407094
#: Characters whose DejaVu Sans ink stays inside the box matplotlib aligns a line of text by
#: (the "lp" box), so that a label made of them has that box's baseline.
_SAFE = frozenset(chr(code) for code in range(32, 127)) - set("|$_")
_STEPS = np.array([0.1, 0.2, 0.25, 0.5, 1.0, 2.0, 2.5, 5.0, 10.0, 20.0])


def _number(value) -> str:
    """Write a coordinate as matplotlib's SVG backend does (six decimals, zeros dropped)."""
    return f"{value:f}".rstrip("0").rstrip(".")


def _widened(low, high, expander=1e-13, tiny=1e-14):
    """Widen an interval too narrow for its magnitude (matplotlib's ``transforms.nonsingular``)."""
    largest = max(abs(low), abs(high))
    if largest < (1e6 / tiny) * np.finfo(float).tiny:
        return -expander, expander
    if high - low <= largest * tiny:
        if high == 0 and low == 0:
            return -expander, expander
        return low - expander * abs(low), high + expander * abs(high)
    return low, high


def _close_to(fraction, edge, step, offset) -> bool:
    """Tell whether a fraction of a step is at an edge, with slack for a large offset."""
    if offset > 0:
        tolerance = min(0.4999, max(1e-10, 10 ** (np.log10(offset / step) - 12)))
    else:
        tolerance = 1e-10
    return abs(fraction - edge) < tolerance


def tick_values(low, high, bins):
    """Tick positions of matplotlib's automatic locator over a view interval.

    Parameters
    ----------
    low, high : float
        The axis' view interval (low < high).
    bins : int
        The most intervals between ticks (matplotlib: the axis length over three
        tick-label font sizes, clipped to 1 to 9).

    Returns
    -------
    numpy.ndarray
        The tick positions, the edge ones beyond the interval included.

    Notes
    -----
    matplotlib's ``MaxNLocator`` with the steps 1, 2, 2.5, 5 and 10: the smallest
    step of the form s·10ⁿ not below (high − low)/bins that still puts two ticks
    inside the interval, and the multiples of it that span the interval.
    """
    low, high = _widened(low, high)
    span = abs(high - low)
    middle = (high + low) / 2
    offset = 0 if abs(middle) / span < 100 else math.copysign(10 ** (math.log10(abs(middle)) // 1), middle)
    steps = _STEPS * 10 ** (math.log10(span / bins) // 1)
    low, high = low - offset, high - offset
    large = steps >= (high - low) / bins
    first_large = int(np.nonzero(large)[0][0]) if large.any() else len(steps) - 1
    for step in steps[:first_large + 1][::-1]:
        start = (low // step) * step
        whole, rest = divmod(low - start, step)
        first = whole + 1 if _close_to(rest / step, 1, step, abs(offset)) else whole
        whole, rest = divmod(high - start, step)
        last = whole if _close_to(rest / step, 0, step, abs(offset)) else whole + 1
        ticks = np.arange(first, last + 1) * step + start
        if ((ticks <= high) & (ticks >= low)).sum() >= 2:
            break
    return ticks + offset


def tick_format(ticks, low, high):
    """Choose the printf format of matplotlib's scalar tick labels (no offset); None if it needs an exponent.

    Parameters
    ----------
    ticks : numpy.ndarray
        All tick positions (from :func:`tick_values`).
    low, high : float
        The view interval.

    Returns
    -------
    str or None
        ``"%1.Nf"`` with the fewest decimals that tell the ticks apart, as
        matplotlib's ``ScalarFormatter`` chooses them; None where it would write the
        labels with a power of ten (largest shown tick below 1e-4 or from 1e6 on).
    """
    shown = np.abs(ticks[(ticks >= low) & (ticks <= high)])
    largest = shown.max() if len(shown) else 0.0
    if largest != 0 and not -5 < math.floor(math.log10(largest)) < 6:
        return None
    locations = np.asarray(ticks, dtype=float) if len(ticks) >= 2 else np.array([*ticks, low, high])
    spread = np.ptp(locations) or np.max(np.abs(locations)) or 1
    if len(ticks) < 2:
        locations = locations[:-2]
    magnitude = int(math.floor(math.log10(spread)))
    decimals = max(0, 3 - magnitude)
    threshold = 1e-3 * 10 ** magnitude
    while decimals >= 0 and np.abs(locations - np.round(locations, decimals=decimals)).max() < threshold:
        decimals -= 1
    return f"%1.{decimals + 1}f"


def _text(x, y, size, anchor, text, family) -> str:
    return (f'<text style="fill: #000000; font-size: {_number(size)}pt; font-family: \'{family}\'; '
            f'text-anchor: {anchor}" x="{_number(x)}" y="{_number(y)}">{escape(text, quote=False)}</text>')


def _path(points, style, clip=False, close=False) -> str:
    """Write a path through points ``[(x, y), ...]`` [pt], optionally closed and clipped to the axes."""
    moves = " L ".join(f"{_number(x)} {_number(y)}" for x, y in points)
    clipping = ' clip-path="url(#axes)"' if clip else ""
    return f'<path d="M {moves}{" z" if close else ""}"{clipping} style="{style}"/>'


def _marker(shape, x, y, style) -> str:
    """Write a marker shape placed at (x, y) [pt] as a path of its own.

    matplotlib's SVG defines each marker once and places it with ``<use>``; the PDF
    writer's SVG reader copies the definition for every use, so the same outline is
    written here at its place, which draws the same and reads faster.
    """
    words, numbers = [], 0
    for word in shape.split():
        if word.isalpha():
            words.append(word)
        else:
            words.append(_number(float(word) + (x if numbers % 2 == 0 else y)))
            numbers += 1
    return f'<path d="{" ".join(words)}" style="{style}"/>'


_LINE = "fill: none; stroke: {colour}; stroke-width: {width}; stroke-linecap: square"
_SPINE = "fill: none; stroke: #000000; stroke-width: 0.6; stroke-linejoin: miter; stroke-linecap: square"
_MARK = "stroke: #000000; stroke-width: 0.6"


def _x_axis(frame, ticks, labels) -> list:
    """List the x ticks (grid line, mark, label) and the axis label, grouped as matplotlib's SVG has them."""
    left, right, top, bottom, to_x = frame
    shapes = []
    for position, label in zip(ticks, labels, strict=True):
        x = to_x(position)
        shapes.append(("line", [(x, bottom), (x, top)], "#eeeeee", 0.5, True))
        shapes.append(("mark", x, bottom, 0.0, 3.5))
        shapes.append(("text", x, bottom + _X_TICK_BASELINE, 6.5, "middle", label))
    label_baseline = bottom + _X_LABEL_BASELINE
    shapes.append(("text", (left + right) / 2, label_baseline, 7.0, "middle", "molar mass [g/mol]"))
    return shapes


def _points(frame, rows, points) -> list:
    """List error bars with caps, then dots, then diamonds (matplotlib's order for their z-orders)."""
    to_x = frame[4]
    bars, dots, diamonds = [], [], []
    for number, (_, molar_mass, measured, spread, verdict, _) in enumerate(points):
        colour = VERDICT_COLOURS.get(verdict, "#333333")
        y = rows(number)
        low, high = to_x(measured - spread), to_x(measured + spread)
        bars += [("bar", low, high, y, colour), ("cap", low, y, colour), ("cap", high, y, colour)]
        dots.append(("dot", to_x(measured), y, colour))
        diamonds.append(("diamond", to_x(molar_mass), y))
    return bars + dots + diamonds


def _svg_shape(shape, family) -> str:
    """Write one shape of :func:`axis_shapes` as matplotlib's SVG writes it."""
    kind = shape[0]
    if kind == "area":
        return _path(shape[1], f"fill: {shape[2]}", clip=shape[3], close=True)
    if kind == "line":
        return _path(shape[1], _LINE.format(colour=shape[2], width=shape[3]), clip=shape[4])
    if kind == "spine":
        return _path(shape[1], _SPINE)
    if kind == "mark":
        return _marker(f"M 0 0 L {_number(shape[3])} {_number(shape[4])}", shape[1], shape[2], _MARK)
    if kind == "text":
        return _text(*shape[1:], family)
    if kind == "bar":
        return _path([(shape[1], shape[3]), (shape[2], shape[3])], f"fill: none; stroke: {shape[4]}")
    if kind == "cap":
        return _marker("M 0 2 L 0 -2", shape[1], shape[2], f"stroke: {shape[3]}; fill: {shape[3]}")
    if kind == "dot":
        return _marker(_CIRCLE, shape[1], shape[2], f"stroke: {shape[3]}; fill: {shape[3]}")
    return _marker(_DIAMOND, shape[1], shape[2], _DIAMOND_STYLE + "; fill-opacity: 0")


# matplotlib's circle marker of 3.2 pt (eight cubic arcs) and diamond of 4.2 pt, as its SVG writes them.
_CIRCLE = " ".join([
    "M 0 1.6 C 0.424325 1.6 0.831328 1.431414 1.131371 1.131371",
    "C 1.431414 0.831328 1.6 0.424325 1.6 0 C 1.6 -0.424325 1.431414 -0.831328 1.131371 -1.131371",
    "C 0.831328 -1.431414 0.424325 -1.6 0 -1.6 C -0.424325 -1.6 -0.831328 -1.431414 -1.131371 -1.131371",
    "C -1.431414 -0.831328 -1.6 -0.424325 -1.6 0 C -1.6 0.424325 -1.431414 0.831328 -1.131371 1.131371",
    "C -0.831328 1.431414 -0.424325 1.6 0 1.6 z",
])
_DIAMOND = "M -0 2.969848 L 2.969848 0 L 0 -2.969848 L -2.969848 -0 z"
_BAND = "#d9d9d9"
_DIAMOND_STYLE = "stroke: #000000; stroke-width: 0.9; stroke-linejoin: miter"
_KEY = "◇ candidate's M  ·  ● value if it is that gas, ±U  ·  grey: result, ±U"


def _reproducible(value, expanded, points) -> bool:
    """Tell whether every number is finite and every label's characters are known here."""
    numbers = [value, expanded] + [number for point in points for number in point[1:4]]
    return (all(math.isfinite(float(number)) for number in numbers)
            and all(set(str(point[0])) <= _SAFE for point in points))


@dataclass(frozen=True)
class AxisShapes:
    """The axis figure as shapes in points from its top-left corner (y down), in drawing order.

    ``shapes`` are tuples: ``("area", corners, colour, clipped)``, ``("line", points,
    colour, width, clipped)`` (square caps), ``("spine", points)``, ``("mark", x, y, dx, dy)``
    (a tick), ``("text", x, y, size, anchor, text)`` (``x, y`` on the baseline), and
    ``("points", shapes)``, clipped to the axes, of ``("bar", x_low, x_high, y, colour)``,
    ``("cap", x, y, colour)``, ``("dot", x, y, colour)`` and ``("diamond", x, y)``. Line
    widths [pt].
    """

    width: float
    height: float
    axes: tuple
    shapes: list


def axis_shapes(value, expanded, points, width=90.0, height=46.0):
    """Lay out the molar-mass axis figure as matplotlib lays it out, as shapes; None if not reproduced here.

    Parameters
    ----------
    value, expanded, points, width, height
        As for :func:`molid.reports.figures.axis_figure` ([g/mol]; size [mm]).

    Returns
    -------
    AxisShapes or None
        None when the figure is not one reproduced here (see the module's notes), for
        matplotlib to draw.
    """
    if not _reproducible(value, expanded, points):
        return None
    layout = axis_layout(value, expanded, points, width)
    figure_width, figure_height = width * _POINTS_PER_MM, height * _POINTS_PER_MM
    left, right = layout.left * figure_width, (layout.left + layout.width) * figure_width
    top, bottom = figure_height * (1 - 0.87), figure_height * (1 - 0.25)
    (low, high), (row_low, row_high) = layout.x_limits, layout.y_limits

    def to_x(data):
        return left + (data - low) / (high - low) * (right - left)

    def rows(row):
        return bottom - (row - row_low) / (row_high - row_low) * (bottom - top)

    # matplotlib's room for ticks: the axes' length over three tick-label sizes, where the size is
    # its default (10 pt), not this figure's, since the ticks are placed when the figure is saved
    ticks = tick_values(low, high, int(np.clip(math.floor((right - left) / (10.0 * 3)), 1, 9)))
    form = tick_format(ticks, low, high)
    tolerance = 1e-10 * (right - left)
    shown = [tick for tick in ticks if left - tolerance <= to_x(tick) <= right + tolerance]
    if form is None or not shown:
        return None
    labels = [(form % (0.0 if abs(tick) < 1e-8 else tick)).replace("-", "\N{MINUS SIGN}") for tick in shown]
    frame = (left, right, top, bottom, to_x)
    corners = [(left, bottom), (right, bottom), (right, top), (left, top)]
    band = [to_x(value - expanded), to_x(value + expanded)]
    shapes = [("area", [(0, figure_height), (figure_width, figure_height), (figure_width, 0), (0, 0)],
               "#ffffff", False),
              ("area", corners, "#ffffff", False),
              ("area", [(band[0], bottom), (band[1], bottom), (band[1], top), (band[0], top)], _BAND, True),
              ("line", [(to_x(value), bottom), (to_x(value), top)], "#555555", 0.8, True),
              *_x_axis(frame, shown, labels)]
    for row, label in enumerate(layout.labels):
        baseline = rows(row) + _Y_TICK_BASELINE
        shapes += [("mark", left, rows(row), -3.5, 0.0), ("text", left - 7.0, baseline, 6.5, "end", label)]
    shapes += [("spine", [(left, bottom), (left, top)]), ("spine", [(left, bottom), (right, bottom)])]
    if points:
        shapes.append(("points", _points(frame, rows, points)))
    shapes.append(("text", 0.015 * figure_width, 0.03 * figure_height + _KEY_BASELINE, 5.8, "start", _KEY))
    return AxisShapes(figure_width, figure_height, (left, top, right - left, bottom - top), shapes)


def axis_svg(value, expanded, points, width=90.0, height=46.0, font_family="DejaVu Sans"):
    """Write the molar-mass axis figure as the SVG matplotlib writes for it, or None.

    Parameters
    ----------
    value, expanded, points, width, height
        As for :func:`molid.reports.figures.axis_figure` ([g/mol]; size [mm]).
    font_family : str
        The font family the texts name.

    Returns
    -------
    bytes or None
        The SVG document of :func:`axis_shapes`, already adapted for the PDF writer as
        :func:`molid.reports.figures.svg_for_pdf` adapts matplotlib's; None when the
        figure is not one reproduced here.
    """
    figure = axis_shapes(value, expanded, points, width, height)
    if figure is None:
        return None
    width, height = _number(figure.width), _number(figure.height)
    left, top, axes_width, axes_height = figure.axes
    parts = [
        f'<svg xmlns:xlink="http://www.w3.org/1999/xlink" width="{width}pt" height="{height}pt" '
        f'viewBox="0 0 {width} {height}" xmlns="http://www.w3.org/2000/svg" version="1.1">',
        '<defs><style type="text/css">*{stroke-linejoin: round; stroke-linecap: butt}</style>'
        f'<clipPath id="axes"><rect x="{_number(left)}" y="{_number(top)}" width="{_number(axes_width)}" '
        f'height="{_number(axes_height)}"/></clipPath></defs>',
    ]
    for shape in figure.shapes:
        if shape[0] == "points":  # all clipped to the axes: one clipped group
            items = [_svg_shape(item, font_family) for item in shape[1]]
            parts += ['<g clip-path="url(#axes)">', *items, "</g>"]
        else:
            parts.append(_svg_shape(shape, font_family))
    parts.append("</svg>")
    return "\n".join(parts).encode("utf-8")
