"""Purity and conformity in the outputs: JSON keys, CSV columns and terminal lines.

JSON (a contract): each run and sample with a result gains ``purity``
``{contaminant, x, u, low, high, detection_limit, limited_by, detected, statement}``
(fractions as percent, ``unit``: "%"), and, where a specification applies,
``conformity`` ``{rule, limit, outcome, probability, reason}``. ``x`` is never
negative: an estimate below zero is reported as 0 with ``detected`` false, and
the statement says "no <contaminant> detected above <x_DL>".
"""

from __future__ import annotations

import numpy as np

__all__ = ["purity_block", "conformity_block", "conformity_text", "hypotheses_block", "hypothesis_text",
           "limiting_block", "limiting_text", "purity_statement", "CSV_COLUMNS", "csv_columns"]

_PERCENT = 100.0

#: Columns the per-run CSV gains, at the end.
CSV_COLUMNS = ("contaminant", "contaminant_percent", "contaminant_U_percent",
               "contaminant_detection_limit_percent", "conformity")


def _number(value, digits=4):
    value = float(value)
    return round(value * _PERCENT, digits) if np.isfinite(value) else None


def purity_statement(row) -> str:
    """Say in plain words what a purity row found."""
    contaminant = row["contaminant"]
    interval = f"{row['low'] * _PERCENT:.3g} to {row['high'] * _PERCENT:.3g} %, k = 2"
    if row["main_verdict"] not in ("consistent", "marginal"):
        pure = (f"; {row['best_pure']} is consistent as a pure gas" if row.get("best_pure") else
                "; no candidate is consistent as a pure gas")
        if row["x"] - 2.0 * row["u"] <= 0 or row["high"] <= 0:
            return f"{row['main']} as a pure gas does not fit, and {contaminant} does not explain it{pure}"
        return (f"if this is {row['main']}, {max(row['x'], 0.0) * _PERCENT:.3g} % {contaminant} "
                f"({interval}) would explain the result{pure}")
    if not row["detected"]:
        return (f"no {contaminant} detected above {row['detection_limit'] * _PERCENT:.2g} % "
                f"(k = 2) in {row['main']}")
    return (f"{contaminant} in {row['main']}: {max(row['x'], 0.0) * _PERCENT:.3g} % "
            f"({row['low'] * _PERCENT:.3g} to {row['high'] * _PERCENT:.3g} %, k = 2)")


def purity_block(quality, key, level="runs"):
    """Return the ``purity`` object of a run (table position) or sample (name), None where none."""
    if quality is None:
        return None
    table = quality.runs if level == "runs" else quality.samples
    if key not in table.index:
        return None
    row = table.loc[key]
    return {
        "main": row["main"], "contaminant": row["contaminant"], "unit": "%",
        "x": _number(np.clip(row["x"], 0.0, 1.0)), "u": _number(row["u"]),
        "low": _number(row["low"]), "high": _number(row["high"]),
        "detection_limit": _number(row["detection_limit"]), "limited_by": row["limited_by"] or None,
        "detected": bool(row["detected"]), "statement": purity_statement(row),
    }


def conformity_block(quality, key, level="runs"):
    """Return the ``conformity`` object of a run or sample where a specification applies, else None."""
    if quality is None:
        return None
    table = quality.runs if level == "runs" else quality.samples
    if key not in table.index or not table.loc[key, "outcome"]:
        return None
    row = table.loc[key]
    probability = float(row["probability"])
    return {"rule": row["rule"], "limit": _number(row["limit"]), "unit": "%",
            "contaminant": row["contaminant"], "outcome": row["outcome"],
            "probability": round(probability, 4) if np.isfinite(probability) else None,
            "reason": row["reason"] or None}


def csv_columns(quality, count) -> dict:
    """Return the per-run CSV's purity columns over all ``count`` table rows ('' or NaN where none)."""
    columns = {"contaminant": np.full(count, "", dtype=object),
               "contaminant_percent": np.full(count, np.nan),
               "contaminant_U_percent": np.full(count, np.nan),
               "contaminant_detection_limit_percent": np.full(count, np.nan),
               "conformity": np.full(count, "", dtype=object)}
    if quality is None or len(quality.runs) == 0:
        return columns
    positions = quality.runs.index.to_numpy(dtype=int)
    runs = quality.runs
    columns["contaminant"][positions] = runs["contaminant"].to_numpy(dtype=object)
    columns["contaminant_percent"][positions] = np.clip(runs["x"].to_numpy(dtype=float), 0, 1) * _PERCENT
    columns["contaminant_U_percent"][positions] = 2.0 * runs["u"].to_numpy(dtype=float) * _PERCENT
    columns["contaminant_detection_limit_percent"][positions] = (
        runs["detection_limit"].to_numpy(dtype=float) * _PERCENT)
    columns["conformity"][positions] = runs["outcome"].to_numpy(dtype=object)
    return columns


