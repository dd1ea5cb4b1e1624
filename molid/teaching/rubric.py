"""Grading rubrics: loading, validating and applying the points scheme.

A rubric is a TOML file (the defaults ship as ``molid/data/rubric.toml``, whose
comments document every key). A user's rubric is laid over the defaults key by
key, so it need only hold what it changes. Every problem in a rubric is
reported together in one :class:`RubricError` naming the key, the value and
what is accepted.
"""

from __future__ import annotations

import functools
import math
import sys
from dataclasses import dataclass, field
from importlib import resources
from pathlib import Path

import numpy as np

from molid.io.problems import InputError
from molid.methods.mistakes import MISTAKE_CODES, UNEXPLAINED
from molid.methods.registry import METHODS as REGISTERED_METHODS

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - Python 3.10
    import tomli as tomllib

__all__ = ["DEFAULT_RUBRIC_PATH", "RubricError", "Rubric", "load_rubric"]

#: The default rubric shipped with molid.
DEFAULT_RUBRIC_PATH = Path(str(resources.files("molid") / "data" / "rubric.toml"))

_SECTIONS = {
    "percent_error": {"bands", "beyond", "method_scale"},
    "identification": {"points", "among", "also"},
    "deductions": set(MISTAKE_CODES) | {UNEXPLAINED},
    "diagnosis": {"carry_forward", "arithmetic_tolerance_percent", "air_density_tolerance"},
}
_AMONG = ("unknowns", "library")


class RubricError(InputError):
    """A rubric file that cannot be used; the message names every bad key."""


@dataclass(frozen=True)
class Rubric:
    """A parsed, validated rubric.

    Attributes
    ----------
    bands : tuple of (float, float)
        ``(up_to, points)`` pairs: percent-error limit [%] (inclusive) and points,
        limits increasing.
    beyond : float
        Points for an error above the last band.
    method_scale : dict
        Method name -> factor that widens the band limits for that method's runs
        (1 where not listed).
    identification_points : float
        Points for a correct identification.
    among : str
        ``"unknowns"`` or ``"library"``: the candidates an identification is chosen from.
    also : tuple of str
        Further candidate names or formulas.
    deductions : dict
        Mistake code -> points taken off.
    carry_forward : bool
        Grade a diagnosed run on the recomputed result.
    arithmetic_tolerance : float
        Relative standard uncertainty of a student's arithmetic [fraction].
    air_density_tolerance : float
        Standard uncertainty of a student's air density [kg/m³].
    source : str
        Where the rubric came from, for reports.
    """

    bands: tuple
    beyond: float
    identification_points: float
    among: str
    also: tuple
    deductions: dict = field(hash=False)
    carry_forward: bool
    arithmetic_tolerance: float
    air_density_tolerance: float
    source: str = "default rubric"
    method_scale: dict = field(default_factory=dict, hash=False)

    @property
    def max_points(self) -> float:
        """The most points a run can earn."""
        best = max([points for _, points in self.bands] + [self.beyond])
        return float(best + self.identification_points)

    def band_points(self, percent_error, methods=None) -> np.ndarray:
        """Accuracy points for percent errors (sign ignored; NaN gives NaN).

        With ``methods`` (one name per run), each run's error is measured against
        band limits widened by its method's factor in ``method_scale``.

        Examples
        --------
        >>> rubric = load_rubric()
        >>> rubric.band_points([0.2, -0.5, 0.7, 3.0, 50.0]).tolist()
        [60.0, 60.0, 55.0, 30.0, 0.0]
        """
        size = np.abs(np.asarray(percent_error, dtype=float))
        if methods is not None and self.method_scale:
            scale = np.array([self.method_scale.get(name, 1.0) for name in methods], dtype=float)
            size = size / scale
        limits = np.array([limit for limit, _ in self.bands], dtype=float)
        points = np.array([points for _, points in self.bands] + [self.beyond], dtype=float)
        # side="left": an error equal to a band's limit belongs to that band
        place = np.searchsorted(limits, np.where(np.isnan(size), 0.0, size), side="left")
        return np.where(np.isnan(size), np.nan, points[place])

    def deduction(self, codes) -> float:
        """Points taken off for one run's diagnosis (the smallest of the codes listed)."""
        if not codes:
            return 0.0
        return float(min(self.deductions[code] for code in codes))

    def to_dict(self) -> dict:
        """Return the rubric as JSON-ready values."""
        return {
            "source": self.source,
            "percent_error": {"bands": [{"up_to": limit, "points": points}
                                        for limit, points in self.bands],
                              "beyond": self.beyond, "method_scale": dict(self.method_scale)},
            "identification": {"points": self.identification_points, "among": self.among,
                               "also": list(self.also)},
            "deductions": dict(self.deductions),
            "diagnosis": {"carry_forward": self.carry_forward,
                          "arithmetic_tolerance_percent": self.arithmetic_tolerance * 100.0,
                          "air_density_tolerance": self.air_density_tolerance},
            "max_points": self.max_points,
        }


