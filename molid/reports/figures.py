"""Plots of a report page: the molar-mass axis with the result and the nearby candidates.

Figures are built with matplotlib's object API (no pyplot state, so many pages can
be drawn in one process) and saved as SVG with text kept as text, which both the
PDF writer (fpdf2 draws SVG as vector paths) and the HTML writer embed. Dollar
signs in user text are escaped, so a name is never parsed as mathtext.
"""

from __future__ import annotations

import io
import re
from dataclasses import dataclass

__all__ = ["VERDICT_COLOURS", "AxisLayout", "axis_layout", "axis_figure", "spec_figure", "spec_svg_for_pdf",
           "figure_svg", "figure_png", "svg_for_pdf", "style_context"]

#: Colour of each verdict, shared with the tables (colour-blind-safe diverging palette).
VERDICT_COLOURS = {
    "consistent": "#1b7837",
    "marginal": "#c46200",
    "excluded": "#b2182b",
    "condenses": "#6f6f6f",
    "not-a-liquid": "#6f6f6f",
    "dissolves": "#6f6f6f",
}
_BAND = "#d9d9d9"
_MM = 1 / 25.4  # inch per millimetre

_STYLE = {
    "svg.fonttype": "none",
    "font.family": "DejaVu Sans",
    "font.size": 7.0,
    "axes.titlesize": 7.0,
    "axes.labelsize": 7.0,
    "xtick.labelsize": 6.5,
    "ytick.labelsize": 6.5,
    "axes.linewidth": 0.6,
    "xtick.major.width": 0.6,
    "ytick.major.width": 0.6,
    "svg.hashsalt": "molid",
}


def style_context():
    """Return a matplotlib rc context with the report's style (SVG text kept as text)."""
    import matplotlib

    return matplotlib.rc_context(_STYLE)


@dataclass(frozen=True)
class AxisLayout:
    """Where the molar-mass axis figure puts things.

    The axes' left edge and width (fractions of the figure's width), the x and y view
    limits, and the y tick labels, one per point.
    """

    left: float
    width: float
    x_limits: tuple
    y_limits: tuple
    labels: list


def axis_layout(value, expanded, points, width=90.0) -> AxisLayout:
    """Lay out the molar-mass axis figure (see :func:`axis_figure` for the parameters).

    Returns
    -------
    AxisLayout
        Shared by the matplotlib figure and the SVG written directly
        (:mod:`molid.reports.vector_axis`), so that both draw the same picture.
    """
    longest = max((len(point[0]) + (8 if point[5] else 0) for point in points), default=8)
    left = min(0.45, 0.06 + 0.0125 * longest * 90.0 / width)
    lows, highs = [value - expanded], [value + expanded]
    for _, molar_mass, measured, spread, _, _ in points:
        lows += [molar_mass, measured - spread]
        highs += [molar_mass, measured + spread]
    low, high = min(lows), max(highs)
    pad = 0.08 * (high - low) or 0.01 * value
    labels = [f"{name} (label)" if is_label else str(name) for name, *_, is_label in points]
    return AxisLayout(left, 0.97 - left, (low - pad, high + pad), (-0.7, max(len(points), 1) - 0.3), labels)


