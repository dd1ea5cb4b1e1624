"""Grading a lab section: recompute every run, grade it, diagnose mistakes, summarise.

:func:`grade` reads a section's run file (one row per student run, each
student weighing an unknown gas), takes the true identity of each unknown from
the ``expected`` column or an answer key, and returns a :class:`Grading`: a
table of grades in file order, the diagnosis of each reported result, and a
class summary by unknown and by section. :func:`run_grade_command` is the
``molid grade`` command.

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
import io
import json
import math
import re
import sys
from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path
from statistics import NormalDist

import numpy as np
import pandas as pd

from molid.io.profiles import load_profile
from molid.io.reading import InputError, RunTable, _parse_header, read_raw, read_runs
from molid.pipeline.identify import Identification, identify, model_inputs
from molid.teaching.diagnosis import MISTAKE_CODES, UNEXPLAINED, Diagnosis, diagnose
from molid.teaching.rubric import Rubric, load_rubric
from molid.uncertainty.propagation import COVERAGE_FACTOR

__all__ = [
    "MAD_SCALE",
    "OUTLIER_LIMIT",
    "OUTLIER_MINIMUM",
    "GRADE_COLUMNS",
    "PLOT_FILES",
    "KeyFileError",
    "Grading",
    "read_key",
    "written_resolution",
    "robust_spread",
    "robust_z",
    "summarise",
    "grade",
    "grading_document",
    "grades_csv",
    "grades_table",
    "run_grade_command",
]

#: Consistency constant of the median absolute deviation for a normal
#: distribution, 1/Φ⁻¹(3/4) = 1.4826 (Rousseeuw and Croux 1993).
MAD_SCALE = 1.0 / NormalDist().inv_cdf(0.75)
#: A run is an outlier of its group when its robust z exceeds this in size
#: (Iglewicz and Hoaglin 1993 recommend 3.5 for the modified z-score).
OUTLIER_LIMIT = 3.5
#: Fewer values than this give no outliers: with three or four, the MAD rests on
#: one or two gaps and any uneven spacing looks extreme.
OUTLIER_MINIMUM = 5
_G = 1e3  # kg/mol -> g/mol
#: The files ``--plots`` writes.
PLOT_FILES = ("percent_error.png", "percent_error.svg", "intervals.png", "intervals.svg")
_READINGS = ("mass_tare", "mass_filled", "volume", "temperature", "pressure")
_KEY_IDENTITY_COLUMNS = ("expected", "identity", "gas", "answer", "substance", "formula", "name")

#: Columns of :attr:`Grading.grades`, in order.
GRADE_COLUMNS = (
    "run", "row", "student", "section", "sample", "method", "expected", "expected_name",
    "true_molar_mass", "molar_mass", "U", "reported_molar_mass", "percent_error",
    "graded_percent_error", "in_interval", "true_gas_molar_mass", "true_gas_U",
    "expected_rank", "expected_z", "identified", "identified_as", "points", "max_points",
    "deduction", "diagnosis", "diagnosis_text", "error",
)


class KeyFileError(InputError):
    """An answer key that cannot be used."""


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


# -- the answer key ---------------------------------------------------------------------

def read_key(source) -> dict:
    """Read an answer key: sample id -> (identity text, key-file row).

    Parameters
    ----------
    source : str, pathlib.Path, file-like or pandas.DataFrame
        A CSV or .xlsx file with a ``sample`` column and an identity column
        (``expected``, ``identity``, ``gas``, ``answer``, ``substance``,
        ``formula`` or ``name``; or any second column of a two-column file).

    Returns
    -------
    dict
        Sample id -> (identity as written, spreadsheet row).

    Raises
    ------
    KeyFileError
        For a file without those columns, blank cells, or a sample given two
        different identities (every problem named by row).
    """
    try:
        raw, _, _, name = read_raw(source)
    except InputError as problem:
        raise KeyFileError(f"answer key: {problem}") from None
    names = [_parse_header(column).name for column in raw.columns]
    if "sample" not in names:
        raise KeyFileError(f"answer key {name}: no 'sample' column (found: "
                           + ", ".join(f"'{c}'" for c in raw.columns) + ")")
    identity = next((item for item in _KEY_IDENTITY_COLUMNS if item in names), None)
    if identity is None and len(names) == 2:
        identity = names[1 - names.index("sample")]
    if identity is None:
        raise KeyFileError(f"answer key {name}: no identity column; name it 'expected' (or "
                           "identity, gas, answer, substance, formula, name)")
    samples = raw.iloc[:, names.index("sample")].astype(str).str.strip()
    identities = raw.iloc[:, names.index(identity)].astype(str).str.strip()
    rows = np.arange(2, len(raw) + 2)
    problems, key = [], {}
    for sample, text, row in zip(samples, identities, rows, strict=True):
        if not sample and not text:
            continue
        if not sample or not text:
            problems.append(f"row {row}: " + ("the sample id is empty" if not sample else
                                              f"sample '{sample}' has no identity"))
            continue
        if sample in key and key[sample][0].casefold() != text.casefold():
            problems.append(f"row {row}: sample '{sample}' is '{text}' here but "
                            f"'{key[sample][0]}' in row {key[sample][1]}")
            continue
        key.setdefault(sample, (text, int(row)))
    if problems:
        raise KeyFileError(f"answer key {name}: " + "; ".join(problems))
    if not key:
        raise KeyFileError(f"answer key {name}: no sample in it")
    return key


# -- robust statistics ------------------------------------------------------------------

def robust_spread(values) -> float:
    r"""Robust standard deviation: the median absolute deviation times 1.4826.

    Parameters
    ----------
    values : array_like
        Data (NaN ignored) [any unit].

    Returns
    -------
    float
        ``MAD_SCALE · median(|x − median(x)|)`` in the unit of the data; NaN
        for no data.

    Notes
    -----
    .. math:: s = 1.4826\,\operatorname{med}_i |x_i - \operatorname{med}_j x_j|

    The factor makes s a consistent estimate of σ for normal data; the
    estimate has a 50 % breakdown point (Rousseeuw and Croux 1993, eq. 1.1).

    References
    ----------
    P. J. Rousseeuw and C. Croux, "Alternatives to the median absolute
    deviation", J. Am. Stat. Assoc. 88 (1993) 1273-1283,
    doi:10.1080/01621459.1993.10476408.

    Examples
    --------
    >>> round(robust_spread([1.0, 2.0, 3.0, 4.0, 100.0]), 4)
    1.4826
    """
    data = np.asarray(values, dtype=float)
    data = data[np.isfinite(data)]
    if not data.size:
        return math.nan
    return float(MAD_SCALE * np.median(np.abs(data - np.median(data))))


def robust_z(values) -> np.ndarray:
    r"""Robust z of each value: distance from the median in robust standard deviations.

    Parameters
    ----------
    values : array_like
        Data [any unit].

    Returns
    -------
    numpy.ndarray
        ``(x − median)/robust_spread``; NaN where the spread is 0 or undefined.

    Notes
    -----
    .. math:: z_i = \frac{x_i - \tilde{x}}{1.4826\,\mathrm{MAD}}

    the modified z-score of Iglewicz and Hoaglin (0.6745 = 1/1.4826), for which
    they recommend flagging |z| > 3.5.

    References
    ----------
    B. Iglewicz and D. C. Hoaglin, How to Detect and Handle Outliers, ASQC
    Basic References in Quality Control vol. 16 (ASQC Quality Press, Milwaukee,
    1993), chapter 3.

    Examples
    --------
    >>> robust_z([1.0, 2.0, 3.0, 4.0, 100.0]).round(2).tolist()
    [-1.35, -0.67, 0.0, 0.67, 65.43]
    """
    data = np.asarray(values, dtype=float)
    spread = robust_spread(data)
    if not np.isfinite(spread) or spread == 0:
        return np.full(data.shape, np.nan)
    return (data - np.nanmedian(data)) / spread


def _texts(values) -> pd.Series:
    """Make a text column that keeps None for a missing value (not NaN)."""
    items = [None if item is None or (isinstance(item, float) and math.isnan(item)) else str(item)
             for item in values]
    return pd.Series(items, dtype=object)


def _float(value):
    if value is None:
        return None
    try:
        value = float(value)
    except (TypeError, ValueError):
        return None
    return value if math.isfinite(value) else None


def _group_summary(frame: pd.DataFrame) -> dict:
    graded = frame[frame["error"].isna()]
    errors = graded["percent_error"].to_numpy(dtype=float)
    finite = np.isfinite(errors)
    z = np.full(len(graded), np.nan)
    if finite.sum() >= OUTLIER_MINIMUM:
        z[finite] = robust_z(errors[finite])
    outlying = np.abs(np.nan_to_num(z)) > OUTLIER_LIMIT
    codes = Counter(code for codes in graded["diagnosis"] for code in codes)
    points = graded["points"].to_numpy(dtype=float)
    return {
        "count": int(len(frame)),
        "graded": int(len(graded)),
        "median_percent_error": _float(np.median(errors[finite])) if finite.any() else None,
        "robust_spread_percent": _float(robust_spread(errors)),
        "median_absolute_percent_error": (_float(np.median(np.abs(errors[finite])))
                                          if finite.any() else None),
        "identified": int(graded["identified"].fillna(False).astype(bool).sum()),
        "in_interval": int(graded["in_interval"].fillna(False).astype(bool).sum()),
        "mean_points": _float(points.mean()) if len(points) else None,
        "outliers": [
            {"run": run, "student": student, "percent_error": _float(error),
             "robust_z": _float(score)}
            for run, student, error, score in zip(
                graded["run"][outlying], graded["student"][outlying], errors[outlying],
                z[outlying], strict=True)
        ],
        "diagnoses": dict(sorted(codes.items(), key=lambda item: (-item[1], item[0]))),
    }


def summarise(grades: pd.DataFrame) -> dict:
    """Summarise the class: per unknown and per section, and for the whole file.

    Parameters
    ----------
    grades : pandas.DataFrame
        :attr:`Grading.grades`.

    Returns
    -------
    dict
        JSON-ready: ``runs``, ``graded``, ``not_graded``, ``overall``, ``by_unknown``,
        ``by_section``, ``diagnoses`` (most common first) and ``statistics`` (how
        the numbers are computed). Each group gives count, median and robust
        spread of the percent error, how many identified correctly, outliers by
        robust z, and its diagnoses.
    """
    unknown = grades["expected_name"].fillna(grades["expected"]).fillna("(no identity)")
    section = grades["section"].fillna("(no section)")
    by_unknown = []
    for name, frame in grades.groupby(unknown, sort=True):
        by_unknown.append({"unknown": name, **_group_summary(frame)})
    by_section = []
    for name, frame in grades.groupby(section, sort=True):
        by_section.append({"section": name, **_group_summary(frame)})
    codes = Counter()
    runs_with = {}
    for run, run_codes in zip(grades["run"], grades["diagnosis"], strict=True):
        for code in run_codes:
            codes[code] += 1
            runs_with.setdefault(code, []).append(run)
    ordered = sorted(codes.items(), key=lambda item: (-item[1], item[0]))
    graded = int(grades["error"].isna().sum())
    return {
        "runs": int(len(grades)),
        "graded": graded,
        "not_graded": int(len(grades) - graded),
        "max_points": _float(grades["max_points"].max()) if len(grades) else None,
        "overall": _group_summary(grades),
        "by_unknown": by_unknown,
        "by_section": by_section,
        "diagnoses": [{"code": code, "count": count, "runs": runs_with[code]}
                      for code, count in ordered],
        "statistics": (
            "percent error = 100 (M_student - M_true)/M_true; robust spread = 1.4826 x median "
            "absolute deviation (Rousseeuw and Croux 1993); outlier when |robust z| > "
            f"{OUTLIER_LIMIT:g} (Iglewicz and Hoaglin 1993), in groups of {OUTLIER_MINIMUM} "
            "or more; graded runs only"
        ),
    }


# -- grading ----------------------------------------------------------------------------

def _column(table: RunTable, name: str):
    for original in table.raw.columns:
        if _parse_header(original).name == name:
            return original
    return None


def _text_column(table: RunTable, name: str) -> np.ndarray:
    original = _column(table, name)
    if original is None:
        return np.full(len(table), None, dtype=object)
    cells = table.raw[original].astype(str).str.strip().to_numpy(dtype=object)
    return np.where(cells == "", None, cells)


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


def grade(source, *, key=None, rubric=None, profile=None, library=None) -> Grading:
    """Recompute, grade and diagnose every run of a lab section.

    Parameters
    ----------
    source : str, pathlib.Path, file-like, pandas.DataFrame or RunTable
        The section's runs (see :func:`molid.io.reading.read_runs`); optional columns
        ``student``, ``section``, ``expected`` and ``reported_molar_mass``.
    key : str, pathlib.Path, file-like, pandas.DataFrame or dict, optional
        Answer key mapping sample to identity (see :func:`read_key`), or a dict
        sample -> identity. It takes precedence over the ``expected`` column.
    rubric : str, pathlib.Path, dict or Rubric, optional
        See :func:`molid.teaching.rubric.load_rubric`; the defaults when None.
    profile : InstrumentProfile or path, optional
        Default uncertainties.
    library : pandas.DataFrame, optional
        Candidate library; the default library when None.

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
    from molid.candidates.library import load_library

    rubric = load_rubric(rubric)
    if profile is None or isinstance(profile, (str, Path)):
        profile = load_profile(profile)
    library = (load_library() if library is None else library).reset_index(drop=True)
    table = source if isinstance(source, RunTable) else read_runs(source, profile=profile)
    table = dataclasses.replace(table, text=table.text.copy())
    n = len(table)
    rows = table.row_numbers
    notes = []

    # The true identity of each run: the key first, else the expected column.
    column_expected = table.text["expected"].to_numpy(dtype=object)
    expected = column_expected.copy()
    samples = table.text["sample"].to_numpy(dtype=object)
    grade_errors = [[] for _ in range(n)]
    if key is not None:
        key_map = key if isinstance(key, dict) else read_key(key)
        key_map = {str(sample): (value if isinstance(value, tuple) else (value, None))
                   for sample, value in key_map.items()}
        from_key = np.array([key_map.get(sample, (None, None))[0] if sample is not None else None
                             for sample in samples], dtype=object)
        differs = [int(rows[i]) for i in range(n) if from_key[i] is not None
                   and column_expected[i] is not None
                   and str(from_key[i]).casefold() != str(column_expected[i]).casefold()]
        if differs:
            notes.append("the answer key overrides the 'expected' column where they differ (rows "
                         + ", ".join(map(str, differs)) + ")")
        expected = np.where(from_key != None, from_key, column_expected)  # noqa: E711
        unused = sorted(set(key_map) - {str(s) for s in samples if s is not None})
        if unused:
            notes.append("answer key samples with no run: " + ", ".join(unused))
    found, problems = _library_position(library, list(expected), rubric.also)
    true_index = np.array([found.get(text, -1) if text is not None else -1 for text in expected],
                          dtype=int)
    for i in range(n):
        if expected[i] is None:
            where = f"sample '{samples[i]}'" if samples[i] is not None else "this run (no sample)"
            grade_errors[i].append(
                f"row {rows[i]}: no expected identity for {where}: give it in the 'expected' "
                "column or the answer key")
        elif expected[i] in problems:
            grade_errors[i].append(f"row {rows[i]}: expected identity {problems[expected[i]]}")
    for text in rubric.also:
        if text in problems:
            raise InputError(f"rubric key 'identification.also': {problems[text]}")
    table.text["expected"] = pd.Series(
        [library.at[true_index[i], "name"] if true_index[i] >= 0 else None for i in range(n)],
        dtype=object)

    result = identify(table, profile=profile, library=library)
    ok = result.ok
    ranking = result.ranking
    position = np.full(n, -1, dtype=int)
    position[np.asarray(ranking.run_index, dtype=int)] = np.arange(len(ranking.run_index))
    evaluated = position >= 0
    has_truth = true_index >= 0
    both = evaluated & has_truth
    library_mass = library["molar_mass"].to_numpy(dtype=float)
    true_mass = np.where(has_truth, library_mass[np.maximum(true_index, 0)], np.nan)

    # The true gas in the ranking of each run.
    block = ranking.runs
    k, j = position[both], true_index[both]
    Z_true = np.ones(n)
    Z_true[both] = block["Z"][k, j]
    expected_z = np.full(n, np.nan)
    expected_z[both] = block["z"][k, j]
    order_key = np.where(np.isnan(block["z"]), np.inf, np.abs(block["z"])) + np.where(
        block["condenses"], 1e300, 0.0)
    rank = np.full(n, -1, dtype=int)
    if both.any():
        own = order_key[k, j][:, None]
        columns = np.arange(order_key.shape[1])[None, :]
        rank[both] = ((order_key[k] < own) | ((order_key[k] == own) & (columns < j[:, None]))
                      ).sum(axis=1) + 1
    true_gas_value = np.full(n, np.nan)
    true_gas_U = np.full(n, np.nan)
    true_gas_value[both] = block["measured"][k, j]
    true_gas_U[both] = COVERAGE_FACTOR * block["u_measured"][k, j]
    in_interval = np.abs(true_gas_value - true_mass) <= true_gas_U

    # The student's result and its diagnosis.
    reported = table.values["reported_molar_mass"]
    reported_column = _column(table, "reported_molar_mass")
    if reported_column is not None:
        resolution = written_resolution(table.raw[reported_column].to_numpy(dtype=object),
                                        table.units["reported_molar_mass"].scale)
    else:
        resolution = np.full(n, np.nan)
    values, uncertainties, static = model_inputs(table, profile)
    diagnosis = diagnose(values, uncertainties, static, reported, resolution / math.sqrt(12.0),
                         arithmetic_tolerance=rubric.arithmetic_tolerance,
                         air_density_tolerance=rubric.air_density_tolerance, usable=ok)
    has_reported = np.isfinite(reported)
    student = np.where(has_reported, reported, result.molar_mass)
    with np.errstate(invalid="ignore", divide="ignore"):
        percent_error = 100.0 * (student - true_mass) / true_mass
    known_mistake = np.array([bool(codes) and codes != [UNEXPLAINED] for codes in diagnosis.codes])
    graded_value = np.where(rubric.carry_forward & known_mistake, result.molar_mass, student)
    with np.errstate(invalid="ignore", divide="ignore"):
        graded_error = np.fmin(np.abs(100.0 * (graded_value - true_mass) / true_mass),
                               np.abs(100.0 * (graded_value * Z_true - true_mass) / true_mass))
    graded_error = np.where(np.isfinite(graded_value) & has_truth, graded_error, np.nan)

    # Identification: the nearest candidate among the unknowns (or the library).
    if rubric.among == "library":
        candidates = np.arange(len(library))
    else:
        candidates = np.array(sorted({*true_index[has_truth].tolist(),
                                      *(found[text] for text in rubric.also)}), dtype=int)
    identified = np.zeros(n, dtype=bool)
    identified_as = np.full(n, None, dtype=object)
    if len(candidates):
        Z_candidates = np.ones((n, len(candidates)))
        Z_candidates[evaluated] = block["Z"][position[evaluated]][:, candidates]
        with np.errstate(invalid="ignore"):
            distance = np.abs(graded_value[:, None] * Z_candidates - library_mass[candidates]
                              ) / library_mass[candidates]
        chosen = candidates[np.argmin(np.where(np.isnan(distance), np.inf, distance), axis=1)]
        hill = library["hill"].fillna("").to_numpy(dtype=object)
        names = library["name"].to_numpy(dtype=object)
        valid = np.isfinite(graded_value)
        identified = valid & has_truth & ((chosen == true_index) | (
            (hill[chosen] != "") & (hill[chosen] == hill[np.maximum(true_index, 0)])))
        identified_as = np.where(valid, names[chosen], None)

    deduction = np.array([rubric.deduction(codes) for codes in diagnosis.codes])
    points = np.maximum(
        0.0, rubric.band_points(graded_error)
        + np.where(identified, rubric.identification_points, 0.0) - deduction)

    # A row with no readings at all gets one plain message instead of one per cell.
    reading_columns = [_column(table, name) for name in _READINGS]
    no_readings = np.ones(n, dtype=bool)
    for original in reading_columns:
        if original is not None:
            no_readings &= (table.raw[original].astype(str).str.strip() == "").to_numpy()
    errors = []
    for i in range(n):
        reader = list(result.errors[i])
        if no_readings[i]:
            who = f" ({_texts(_text_column(table, 'student'))[i]})" if _column(
                table, "student") else ""
            reader = [f"row {rows[i]}{who}: no readings (the {', '.join(_READINGS)} cells are "
                      "empty); nothing to grade"]
        messages = reader + grade_errors[i]
        if not ok[i] and not result.errors[i]:
            messages.append(f"row {rows[i]}: the readings could not be evaluated")
        errors.append("; ".join(messages) or None)
    failed = np.array([message is not None for message in errors])
    points = np.where(failed, np.nan, points)

    def masked(array, fill=np.nan):
        return np.where(failed, fill, array)

    grades = pd.DataFrame({
        "run": _texts(table.text["run"]),
        "row": rows.astype(int),
        "student": _texts(_text_column(table, "student")),
        "section": _texts(_text_column(table, "section")),
        "sample": _texts(samples),
        "method": _texts(table.text["method"]),
        "expected": _texts(expected),
        "expected_name": _texts(np.where(has_truth, table.text["expected"].to_numpy(dtype=object),
                                         None)),
        "true_molar_mass": true_mass * _G,
        "molar_mass": result.molar_mass * _G,
        "U": result.U * _G,
        "reported_molar_mass": reported * _G,
        "percent_error": percent_error,
        "graded_percent_error": masked(graded_error),
        "in_interval": pd.array(np.where(both, in_interval, None), dtype="boolean"),
        "true_gas_molar_mass": true_gas_value * _G,
        "true_gas_U": true_gas_U * _G,
        "expected_rank": pd.array(np.where(both, rank, None), dtype="Int64"),
        "expected_z": expected_z,
        "identified": pd.array(np.where(failed, None, identified), dtype="boolean"),
        "identified_as": _texts(np.where(failed, None, identified_as)),
        "points": points,
        "max_points": np.full(n, rubric.max_points),
        "deduction": masked(deduction),
        "diagnosis": pd.Series(diagnosis.codes, dtype=object),
        "diagnosis_text": _texts(diagnosis.text),
        "error": _texts(errors),
    }, columns=list(GRADE_COLUMNS))
    return Grading(identification=result, grades=grades, summary=summarise(grades),
                   rubric=rubric, diagnosis=diagnosis, notes=notes)


