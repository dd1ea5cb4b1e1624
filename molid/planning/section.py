"""A simulated section: many runs of each unknown, drawn with the profile's noise, through identify.

Each outcome is one run (or, with replicates, one sample of N runs) of an unknown
simulated by :mod:`molid.planning.simulation` and analysed by
:func:`molid.pipeline.identify.identify` against the whole library. Counted per
true unknown: how often it comes out consistent, how often it ranks first, and
what ranks first otherwise; per pair of unknowns, how often each one's runs
exclude the other. With the rates of classic mistakes, each simulated student
makes at most one mistake (drawn with those rates; a mistake with several
variants, such as which pressure unit was confused, takes one at random), writes
the result to four significant digits, and the section is graded by
:func:`molid.teaching.grading.grade` with the rubric.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from molid.candidates.verdicts import rank_key, relative_difference, verdicts
from molid.io.reading import read_runs
from molid.methods.mistakes import MISTAKE_CODES
from molid.methods.registry import METHODS
from molid.pipeline.identify import identify, model_inputs
from molid.planning.conditions import PlanError
from molid.planning.simulation import gas_properties, run_frame
from molid.teaching.diagnosis import mistake_model, mistake_variants
from molid.teaching.grading import grade

__all__ = ["GRADING_CHUNK", "MOST_SIMULATED_RUNS", "parse_mistakes", "simulate_section"]

#: Runs graded at once (see :func:`_graded`): about 1 GB of diagnosis at a time.
GRADING_CHUNK = 2_000

#: Runs a simulation may draw in all (unknowns × outcomes × replicates): memory for the
#: (runs × candidates) arrays of the ranking stays under about 2 GB.
MOST_SIMULATED_RUNS = 500_000

_RATE = re.compile(r"^\s*([a-z-]+)\s*=\s*([0-9.eE+-]+)\s*(%?)\s*$")


def parse_mistakes(text: str, method: str) -> dict:
    """Read mistake rates: ``"celsius-as-kelvin=0.05, volume-unit=2%"``.

    Parameters
    ----------
    text : str
        Comma-separated ``code=rate`` items; a rate is a fraction, or a percent with ``%``.
    method : str
        The method: only its own mistakes can be made with it.

    Returns
    -------
    dict
        Code → rate (fraction).

    Raises
    ------
    PlanError
        An item that cannot be read, a code the method does not have, a rate outside
        0-1, or rates adding up to more than 1.

    Examples
    --------
    >>> parse_mistakes("celsius-as-kelvin=0.05, volume-unit=2%", "syringe")
    {'celsius-as-kelvin': 0.05, 'volume-unit': 0.02}
    """
    accepted = METHODS[method].mistakes
    rates = {}
    for item in filter(str.strip, str(text).split(",")):
        match = _RATE.match(item)
        if match is None:
            raise PlanError(f"--mistakes '{item.strip()}': write code=rate, e.g. celsius-as-kelvin=0.05")
        code, rate = match.group(1), float(match.group(2)) / (100.0 if match.group(3) else 1.0)
        if code not in accepted:
            known = "" if code in MISTAKE_CODES else " (no such mistake)"
            raise PlanError(f"--mistakes: '{code}' cannot be made with the {method} method{known}; "
                            f"accepted: {', '.join(accepted)}")
        if not 0.0 <= rate <= 1.0:
            raise PlanError(f"--mistakes: the rate of {code} ({item.split('=', 1)[1].strip()}) must be "
                            "between 0 and 1 (or 0 % and 100 %)")
        rates[code] = rate
    if sum(rates.values()) > 1.0 + 1e-12:
        raise PlanError("--mistakes: the rates add up to more than 1; each student makes at most one")
    return rates


def _reported_values(frame, rates, profile, rng):
    """Each simulated student's reported molar mass [g/mol] as text, and the mistake made ('' if none)."""
    table = read_runs(frame, profile=profile)
    values, _, static = model_inputs(table, profile)
    count = len(table)
    codes = list(rates)
    draws = rng.random(count)
    edges = np.cumsum([rates[code] for code in codes])
    chosen = np.searchsorted(edges, draws, side="right")
    made = np.array(codes + [""], dtype=object)[chosen]
    variants = mistake_variants()
    picked = np.zeros(count, dtype=int)
    for code in codes:
        options = [index for index, variant in enumerate(variants) if variant.code == code]
        rows = made == code
        picked[rows] = rng.choice(options, int(rows.sum()))
    fields = ("temperature_offset", "volume_factor", "pressure_factor", "gas_constant_factor",
              "mass_mode", "room_temperature", "water_vapour_kept", "water_column_kept")
    parameters = {name: np.array([getattr(variants[index], name) for index in picked]) for name in fields}
    with np.errstate(all="ignore"):
        molar_mass = mistake_model(**values, student_air_density=np.zeros(count),
                                   student_arithmetic=np.zeros(count), **static, **parameters)["molar_mass"]
    # a student whose mass comes out negative writes its size
    text = [f"{abs(value) * 1e3:.4g}" if np.isfinite(value) else "" for value in molar_mass]
    return text, made


