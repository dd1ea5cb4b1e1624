"""Grading a lab section: recompute every run, grade it, diagnose mistakes, summarise.

:func:`grade` reads a section's run file (one row per student run, each
student weighing an unknown gas), takes the true identity of each unknown from
the ``expected`` column or an answer key (:mod:`molid.teaching.answer_key`),
and returns a :class:`Grading`: a table of grades in file order, the diagnosis
of each reported result, and a class summary by unknown and by section
(:mod:`molid.teaching.class_summary`). :mod:`molid.teaching.grades_output`
writes a grading as JSON, CSV or a terminal table.

What is graded
--------------
- ``percent_error``: the student's result (``reported_molar_mass`` when given,
  else molid's recomputation) against the true molar mass, signed, in percent.
- ``in_interval``: the true molar mass lies in the recomputed interval for the
  true gas (the ideal-gas result times the true gas's compressibility factor Z,
  with its expanded uncertainty, k = 2, as the candidate ranking computes it).
- ``points``: rubric bands of percent error (the smaller of the error against
  the true molar mass and against what the ideal gas law gives for perfect
  readings of the true gas, so the gas's non-ideality costs nothing), points for
  identifying the gas, less a deduction for a diagnosed mistake.
- ``diagnosis``: see :mod:`molid.teaching.diagnosis`.
"""

from __future__ import annotations

import dataclasses
import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from molid.candidates.verdicts import rank_key, relative_difference
from molid.io.headers import parse_header
from molid.io.problems import InputError
from molid.io.profiles import load_profile
from molid.io.reading import RunTable, read_runs
from molid.methods.mistakes import UNEXPLAINED
from molid.pipeline.identify import Identification, identify, model_inputs
from molid.teaching.answer_key import identities_from_key
from molid.teaching.class_summary import summarise
from molid.teaching.diagnosis import Diagnosis, diagnose
from molid.teaching.rubric import Rubric, load_rubric
from molid.uncertainty.propagation import COVERAGE_FACTOR

__all__ = ["GRADE_COLUMNS", "Grading", "written_resolution", "grade"]

_G = 1e3  # kg/mol -> g/mol
_READINGS = ("mass_tare", "mass_filled", "source_before", "source_after", "volume", "temperature",
             "pressure")

#: Columns of :attr:`Grading.grades`, in order.
GRADE_COLUMNS = (
    "run", "row", "student", "section", "sample", "method", "expected", "expected_name",
    "true_molar_mass", "molar_mass", "U", "reported_molar_mass", "percent_error",
    "graded_percent_error", "in_interval", "true_gas_molar_mass", "true_gas_U",
    "expected_rank", "expected_z", "identified", "identified_as", "points", "max_points",
    "deduction", "diagnosis", "diagnosis_text", "error",
)


@dataclass
class Grading:
    """A graded section.

    Attributes
    ----------
    identification : Identification
        The recomputation of every run (as ``molid identify``).
    grades : pandas.DataFrame
        One row per run in file order; columns :data:`GRADE_COLUMNS`, molar
        masses in g/mol.
    summary : dict
        The class summary, JSON-ready.
    rubric : Rubric
        The rubric applied.
    diagnosis : Diagnosis
        Details of the diagnosis (every mistake variant's value).
    notes : list of str
        Remarks about the grading as a whole.
    """

    identification: Identification
    grades: pd.DataFrame
    summary: dict
    rubric: Rubric
    diagnosis: Diagnosis
    notes: list = field(default_factory=list)

    @property
    def ok(self) -> np.ndarray:
        """True for runs that were graded."""
        return self.grades["error"].isna().to_numpy()


# -- the run file's cells ---------------------------------------------------------------

def _column(table: RunTable, name: str):
    """Find the file's header for a column name (headers may carry a unit); None if absent."""
    for original in table.raw.columns:
        if parse_header(original).name == name:
            return original
    return None


def _text_column(table: RunTable, name: str) -> np.ndarray:
    """Read a column's cells as stripped text, None for a blank cell or a missing column."""
    original = _column(table, name)
    if original is None:
        return np.full(len(table), None, dtype=object)
    cells = table.raw[original].astype(str).str.strip().to_numpy(dtype=object)
    return np.where(cells == "", None, cells)


