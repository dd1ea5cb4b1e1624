"""Each candidate's vapour pressure: its own published equation where known, else an estimate.

The equations and their coefficient sets are in ``molid/data/vapour_pressure.csv``
(Wagner, DIPPR 101 or Antoine, one published set per substance, with its range);
a candidate is matched by CAS number, else by name. Inside its range the
substance's equation is used with the relative standard uncertainty of its
family (measured against CoolProp's reference equations of state in
``tests/physics/test_vapour_pressure.py``); outside it, or for a candidate
without an equation, the Ambrose–Walton corresponding-states estimate with its
polar-class term (:mod:`molid.candidates.model_terms`).
"""

from __future__ import annotations

import csv
from functools import lru_cache
from importlib import resources

import numpy as np

from molid.physics.vapour_pressure import (
    vapour_pressure_ambrose_walton,
    vapour_pressure_antoine,
    vapour_pressure_dippr101,
    vapour_pressure_wagner,
)
from molid.physics.water import saturation_pressure_water

__all__ = [
    "EQUATION_RELATIVE_UNCERTAINTY",
    "WATER_SATURATION_RELATIVE_UNCERTAINTY",
    "load_equations",
    "equation_table",
    "saturation_pressure",
]

#: Relative standard uncertainty of each equation family at 10-40 °C: half the largest
#: deviation from CoolProp's saturation pressures among the liquids boiling above 25 °C
#: (Wagner 2.5-5: 0.45 % acetone; Wagner 3-6: 0.19 % isopentane... see the tests), with a floor
#: of 0.2 %. Gases far above their boiling point can be off by several percent (cyclopropane
#: 4 %), which only decides that they do not condense.
EQUATION_RELATIVE_UNCERTAINTY = {"wagner-2.5-5": 0.003, "wagner-3-6": 0.005, "dippr-101": 0.005,
                                 "antoine": 0.01}
_FAMILIES = tuple(EQUATION_RELATIVE_UNCERTAINTY)

#: Relative standard uncertainty of the Wagner–Pruss saturation pressure (about 1e-4
#: of IAPWS-95 over 0–100 °C, as the water tests measure), with a margin.
WATER_SATURATION_RELATIVE_UNCERTAINTY = 2e-4


@lru_cache(maxsize=1)
def load_equations() -> tuple:
    """Read ``molid/data/vapour_pressure.csv`` once: a tuple of dicts, one per substance."""
    text = (resources.files("molid") / "data" / "vapour_pressure.csv").read_text(encoding="utf-8")
    lines = [line for line in text.splitlines() if not line.startswith("#")]
    rows = []
    for row in csv.DictReader(lines):
        entry = {"name": row["name"], "cas": row["cas"], "equation": row["equation"]}
        for key in ("a", "b", "c", "d", "e", "critical_temperature_K", "critical_pressure_Pa",
                    "minimum_temperature_K", "maximum_temperature_K"):
            entry[key] = float(row[key]) if row[key] else np.nan
        rows.append(entry)
    return tuple(rows)


def equation_table(names, cas_numbers) -> dict:
    """Coefficient arrays aligned with a library's rows (NaN family code -1 where none).

    Parameters
    ----------
    names, cas_numbers : sequence of str
        The library's names and CAS numbers, one per candidate.

    Returns
    -------
    dict of numpy.ndarray, each of length c
        ``family`` (index into the equation families, −1 without an equation), the
        coefficients ``a`` … ``e``, ``critical_temperature``, ``critical_pressure``,
        ``minimum_temperature``, ``maximum_temperature`` and ``u_relative``.
    """
    by_cas = {row["cas"]: row for row in load_equations()}
    by_name = {row["name"].casefold(): row for row in load_equations()}
    count = len(names)
    table = {key: np.full(count, np.nan) for key in (
        "a", "b", "c", "d", "e", "critical_temperature", "critical_pressure",
        "minimum_temperature", "maximum_temperature", "u_relative")}
    table["family"] = np.full(count, -1)
    for index, (name, cas) in enumerate(zip(names, cas_numbers, strict=True)):
        row = by_cas.get(str(cas)) or by_name.get(str(name).casefold())
        if row is None:
            continue
        table["family"][index] = _FAMILIES.index(row["equation"])
        for key in ("a", "b", "c", "d", "e"):
            table[key][index] = row[key]
        table["critical_temperature"][index] = row["critical_temperature_K"]
        table["critical_pressure"][index] = row["critical_pressure_Pa"]
        table["minimum_temperature"][index] = row["minimum_temperature_K"]
        table["maximum_temperature"][index] = row["maximum_temperature_K"]
        table["u_relative"][index] = EQUATION_RELATIVE_UNCERTAINTY[row["equation"]]
    return table


def _equation_values(T, table, columns):
    """Each listed candidate's own equation at temperatures T (n, 1) [Pa], NaN outside its range."""
    values = np.full((T.shape[0], len(columns)), np.nan)
    family = table["family"][columns]
    coefficient = {key: table[key][columns] for key in ("a", "b", "c", "d", "e")}
    with np.errstate(all="ignore"):
        for code, name in enumerate(_FAMILIES):
            chosen = family == code
            if not chosen.any():
                continue
            a, b, c, d, e = (coefficient[key][chosen] for key in ("a", "b", "c", "d", "e"))
            if name.startswith("wagner"):
                values[:, chosen] = vapour_pressure_wagner(
                    T, table["critical_temperature"][columns][chosen],
                    table["critical_pressure"][columns][chosen], a, b, c, d,
                    form=name[len("wagner-"):])
            elif name == "dippr-101":
                values[:, chosen] = vapour_pressure_dippr101(T, a, b, c, d, e)
            else:
                values[:, chosen] = vapour_pressure_antoine(T, a, b, c)
    inside = ((T >= table["minimum_temperature"][columns])
              & (T <= table["maximum_temperature"][columns]))
    return np.where(inside & np.isfinite(values), values, np.nan)


def saturation_pressure(T, constants, columns, estimate_relative):
    """Vapour pressure [Pa] and its relative standard uncertainty for some candidates.

    Parameters
    ----------
    T : numpy.ndarray
        Temperatures, shape (n, 1) [K].
    constants : dict
        From :func:`molid.candidates.evaluation.candidate_constants`: critical data,
        ``hill`` and the ``vapour_equations`` table of :func:`equation_table`.
    columns : numpy.ndarray of int
        The candidates to evaluate.
    estimate_relative : numpy.ndarray
        Relative uncertainty of the estimate for those candidates (polar-class terms).

    Returns
    -------
    tuple of numpy.ndarray, each shape (n, len(columns))
        p_sat [Pa] (+inf above the critical temperature) and its relative uncertainty.
    """
    estimate = vapour_pressure_ambrose_walton(T, constants["critical_temperature"][columns],
                                              constants["critical_pressure"][columns],
                                              constants["acentric_factor"][columns])
    equations = constants["vapour_equations"]
    own = _equation_values(T, equations, columns)
    use_own = np.isfinite(own)
    values = np.where(use_own, own, estimate)
    u_relative = np.where(use_own, equations["u_relative"][columns], estimate_relative)
    water = constants["hill"][columns] == "H2O"
    if water.any():  # water's own saturation equation (Wagner and Pruss 2002)
        values[:, water] = saturation_pressure_water(np.broadcast_to(T, (T.shape[0], int(water.sum()))))
        u_relative[:, water] = WATER_SATURATION_RELATIVE_UNCERTAINTY
    return values, u_relative
