"""Class summary of a graded section: robust statistics of the percent errors, by group.

:func:`summarise` condenses the grades table of :func:`molid.teaching.grading.grade`
into counts, medians, robust spreads and outliers per unknown and per section;
:func:`robust_spread` and :func:`robust_z` are the statistics it rests on.
"""

from __future__ import annotations

import math
from collections import Counter
from statistics import NormalDist

import numpy as np
import pandas as pd

__all__ = [
    "MAD_SCALE",
    "OUTLIER_LIMIT",
    "OUTLIER_MINIMUM",
    "json_number",
    "robust_spread",
    "robust_z",
    "summarise",
]

#: Consistency constant of the median absolute deviation for a normal
#: distribution, 1/Φ⁻¹(3/4) = 1.4826 (Rousseeuw and Croux 1993); ISO 13528:2015,
#: Annex C, prints it as 1.483 in MADe = 1.483·MAD.
MAD_SCALE = 1.0 / NormalDist().inv_cdf(0.75)
#: A run is an outlier of its group when its robust z exceeds this in size:
#: Iglewicz and Hoaglin (1993) flag modified z-scores above 3.5. The robust z
#: here is their modified z-score (the group's own median and MADe), so their
#: limit applies; ISO 13528:2015's action signal |z| ≥ 3.0 is for proficiency-test
#: scores against a standard deviation for proficiency assessment set beforehand.
OUTLIER_LIMIT = 3.5
#: Fewer values than this give no outliers: with three or four, the MAD rests on
#: one or two gaps and any uneven spacing looks extreme.
OUTLIER_MINIMUM = 5


def json_number(value):
    """Return a value as a finite float for JSON, or None when it is missing, not a number or infinite.

    Examples
    --------
    >>> json_number("2.5"), json_number(float("nan")), json_number(None)
    (2.5, None, None)
    """
    if value is None:
        return None
    try:
        value = float(value)
    except (TypeError, ValueError):
        return None
    return value if math.isfinite(value) else None


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
    ISO 13528:2015, Statistical methods for use in proficiency testing by
    interlaboratory comparison, Annex C (MADe, the scaled median absolute deviation).

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
    ISO 13528:2015, Statistical methods for use in proficiency testing by
    interlaboratory comparison, z scores and Annex C (median and MADe as
    robust location and spread).

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


def _outliers(graded: pd.DataFrame, errors: np.ndarray) -> list:
    """List the graded runs whose percent error is an outlier of their group by robust z."""
    finite = np.isfinite(errors)
    z = np.full(len(graded), np.nan)
    if finite.sum() >= OUTLIER_MINIMUM:
        z[finite] = robust_z(errors[finite])
    outlying = np.abs(np.nan_to_num(z)) > OUTLIER_LIMIT
    return [
        {"run": run, "student": student, "percent_error": json_number(error),
         "robust_z": json_number(score)}
        for run, student, error, score in zip(
            graded["run"][outlying], graded["student"][outlying], errors[outlying],
            z[outlying], strict=True)
    ]


def _group_summary(frame: pd.DataFrame) -> dict:
    """Summarise one group of runs (an unknown, a section, or the whole file)."""
    graded = frame[frame["error"].isna()]
    errors = graded["percent_error"].to_numpy(dtype=float)
    finite = np.isfinite(errors)
    codes = Counter(code for codes in graded["diagnosis"] for code in codes)
    points = graded["points"].to_numpy(dtype=float)
    return {
        "count": int(len(frame)),
        "graded": int(len(graded)),
        "median_percent_error": json_number(np.median(errors[finite])) if finite.any() else None,
        "robust_spread_percent": json_number(robust_spread(errors)),
        "median_absolute_percent_error": (json_number(np.median(np.abs(errors[finite])))
                                          if finite.any() else None),
        "identified": int(graded["identified"].fillna(False).astype(bool).sum()),
        "in_interval": int(graded["in_interval"].fillna(False).astype(bool).sum()),
        "mean_points": json_number(points.mean()) if len(points) else None,
        "outliers": _outliers(graded, errors),
        "diagnoses": dict(sorted(codes.items(), key=lambda item: (-item[1], item[0]))),
    }


def _diagnosis_counts(grades: pd.DataFrame) -> list:
    """Count each mistake code over the whole file, most common first, with its runs."""
    codes = Counter()
    runs_with = {}
    for run, run_codes in zip(grades["run"], grades["diagnosis"], strict=True):
        for code in run_codes:
            codes[code] += 1
            runs_with.setdefault(code, []).append(run)
    ordered = sorted(codes.items(), key=lambda item: (-item[1], item[0]))
    return [{"code": code, "count": count, "runs": runs_with[code]} for code, count in ordered]


def summarise(grades: pd.DataFrame) -> dict:
    """Summarise the class: per unknown and per section, and for the whole file.

    Parameters
    ----------
    grades : pandas.DataFrame
        :attr:`molid.teaching.grading.Grading.grades`.

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
    by_unknown = [{"unknown": name, **_group_summary(frame)}
                  for name, frame in grades.groupby(unknown, sort=True)]
    by_section = [{"section": name, **_group_summary(frame)}
                  for name, frame in grades.groupby(section, sort=True)]
    graded = int(grades["error"].isna().sum())
    return {
        "runs": int(len(grades)),
        "graded": graded,
        "not_graded": int(len(grades) - graded),
        "max_points": json_number(grades["max_points"].max()) if len(grades) else None,
        "overall": _group_summary(grades),
        "by_unknown": by_unknown,
        "by_section": by_section,
        "diagnoses": _diagnosis_counts(grades),
        "statistics": (
            "percent error = 100 (M_student - M_true)/M_true; robust spread = 1.4826 x median "
            "absolute deviation (Rousseeuw and Croux 1993); outlier when |robust z| > "
            f"{OUTLIER_LIMIT:g} (Iglewicz and Hoaglin 1993), in groups of {OUTLIER_MINIMUM} "
            "or more; graded runs only"
        ),
    }