def _texts(values) -> pd.Series:
    """Make a text column that keeps None for a missing value (not NaN)."""
    items = [None if item is None or (isinstance(item, float) and math.isnan(item)) else str(item)
             for item in values]
    return pd.Series(items, dtype=object)


_NUMBER = re.compile(
    r"^[+-]?(?P<whole>\d*)(?:[.,](?P<fraction>\d*))?(?:[eE](?P<exponent>[+-]?\d+))?$")


def written_resolution(cells, scale: float) -> np.ndarray:
    """Find the resolution of numbers as written: one unit of the last digit, in SI.

    Parameters
    ----------
    cells : array_like of str
        Numbers as the user wrote them (``"44.1"``, ``"4.41e1"``, ``"44,1"``).
    scale : float
        Factor from the written unit to SI.

    Returns
    -------
    numpy.ndarray
        The resolution [SI unit]; NaN for blank or unreadable cells.

    Examples
    --------
    >>> written_resolution(["44.1", "4.41e1", "44", "", "44.10"], 1.0).tolist()
    [0.1, 0.1, 1.0, nan, 0.01]
    """
    text = pd.Series(list(cells), dtype=object).fillna("").astype(str).str.strip()
    parts = text.str.extract(_NUMBER)
    decimals = parts["fraction"].fillna("").str.len().to_numpy(dtype=float)
    exponent = pd.to_numeric(parts["exponent"], errors="coerce").fillna(0).to_numpy(dtype=float)
    readable = parts["whole"].notna().to_numpy() & (text != "").to_numpy()
    return np.where(readable, np.round(10.0 ** (exponent - decimals), 15) * scale, np.nan)


def _library_position(library: pd.DataFrame, texts, also=()):
    """Library position of each distinct identity text, and a message for each failure."""
    from molid.candidates.search import find_candidate
    from molid.physics.formulas import hill_formula

    found, problems = {}, {}
    for text in dict.fromkeys([*texts, *also]):
        if text is None:
            continue
        position = find_candidate(library, text)
        if position is not None:
            found[text] = int(position)
            continue
        try:
            hill = hill_formula(text)
        except ValueError:
            hill = None
        isomers = library.loc[library["hill"] == hill, "name"].tolist() if hill else []
        if len(isomers) > 1:
            problems[text] = (f"'{text}' is the formula of several substances ("
                              + ", ".join(isomers) + "); give the name")
        else:
            problems[text] = (f"'{text}' is not in the candidate library; check the spelling, "
                              "or add it with --candidate FORMULA=NAME or --library")
    return found, problems


# -- the true gas of each run -----------------------------------------------------------

def _true_gases(library: pd.DataFrame, expected, samples, rows, rubric: Rubric):
    """Find each run's true gas and the rubric's extra candidates in the library.

    Returns
    -------
    true_index : numpy.ndarray of int
        Library position of each run's true gas; -1 where it has none.
    also_index : list of int
        Library position of each of the rubric's ``identification.also`` gases.
    grade_errors : list of list of str
        Per run, why it has no true gas.

    Raises
    ------
    InputError
        For an ``identification.also`` gas that is not in the library.
    """
    found, problems = _library_position(library, list(expected), rubric.also)
    true_index = np.array([found.get(text, -1) if text is not None else -1 for text in expected],
                          dtype=int)
    grade_errors = [[] for _ in expected]
    for i, text in enumerate(expected):
        if text is None:
            where = f"sample '{samples[i]}'" if samples[i] is not None else "this run (no sample)"
            grade_errors[i].append(
                f"row {rows[i]}: no expected identity for {where}: give it in the 'expected' "
                "column or the answer key")
        elif text in problems:
            grade_errors[i].append(f"row {rows[i]}: expected identity {problems[text]}")
    for text in rubric.also:
        if text in problems:
            raise InputError(f"rubric key 'identification.also': {problems[text]}")
    return true_index, [found[text] for text in rubric.also], grade_errors


def _ranking_positions(ranking, count: int) -> np.ndarray:
    """Row of each run in the ranking's per-run arrays; -1 for a run that was not evaluated."""
    position = np.full(count, -1, dtype=int)
    position[np.asarray(ranking.run_index, dtype=int)] = np.arange(len(ranking.run_index))
    return position


