"""The molar-mass axis figure written as SVG directly, laid out by matplotlib's rules, without matplotlib.

Importing matplotlib and drawing a figure with it costs more than the rest of a
short PDF report, and the axis figure (:func:`molid.reports.figures.axis_figure`)
is a few lines, dots, diamonds and labels. This module computes what matplotlib
computes for that figure — the axes' box, the tick positions of its automatic
locator, the tick labels of its scalar formatter, the baselines of its texts —
and writes the SVG document matplotlib's SVG backend writes for it, element for
element, so the PDF writer draws the same picture. It gives up (returns None),
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
from html import escape

import numpy as np

from molid.reports.figures import VERDICT_COLOURS, axis_layout

__all__ = ["axis_svg", "tick_values", "tick_format"]

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
    """Write the x ticks (grid line, mark, label) and the axis label, grouped as matplotlib's SVG has them."""
    left, right, top, bottom, to_x, family = frame
    parts = []
    for position, label in zip(ticks, labels, strict=True):
        x = to_x(position)
        parts.append(_path([(x, bottom), (x, top)], _LINE.format(colour="#eeeeee", width=0.5), clip=True))
        parts.append(_marker("M 0 0 L 0 3.5", x, bottom, _MARK))
        parts.append(_text(x, bottom + _X_TICK_BASELINE, 6.5, "middle", label, family))
    parts.append(_text((left + right) / 2, bottom + _X_LABEL_BASELINE, 7.0, "middle", "molar mass [g/mol]",
                       family))
    return parts


def _points(frame, rows, points) -> list:
    """Write error bars with caps, then dots, then diamonds (matplotlib's order for their z-orders).

    All of them are clipped to the axes, so they share one clipped group.
    """
    to_x = frame[4]
    bars, dots, diamonds = [], [], []
    for number, (_, molar_mass, measured, spread, verdict, _) in enumerate(points):
        colour = VERDICT_COLOURS.get(verdict, "#333333")
        y = rows(number)
        low, high = to_x(measured - spread), to_x(measured + spread)
        bars.append(_path([(low, y), (high, y)], f"fill: none; stroke: {colour}"))
        filled = f"stroke: {colour}; fill: {colour}"
        bars += [_marker("M 0 2 L 0 -2", x, y, filled) for x in (low, high)]
        dots.append(_marker(_CIRCLE, to_x(measured), y, filled))
        diamonds.append(_marker(_DIAMOND, to_x(molar_mass), y, _DIAMOND_STYLE + "; fill-opacity: 0"))
    return ['<g clip-path="url(#axes)">', *bars, *dots, *diamonds, "</g>"] if points else []


# matplotlib's circle marker of 3.2 pt (eight cubic arcs) and diamond of 4.2 pt, as its SVG writes them.
_CIRCLE = " ".join([
    "M 0 1.6 C 0.424325 1.6 0.831328 1.431414 1.131371 1.131371",
    "C 1.431414 0.831328 1.6 0.424325 1.6 0 C 1.6 -0.424325 1.431414 -0.831328 1.131371 -1.131371",
    "C 0.831328 -1.431414 0.424325 -1.6 0 -1.6 C -0.424325 -1.6 -0.831328 -1.431414 -1.131371 -1.131371",
    "C -1.431414 -0.831328 -1.6 -0.424325 -1.6 0 C -1.6 0.424325 -1.431414 0.831328 -1.131371 1.131371",
    "C -0.831328 1.431414 -0.424325 1.6 0 1.6 z",
])
_DIAMOND = "M -0 2.969848 L 2.969848 0 L 0 -2.969848 L -2.969848 -0 z"
_DIAMOND_STYLE = "stroke: #000000; stroke-width: 0.9; stroke-linejoin: miter"
_KEY = "◇ candidate's M  ·  ● value if it is that gas, ±U  ·  grey: result, ±U"


def _reproducible(value, expanded, points) -> bool:
    """Tell whether every number is finite and every label's characters are known here."""
    numbers = [value, expanded] + [number for point in points for number in point[1:4]]
    return (all(math.isfinite(float(number)) for number in numbers)
            and all(set(str(point[0])) <= _SAFE for point in points))


def axis_svg(value, expanded, points, width=90.0, height=46.0, font_family="DejaVu Sans"):
    """Write the molar-mass axis figure as the SVG matplotlib writes for it, or None.

    Parameters
    ----------
    value, expanded, points, width, height
        As for :func:`molid.reports.figures.axis_figure` ([g/mol]; size [mm]).
    font_family : str
        The font family the texts name: matplotlib's ("DejaVu Sans"), or the name the
        PDF writer registered the same font under.

    Returns
    -------
    bytes or None
        The SVG document, already adapted for the PDF writer as
        :func:`molid.reports.figures.svg_for_pdf` adapts matplotlib's; None when the
        figure is not one reproduced here (see the module's notes), for matplotlib to draw.
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
    frame = (left, right, top, bottom, to_x, font_family)
    return _document(frame, layout, figure_width, figure_height, value, expanded, rows, shown, labels, points)


def _document(frame, layout, figure_width, figure_height, value, expanded, rows, shown, labels, points):
    """Assemble the SVG document in matplotlib's order: band, value line, axes, spines, points, key."""
    left, right, top, bottom, to_x, family = frame
    width, height = _number(figure_width), _number(figure_height)
    corners = [(left, bottom), (right, bottom), (right, top), (left, top)]
    band_low, band_high = to_x(value - expanded), to_x(value + expanded)
    parts = [
        f'<svg xmlns:xlink="http://www.w3.org/1999/xlink" width="{width}pt" height="{height}pt" '
        f'viewBox="0 0 {width} {height}" xmlns="http://www.w3.org/2000/svg" version="1.1">',
        '<defs><style type="text/css">*{stroke-linejoin: round; stroke-linecap: butt}</style>'
        f'<clipPath id="axes"><rect x="{_number(left)}" y="{_number(top)}" width="{_number(right - left)}" '
        f'height="{_number(bottom - top)}"/></clipPath></defs>',
        _path([(0, figure_height), (figure_width, figure_height), (figure_width, 0), (0, 0)], "fill: #ffffff",
              close=True),
        _path(corners, "fill: #ffffff", close=True),
        _path([(band_low, bottom), (band_high, bottom), (band_high, top), (band_low, top)], "fill: #d9d9d9",
              clip=True, close=True),
        _path([(to_x(value), bottom), (to_x(value), top)], _LINE.format(colour="#555555", width=0.8),
              clip=True),
        *_x_axis(frame, shown, labels),
    ]
    for row, label in enumerate(layout.labels):
        parts.append(_marker("M 0 0 L -3.5 0", left, rows(row), _MARK))
        parts.append(_text(left - 7.0, rows(row) + _Y_TICK_BASELINE, 6.5, "end", label, family))
    parts += [_path([(left, bottom), (left, top)], _SPINE), _path([(left, bottom), (right, bottom)], _SPINE)]
    parts += _points(frame, rows, points)
    key_baseline = 0.03 * figure_height + _KEY_BASELINE
    parts += [_text(0.015 * figure_width, key_baseline, 5.8, "start", _KEY, family), "</svg>"]
    return "\n".join(parts).encode("utf-8")