@functools.lru_cache(maxsize=1)
def _defaults() -> dict:
    with DEFAULT_RUBRIC_PATH.open("rb") as stream:
        return tomllib.load(stream)


def _number(value, key, problems, *, minimum=0.0):
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        problems.append(f"rubric key '{key}': {value!r} is not a number")
        return math.nan
    value = float(value)
    if not math.isfinite(value):
        problems.append(f"rubric key '{key}': {value!r} is not a finite number")
    elif value < minimum:
        problems.append(f"rubric key '{key}': {value:g} is below {minimum:g}")
    return value


def _merge_with_defaults(data: dict, problems: list) -> dict:
    """Lay a user's rubric over the defaults key by key, noting unknown sections and keys."""
    merged = {section: dict(values) for section, values in _defaults().items()}
    for section, values in data.items():
        if section not in _SECTIONS:
            problems.append(f"rubric section '[{section}]' is not known; sections: "
                            + ", ".join(_SECTIONS))
            continue
        if not isinstance(values, dict):
            problems.append(f"rubric key '{section}' must be a table [{section}]")
            continue
        for key, value in values.items():
            if key not in _SECTIONS[section]:
                problems.append(f"rubric key '{section}.{key}' is not known; keys of "
                                f"[{section}]: " + ", ".join(sorted(_SECTIONS[section])))
                continue
            merged[section][key] = value
    return merged


def _parse_bands(bands_value, problems: list) -> list:
    """Read the percent-error bands: ``(up_to, points)`` pairs, limits rising and points not."""
    bands = []
    if not isinstance(bands_value, list) or not bands_value:
        problems.append("rubric key 'percent_error.bands' must be a non-empty list of "
                        "{ up_to = PERCENT, points = POINTS }")
        return bands
    for place, band in enumerate(bands_value):
        key = f"percent_error.bands[{place}]"
        if not isinstance(band, dict) or set(band) != {"up_to", "points"}:
            problems.append(f"rubric key '{key}': write {{ up_to = PERCENT, points = POINTS }}")
            continue
        bands.append((_number(band["up_to"], f"{key}.up_to", problems),
                      _number(band["points"], f"{key}.points", problems)))
    limits = [limit for limit, _ in bands]
    if any(later <= earlier for earlier, later in zip(limits, limits[1:], strict=False)):
        problems.append("rubric key 'percent_error.bands': the up_to limits must increase "
                        f"(got {', '.join(f'{limit:g}' for limit in limits)})")
    points = [value for _, value in bands]
    if any(later > earlier for earlier, later in zip(points, points[1:], strict=False)):
        problems.append("rubric key 'percent_error.bands': a larger error cannot earn more "
                        f"points (got {', '.join(f'{value:g}' for value in points)})")
    return bands