def _section_frame(conditions, library, unknowns, profile, count, replicates, rng):
    """Build the simulated run sheet: outcome k of unknown i is sample 'u{i}-{k}' of N runs."""
    method = METHODS[conditions.method]
    per_unknown = count * replicates
    rows = np.repeat(np.asarray(unknowns, dtype=int), per_unknown)
    gas = gas_properties(library, rows, conditions.temperature, conditions.room_temperature)
    index = np.arange(len(rows))
    samples = [f"u{i // per_unknown}-{(i % per_unknown) // replicates}" for i in index]
    names = library["name"].to_numpy(dtype=object)[rows]
    return run_frame(method, conditions.as_dict(), gas, runs=[f"r{i}" for i in index], samples=samples,
                     profile=profile, rng=rng, extra={"expected": names}), samples


def _outcome_block(result, replicates, samples, unknowns, count):
    """Find the ranking block of the outcomes and each outcome's position in it (-1: not analysed)."""
    ranking = result.ranking
    if replicates > 1:
        position = {name: k for k, name in enumerate(ranking.sample_names)}
        keys = [f"u{i}-{k}" for i in range(len(unknowns)) for k in range(count)]
        return ranking.samples, np.array([position.get(key, -1) for key in keys])
    where = np.full(len(samples), -1)
    where[ranking.run_index] = np.arange(len(ranking.run_index))
    return ranking.runs, where


def _confusion(block, where, library, unknowns, count):
    """Per true unknown: outcomes analysed, consistent, first, and what ranked first otherwise."""
    names = library["name"].to_numpy(dtype=object)
    molar_masses = library["molar_mass"].to_numpy(dtype=float)
    rows, told = [], {}
    codes_all = []
    for i, true in enumerate(unknowns):
        positions = where[i * count:(i + 1) * count]
        positions = positions[positions >= 0]
        z, condenses, unfit = (block[key][positions] for key in ("z", "condenses", "unfit"))
        relative = relative_difference(block["measured"][positions], molar_masses)
        keys = rank_key(z, condenses, unfit, relative)
        first = np.argmin(keys, axis=1) if len(positions) else np.zeros(0, dtype=int)
        among = np.asarray(unknowns)[np.argmin(keys[:, unknowns], axis=1)] if len(positions) \
            else np.zeros(0, dtype=int)
        codes = verdicts(z, condenses, unfit)
        codes_all.append(codes)
        analysed = max(len(positions), 1)
        taken = pd.Series(names[first[first != true]], dtype=object).value_counts()
        among_taken = pd.Series(names[among[among != true]], dtype=object).value_counts()
        rows.append({
            "true": names[true], "runs": int(len(positions)),
            "consistent": float(np.mean(codes[:, true] == 0)) if len(positions) else 0.0,
            "first": float(np.mean(first == true)) if len(positions) else 0.0,
            "taken_for": {name: float(number / analysed) for name, number in taken.items()},
            "first_among_unknowns": float(np.mean(among == true)) if len(positions) else 0.0,
            "taken_for_among_unknowns": {name: float(number / analysed)
                                         for name, number in among_taken.items()},
        })
    for i, a in enumerate(unknowns):
        for j, b in enumerate(unknowns):
            if j > i:
                excluded_b = float(np.mean(codes_all[i][:, b] >= 2)) if len(codes_all[i]) else 0.0
                excluded_a = float(np.mean(codes_all[j][:, a] >= 2)) if len(codes_all[j]) else 0.0
                told[(a, b)] = min(excluded_b, excluded_a)
    return rows, told


