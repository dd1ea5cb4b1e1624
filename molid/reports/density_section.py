"""The density part of a report page: the gas as weighed, and at reference conditions as its candidate.

A page with a result gets a small box of two lines: the gas's own density at the
temperature and dry-gas pressure it was weighed at (the JSON ``density``), and, for
the page's leading consistent (else marginal) candidate, its density at the
reference conditions and its relative density against dry air there (ISO 6976:2016;
the JSON ``reference_density`` and ``relative_density``). Expanded uncertainties,
k = 2. The numbers are read from the result and its ranking, never recomputed here.
"""

from __future__ import annotations

import math
import re

from molid.io.reference_output import run_density, sample_density
from molid.io.reference_output import state_text as _state
from molid.uncertainty.propagation import COVERAGE_FACTOR

__all__ = ["DENSITY_TITLE", "density_lines"]

#: The box's title.
DENSITY_TITLE = "Density (U, k = 2); relative density: against dry air at the same conditions (ISO 6976:2016)"

_UNIT = " kg/m³"


def _minus(text: str) -> str:
    """Write a negative number's sign as a true minus (as the report's other numbers are)."""
    return re.sub(r"(?<![\w.])-(?=\d)", "−", text)


def _with_u(value, u, unit="") -> str:
    """Format a value ± U (k = 2), rounded to two significant digits of U; '–' when missing."""
    if value is None or not math.isfinite(value):
        return "–"
    expanded = COVERAGE_FACTOR * u if u is not None else math.nan
    if not (math.isfinite(expanded) and expanded > 0):
        return f"{value:.6g} ± –{unit}"
    decimals = max(0, 1 - int(math.floor(math.log10(expanded))))
    return f"{value:.{decimals}f} ± {expanded:.{decimals}f}{unit}"


def _leading(candidates):
    """Pick the leading consistent candidate, else the leading marginal one, that has reference keys."""
    for verdict in ("consistent", "marginal"):
        for item in candidates:
            if item.get("verdict") == verdict and "reference_density" in item:
                return item
    return None


def _own_density(result, key, ok_positions):
    """Give the page's own ``density`` block: the sample's, or its first good run's; None without one."""
    kind, ident = key
    if kind == "sample":
        return sample_density(result, ident)
    return run_density(result, ok_positions[0]) if ok_positions else None


def _reference_line(leading, temperature, pressure) -> str:
    """Say the leading candidate's density and relative density at reference conditions, or why none."""
    conditions = _state(temperature, pressure)
    if leading is None:
        return (f"At {conditions}: no density; it is given as a candidate the gas is taken to be, and "
                "none is consistent or marginal.")
    block, relative = leading["reference_density"], leading["relative_density"]
    who = f"If {leading['name']} (leading {leading['verdict']} candidate), at {conditions}: "
    note = (block.get("note") or "").replace(f"at {conditions}", "there")  # said once, before
    if block["value"] is None:
        return who + note + "."
    return (who + f"{_with_u(block['value'], block['u'], _UNIT)}; relative density "
            f"{_with_u(relative['value'], relative['u'])}" + (f"; {note}." if note else "."))


def density_lines(result, key, ok_positions, candidates):
    """Give the page's density sentences, or None when the page has no density.

    Parameters
    ----------
    result : molid.pipeline.identify.Identification
        The identification.
    key : tuple
        The page's ("sample", name) or ("run", position).
    ok_positions : list of int
        Table positions of the page's runs without errors.
    candidates : list of dict
        The page's ranked candidates (with ``reference_density`` on the consistent and marginal).

    Returns
    -------
    list of str or None
        The gas's own density; its leading candidate's at the reference conditions, when the
        result has a ranking.
    """
    own = _own_density(result, key, ok_positions)
    if own is None:
        return None
    where = _state(own["temperature_K"], own["pressure_Pa"], measured=True)
    mean = " (the mean of its runs)" if key[0] == "sample" and len(ok_positions) > 1 else ""
    lines = [f"As weighed: {_with_u(own['value'], own['u'], _UNIT)} at {where}, the gas's own "
             f"temperature and pressure{mean}."]
    reference = getattr(getattr(result, "ranking", None), "reference", None)
    if reference is not None:
        lines.append(_reference_line(_leading(candidates), reference.temperature, reference.pressure))
    return [_minus(line) for line in lines]
