"""``molid plan``: before anyone weighs, what this equipment can tell apart and what a decision will need.

:func:`make_plan` reads the options, evaluates every library substance at the
nominal conditions (:mod:`molid.planning.separability`), predicts each
unknown's uncertainty, the separation of every pair and the replicates that
would separate it, proposes swaps (:mod:`molid.planning.swaps`), optionally
simulates a section (:mod:`molid.planning.section`) and plans a purity
decision (:mod:`molid.planning.decision`). It returns the plan as a JSON-ready
document; :mod:`molid.planning.output` prints it and :mod:`molid.planning.page`
draws it.
"""

from __future__ import annotations

import numpy as np

from molid.candidates.hazards import SAFETY_FOOTNOTE, hazard_cautions, method_cautions, substance_cautions
from molid.candidates.search import find_candidate
from molid.candidates.verdicts import SEPARATION_FACTOR
from molid.io.profiles import load_profile
from molid.methods.inputs import INPUT_LABELS
from molid.planning.conditions import PlanError, listed, nominal_conditions
from molid.planning.decision import plan_decision
from molid.planning.output import input_words, percent
from molid.planning.section import parse_mistakes, simulate_section
from molid.planning.separability import (
    MOST_REPLICATES,
    dominant_input,
    evaluate_nominal,
    pair_separation,
    replicate_split,
    shared_part,
    uncertainty_with,
)
from molid.planning.swaps import swaps_for
from molid.planning.unknowns import (
    condenses_at,
    read_names_file,
    resolve_names,
    split_names,
    unfit_message,
)
from molid.teaching.rubric import load_rubric

__all__ = ["SIMULATOR", "make_plan"]

_G = 1e3  # kg/mol -> g/mol

#: What the planner's simulation is, in words for the output.
SIMULATOR = ("molid's own: each method's simulator of the balance readings, ideal gas plus the second "
             "virial coefficient (Tsonopoulos) for the gas and CIPM-2007 for the air; no reference "
             "equation of state")


def _unknown_rows(library, unknowns, unknowns_file, label):
    """Find the unknowns' library rows (option and file); refuse them together when any is unknown."""
    names = split_names(unknowns, library) if unknowns else []
    if unknowns_file:
        names += read_names_file(unknowns_file)
    if not names and label is None:
        raise PlanError("give the unknowns (--unknowns \"argon, carbon dioxide, ...\" or --unknowns-file), "
                        "or a --label for a purity plan")
    option = "--unknowns" if not unknowns_file else ("--unknowns-file" if not unknowns
                                                     else "--unknowns/--unknowns-file")
    rows = resolve_names(names, library, option)
    return rows, len(names) - len(rows)


def _check_measurable(table, library, rows, conditions, option):
    """Refuse unknowns the method cannot measure at the nominal conditions, each with its reason."""
    problems = []
    for row in rows:
        position = table.position(row)
        verdict = table.verdict[position]
        if not table.ok[position] and condenses_at(library, row, conditions.temperature, conditions.pressure):
            verdict = "condenses"  # no run could even be simulated: far below its boiling point
        if verdict in ("condenses", "not-a-liquid", "dissolves"):
            problems.append(unfit_message(library, row, verdict, conditions))
        elif not table.ok[position]:
            error = table.errors[position].split(": ", 1)[-1] or "its runs cannot be analysed"
            problems.append(f"{library.at[row, 'name']}: a {conditions.method} run of it at "
                            f"{conditions.describe()} cannot be analysed ({error}); check --volume, "
                            "--temperature and --pressure")
    if problems:
        raise PlanError(f"{option}: " + listed(problems))


def _predicted(table, library, row, replicates, measured):
    """One unknown's predicted result: u and U as that gas, the largest share, and with N replicates.

    ``measured``: the runs state the room's humidity (for the words of a note).
    """
    position = table.position(row)
    u = float(table.u_measured[position])
    measurement = float(np.sqrt(max(u**2 - table.u_model[position] ** 2, 0.0)))
    name, share = dominant_input(table, position)
    name_n, share_n = dominant_input(table, position, replicates)
    u_n = float(uncertainty_with(table.u_one[position, row], table.u_two[position, row], replicates))
    split = replicate_split(table, position, row, replicates)
    note = None
    if split["dominates"]:
        runs = "one run" if replicates == 1 else f"{replicates} runs"
        note = (f"more replicates cannot help much: with {runs} the part of u common to every run "
                f"({split['shared'] * _G:.2g} g/mol, mostly the {input_words(split['largest'], measured)}) "
                f"is at least the part that averages out ({split['independent'] * _G:.2g} g/mol)")
    return {
        "name": library.at[row, "name"], "formula": library.at[row, "formula"] or None,
        "molar_mass": round(float(library.at[row, "molar_mass"]) * _G, 6),
        "u": round(u * _G, 6), "U": round(2 * u * _G, 6), "k": 2, "unit": "g/mol",
        "u_measurement": round(measurement * _G, 6),
        "u_model": round(float(table.u_model[position]) * _G, 6),
        "dominant_input": name, "dominant_percent": round(share, 1),
        "replicates": {"n": replicates, "u": round(u_n * _G, 6), "U": round(2 * u_n * _G, 6),
                       "dominant_input": name_n, "dominant_percent": round(share_n, 1),
                       "u_independent": round(split["independent"] * _G, 6),
                       "u_shared": round(split["shared"] * _G, 6),
                       "shared_dominates": split["dominates"], "shared_largest": split["largest"],
                       "note": note},
        "ghs": list(library.at[row, "ghs_hazards"]),
    }