def conformity_text(block) -> str:
    """Say a ``conformity`` object in plain words: outcome, limit, probability and rule."""
    words = {"conforms": "CONFORMS", "does-not-conform": "DOES NOT CONFORM",
             "undecided": "CANNOT DECIDE"}[block["outcome"]]
    if block.get("reason"):
        return f"{words}: {block['reason']}"
    probability = block.get("probability")
    chance = f", probability of conformity {probability:.3g}" if probability is not None else ""
    return (f"{words} to at most {block['limit']:g} % {block.get('contaminant', 'contaminant')}{chance}; "
            f"rule: {block['rule']}")


def hypotheses_block(quality, key):
    """Return a result's ``mixture_hypotheses`` (fractions in %), or None.

    Binary mixtures of the nearest candidates with air, water or carbon dioxide that
    explain a result no pure candidate fits: hypotheses to test, not identifications.
    """
    if quality is None:
        return None
    items = quality.hypotheses.get(key)
    if not items:
        return None
    return [{"main": item["main"], "contaminant": item["contaminant"], "unit": "%",
             "x": _number(item["x"]), "low": _number(item["low"]), "high": _number(item["high"]),
             "kind": "hypothesis"} for item in items]


def hypothesis_text(items, shown=3) -> str:
    """Say the leading mixture hypotheses in one line."""
    parts = [f"{item['main']} with {item['x']:.3g} % {item['contaminant']}" for item in items[:shown]]
    return ("not an identification — mixtures that would explain the result: " + "; ".join(parts)
            + (f"; and {len(items) - shown} more" if len(items) > shown else ""))


def limiting_block(quality, name):
    """Return a sample's ``limiting_density`` object (g/mol, cm³/mol, kPa), or None.

    ``{molar_mass{value,u,U,low,high,unit}, B{value,u,unit}, runs, pressures, pressure_unit,
    temperature_K, birge_ratio, fitted, reason, candidates[{name, B, u, z}]}``.
    """
    limiting = getattr(quality, "limiting", None)
    if limiting is None or not len(limiting) or name not in limiting.index:
        return None
    row = limiting.loc[name]

    def value(number, scale):
        number = float(number)
        return round(number * scale, 6) if np.isfinite(number) else None

    grams, cubic = 1e3, 1e6
    M, u = float(row["molar_mass"]), float(row["u_molar_mass"])
    return {
        "molar_mass": {"value": value(M, grams), "u": value(u, grams), "U": value(2 * u, grams),
                       "low": value(M - 2 * u, grams), "high": value(M + 2 * u, grams), "unit": "g/mol",
                       "model": "none (extrapolated to zero density)"},
        "B": {"value": value(row["B"], cubic), "u": value(row["u_B"], cubic), "unit": "cm3/mol"},
        "runs": int(row["runs"]), "pressures": [value(p, 1e-3) for p in row["pressures"]],
        "pressure_unit": "kPa", "temperature_K": value(row["temperature"], 1.0),
        "birge_ratio": value(row["birge_ratio"], 1.0), "fitted": bool(row["fitted"]),
        "reason": row["reason"] or None,
        "candidates": [{"name": item["name"], "B": value(item["B"], cubic), "u": value(item["u_B"], cubic),
                        "z": round(item["z"], 3)} for item in row["candidates"]],
    }


def limiting_text(block) -> str:
    """Say a ``limiting_density`` object in one line."""
    if not block["fitted"]:
        return f"pressure series not fitted: {block['reason']}"
    mass, B = block["molar_mass"], block["B"]
    fits = "; ".join(f"{item['name']} {item['B']:.0f} cm³/mol (z {item['z']:+.2f})"
                     for item in block["candidates"]) or "no consistent candidate to compare"
    return (f"{mass['value']:.3f} ± {mass['U']:.3f} g/mol (k = 2) with no real-gas model, from "
            f"{block['runs']} runs at {min(block['pressures']):.3g}-{max(block['pressures']):.3g} kPa; "
            f"B = {B['value']:.0f} ± {2 * B['u']:.0f} cm³/mol (k = 2) against {fits}")
