"""Class plots of a graded section: percent error by unknown, and each run's interval.

matplotlib is imported inside the functions (it is slow to import and only
these plots need it); figures are drawn on the Agg canvas without pyplot, so
nothing here touches a global backend or opens a window.

User text is drawn literally (:func:`molid.io.display.drawable`: no mathematics
markup, control characters escaped, at most 60 characters a label), and no value
that is not finite reaches an axis: a percent error beyond ±10⁶ % (a reported value
a thousand times too large, or too large for the arithmetic) is drawn at the edge
of the axis and marked "off the scale". The interval plot draws at most
:data:`MOST_INTERVALS` runs.
"""

from __future__ import annotations

import io
from pathlib import Path

import numpy as np

from molid.io.display import drawable

__all__ = ["PLOT_FILES", "MOST_INTERVALS", "percent_error_figure", "interval_figure",
           "write_class_plots"]

#: Percent errors beyond ± this are drawn at the edge of the axis, marked "off the scale".
_REACH = 1e6
#: The most runs the interval plot draws (one row each); a note says how many are left out.
MOST_INTERVALS = 300

#: The files :func:`write_class_plots` writes, in order.
PLOT_FILES = ("percent_error.png", "percent_error.svg", "intervals.png", "intervals.svg")

_CORRECT = "#1f5fa8"
_MISTAKE = "#c0392b"
_UNEXPLAINED = "#e08a00"
_OUTSIDE = "#7f7f7f"
_SHORT = {
    "celsius-as-kelvin": "°C as K",
    "volume-unit": "volume unit",
    "pressure-unit": "pressure unit",
    "no-buoyancy": "no buoyancy",
    "masses-swapped": "masses swapped",
    "gas-constant-units": "R units",
    "unexplained": "unexplained",
}


def _figure(width, height):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    figure = Figure(figsize=(width, height), dpi=110, layout="constrained")
    FigureCanvasAgg(figure)
    return figure


def _graded(grading):
    frame = grading.grades
    graded = frame[frame["error"].isna()].copy()
    graded["unknown"] = graded["expected_name"].fillna(graded["expected"])
    graded["label"] = [_short(code) for code in graded["diagnosis"]]
    return graded


def _short(codes) -> str:
    return " / ".join(_SHORT.get(code, code) for code in codes)


def _kind(codes) -> str:
    if not codes:
        return "correct"
    return "unexplained" if list(codes) == ["unexplained"] else "mistake"


_STYLES = {
    "correct": dict(marker="o", color=_CORRECT, label="no mistake found"),
    "mistake": dict(marker="X", color=_MISTAKE, label="diagnosed mistake"),
    "unexplained": dict(marker="^", color=_UNEXPLAINED,
                        label="disagrees with own readings, unexplained"),
}


def _draw_unknown(axes, place, group, seen):
    """Draw the runs of one unknown in its column, and their median; ``seen`` holds legend entries."""
    every = group["percent_error"].to_numpy(dtype=float)
    errors = np.clip(every, -_REACH, _REACH)  # NaN stays NaN and is not drawn
    count = len(group)
    # spread the runs of one unknown evenly across its column
    offsets = np.linspace(-0.25, 0.25, count) if count > 1 else np.zeros(1)
    flagged = 0
    for offset, error, codes, label in zip(offsets, errors, group["diagnosis"],
                                           group["label"], strict=True):
        if not np.isfinite(error):
            continue
        kind = _kind(codes)
        style = dict(_STYLES[kind])
        name = style.pop("label")
        legend = name if kind not in seen else None
        seen.add(kind)
        axes.scatter([place + offset], [error], s=46 if kind == "correct" else 70,
                     zorder=3, label=legend, edgecolors="white", linewidths=0.6, **style)
        off_scale = abs(error) >= _REACH
        if off_scale:
            label = "off the scale" if kind == "correct" else f"{label} (off the scale)"
        if kind != "correct" or off_scale:
            # alternate above and below, so labels of neighbouring runs do not collide
            axes.annotate(label, (place + offset, error),
                          xytext=(0, 10 if flagged % 2 == 0 else -11),
                          textcoords="offset points", fontsize=7, color=style["color"],
                          ha="center", va="center")
            flagged += 1
    clean = np.array([not codes for codes in group["diagnosis"]], dtype=bool)
    finite = errors[np.isfinite(errors) & clean]
    if finite.size:
        axes.hlines(np.median(finite), place - 0.35, place + 0.35, color="black",
                    linewidth=1.6, zorder=2,
                    label="median of the runs with no mistake found"
                    if "median" not in seen else None)
        seen.add("median")