def _no_replicates_reason(table, library, found, measured):
    """Say why no number of replicates separates a pair: the part of u every run shares."""
    position, candidate = found["limiting"]
    common, largest = shared_part(table, position, candidate)
    words = input_words(largest, measured, library.at[candidate, "name"]
                        if largest == "model" and table.rows[position] != candidate else None)
    return (f"no number of replicates would: they read {found['gap'] * _G:.3g} g/mol apart, less than "
            f"5 times the part of u that every run shares ({common * _G:.2g} g/mol, mostly the {words})")


def _pair(table, library, first, second, replicates, measured=True, in_library=False):
    """One pair's separation, verdict, replicates needed and why none would do."""
    found = pair_separation(table, first, second, replicates)
    hill = library["hill"].fillna("").to_numpy(dtype=object)
    isomers = bool(hill[first]) and hill[first] == hill[second]
    separable = found["separation"] >= SEPARATION_FACTOR
    needed, reason = found["needed"], None
    if np.isfinite(needed) and needed <= MOST_REPLICATES:
        needed = int(needed)
    elif isomers:
        needed, reason = None, (f"isomers ({hill[first]}): the same molar mass, and their real-gas "
                                "behaviour differs too little; another method (infrared spectroscopy, "
                                "gas chromatography) is needed")
    elif not np.isfinite(needed):
        needed, reason = None, _no_replicates_reason(table, library, found, measured)
    else:
        needed, reason = None, f"it would take {needed:.0f} replicates, more than {MOST_REPLICATES}"
    return {"a": library.at[first, "name"], "b": library.at[second, "name"],
            "separation": round(found["separation"], 3),
            "separation_one_run": round(found["separation_one_run"], 3),
            "separable": bool(separable),
            "separable_one_run": bool(found["separation_one_run"] >= SEPARATION_FACTOR),
            "replicates_needed": needed, "reason": reason, "gap": round(found["gap"] * _G, 6),
            "isomers": isomers, "in_library": in_library}


def _library_pairs(table, library, rows, replicates, measured):
    """Each unknown against every measurable library substance it could be confused with."""
    pairs = []
    for row in rows:
        for position, other in enumerate(table.rows):
            if other in rows or not table.ok[position] or table.verdict[position] != "consistent":
                continue
            pair = _pair(table, library, row, int(other), replicates, measured, in_library=True)
            if not pair["separable"]:
                pairs.append(pair)
    return pairs


def _swap_words(swaps):
    names = [item["name"] for item in swaps]
    return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " or " + names[-1]


def _summary(pairs, swaps, unknowns, replicates):
    """Plain words first: which pairs cannot be told apart, and what to do about each."""
    runs = "one run" if replicates == 1 else f"{replicates} replicate runs"
    lines = []
    for pair in (item for item in pairs if not item["in_library"] and not item["separable"]):
        a, b = pair["a"], pair["b"]
        if pair["isomers"] and pair["replicates_needed"] is None:
            line = f"{a} and {b} are isomers: no weighing can tell them apart"
        elif pair["replicates_needed"] is not None:
            line = (f"{a} and {b} cannot be told apart by {runs} (separation {pair['separation']:.1f} u; "
                    f"{SEPARATION_FACTOR:g} u needed); {pair['replicates_needed']} replicates would")
        else:
            line = (f"{a} and {b} cannot be told apart with this equipment (separation "
                    f"{pair['separation']:.2g} u; {SEPARATION_FACTOR:g} u needed)")
        options = [f"{name} for {_swap_words(swaps[name])}" for name in (a, b) if swaps.get(name)]
        line += ("; swap " + ", or ".join(options)) if options else \
            "; no library gas with no worse hazards is separable from the other unknowns"
        lines.append(line)
    inner = [item for item in pairs if not item["in_library"]]
    if inner and not lines:
        closest = min(inner, key=lambda item: item["separation"])
        lines.append(f"all {len(unknowns)} unknowns can be told apart by {runs} with this equipment; the "
                     f"closest pair, {closest['a']} and {closest['b']}, is "
                     f"{closest['separation']:.1f} u apart ({SEPARATION_FACTOR:g} u needed)")
    return lines