def _rank_among_candidates(block: dict, runs, gases, molar_masses) -> np.ndarray:
    """Place (1 = first) of one gas per run in that run's candidate ranking.

    Candidates rank as :func:`molid.candidates.verdicts.rank_key` orders them (the
    excluded ones by relative difference); a tie goes to the earlier library entry,
    as in the ranking itself.
    """
    order_key = rank_key(block["z"][runs], block["condenses"][runs], block["unfit"][runs],
                         relative_difference(block["measured"][runs], molar_masses))
    runs = np.arange(len(runs))
    own = order_key[runs, gases][:, None]
    columns = np.arange(order_key.shape[1])[None, :]
    return ((order_key[runs] < own) | ((order_key[runs] == own) & (columns < gases[:, None]))
            ).sum(axis=1) + 1


def _true_gas_standing(block: dict, position, true_index, true_mass, molar_masses) -> dict:
    """Where the true gas stands in each run's ranking, and its recomputed interval.

    Parameters
    ----------
    block : dict
        The ranking's per-run arrays (runs × library candidates).
    position : numpy.ndarray of int
        Row of each run in ``block``; -1 when not evaluated.
    true_index : numpy.ndarray of int
        Library position of each run's true gas; -1 when none.
    true_mass : numpy.ndarray
        True molar mass of each run [kg/mol].
    molar_masses : numpy.ndarray
        Each library candidate's molar mass [kg/mol] (the ranking's order of excluded ones).

    Returns
    -------
    dict
        Per run: ``ranked`` (evaluated and with a true gas), ``compressibility``
        (the true gas's Z, 1 when not ranked), ``z``, ``rank`` (-1 when not
        ranked), ``molar_mass`` and ``U`` of the recomputed result for the true
        gas [kg/mol], and ``in_interval``.
    """
    count = len(position)
    ranked = (position >= 0) & (true_index >= 0)
    runs, gases = position[ranked], true_index[ranked]
    compressibility = np.ones(count)
    compressibility[ranked] = block["Z"][runs, gases]
    z = np.full(count, np.nan)
    z[ranked] = block["z"][runs, gases]
    rank = np.full(count, -1, dtype=int)
    if ranked.any():
        rank[ranked] = _rank_among_candidates(block, runs, gases, molar_masses)
    molar_mass = np.full(count, np.nan)
    molar_mass[ranked] = block["measured"][runs, gases]
    expanded = np.full(count, np.nan)
    expanded[ranked] = COVERAGE_FACTOR * block["u_measured"][runs, gases]
    return {"ranked": ranked, "compressibility": compressibility, "z": z, "rank": rank,
            "molar_mass": molar_mass, "U": expanded,
            "in_interval": np.abs(molar_mass - true_mass) <= expanded}


# -- the student's result ---------------------------------------------------------------

_FLASK_DIAGNOSIS = (
    "vapour-flask runs are checked against the textbook calculation, without the "
    "residual-vapour correction; a result that includes that correction shows as unexplained")

def _diagnose_reported(table: RunTable, profile, rubric: Rubric, usable) -> Diagnosis:
    """Diagnose each reported result against the mistakes a student makes with the same readings."""
    reported_column = _column(table, "reported_molar_mass")
    if reported_column is not None:
        resolution = written_resolution(table.raw[reported_column].to_numpy(dtype=object),
                                        table.units["reported_molar_mass"].scale)
    else:
        resolution = np.full(len(table), np.nan)
    values, uncertainties, static = model_inputs(table, profile)
    # a value rounded to its last digit is uncertain by a uniform distribution that digit wide
    return diagnose(values, uncertainties, static, table.values["reported_molar_mass"],
                    resolution / math.sqrt(12.0),
                    arithmetic_tolerance=rubric.arithmetic_tolerance,
                    air_density_tolerance=rubric.air_density_tolerance, usable=usable)