def axis_figure(value, expanded, points, width=90.0, height=46.0):
    """Draw the molar-mass axis of a result: its interval and the nearby candidates.

    Parameters
    ----------
    value, expanded : float
        The result's ideal-gas molar mass and expanded uncertainty [g/mol].
    points : list of tuple
        ``(name, molar_mass, measured, expanded, verdict, is_label)`` per candidate
        to draw: its molar mass, the run's value if the gas is that candidate and the
        expanded uncertainty of that value [g/mol].
    width, height : float
        Figure size [mm].

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib.figure import Figure

    layout = axis_layout(value, expanded, points, width)
    with style_context():
        figure = Figure(figsize=(width * _MM, height * _MM))
        axes = figure.add_axes((layout.left, 0.25, layout.width, 0.62))
        _axis_axes(axes, value, expanded, points, layout)
    return figure


def _axis_axes(axes, value, expanded, points, layout):
    axes.axvspan(value - expanded, value + expanded, color=_BAND, zorder=0, lw=0)
    axes.axvline(value, color="#555555", lw=0.8, zorder=1)
    for row, (_, molar_mass, measured, spread, verdict, _) in enumerate(points):
        colour = VERDICT_COLOURS.get(verdict, "#333333")
        axes.errorbar([measured], [row], xerr=[spread], fmt="o", color=colour, ms=3.2,
                      elinewidth=1.0, capsize=2, zorder=3)
        axes.plot([molar_mass], [row], marker="D", ms=4.2, mfc="none", mec="black", mew=0.9,
                  ls="none", zorder=4)
    axes.set_xlim(*layout.x_limits)
    axes.set_ylim(*layout.y_limits)
    axes.set_yticks(list(range(len(points))), [label.replace("$", r"\$") for label in layout.labels])
    axes.set_xlabel("molar mass [g/mol]")
    # the key starts at the figure's edge, not the axes': long names push the axes right
    axes.figure.text(0.015, 0.97, "◇ candidate's M  ·  ● value if it is that gas, ±U  ·  grey: result, ±U",
                     ha="left", va="top", fontsize=5.8)
    axes.grid(axis="x", color="#eeeeee", lw=0.5)
    axes.spines[["top", "right"]].set_visible(False)
    axes.ticklabel_format(axis="x", useOffset=False)


def spec_figure(spec):
    """Build a figure from its picklable description (see :class:`~molid.reports.content.Plot`).

    Parameters
    ----------
    spec : tuple
        ``("axis", value, expanded, points, width, height)`` for :func:`axis_figure`, or
        ``("purity", estimate, low, high, limit, guard, contaminant, width, height)`` for
        :func:`purity_figure`.

    Returns
    -------
    matplotlib.figure.Figure
    """
    kind, *arguments = spec
    if kind == "purity":
        return purity_figure(*arguments)
    if kind != "axis":
        raise ValueError(f"unknown figure kind {kind!r}")
    value, expanded, points, width, height = arguments
    return axis_figure(value, expanded, points, width=width, height=height)


def purity_figure(estimate, low, high, limit, guard, contaminant, width=90.0, height=24.0):
    """Draw a contaminant fraction's interval against a specification limit and its guard band [%].

    Parameters
    ----------
    estimate, low, high : float
        The fraction's estimate and its interval (k = 2, cut to 0-100 %) [%].
    limit : float
        The specification's upper limit [%].
    guard : float
        The guard band's width on each side of the limit [%] (0 for simple acceptance).
    contaminant : str
        The contaminant's name, for the axis label.
    width, height : float
        Figure size [mm].

    Returns
    -------
    matplotlib.figure.Figure
    """
    import math

    from matplotlib.figure import Figure

    shown = [value for value in (estimate, low, high, limit + guard) if math.isfinite(value)]
    right = max(shown + [limit * 1.5]) * 1.15 or 1.0
    with style_context():
        figure = Figure(figsize=(width * _MM, height * _MM))
        axes = figure.add_axes((0.04, 0.5, 0.92, 0.3))
        if guard > 0:
            axes.axvspan(max(limit - guard, 0.0), limit + guard, color=_BAND, lw=0, zorder=0)
        axes.axvline(limit, color="#b2182b", lw=1.0, zorder=1)
        shown_estimate = max(estimate, 0.0)
        axes.errorbar([shown_estimate], [0], xerr=[[shown_estimate - low], [high - shown_estimate]],
                      fmt="o", color="#333333", ms=3.2, elinewidth=1.2, capsize=2.5, zorder=3)
        axes.set_xlim(0.0, right)
        axes.set_ylim(-1, 1)
        axes.set_yticks([])
        axes.set_xlabel(f"{str(contaminant).replace('$', chr(92) + '$')} [% mol]")
        axes.set_title("● fraction ±U (k = 2)  ·  red line: limit  ·  grey: guard band (cannot decide)",
                       loc="left", fontsize=5.8)
        axes.spines[["top", "right", "left"]].set_visible(False)
    return figure


def spec_svg_for_pdf(spec) -> bytes:
    """Build a figure from its description and return the SVG the PDF writer embeds."""
    return svg_for_pdf(figure_svg(spec_figure(spec)))


def figure_svg(figure) -> bytes:
    """Save a figure as SVG (text as text, no timestamp: same input, same bytes)."""
    import matplotlib

    buffer = io.BytesIO()
    with matplotlib.rc_context({"svg.fonttype": "none", "svg.hashsalt": "molid"}):
        figure.savefig(buffer, format="svg",
                       metadata={"Date": None, "Creator": None, "Format": None, "Type": None})
    return buffer.getvalue()


def figure_png(figure, dpi=200) -> bytes:
    """Save a figure as PNG (for the rare figure fpdf2's SVG reader cannot draw)."""
    buffer = io.BytesIO()
    figure.savefig(buffer, format="png", dpi=dpi)
    return buffer.getvalue()


_FONT_SIZE = re.compile(rb"(font-size: ?)([0-9.]+)px")


def svg_for_pdf(svg: bytes) -> bytes:
    """Adapt matplotlib's SVG to fpdf2's reader.

    matplotlib writes font sizes in ``px`` meaning user units of a viewBox measured
    in points; fpdf2 converts ``px`` at 0.75 pt, which would shrink the text by a
    quarter. Writing the same number in ``pt`` keeps the size matplotlib laid out.
    Text without a fill colour is given black (SVG's default), which fpdf2 would
    otherwise take from the page's current fill colour.
    """
    svg = _FONT_SIZE.sub(rb"\1\2pt", svg)
    return svg.replace(b'<text style="', b'<text style="fill: #000000; ')