def _model_notes(conditions, profile, library, rows, table, unknowns):
    """Say what the prediction rests on: an assumed humidity that dominates, gas lost to the water."""
    notes = []
    assumed = [item["name"] for item in unknowns if item["dominant_input"] == "humidity"]
    if conditions.humidity is None and assumed and "humidity" in profile.assumed:
        value, rule = profile.assumed["humidity"]
        half_width = np.sqrt(3.0) * float(rule.apply(value))
        notes.append(f"the runs state no room humidity, so the profile's assumption ({value * 100:.0f} %, "
                     f"anywhere from {max(value - half_width, 0) * 100:.0f} to "
                     f"{min(value + half_width, 1) * 100:.0f} %) is the largest part of u for "
                     + ("every unknown" if len(assumed) == len(unknowns) else ", ".join(assumed))
                     + "; a hygrometer reading with every run makes it much smaller (plan it with "
                     "--humidity, e.g. --humidity \"45 %\")")
    lost = [(library.at[row, "name"], float(table.dissolved[table.position(row)])) for row in rows]
    lost = [(name, value) for name, value in lost if np.isfinite(value) and value >= 0.01]
    if lost:
        notes.append("gas lost to the water, which the prediction does not include: at equilibrium with an "
                     "equal volume of gas-free water, "
                     + "; ".join(f"{name} about {value * 100:.2g} % (its result up to "
                                 f"{value / (1 - value) * 100:.2g} % high)" for name, value in lost)
                     + ". An upper bound: a short contact, or water that has already taken up the gas, "
                     "loses less")
    return notes


def _cautions(method, library, rows):
    hazards = [item for row in rows for item in library.at[row, "ghs_hazards"]]
    names = [library.at[row, "name"] for row in rows]
    return method_cautions([method]) + hazard_cautions(hazards) + substance_cautions(names) \
        + [SAFETY_FOOTNOTE]


def _percent(option, text, low=0.0, high=100.0):
    """Read a percentage option as a fraction; refuse it outside (low, high]."""
    try:
        value = float(str(text).strip().rstrip("%").strip())
    except ValueError:
        raise PlanError(f"{option} '{text}': not a number; give a percentage, e.g. 1 or 0.5") from None
    if not (np.isfinite(value) and low < value <= high):
        raise PlanError(f"{option} '{text}': give a percentage above {low:g} and at most {high:g}")
    return value / 100.0


def _qa_rows(library, label, contaminant, limit):
    """Find the labelled gas's and the contaminant's rows; None without a label."""
    if label is None:
        for option, value in (("--contaminant", contaminant), ("--limit", limit)):
            if value is not None:
                raise PlanError(f"{option} needs --label NAME (the gas the cylinder is labelled as)")
        return None
    main = resolve_names([label], library, "--label")[0]
    other = resolve_names([contaminant or "air"], library, "--contaminant")[0]
    return main, other


def _why(reason, limited_by):
    """Add the largest part of u(x) to a reason why no number of replicates or volume would do."""
    if reason is None:
        return None
    words = input_words(limited_by) if limited_by in INPUT_LABELS or limited_by == "model" else limited_by
    return f"{reason}; the largest part of u(x) is the {words}"


def _qa_document(found, library, qa_rows, limit, rule, replicates, guard_fraction, conditions):
    """Put the purity plan in the document's words (fractions in percent, volumes in mL)."""
    main, contaminant = qa_rows
    qa = {"label": library.at[main, "name"], "contaminant": library.at[contaminant, "name"],
          "fraction_unit": "percent", "replicates": replicates,
          "u_at_zero": round(found["u_at_zero"] * 100, 6), "limited_by": found["limited_by"]}
    characteristic = []
    if limit is not None:
        qa.update({"limit": round(limit * 100, 6), "rule": rule,
                   "u_at_limit": round(found["u_at_limit"] * 100, 6),
                   "guard_band": round(found["guard_band"] * 100, 6),
                   "guard_band_target": round(guard_fraction, 6),
                   "guard_band_fraction": round(2 * found["u_at_limit"] / limit, 6),
                   "replicates_needed": found["replicates_needed"],
                   "replicates_reason": _why(found["replicates_reason"], found["limited_by"]),
                   "volume_needed_mL": None if found["volume_needed"] is None
                   else round(found["volume_needed"] * 1e6, 3),
                   "volume_reason": _why(found["volume_reason"], found["limited_by"]),
                   "volume_mL": round(conditions.volume * 1e6, 3)})
        characteristic = [{"x": round(float(x) * 100, 6), "accept": round(float(a), 6),
                           "reject": round(float(r), 6), "undecided": round(float(d), 6)}
                          for x, a, r, d in zip(found["x"], found["accept"], found["reject"],
                                                found["undecided"], strict=True)]
    return qa, characteristic