def _percent_errors(student, recomputed, true_mass, correction, has_truth, carried):
    """Percent error of each student's result, and the error the rubric grades.

    Parameters
    ----------
    student : numpy.ndarray
        The student's result: reported, else recomputed [kg/mol].
    recomputed : numpy.ndarray
        molid's ideal-gas result from the same readings [kg/mol].
    true_mass : numpy.ndarray
        True molar mass [kg/mol].
    correction : numpy.ndarray
        The true gas's value over the ideal-gas value of each run: its Z at the
        run's conditions, times (1 + the residual-vapour correction) for a
        condensed-vapour flask.
    has_truth : numpy.ndarray of bool
        Runs with a true gas.
    carried : numpy.ndarray of bool
        Runs graded on the recomputed result (a diagnosed mistake carried forward).

    Returns
    -------
    percent_error : numpy.ndarray
        Signed error of the student's result [%].
    graded_value : numpy.ndarray
        The result that is graded [kg/mol].
    graded_error : numpy.ndarray
        Size of the graded error [%]: the smaller of the errors against the true
        molar mass and against the ideal-gas value the true gas gives in this run
        (so a textbook calculation without Z or the residual-vapour correction is fair).
    """
    with np.errstate(invalid="ignore", divide="ignore"):
        percent_error = 100.0 * (student - true_mass) / true_mass
    graded_value = np.where(carried, recomputed, student)
    with np.errstate(invalid="ignore", divide="ignore"):
        graded_error = np.fmin(
            np.abs(100.0 * (graded_value - true_mass) / true_mass),
            np.abs(100.0 * (graded_value * correction - true_mass) / true_mass))
    graded_error = np.where(np.isfinite(graded_value) & has_truth, graded_error, np.nan)
    return percent_error, graded_value, graded_error


def _identification_candidates(rubric: Rubric, library_size: int, true_index, also_index):
    """Library positions a student's result is identified among: the unknowns (or the library)."""
    if rubric.among == "library":
        return np.arange(library_size)
    return np.array(sorted({*true_index[true_index >= 0].tolist(), *also_index}), dtype=int)


def _identifications(graded_value, candidates, true_index, library: pd.DataFrame, block, position,
                     ideal):
    """Name the candidate nearest each graded result, and tell whether it is the true gas.

    The comparison is at each run's conditions: a candidate's molar mass against
    the graded result times that candidate's correction of the run's ideal-gas
    value ``ideal`` (its Z; in a condensed-vapour flask also its residual vapour;
    1 for a run not evaluated).

    Returns
    -------
    identified : numpy.ndarray of bool
        The nearest candidate is the true gas, or an isomer of it (same formula).
    identified_as : numpy.ndarray of str or None
        Name of the nearest candidate; None without a graded result.
    """
    count = len(graded_value)
    if not len(candidates):
        return np.zeros(count, dtype=bool), np.full(count, None, dtype=object)
    evaluated = position >= 0
    compressibility = np.ones((count, len(candidates)))
    with np.errstate(invalid="ignore", divide="ignore"):
        compressibility[evaluated] = (block["measured"][position[evaluated]][:, candidates]
                                      / ideal[evaluated][:, None])
    library_mass = library["molar_mass"].to_numpy(dtype=float)
    with np.errstate(invalid="ignore"):
        distance = np.abs(graded_value[:, None] * compressibility - library_mass[candidates]
                          ) / library_mass[candidates]
    chosen = candidates[np.argmin(np.where(np.isnan(distance), np.inf, distance), axis=1)]
    hill = library["hill"].fillna("").to_numpy(dtype=object)
    names = library["name"].to_numpy(dtype=object)
    valid = np.isfinite(graded_value)
    # isomers share the molar mass, so weighing cannot tell them apart
    identified = valid & (true_index >= 0) & ((chosen == true_index) | (
        (hill[chosen] != "") & (hill[chosen] == hill[np.maximum(true_index, 0)])))
    return identified, np.where(valid, names[chosen], None)