def percent_error_figure(grading):
    """Draw the percent error of every graded run, grouped by unknown.

    Parameters
    ----------
    grading : Grading
        From :func:`molid.teaching.grading.grade`.

    Returns
    -------
    matplotlib.figure.Figure
        Percent error [%] on a symmetric logarithmic axis (linear within ±1 %),
        one column per unknown; runs with a diagnosed mistake drawn as crosses
        and labelled with the mistake, the median of each unknown as a bar.
    """
    graded = _graded(grading)
    unknowns = sorted(graded["unknown"].dropna().unique(), key=str)
    figure = _figure(max(6.0, 1.1 * len(unknowns) + 2.5), 4.8)
    axes = figure.add_subplot()
    axes.axhspan(-1.0, 1.0, color="#e8f0e0", zorder=0, label="within ±1 %")
    axes.axhline(0.0, color="black", linewidth=0.8, zorder=1)
    seen = set()
    for place, unknown in enumerate(unknowns):
        _draw_unknown(axes, place, graded[graded["unknown"] == unknown], seen)
    axes.set_yscale("symlog", linthresh=1.0)
    every = np.clip(graded["percent_error"].to_numpy(dtype=float), -_REACH, _REACH)
    every = every[np.isfinite(every)]
    if every.size:
        # room above and below the extreme points for their labels
        low, high = min(every.min(), -2.0), max(every.max(), 2.0)
        axes.set_ylim(low * 4.0, high * 4.0)
    axes.set_xticks(range(len(unknowns)), [drawable(name) for name in unknowns], rotation=30,
                    ha="right")
    axes.set_xlim(-0.6, len(unknowns) - 0.4)
    axes.set_ylabel("percent error of the student's result [%]\n(linear within ±1 %, "
                    "logarithmic beyond)")
    not_graded = int(grading.grades["error"].notna().sum())
    title = f"Percent error by unknown ({len(graded)} runs"
    title += f"; {not_graded} not graded)" if not_graded else ")"
    axes.set_title(title)
    axes.grid(axis="y", color="#dddddd", linewidth=0.6, zorder=0)
    axes.legend(loc="best", fontsize=8, framealpha=0.9)
    return figure


def _interval_limit(deviation, half_width) -> float:
    """Half-width of the deviation axis [%]: room for most intervals, not for the widest."""
    count = len(deviation)
    reach = np.abs(deviation) + half_width
    # a few wide intervals (light gases in a syringe) must not squash all the others
    limit = max(0.5, float(np.nanpercentile(reach, 80)) * 1.6) if count else 1.0
    limit = min(limit, float(np.nanmax(reach)) * 1.05) if count else limit
    return min(limit, _REACH)


def _draw_intervals(axes, y, deviation, half_width, inside, limit):
    """Draw each run's interval as a bar, and write the ends of those the axis cuts off."""
    axes.axvline(0.0, color="black", linewidth=1.0, label="true molar mass")
    for mask, color, label in ((inside, _CORRECT, "interval contains the true value"),
                               (~inside, _OUTSIDE, "interval misses the true value")):
        if mask.any():
            axes.errorbar(deviation[mask], y[mask], xerr=half_width[mask], fmt="o",
                          color=color, ecolor=color, elinewidth=1.4, capsize=3, markersize=4,
                          label=label)
    for row_y, low, high in zip(y, deviation - half_width, deviation + half_width, strict=True):
        if high > limit or low < -limit:
            axes.annotate(f"interval {low:+.1f} to {high:+.1f} %", (limit, row_y),
                          xytext=(-3, 4), textcoords="offset points", ha="right", va="bottom",
                          fontsize=6.5, color="#444444")


def _label_runs(axes, y, graded):
    """Name each run on the left, coloured by the kind of its reported result; return the kinds."""
    names = [
        drawable(f"{run}  {student if isinstance(student, str) else ''}  ({unknown})")
        for run, student, unknown in zip(graded["run"], graded["student"], graded["unknown"],
                                         strict=True)
    ]
    axes.set_yticks(y, names, fontsize=8)
    kinds = [_kind(codes) for codes in graded["diagnosis"]]
    for tick, kind in zip(axes.get_yticklabels(), kinds, strict=True):
        if kind != "correct":
            tick.set_color(_MISTAKE if kind == "mistake" else _UNEXPLAINED)
    return kinds


