"""Gas densities in the outputs: each result's own, and at reference conditions as its leading candidate.

The JSON ``density`` key of a run and a sample, the terminal lines under a
sample's candidates, and the per-run CSV columns. The numbers come from
:func:`molid.pipeline.identify.run_densities` and :func:`~molid.pipeline.identify.sample_densities`
(a result's own density) and :class:`molid.candidates.gas_states.ReferenceState`
(its density at reference conditions and relative density, read as a candidate);
each candidate's own keys are written by the ranking.
"""

from __future__ import annotations

import math

import numpy as np

from molid.candidates.verdicts import verdicts
from molid.physics.constants import ZERO_CELSIUS
from molid.uncertainty.propagation import COVERAGE_FACTOR

__all__ = ["density_block", "reference_columns", "reference_lines", "run_density", "sample_density",
           "state_text"]


def _float(value):
    value = float(value)
    return value if math.isfinite(value) else None


def density_block(value, u, temperature, pressure):
    """Build a JSON ``density`` object: value and u [kg/m³] at a temperature [K] and pressure [Pa]."""
    if value is None or not np.isfinite(value):
        return None
    return {"value": _float(value), "u": _float(u), "unit": "kg/m3", "temperature_K": _float(temperature),
            "pressure_Pa": _float(pressure)}


def run_density(result, index):
    """Give the ``density`` key of run ``index``: its dry gas's density at its temperature and pressure."""
    if getattr(result, "density", None) is None:
        return None
    return density_block(result.density[index], result.u_density[index],
                         result.table.values["temperature"][index],
                         result.propagation.extras["dry_pressure"][index])


def sample_density(result, name):
    """Give the ``density`` key of a sample: at the mean temperature and dry-gas pressure of its runs."""
    frame = getattr(result, "sample_density", None)
    if frame is None or not len(frame):
        return None
    rows = frame.index[frame["sample"] == name]
    if not len(rows):
        return None
    row = frame.loc[rows[0]]
    return density_block(row["value"], row["u"], row["temperature"], row["pressure"])


def _shown(value, u, unit=""):
    """Format a value ± U (k = 2) to two significant digits of U."""
    expanded = COVERAGE_FACTOR * u if u is not None else math.nan
    if value is None:
        return "-"
    if not (math.isfinite(expanded) and expanded > 0):
        return f"{value:.6g}{unit}"
    decimals = max(0, 1 - int(math.floor(math.log10(expanded))))
    return f"{value:.{decimals}f} ± {expanded:.{decimals}f}{unit}"


def state_text(temperature, pressure, measured=False) -> str:
    """Name a state: a measured one to 0.01 °C and 1 Pa, reference conditions as given."""
    if measured:
        return f"{temperature - ZERO_CELSIUS:.2f} °C and {pressure / 1000:.3f} kPa"
    return f"{temperature - ZERO_CELSIUS:.6g} °C and {pressure / 1000:.6g} kPa"


def reference_lines(entry) -> list:
    """Give a sample's terminal lines: its density, and at reference conditions as its leading candidate."""
    lines = []
    density = entry.get("density")
    if density:
        lines.append(f"    density: {_shown(density['value'], density['u'], ' kg/m³')} (k=2) at "
                     f"{state_text(density['temperature_K'], density['pressure_Pa'], measured=True)}")
    leading = next((item for item in entry.get("candidates", [])
                    if item.get("verdict") == "consistent" and "reference_density" in item), None)
    if leading is None:
        return lines
    block = leading["reference_density"]
    where = state_text(block["temperature_K"], block["pressure_Pa"])
    if block["value"] is None:
        lines.append(f"    if {leading['name']}, at {where}: no density: {block.get('note', '')}")
        return lines
    relative = leading["relative_density"]
    lines.append(f"    if {leading['name']}, at {where}: {_shown(block['value'], block['u'], ' kg/m³')}, "
                 f"relative density {_shown(relative['value'], relative['u'])} (k=2)"
                 + (f"; {block['note']}" if block.get("note") else ""))
    return lines


def reference_columns(result, count: int) -> dict:
    """Give the per-run CSV columns: the run's density, and at reference conditions as its leading candidate.

    ``density_kg_m3``, ``u_density_kg_m3`` (at the run's temperature and dry-gas pressure),
    ``reference_candidate``, ``reference_density_kg_m3``, ``u_reference_density_kg_m3``,
    ``relative_density``, ``u_relative_density``, ``reference_temperature_K`` and
    ``reference_pressure_Pa``; empty where a run has no result or no consistent candidate,
    and no density where that candidate would be liquid at the reference conditions.
    """
    nan = np.full(count, np.nan)
    density = getattr(result, "density", None)
    columns = {"density_kg_m3": nan.copy() if density is None else density,
               "u_density_kg_m3": nan.copy() if density is None else result.u_density}
    names = np.full(count, "", dtype=object)
    values = [nan.copy() for _ in range(4)]
    ranking = result.ranking
    reference = getattr(ranking, "reference", None)
    if reference is not None and len(ranking.run_index):
        runs = ranking.runs
        consistent = verdicts(runs["z"], runs["condenses"], runs["unfit"]) == 0
        lead = np.argmin(np.where(consistent, np.abs(runs["z"]), np.inf), axis=1)
        rows = np.arange(len(lead))
        found = consistent[rows, lead]
        chosen = np.asarray(ranking.run_index)[found]
        lead, rows = lead[found], rows[found]
        names[chosen] = ranking.library["name"].to_numpy(dtype=object)[lead]
        for target, item in zip(values, reference.densities(runs["measured"][rows, lead],
                                                            runs["u_measured"][rows, lead], lead),
                                strict=True):
            target[chosen] = item
    columns["reference_candidate"] = names
    for name, item in zip(("reference_density_kg_m3", "u_reference_density_kg_m3", "relative_density",
                           "u_relative_density"), values, strict=True):
        columns[name] = item
    has = names != ""
    columns["reference_temperature_K"] = np.where(has, reference.temperature if reference else np.nan, np.nan)
    columns["reference_pressure_Pa"] = np.where(has, reference.pressure if reference else np.nan, np.nan)
    return columns