def _score(result: Identification, position, reported, diagnosis: Diagnosis, rubric: Rubric,
           library: pd.DataFrame, true_index, also_index, true_mass, standing: dict) -> dict:
    """Grade each run: percent errors, identification, deduction and points.

    Returns
    -------
    dict
        Per run: ``percent_error``, ``graded_percent_error`` [%], ``identified``,
        ``identified_as``, ``deduction`` and ``points`` (before runs that were not
        graded are blanked).
    """
    student = np.where(np.isfinite(reported), reported, result.molar_mass)
    known_mistake = np.array([bool(codes) and codes != [UNEXPLAINED] for codes in diagnosis.codes])
    # the true gas's own correction of this run's ideal-gas value: Z, and in a condensed-vapour
    # flask also the air its vapour kept out, which the textbook calculation leaves out
    with np.errstate(invalid="ignore", divide="ignore"):
        correction = np.where(np.isfinite(standing["molar_mass"]),
                              standing["molar_mass"] / result.molar_mass, standing["compressibility"])
    percent_error, graded_value, graded_error = _percent_errors(
        student, result.molar_mass, true_mass, correction, true_index >= 0,
        rubric.carry_forward & known_mistake)
    candidates = _identification_candidates(rubric, len(library), true_index, also_index)
    identified, identified_as = _identifications(graded_value, candidates, true_index, library,
                                                  result.ranking.runs, position, result.molar_mass)
    deduction = np.array([rubric.deduction(codes) for codes in diagnosis.codes])
    points = np.maximum(
        0.0, rubric.band_points(graded_error, result.table.text["method"].to_numpy(dtype=object))
        + np.where(identified, rubric.identification_points, 0.0) - deduction)
    return {"percent_error": percent_error, "graded_percent_error": graded_error,
            "identified": identified, "identified_as": identified_as, "deduction": deduction,
            "points": points}


# -- the grades table -------------------------------------------------------------------

def _rows_without_readings(table: RunTable) -> np.ndarray:
    """Tell which rows have all their reading cells empty."""
    empty = np.ones(len(table), dtype=bool)
    for name in _READINGS:
        original = _column(table, name)
        if original is not None:
            empty &= (table.raw[original].astype(str).str.strip() == "").to_numpy()
    return empty


def _row_errors(table: RunTable, result: Identification, grade_errors) -> list:
    """Say why each run that cannot be graded was not (None for a graded run)."""
    rows = table.row_numbers
    no_readings = _rows_without_readings(table)
    students = _texts(_text_column(table, "student"))
    has_students = bool(_column(table, "student"))
    errors = []
    for i in range(len(table)):
        reader = list(result.errors[i])
        if no_readings[i]:
            # one plain message instead of one per empty cell
            who = f" ({students[i]})" if has_students else ""
            present = [name for name in _READINGS if _column(table, name) is not None]
            reader = [f"row {rows[i]}{who}: no readings (the {', '.join(present)} cells are "
                      "empty); nothing to grade"]
        messages = reader + grade_errors[i]
        if not result.ok[i] and not result.errors[i]:
            messages.append(f"row {rows[i]}: the readings could not be evaluated")
        errors.append("; ".join(messages) or None)
    return errors


def _grades_frame(table: RunTable, expected, true_index, true_mass, result: Identification,
                  standing: dict, scores: dict, diagnosis: Diagnosis, errors,
                  max_points: float) -> pd.DataFrame:
    """Assemble :attr:`Grading.grades`: columns :data:`GRADE_COLUMNS`, molar masses in g/mol.

    A run that was not graded keeps its recomputation and diagnosis but no
    graded error, identification, points or deduction.
    """
    failed = np.array([message is not None for message in errors])
    ranked = standing["ranked"]

    def graded_only(array, fill=np.nan):
        return np.where(failed, fill, array)

    return pd.DataFrame({
        "run": _texts(table.text["run"]),
        "row": table.row_numbers.astype(int),
        "student": _texts(_text_column(table, "student")),
        "section": _texts(_text_column(table, "section")),
        "sample": _texts(table.text["sample"].to_numpy(dtype=object)),
        "method": _texts(table.text["method"]),
        "expected": _texts(expected),
        "expected_name": _texts(np.where(true_index >= 0,
                                         table.text["expected"].to_numpy(dtype=object), None)),
        "true_molar_mass": true_mass * _G,
        "molar_mass": result.molar_mass * _G,
        "U": result.U * _G,
        "reported_molar_mass": table.values["reported_molar_mass"] * _G,
        "percent_error": scores["percent_error"],
        "graded_percent_error": graded_only(scores["graded_percent_error"]),
        "in_interval": pd.array(np.where(ranked, standing["in_interval"], None), dtype="boolean"),
        "true_gas_molar_mass": standing["molar_mass"] * _G,
        "true_gas_U": standing["U"] * _G,
        "expected_rank": pd.array(np.where(ranked, standing["rank"], None), dtype="Int64"),
        "expected_z": standing["z"],
        "identified": pd.array(graded_only(scores["identified"], None), dtype="boolean"),
        "identified_as": _texts(graded_only(scores["identified_as"], None)),
        "points": graded_only(scores["points"]),
        "max_points": np.full(len(table), max_points),
        "deduction": graded_only(scores["deduction"]),
        "diagnosis": pd.Series(diagnosis.codes, dtype=object),
        "diagnosis_text": _texts(diagnosis.text),
        "error": _texts(errors),
    }, columns=list(GRADE_COLUMNS))