def _qa_summary(qa, characteristic):
    """One line on what the screening can decide."""
    runs = "one run" if qa["replicates"] == 1 else f"{qa['replicates']} runs"
    line = (f"purity of {qa['label']}: with {runs} per cylinder the detection limit of {qa['contaminant']} "
            f"is {2 * qa['u_at_zero']:.2g} %")
    if not characteristic:
        return line
    middle = characteristic[len(characteristic) // 2]
    line += (f"; a cylinder exactly at the limit ({qa['limit']:g} %) is accepted with probability "
             f"{percent(middle['accept'])} ({qa['rule']} acceptance)")
    if qa["rule"] == "guarded":
        line += (f"; the guard band is {qa['guard_band']:.2g} %, "
                 f"{qa['guard_band_fraction'] * 100:.0f} % of the limit")
        if qa["guard_band_fraction"] > qa["guard_band_target"]:
            ways = []
            if qa["replicates_needed"] is not None:
                ways.append(f"{qa['replicates_needed']} runs per cylinder")
            if qa["volume_needed_mL"] is not None:
                ways.append(f"a vessel of at least {qa['volume_needed_mL']:.3g} mL")
            line += (f"; to bring it under {qa['guard_band_target'] * 100:.0f} % of the limit: "
                     + (" or ".join(ways) if ways else "neither more replicates nor a larger vessel would"))
    return line


def _simulation(document, conditions, library, rows, profile, options, rates, rubric):
    """Simulate the section and put its confusion, grades and told-apart rates into the document."""
    found = simulate_section(conditions, library, rows, profile, count=options["simulate"],
                             replicates=options["replicates"], seed=options["seed"], mistakes=rates,
                             rubric=rubric)
    names = {row: library.at[row, "name"] for row in rows}
    told = {(names[a], names[b]): value for (a, b), value in found["told_apart"].items()}
    for pair in document["pairs"]:
        key = (pair["a"], pair["b"])
        if key in told:
            pair["simulated_told_apart"] = round(told[key], 6)
    document["simulation"] = {"outcomes": options["simulate"], "replicates": options["replicates"],
                              "seed": options["seed"], "simulator": SIMULATOR,
                              "not_analysed": found["not_analysed"]}
    document["confusion"] = [{**row, "consistent": round(row["consistent"], 6),
                              "first": round(row["first"], 6),
                              "first_among_unknowns": round(row["first_among_unknowns"], 6),
                              "taken_for": {key: round(value, 6) for key, value in row["taken_for"].items()},
                              "taken_for_among_unknowns": {
                                  key: round(value, 6)
                                  for key, value in row["taken_for_among_unknowns"].items()}}
                             for row in found["confusion"]]
    document["grades"] = found["grades"]


def make_plan(*, method, unknowns=None, unknowns_file=None, profile=None, library=None, volume=None,
              temperature=None, pressure=None, room_temperature=None, humidity=None, replicates=1,
              simulate=0, seed=0, against_library=False, mistakes=None, rubric=None, label=None,
              contaminant=None, limit=None, rule="guarded", guard_fraction=None) -> dict:
    """Make a plan: predicted results, separability, swaps, a simulated section, a purity decision.

    Parameters mirror the options of ``molid plan`` (see ``molid plan --help``); quantities
    are text with units, ``limit`` and ``guard_fraction`` percentages as text or numbers.

    Returns
    -------
    dict
        The plan as a JSON-ready document (see docs/planning.md for its keys).

    Raises
    ------
    PlanError
        For any option, name or condition that cannot be planned with (all reported
        before anything is simulated).
    """
    from molid.candidates.library import load_library

    conditions = nominal_conditions(method, volume, temperature, pressure, room_temperature, humidity)
    profile = profile if hasattr(profile, "rules") else load_profile(profile)
    library = (load_library() if library is None else library).reset_index(drop=True)
    rates = parse_mistakes(mistakes, method) if mistakes else None
    if rates is not None and not simulate:
        raise PlanError("--mistakes needs --simulate N: the mistakes are made in a simulated section")
    if rubric is not None and rates is None:
        raise PlanError("--rubric needs --mistakes: only a section with mistakes is graded")
    rubric = load_rubric(rubric) if rubric is not None else None
    if not 1 <= int(replicates) <= MOST_REPLICATES:
        raise PlanError(f"--replicates {replicates}: give a number of runs from 1 to {MOST_REPLICATES}")
    limit = _percent("--limit", limit) if limit is not None else None
    guard_fraction = _percent("--guard-fraction", guard_fraction) if guard_fraction is not None else 0.5
    rows, dropped = _unknown_rows(library, unknowns, unknowns_file, label)
    qa_rows = _qa_rows(library, label, contaminant, limit)
    evaluated = list(dict.fromkeys(rows + ([qa_rows[0]] if qa_rows else [])))
    table = evaluate_nominal(conditions, library, evaluated, profile)
    _check_measurable(table, library, rows, conditions, "--unknowns")
    if qa_rows is not None:
        _check_measurable(table, library, [qa_rows[0]], conditions, "--label")
    document = _base_document(conditions, profile, replicates, library, rows, table, against_library)
    for pair in document["pairs"]:
        if pair["isomers"] and pair["separable"] and not pair["in_library"]:
            document["notes"].append(
                f"{pair['a']} and {pair['b']} are isomers: this method tells them apart only by their "
                "different real-gas behaviour (a flask's also by their vapour pressures), which rests on "
                "the models' correlations, not on their molar mass")
    document["notes"] += _model_notes(conditions, profile, library, rows, table, document["unknowns"])
    if room_temperature is not None and conditions.room_temperature == conditions.temperature:
        document["notes"].append(f"--room-temperature is not used: {method} runs take the gas's temperature "
                                 "for the balance room")
    if dropped:
        document["notes"].append(f"{dropped} name(s) named a substance already listed; each is planned once")
    if simulate and rows:
        _simulation(document, conditions, library, rows, profile,
                    {"simulate": simulate, "replicates": replicates, "seed": seed}, rates, rubric)
    elif simulate:
        document["notes"].append("--simulate needs unknowns: no section was simulated")
    if qa_rows is not None:
        found = plan_decision(conditions, library, *qa_rows, profile, limit=limit, rule=rule,
                              replicates=replicates, guard_fraction=guard_fraction)
        document["qa"], document["operating_characteristic"] = _qa_document(
            found, library, qa_rows, limit, rule, replicates, guard_fraction, conditions)
        document["detection_limit"] = round(found["detection_limit"] * 100, 6)
        document["summary"].append(_qa_summary(document["qa"], document["operating_characteristic"]))
    document["cautions"] = _cautions(method, library, rows + list(qa_rows or ()))
    return document


def _base_document(conditions, profile, replicates, library, rows, table, against_library):
    """Build the document's conditions, unknowns, pairs, swaps and summary.

    ``table`` holds the unknowns' noise-free results; the whole library is evaluated only
    when it is needed (swaps for a pair that cannot be told apart, ``--against-library``).
    """
    measured = conditions.humidity is not None
    pairs = [_pair(table, library, first, second, replicates, measured)
             for index, first in enumerate(rows) for second in rows[index + 1:]]
    inseparable = [pair for pair in pairs if not pair["separable"]]
    whole = evaluate_nominal(conditions, library, np.arange(len(library)), profile) \
        if against_library or inseparable else table
    if against_library:
        pairs += _library_pairs(whole, library, rows, replicates, measured)
    swaps = {}
    for pair in inseparable:
        for name in (pair["a"], pair["b"]):
            swaps.setdefault(name, swaps_for(whole, library, rows, find_candidate(library, name), replicates))
    return {
        "method": conditions.method,
        "conditions": {**conditions.text, "humidity_measured": conditions.humidity is not None,
                       "volume_m3": conditions.volume,
                       "temperature_K": conditions.temperature, "pressure_Pa": conditions.pressure,
                       "room_temperature_K": conditions.room_temperature},
        "profile": profile.source, "replicates": replicates,
        "summary": _summary(pairs, swaps, rows, replicates),
        "unknowns": [_predicted(table, library, row, replicates, measured) for row in rows],
        "pairs": pairs,
        "swaps": [{"replace": name, "with": [{**item, "separation": round(item["separation"], 3)}
                                             for item in items]} for name, items in swaps.items()],
        "simulation": None, "confusion": [], "grades": None,
        "qa": None, "detection_limit": None, "operating_characteristic": [],
        "notes": [], "cautions": [],
    }
