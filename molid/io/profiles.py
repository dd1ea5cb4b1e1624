"""Instrument profiles: default standard uncertainties from Type B information.

A profile is a TOML file whose tables name inputs (``mass``, ``volume``,
``temperature``, ...) and give what is known of each instrument: a standard
uncertainty, a rectangular half-width, a digital readability, a certificate's
expanded uncertainty with its coverage factor, or a relative standard
uncertainty. They are turned into standard uncertainties by the GUM's Type B
rules and combined in quadrature when several are given.

References
----------
JCGM 100:2008, Evaluation of measurement data -- Guide to the expression of
uncertainty in measurement (GUM), sections 4.3.3 (expanded uncertainty from a
certificate), 4.3.7 (rectangular distribution) and F.2.2.1 (resolution of a
digital indication).
"""

from __future__ import annotations

import math
import sys
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

from molid.io.units import UnitProblem, resolve_unit
from molid.methods.inputs import COLUMN_KINDS, MEASURED_INPUTS
from molid.uncertainty.type_b import UncertaintyRule, type_b_standard_uncertainty

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - exercised on Python 3.10 only
    import tomli as tomllib

__all__ = [
    "ProfileError",
    "InstrumentProfile",
    "load_profile",
]

PROFILE_INPUTS = ("mass",) + MEASURED_INPUTS
_RULE_KEYS = {"unit", "standard", "half_width", "readability", "expanded", "k", "relative",
              "shared"}


class ProfileError(ValueError):
    """A profile file that cannot be used, with the key at fault."""


@dataclass(frozen=True)
class InstrumentProfile:
    """Default uncertainties for each input, and the assumed values of unmeasured inputs."""

    rules: dict
    assumed: dict
    wet_relative: float
    source: str

    def rule(self, name: str) -> UncertaintyRule:
        """Return the rule for an input, falling back from ``mass_tare`` or ``source_before`` to ``mass``."""
        if name in self.rules:
            return self.rules[name]
        if name.startswith(("mass_", "source_")) and "mass" in self.rules:
            return self.rules["mass"]
        return UncertaintyRule()


def _number(table: dict, key: str, where: str) -> float:
    value = table.get(key, 0.0)
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise ProfileError(f"{where}.{key}: {value!r} is not a number; give a plain number")
    if not math.isfinite(value) or value < 0:
        raise ProfileError(f"{where}.{key}: {value!r} must be a finite number >= 0")
    return float(value)


def _rule_from_table(name: str, table: dict, where: str) -> UncertaintyRule:
    if not isinstance(table, dict):
        raise ProfileError(f"{where}: expected a table of keys, found {table!r}")
    unknown = set(table) - _RULE_KEYS - {"value"}
    if unknown:
        raise ProfileError(
            f"{where}: unknown key(s) {', '.join(sorted(unknown))}; "
            f"accepted: {', '.join(sorted(_RULE_KEYS))}"
        )
    kind = COLUMN_KINDS["mass_tare" if name == "mass" else name]
    try:
        unit = resolve_unit(kind, table.get("unit"))
    except UnitProblem as problem:
        raise ProfileError(f"{where}.unit: {problem}") from None
    k = _number(table, "k", where) if "k" in table else 2.0
    if "expanded" in table and k == 0:
        raise ProfileError(f"{where}.k: a coverage factor must be > 0")
    u = type_b_standard_uncertainty(
        standard=_number(table, "standard", where),
        half_width=_number(table, "half_width", where),
        readability=_number(table, "readability", where),
        expanded=_number(table, "expanded", where),
        coverage_factor=k,
    )
    relative = _number(table, "relative", where)
    shared = table.get("shared")
    if shared is not None and not isinstance(shared, bool):
        raise ProfileError(f"{where}.shared: {shared!r} is not true or false")
    # A certificate's expanded uncertainty describes the calibration: common to every
    # run with the instrument. Readings, repeatability and half-widths vary run to run.
    certificate = _number(table, "expanded", where) / k if "expanded" in table else 0.0
    shared_absolute = u if shared else (0.0 if shared is False else certificate)
    text = ", ".join(f"{key} {table[key]}" for key in sorted(table) if key not in {"unit", "value"})
    return UncertaintyRule(
        absolute=u * unit.delta_scale,
        relative=relative,
        description=f"{text} [{unit.text}]" if text else "",
        shared_absolute=shared_absolute * unit.delta_scale,
        shared_relative=relative if shared else 0.0,
    )


def _parse(document: dict, source: str, base: InstrumentProfile | None) -> InstrumentProfile:
    rules = dict(base.rules) if base else {}
    assumed = dict(base.assumed) if base else {}
    wet_relative = base.wet_relative if base else 0.0
    for key, table in document.items():
        if key in PROFILE_INPUTS:
            rules[key] = _rule_from_table(key, table, key)
        elif key == "assumed":
            if not isinstance(table, dict):
                raise ProfileError("assumed: expected tables such as [assumed.humidity]")
            for name, entry in table.items():
                if name not in ("humidity", "co2"):
                    raise ProfileError(
                        f"assumed.{name}: only humidity and co2 can be assumed"
                    )
                where = f"assumed.{name}"
                if "value" not in entry:
                    raise ProfileError(f"{where}.value: missing; give the assumed value")
                value = entry["value"]
                if isinstance(value, bool) or not isinstance(value, (int, float)):
                    raise ProfileError(f"{where}.value: {value!r} is not a number")
                unit = resolve_unit("fraction", entry.get("unit"))
                assumed[name] = (
                    float(value) * unit.scale,
                    _rule_from_table(name, entry, where),
                )
        elif key == "wet":
            if set(table) - {"relative"}:
                raise ProfileError("wet: only the key 'relative' is accepted")
            wet_relative = _number(table, "relative", "wet")
        else:
            raise ProfileError(
                f"{key}: unknown table; accepted: {', '.join(PROFILE_INPUTS)}, assumed, wet"
            )
    return InstrumentProfile(rules=rules, assumed=assumed, wet_relative=wet_relative, source=source)


_DEFAULT: InstrumentProfile | None = None


def load_profile(path: str | Path | None = None) -> InstrumentProfile:
    """Load the default profile, overlaid with a user profile when a path is given.

    Parameters
    ----------
    path : str or pathlib.Path, optional
        A TOML profile. Its tables replace the default's tables of the same name.

    Returns
    -------
    InstrumentProfile
        Rules for every input, in SI.

    Raises
    ------
    ProfileError
        Naming the file and the key at fault.
    """
    global _DEFAULT
    if _DEFAULT is None:
        text = resources.files("molid").joinpath("data/default_profile.toml").read_text("utf-8")
        _DEFAULT = _parse(tomllib.loads(text), "default profile", None)
    if path is None:
        return _DEFAULT
    path = Path(path)
    try:
        document = tomllib.loads(path.read_text(encoding="utf-8-sig"))
    except OSError as error:
        raise ProfileError(f"{path}: cannot read the profile ({error.strerror})") from None
    except tomllib.TOMLDecodeError as error:
        raise ProfileError(f"{path}: not valid TOML ({error})") from None
    try:
        return _parse(document, str(path), _DEFAULT)
    except ProfileError as problem:
        raise ProfileError(f"{path}: {problem}") from None