# -- grading ----------------------------------------------------------------------------

def _load_inputs(source, rubric, profile, library, vessels=None):
    """Load the rubric, instrument profile, candidate library and run table of a grading.

    The run table gets its own copy of the text cells: grading writes the true
    gases' library names into its ``expected`` column.
    """
    from molid.candidates.library import load_library

    rubric = load_rubric(rubric)
    if profile is None or isinstance(profile, (str, Path)):
        profile = load_profile(profile)
    library = (load_library() if library is None else library).reset_index(drop=True)
    table = source if isinstance(source, RunTable) else read_runs(source, profile=profile,
                                                                  vessels=vessels)
    table = dataclasses.replace(table, text=table.text.copy())
    return rubric, profile, library, table


def grade(source, *, key=None, rubric=None, profile=None, library=None, vessels=None) -> Grading:
    """Recompute, grade and diagnose every run of a lab section.

    Parameters
    ----------
    source : str, pathlib.Path, file-like, pandas.DataFrame or RunTable
        The section's runs (see :func:`molid.io.reading.read_runs`); optional columns
        ``student``, ``section``, ``expected`` and ``reported_molar_mass``.
    key : str, pathlib.Path, file-like, pandas.DataFrame or dict, optional
        Answer key mapping sample to identity (see
        :func:`molid.teaching.answer_key.read_key`), or a dict sample -> identity.
        It takes precedence over the ``expected`` column.
    rubric : str, pathlib.Path, dict or Rubric, optional
        See :func:`molid.teaching.rubric.load_rubric`; the defaults when None.
    profile : InstrumentProfile or path, optional
        Default uncertainties.
    library : pandas.DataFrame, optional
        Candidate library; the default library when None.
    vessels : VesselRegister or path, optional
        Vessel register, for runs that name a ``vessel`` instead of a ``volume``.

    Returns
    -------
    Grading
        Grades in file order, the summary and the rubric.

    Raises
    ------
    InputError
        For a run file, key or rubric that cannot be used at all. Problems of
        single rows (no readings, an unknown identity) are reported in the row's
        ``error`` and the other rows are graded.
    """
    rubric, profile, library, table = _load_inputs(source, rubric, profile, library, vessels)
    samples = table.text["sample"].to_numpy(dtype=object)
    expected, notes = identities_from_key(key, samples, table.text["expected"].to_numpy(dtype=object),
                                          table.row_numbers)
    true_index, also_index, grade_errors = _true_gases(library, expected, samples,
                                                       table.row_numbers, rubric)
    library_mass = library["molar_mass"].to_numpy(dtype=float)
    true_mass = np.where(true_index >= 0, library_mass[np.maximum(true_index, 0)], np.nan)
    # the ranking checks each run's label against its true gas, by the library's name for it
    table.text["expected"] = pd.Series(
        [library.at[index, "name"] if index >= 0 else None for index in true_index], dtype=object)

    result = identify(table, profile=profile, library=library)
    position = _ranking_positions(result.ranking, len(table))
    standing = _true_gas_standing(result.ranking.runs, position, true_index, true_mass,
                                  result.ranking.library["molar_mass"].to_numpy(dtype=float))
    diagnosis = _diagnose_reported(table, profile, rubric, result.ok)
    if result.residual:
        notes = list(notes) + [_FLASK_DIAGNOSIS]
    scores = _score(result, position, table.values["reported_molar_mass"], diagnosis, rubric,
                    library, true_index, also_index, true_mass, standing)
    errors = _row_errors(table, result, grade_errors)
    grades = _grades_frame(table, expected, true_index, true_mass, result, standing, scores,
                           diagnosis, errors, rubric.max_points)
    return Grading(identification=result, grades=grades, summary=summarise(grades),
                   rubric=rubric, diagnosis=diagnosis, notes=notes)