# -- output -----------------------------------------------------------------------------

def _grade_entry(row) -> dict:
    rank = row["expected_rank"]
    return {
        "expected": row["expected"],
        "expected_name": row["expected_name"],
        "student": row["student"],
        "section": row["section"],
        "percent_error": _float(row["percent_error"]),
        "graded_percent_error": _float(row["graded_percent_error"]),
        "in_interval": None if pd.isna(row["in_interval"]) else bool(row["in_interval"]),
        "expected_rank": None if pd.isna(rank) else int(rank),
        "expected_z": _float(row["expected_z"]),
        "identified": None if pd.isna(row["identified"]) else bool(row["identified"]),
        "identified_as": row["identified_as"],
        "points": _float(row["points"]),
        "max_points": _float(row["max_points"]),
        "deduction": _float(row["deduction"]),
        "diagnosis": list(row["diagnosis"]),
        "diagnosis_text": row["diagnosis_text"] or None,
        "error": row["error"],
    }


def grading_document(grading: Grading, top: int | None = None) -> dict:
    """Build the JSON document of a graded section: identify's plus grades and summary.

    Parameters
    ----------
    grading : Grading
        From :func:`grade`.
    top : int, optional
        Candidates per run and sample (all when None).

    Returns
    -------
    dict
        The ``molid identify`` document; each result gains ``"grade"`` and the top
        level gains ``"summary"`` and ``"rubric"``.
    """
    from molid.io.export import to_document

    document = to_document(grading.identification, top)
    for entry, (_, row) in zip(document["results"], grading.grades.iterrows(), strict=True):
        entry["grade"] = _grade_entry(row)
    document["notes"] = list(document["notes"]) + list(grading.notes)
    document["summary"] = grading.summary
    document["rubric"] = grading.rubric.to_dict()
    return document