def _parse_method_scale(value, problems: list) -> dict:
    """Read ``percent_error.method_scale``: registered method name -> positive factor."""
    if not isinstance(value, dict):
        problems.append("rubric key 'percent_error.method_scale' must be a table of "
                        "METHOD = FACTOR")
        return {}
    scale = {}
    for name, factor in value.items():
        if name not in REGISTERED_METHODS:
            problems.append(f"rubric key 'percent_error.method_scale.{name}': not a method; "
                            "methods: " + ", ".join(REGISTERED_METHODS))
            continue
        scale[name] = _number(factor, f"percent_error.method_scale.{name}", problems, minimum=1e-9)
    return scale


def _parse_identification(identification: dict, problems: list) -> tuple:
    """Read the identification section: points, the candidates chosen among, and extra ones."""
    points = _number(identification["points"], "identification.points", problems)
    among = identification["among"]
    if among not in _AMONG:
        problems.append(f"rubric key 'identification.among': {among!r} is not one of "
                        + ", ".join(f"'{item}'" for item in _AMONG))
    also = identification["also"]
    if not isinstance(also, list) or not all(isinstance(item, str) for item in also):
        problems.append("rubric key 'identification.also' must be a list of names or formulas")
        also = []
    return points, among, also


def _parse(data: dict, source: str) -> Rubric:
    """Validate a rubric's contents laid over the defaults; every problem is reported at once."""
    problems: list[str] = []
    merged = _merge_with_defaults(data, problems)
    bands = _parse_bands(merged["percent_error"]["bands"], problems)
    beyond = _number(merged["percent_error"]["beyond"], "percent_error.beyond", problems)
    method_scale = _parse_method_scale(merged["percent_error"].get("method_scale", {}), problems)
    identification_points, among, also = _parse_identification(merged["identification"], problems)
    deductions = {code: _number(merged["deductions"][code], f"deductions.{code}", problems)
                  for code in (*MISTAKE_CODES, UNEXPLAINED)}
    diagnosis = merged["diagnosis"]
    carry_forward = diagnosis["carry_forward"]
    if not isinstance(carry_forward, bool):
        problems.append(f"rubric key 'diagnosis.carry_forward': {carry_forward!r} is not true "
                        "or false")
    tolerance = _number(diagnosis["arithmetic_tolerance_percent"],
                        "diagnosis.arithmetic_tolerance_percent", problems)
    air = _number(diagnosis["air_density_tolerance"], "diagnosis.air_density_tolerance", problems)
    if problems:
        raise RubricError(f"{source}: " + "; ".join(problems))
    return Rubric(
        bands=tuple(bands),
        beyond=beyond,
        identification_points=identification_points,
        among=among,
        also=tuple(also),
        deductions=deductions,
        carry_forward=bool(carry_forward),
        arithmetic_tolerance=tolerance / 100.0,
        air_density_tolerance=air,
        source=source,
        method_scale=method_scale,
    )


def load_rubric(rubric=None) -> Rubric:
    """Load a rubric file laid over the defaults, or the defaults alone.

    Parameters
    ----------
    rubric : str, pathlib.Path, dict or Rubric, optional
        A TOML file, the parsed contents of one, or a rubric (returned as is).

    Returns
    -------
    Rubric
        The validated rubric.

    Raises
    ------
    RubricError
        For a file that cannot be read or parsed, or bad values (all named).

    Examples
    --------
    >>> load_rubric().max_points
    90.0
    >>> load_rubric({"identification": {"points": 40}}).max_points
    100.0
    """
    if isinstance(rubric, Rubric):
        return rubric
    if rubric is None:
        return _parse({}, "default rubric")
    if isinstance(rubric, dict):
        return _parse(rubric, "rubric")
    path = Path(rubric)
    try:
        with path.open("rb") as stream:
            data = tomllib.load(stream)
    except FileNotFoundError:
        raise RubricError(f"{path}: no such rubric file") from None
    except OSError as error:
        raise RubricError(f"{path}: cannot read it ({error.strerror})") from None
    except tomllib.TOMLDecodeError as error:
        raise RubricError(f"{path}: not valid TOML ({error})") from None
    return _parse(data, str(path))