def _label_reported_mistakes(axes, y, kinds, labels):
    """Write each run's diagnosed mistake on a right-hand axis, level with its interval."""
    right = axes.twinx()
    right.set_ylim(axes.get_ylim())
    right.set_yticks(y, [f"reported: {label}" if kind != "correct" else ""
                         for kind, label in zip(kinds, labels, strict=True)],
                     fontsize=7.5)
    for tick, kind in zip(right.get_yticklabels(), kinds, strict=True):
        tick.set_color(_MISTAKE if kind == "mistake" else _UNEXPLAINED)
    right.tick_params(axis="y", length=0)


def interval_figure(grading):
    """Draw each run's recomputed interval against the true molar mass.

    Parameters
    ----------
    grading : Grading
        From :func:`molid.teaching.grading.grade`.

    Returns
    -------
    matplotlib.figure.Figure
        One row per graded run: the recomputed molar mass for the true gas
        (ideal-gas result times the gas's Z) as a deviation from the true molar
        mass [%], with its expanded uncertainty (k = 2). Runs whose reported
        value has a diagnosed mistake are labelled in red with the mistake.
    """
    graded = _graded(grading).sort_values(["unknown", "row"], kind="stable")
    true_mass = graded["true_molar_mass"].to_numpy(dtype=float)
    with np.errstate(all="ignore"):  # a result too large for the arithmetic is left out below
        deviation = 100.0 * (graded["true_gas_molar_mass"].to_numpy(dtype=float) - true_mass) / true_mass
        half_width = 100.0 * graded["true_gas_U"].to_numpy(dtype=float) / true_mass
    drawn = np.isfinite(deviation) & np.isfinite(half_width)
    total = int(drawn.sum())
    drawn &= np.cumsum(drawn) <= MOST_INTERVALS
    graded, deviation, half_width = graded[drawn], deviation[drawn], half_width[drawn]
    count = len(graded)
    figure = _figure(9.0, max(3.0, 0.28 * count + 1.6))
    axes = figure.add_subplot()
    inside = graded["in_interval"].fillna(False).to_numpy(dtype=bool)
    y = np.arange(count)[::-1]
    limit = _interval_limit(deviation, half_width)
    _draw_intervals(axes, y, deviation, half_width, inside, limit)
    kinds = _label_runs(axes, y, graded)
    axes.set_xlim(-limit, limit)
    axes.set_ylim(-0.8, count - 0.2)
    _label_reported_mistakes(axes, y, kinds, graded["label"])
    axes.set_xlabel("recomputed molar mass for the true gas − true molar mass [%]\n"
                    "(bars: expanded uncertainty U, k = 2)")
    shown = f"; the first {count} of {total} runs" if total > count else ""
    axes.set_title("Recomputed interval of each run against the true molar mass\n"
                   f"(from the students' readings; coloured: the reported value disagrees{shown})",
                   fontsize=10, pad=16)
    axes.grid(axis="x", color="#dddddd", linewidth=0.6)
    # the key sits between the title and the first row, never over a run's bar
    axes.legend(loc="lower center", bbox_to_anchor=(0.5, 1.0), ncol=2, fontsize=8, frameon=False,
                borderaxespad=0.2)
    return figure


def write_class_plots(grading, directory) -> list[Path]:
    """Write the class plots as PNG and SVG files into a folder.

    Parameters
    ----------
    grading : Grading
        From :func:`molid.teaching.grading.grade`.
    directory : str or pathlib.Path
        An existing folder.

    Returns
    -------
    list of pathlib.Path
        ``percent_error.png``, ``percent_error.svg``, ``intervals.png``,
        ``intervals.svg``, in that order.
    """
    import matplotlib

    from molid.io.safe_files import write_atomic

    directory = Path(directory)
    written = []
    # fixed ids and no date in the SVG: the same grading gives the same bytes
    with matplotlib.rc_context({"svg.hashsalt": "molid"}):
        for stem, build in (("percent_error", percent_error_figure),
                            ("intervals", interval_figure)):
            figure = build(grading)
            for extension in ("png", "svg"):
                buffer = io.BytesIO()
                metadata = {"Date": None} if extension == "svg" else {}
                figure.savefig(buffer, format=extension, metadata=metadata)
                path = directory / f"{stem}.{extension}"
                write_atomic(path, buffer.getvalue())
                written.append(path)
    return written