def simulate_section(conditions, library, unknowns, profile, *, count, replicates=1, seed=0,
                     mistakes=None, rubric=None) -> dict:
    """Simulate a section and count what it would find.

    Parameters
    ----------
    conditions : molid.planning.conditions.Conditions
        Method and nominal conditions.
    library : pandas.DataFrame
        The candidate library (index 0..c-1).
    unknowns : sequence of int
        Library rows of the unknowns.
    profile : molid.io.profiles.InstrumentProfile
        The instrument profile (its uncertainties are the simulated noise).
    count : int
        Outcomes per unknown.
    replicates : int
        Runs per outcome (a sample).
    seed : int
        Random seed: the same seed gives the same section.
    mistakes : dict, optional
        Mistake code → rate (see :func:`parse_mistakes`); the section is then graded.
    rubric : optional
        The rubric for grading (see :func:`molid.teaching.rubric.load_rubric`).

    Returns
    -------
    dict
        ``confusion`` (list of dicts), ``told_apart`` ((row a, row b) → fraction of outcomes
        in which each one's runs exclude the other, the smaller of the two), ``grades``
        (None without mistakes) and ``not_analysed`` (outcomes that could not be analysed).
    """
    unknowns = [int(row) for row in unknowns]
    if len(unknowns) * count * replicates > MOST_SIMULATED_RUNS:
        raise PlanError(f"--simulate {count} with {len(unknowns)} unknowns and {replicates} replicates "
                        f"draws {len(unknowns) * count * replicates:,} runs, more than "
                        f"{MOST_SIMULATED_RUNS:,}; give a smaller N")
    rng = np.random.default_rng(seed)
    frame, samples = _section_frame(conditions, library, unknowns, profile, count, replicates, rng)
    grades = None
    with np.errstate(all="ignore"):
        if mistakes is not None:
            reported, made = _reported_values(frame, mistakes, profile, rng)
            frame["reported_molar_mass [g/mol]"] = reported
            frame["student"] = [f"student {index + 1}" for index in range(len(frame))]
            grades = _graded(frame, made, mistakes, rubric, profile, library, replicates)
        result = identify(frame, profile=profile, library=library, combine=replicates > 1)
    block, where = _outcome_block(result, replicates, samples, unknowns, count)
    confusion, told = _confusion(block, where, library, unknowns, count)
    return {"confusion": confusion, "told_apart": told, "grades": grades,
            "not_analysed": int(np.sum(where < 0))}


def _graded(frame, made, rates, rubric, profile, library, replicates) -> dict:
    """Grade the section in chunks of whole samples, and summarise the points and the diagnoses.

    The diagnosis holds every mistake variant of every run against every candidate (about
    0.4 MB a run), so a section is graded :data:`GRADING_CHUNK` runs at a time; each run is
    graded on its own, so the chunks change nothing but the memory.
    """
    size = max(GRADING_CHUNK // replicates, 1) * replicates  # the runs of a sample stay together
    points, diagnoses, max_points = [], [], None
    for start in range(0, len(frame), size):
        grading = grade(frame.iloc[start:start + size].reset_index(drop=True), rubric=rubric, profile=profile,
                        library=library)
        points.append(grading.grades["points"].to_numpy(dtype=float))
        diagnoses += list(grading.grades["diagnosis"])
        max_points = float(grading.rubric.max_points)
    return _grade_summary(np.concatenate(points), diagnoses, max_points, made, rates)


def _grade_summary(points, diagnoses, max_points, made, rates) -> dict:
    """Summarise the points and how often each simulated mistake was diagnosed."""
    graded = points[np.isfinite(points)]
    values = pd.Series(np.round(graded, 1)).value_counts(normalize=True).sort_index(ascending=False)
    diagnosed = {}
    for code in rates:
        rows = np.flatnonzero(made == code)
        found = [code in (diagnoses[row] or []) for row in rows]
        diagnosed[code] = {"made": float(np.mean(made == code)),
                           "diagnosed": float(np.mean(found)) if found else None}
    return {
        "max_points": max_points, "graded": int(len(graded)),
        "mean": float(np.mean(graded)) if len(graded) else None,
        "median": float(np.median(graded)) if len(graded) else None,
        "full_marks": float(np.mean(graded >= max_points - 1e-9)) if len(graded) else None,
        "distribution": [{"points": float(value), "fraction": float(share)}
                         for value, share in values.items()],
        "mistakes": diagnosed,
    }
