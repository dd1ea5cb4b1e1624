"""A plan on the terminal, and as JSON: the plain-words summary first, then the tables.

The JSON document is the plan itself (see :func:`molid.planning.plan.make_plan`), printed
with sorted-free, fixed key order so the same plan gives the same bytes.
"""

from __future__ import annotations

import json
import math

from molid.methods.inputs import INPUT_LABELS

__all__ = ["plan_json", "plan_text", "input_words", "percent", "significant", "heading", "replicate_notes",
           "purity_lines"]


def plan_json(document: dict) -> str:
    """Return the plan as JSON text (UTF-8, indented, no NaN)."""
    return json.dumps(document, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def input_words(name, humidity_measured=True, candidate=None) -> str:
    """Say an input of the budget in words.

    Parameters
    ----------
    name : str
        An input's name, or ``model`` for the real-gas model's term.
    humidity_measured : bool
        The runs state the room's humidity; otherwise it is the profile's assumption.
    candidate : str, optional
        The candidate whose real-gas model term it is, when not the substance's own.

    Examples
    --------
    >>> input_words("mass_tare"), input_words("humidity", humidity_measured=False)
    ('tare reading', 'room humidity, assumed')
    >>> input_words("model", candidate="propyne")
    'real-gas model term of propyne'
    """
    if name == "model":
        return "real-gas model term" + (f" of {candidate}" if candidate else "")
    if name == "humidity":
        return "room humidity" + ("" if humidity_measured else ", assumed")
    return INPUT_LABELS.get(name, str(name))


def percent(value) -> str:
    """Write a fraction as a percentage for a table: '97 %', '0.3 %', '<0.1 %', '0 %'."""
    if value is None:
        return "-"
    value = 100.0 * float(value)
    if value == 0:
        return "0 %"
    if value < 0.1:
        return "<0.1 %"
    if value > 99.9 and value < 100.0:
        return ">99.9 %"
    return f"{value:.0f} %" if value >= 10 else f"{value:.1f} %"


def significant(value, digits: int = 2) -> str:
    """Write a number to a number of significant digits, keeping trailing zeros.

    Examples
    --------
    >>> significant(0.0798), significant(0.15), significant(12.34), significant(0.000459)
    ('0.080', '0.15', '12', '0.00046')
    """
    if value is None or not math.isfinite(float(value)):
        return "-"
    value = float(value)
    if value == 0:
        return "0"
    exponent = math.floor(math.log10(abs(float(f"{value:.{digits - 1}e}"))))
    return f"{value:.{max(digits - 1 - exponent, 0)}f}"


def _heading(document) -> list:
    return [heading(document), ""]


def heading(document) -> str:
    """Say the plan's method, conditions, runs and profile in one line."""
    conditions = document["conditions"]
    words = f"{conditions['volume']} at {conditions['temperature']} and {conditions['pressure']}"
    if conditions["room_temperature"] != conditions["temperature"]:
        words += f", room at {conditions['room_temperature']}"
    if conditions.get("humidity"):
        words += f", room humidity {conditions['humidity']} (measured)"
    per = "per unknown" if document["unknowns"] else "per cylinder"
    runs = "1 run" if document["replicates"] == 1 else f"{document['replicates']} replicate runs"
    return f"molid plan: {document['method']}, {words}; {runs} {per}; profile: {document['profile']}"


def replicate_notes(document) -> list:
    """Say, once for the unknowns it applies to, when more replicates cannot help much."""
    groups = {}
    for item in document["unknowns"]:
        if item["replicates"]["shared_dominates"]:
            groups.setdefault(item["replicates"]["shared_largest"], []).append(item["name"])
    replicates = document["replicates"]
    runs = "one run" if replicates == 1 else f"{replicates} runs"
    measured = document["conditions"].get("humidity_measured", True)
    everyone = len(document["unknowns"])
    lines = []
    for largest, names in groups.items():
        which = "every unknown" if len(names) == everyone > 1 else ", ".join(names)
        lines.append(f"more replicates cannot help much for {which}: with {runs} the part of u common to "
                     f"every run (mostly the {input_words(largest, measured)}) is already at least the "
                     "part that averages out")
    return lines


def _unknowns(document) -> list:
    if not document["unknowns"]:
        return []
    replicates = document["replicates"]
    measured = document["conditions"].get("humidity_measured", True)
    lines = ["Predicted result of one run as each unknown (g/mol, k = 2)"
             + (f", and of {replicates} replicates" if replicates > 1 else ""),
             f"{'unknown':<22} {'M':>9} {'u':>8} {'U':>8}  "
             + (f"{'U, ' + str(replicates) + ' runs':>12}  " if replicates > 1 else "")
             + "largest part of u"]
    for item in document["unknowns"]:
        more = f"{significant(item['replicates']['U']):>12}  " if replicates > 1 else ""
        lines.append(f"{item['name'][:22]:<22} {item['molar_mass']:9.3f} {significant(item['u']):>8} "
                     f"{significant(item['U']):>8}  {more}"
                     f"{input_words(item['dominant_input'], measured)} ({item['dominant_percent']:.0f} %)")
    return lines + [f"- {note}" for note in replicate_notes(document)] + [""]


def _pair_line(pair) -> str:
    if pair["separable"]:
        verdict = "yes"
    elif pair["replicates_needed"] is not None:
        verdict = f"no; {pair['replicates_needed']} replicates would"
    else:
        verdict = "no; " + (pair["reason"] or "")
    told = f" (simulated: {percent(pair['simulated_told_apart'])} told apart)" \
        if "simulated_told_apart" in pair else ""
    return f"{pair['a'][:20]:<20} {pair['b'][:20]:<20} {pair['separation']:9.2f}  {verdict}{told}"


def _pairs(document) -> list:
    inner = [pair for pair in document["pairs"] if not pair["in_library"]]
    outer = [pair for pair in document["pairs"] if pair["in_library"]]
    lines = []
    if inner:
        lines += ["Pairs of unknowns (separation in units of u; 5 tells them apart)",
                  f"{'a':<20} {'b':<20} {'separation':>9}  separable"]
        lines += [_pair_line(pair) for pair in sorted(inner, key=lambda item: item["separation"])] + [""]
    if outer:
        lines += ["Library substances each unknown could be taken for",
                  f"{'unknown':<20} {'library':<20} {'separation':>9}  separable"]
        lines += [_pair_line(pair) for pair in outer] + [""]
    return lines


def _confusion(document) -> list:
    if not document["confusion"]:
        return []
    simulation = document["simulation"]
    what = "runs" if simulation["replicates"] == 1 else f"samples of {simulation['replicates']} runs"
    lines = [f"Simulated section: {simulation['outcomes']} {what} per unknown (seed {simulation['seed']}; "
             f"simulator: {simulation['simulator']})",
             f"{'true unknown':<22} {'consistent':>10} {'first':>7} {'first of unknowns':>17}  "
             "otherwise taken for"]
    for row in document["confusion"]:
        taken = ", ".join(f"{name} {percent(value)}" for name, value in list(row["taken_for"].items())[:4])
        lines.append(f"{row['true'][:22]:<22} {percent(row['consistent']):>10} {percent(row['first']):>7} "
                     f"{percent(row['first_among_unknowns']):>17}  {taken or '-'}")
    if simulation["not_analysed"]:
        lines.append(f"{simulation['not_analysed']} simulated outcome(s) could not be analysed")
    return lines + [""]


def _grades(document) -> list:
    grades = document["grades"]
    if not grades:
        return []
    lines = [f"Expected grades (rubric out of {grades['max_points']:g}; {grades['graded']} graded runs): "
             f"mean {grades['mean']:.1f}, median {grades['median']:g}, "
             f"full marks {percent(grades['full_marks'])}"]
    lines += [f"  {item['points']:>6g} points  {percent(item['fraction']):>7}"
              for item in grades["distribution"]]
    for code, item in grades["mistakes"].items():
        lines.append(f"  {code}: made in {percent(item['made'])} of runs, diagnosed in "
                     f"{percent(item['diagnosed'])} of those")
    return lines + [""]


def purity_lines(document) -> list:
    """Say what the purity plan finds: detection limit, u and guard band at the limit, what it takes."""
    qa = document["qa"]
    if not qa:
        return []
    measured = document["conditions"].get("humidity_measured", True)
    limited = input_words(qa["limited_by"], measured) if qa["limited_by"] in INPUT_LABELS or \
        qa["limited_by"] == "model" else qa["limited_by"]
    runs = "1 run" if qa["replicates"] == 1 else f"{qa['replicates']} runs"
    lines = [f"{qa['label']} with {qa['contaminant']}, {runs} per cylinder: detection limit "
             f"{document['detection_limit']:.3g} % (the largest part of u(x) is the {limited})"]
    if document["operating_characteristic"]:
        band = f"guard band {qa['guard_band']:.3g} %" if qa["rule"] == "guarded" else \
            f"no guard band, U {2 * qa['u_at_limit']:.3g} %"
        lines.append(f"limit {qa['limit']:g} %, {qa['rule']} acceptance: u(x) at the limit "
                     f"{qa['u_at_limit']:.3g} %, {band} ({qa['guard_band_fraction'] * 100:.0f} % of the "
                     "limit)")
        lines += _what_it_takes(qa)
    return lines


def _purity(document) -> list:
    qa = document["qa"]
    if not qa:
        return []
    lines = ["Purity"] + [f"  {line}" for line in purity_lines(document)]
    if document["operating_characteristic"]:
        lines.append(f"  {'true x %':>9} {'accept':>8} {'reject':>8} {'undecided':>10}")
        for point in document["operating_characteristic"][::2]:
            lines.append(f"  {point['x']:9.3g} {percent(point['accept']):>8} {percent(point['reject']):>8} "
                         f"{percent(point['undecided']):>10}")
    return lines + [""]


def _what_it_takes(qa) -> list:
    """Say what brings the guard band (under simple acceptance: U) under the wanted fraction of the limit."""
    band = "the guard band" if qa["rule"] == "guarded" else "U at the limit"
    wanted = f"under {qa['guard_band_target'] * 100:.0f} % of the limit"
    replicates, volume = qa["replicates_needed"], qa["volume_needed_mL"]
    if qa["guard_band_fraction"] <= qa["guard_band_target"]:
        smaller = f"; so would a vessel of {volume:.3g} mL or more" if volume is not None \
            and volume < qa["volume_mL"] else ""
        return [f"the planned equipment keeps {band} {wanted}{smaller}"]
    return [f"runs per cylinder that bring {band} {wanted}: "
            + (str(replicates) if replicates is not None else f"none ({qa['replicates_reason']})"),
            "or a vessel of at least: " + (f"{volume:.3g} mL" if volume is not None
                                           else f"none ({qa['volume_reason']})")]


def plan_text(document: dict) -> str:
    """Return the plan as a terminal report: summary, predictions, pairs, simulation, purity, cautions."""
    lines = _heading(document)
    if document["summary"]:
        lines += [f"- {line}" for line in document["summary"]] + [""]
    for section in (_unknowns, _pairs, _confusion, _grades, _purity):
        lines += section(document)
    if document["notes"]:
        lines += ["Notes"] + [f"- {note}" for note in document["notes"]] + [""]
    lines += ["Safety"] + [f"- {caution}" for caution in document["cautions"]]
    return "\n".join(lines) + "\n"