_CSV_COLUMNS = (
    ("run", "run"), ("row", "row"), ("student", "student"), ("section", "section"),
    ("sample", "sample"), ("method", "method"), ("expected", "expected"),
    ("expected_name", "expected_name"), ("true_molar_mass", "true_molar_mass_g_mol"),
    ("molar_mass", "molar_mass_g_mol"), ("U", "U_g_mol"),
    ("reported_molar_mass", "reported_molar_mass_g_mol"), ("percent_error", "percent_error"),
    ("graded_percent_error", "graded_percent_error"), ("in_interval", "in_interval"),
    ("expected_rank", "expected_rank"), ("expected_z", "expected_z"),
    ("identified", "identified"), ("identified_as", "identified_as"), ("points", "points"),
    ("max_points", "max_points"), ("deduction", "deduction"), ("diagnosis", "diagnosis"),
    ("diagnosis_text", "diagnosis_text"), ("error", "error"),
)


def _csv_cell(value):
    if value is None or value is pd.NA:
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "TRUE" if value else "FALSE"
    if isinstance(value, (list, tuple)):
        return "; ".join(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        return "" if not math.isfinite(value) else float(f"{value:.8g}")
    return str(value)


def grades_csv(grading: Grading) -> str:
    """Write the grades CSV: one row per run, safe to open in a spreadsheet.

    Text cells a spreadsheet would run as a formula are neutralised
    (:func:`molid.io.safe_files.neutralise_cell`); numbers stay numbers.
    """
    import csv

    from molid.io.safe_files import neutralise_cell

    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow([header for _, header in _CSV_COLUMNS])
    frame = grading.grades
    for index in range(len(frame)):
        writer.writerow([neutralise_cell(_csv_cell(frame[name].iat[index]))
                         for name, _ in _CSV_COLUMNS])
    return buffer.getvalue()


def _cut(text, width) -> str:
    text = "" if text is None else str(text)
    return text if len(text) <= width else text[: width - 1] + "…"


def _number_text(value, digits=2, sign=False) -> str:
    if value is None or not np.isfinite(value):
        return "-"
    return f"{value:+.{digits}f}" if sign else f"{value:.{digits}f}"


def _spread_text(value) -> str:
    return "-" if value is None or not np.isfinite(value) else f"{value:.2g}"


def grades_table(grading: Grading) -> str:
    """Format the grades and the summary as plain text for a terminal."""
    from molid.io.export import format_value

    frame = grading.grades
    lines = [f"{'run':<10} {'student':<20} {'sample':<8} {'true gas':<16} "
             f"{'recomputed M ± U':<18} {'reported':>9} {'error %':>8} {'rank':>4} "
             f"{'points':>9}  diagnosis"]
    lines.append("-" * len(lines[0]))
    for row in frame.itertuples(index=False):
        value = format_value(row.molar_mass, row.U)
        rank = "-" if pd.isna(row.expected_rank) else str(int(row.expected_rank))
        points = ("-" if not np.isfinite(row.points)
                  else f"{row.points:g}/{row.max_points:g}")
        diagnosis = ", ".join(row.diagnosis) if row.diagnosis else ("not graded" if row.error
                                                                     else "")
        lines.append(
            f"{_cut(row.run, 10):<10} {_cut(row.student, 20):<20} {_cut(row.sample, 8):<8} "
            f"{_cut(row.expected_name or row.expected, 16):<16} {_cut(value, 18):<18} "
            f"{_number_text(row.reported_molar_mass, 3):>9} "
            f"{_number_text(row.percent_error, 2, sign=True):>8} {rank:>4} {points:>9}  "
            f"{diagnosis}")
    summary = grading.summary
    lines += ["", "Summary (percent error of the students' results; robust spread = 1.4826 MAD)",
              "-" * 77]
    header = (f"  {'group':<24} {'runs':>4} {'graded':>6} {'median %':>9} {'spread %':>9} "
              f"{'identified':>10} {'mean pts':>8}  outliers")
    for title, groups, key in (("by unknown", summary["by_unknown"], "unknown"),
                               ("by section", summary["by_section"], "section")):
        lines.append(title)
        lines.append(header)
        for group in groups:
            outliers = ", ".join(str(item["run"]) for item in group["outliers"]) or "-"
            lines.append(
                f"  {_cut(group[key], 24):<24} {group['count']:>4} {group['graded']:>6} "
                f"{_number_text(group['median_percent_error'], 2, True):>9} "
                f"{_spread_text(group['robust_spread_percent']):>9} "
                f"{group['identified']:>10} {_number_text(group['mean_points'], 1):>8}  {outliers}")
    if summary["diagnoses"]:
        lines.append("most common diagnoses: " + ", ".join(
            f"{item['code']} ({item['count']})" for item in summary["diagnoses"]))
    else:
        lines.append("no mistakes diagnosed")
    explained = frame[frame["diagnosis_text"].astype(bool)]
    if len(explained):
        lines += ["", "Diagnoses", "---------"]
        for row in explained.itertuples(index=False):
            lines.append(f"{row.run} ({row.student or 'no name'}): {row.diagnosis_text}")
    failed = frame[frame["error"].notna()]
    if len(failed):
        lines += ["", "Not graded", "----------"]
        lines.extend(f"{row.run or '(no run id)'}: {row.error}" for row in failed.itertuples())
    notes = list(grading.identification.notes) + list(grading.notes)
    if notes:
        lines += ["", "Notes", "-----"]
        lines.extend(f"- {note}" for note in notes)
    lines.append(f"rubric: {grading.rubric.source}; codes: " + ", ".join(
        (*MISTAKE_CODES, UNEXPLAINED)))
    return "\n".join(lines) + "\n"


def run_grade_command(args) -> int:
    """Run the ``molid grade`` command: grade a file and print, write and plot the results.

    Parameters
    ----------
    args : argparse.Namespace
        From the ``grade`` parser of :func:`molid.cli.build_parser`.

    Returns
    -------
    int
        0 when every run was graded, 1 when some were not (each reported).
    """
    from molid.candidates.library import load_library
    from molid.io.safe_files import OutputRefused, check_output_path, write_atomic

    inputs = [args.file, args.profile, args.library, args.key, args.rubric]
    output = check_output_path(args.output, inputs, args.force) if args.output else None
    plots = None
    if args.plots:
        plots = Path(args.plots)
        if plots.exists() and not plots.is_dir():
            raise OutputRefused(f"{plots}: is a file; --plots needs a folder")
        if not plots.parent.exists():
            raise OutputRefused(f"{plots}: the folder {plots.parent} does not exist")
        existing = [plots / name for name in PLOT_FILES if (plots / name).exists()]
        if existing and not args.force:
            raise OutputRefused(f"{existing[0]}: already exists; use --force to replace the plots")
    library = load_library(args.library, mode="replace" if args.replace_library else "merge",
                           extra_candidates=tuple(args.candidate))
    grading = grade(args.file, key=args.key, rubric=args.rubric, profile=args.profile,
                    library=library)
    if args.json:
        sys.stdout.write(json.dumps(grading_document(grading, args.top), indent=2,
                                    ensure_ascii=False, allow_nan=False) + "\n")
    else:
        sys.stdout.write(grades_table(grading))
    if output is not None:
        write_atomic(output, grades_csv(grading))
        print(f"wrote {output}", file=sys.stderr)
    if plots is not None:
        from molid.teaching.class_plots import write_class_plots

        plots.mkdir(exist_ok=True)
        for path in write_class_plots(grading, plots):
            print(f"wrote {path}", file=sys.stderr)
    return 0 if grading.ok.all() else 1

