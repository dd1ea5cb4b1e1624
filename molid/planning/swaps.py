"""What to hand out instead: library gases that the equipment separates from the other unknowns.

A swap for an unknown that cannot be told apart from another is a library
substance that is measurable by the method at the nominal conditions (its own
verdict is ``consistent``), is separable from every other unknown with the
planned replicates, and carries no hazard class worse than the substance it
replaces: each of its GHS hazard classes is also one of the replaced
substance's, in the same or a more severe category (category 1 is the most
severe, 1A more than 1B; UN GHS Rev.10, 2023, 1.1.2.5 and the chapters of part 2
and 3, from memory). The pressure-gas class counts as one class whatever its
group (compressed, liquefied, dissolved).
"""

from __future__ import annotations

import re

import numpy as np

from molid.candidates.verdicts import SEPARATION_FACTOR
from molid.planning.separability import pair_separation

__all__ = ["hazard_class", "no_worse_hazards", "swaps_for"]

_CATEGORY = re.compile(r"^(?P<family>.*?)\s+(?P<category>\d[A-C]?|[A-C])(?P<route>\s*\(.*\))?$")


def hazard_class(text: str) -> tuple:
    """Split a GHS hazard class as the library writes it into (class, category number, letter).

    Examples
    --------
    >>> hazard_class("Acute Tox. 3 (inhal.)"), hazard_class("Flam. Gas 1A"), hazard_class("Press. Gas (Liq.)")
    (('Acute Tox. (inhal.)', 3, ''), ('Flam. Gas', 1, 'A'), ('Press. Gas', 0, ''))
    """
    text = str(text).strip()
    if text.startswith("Press. Gas"):
        return "Press. Gas", 0, ""
    match = _CATEGORY.match(text)
    if match is None:
        return text, 0, ""
    category = match.group("category")
    number = int(category[0]) if category[0].isdigit() else 0
    letter = category[-1] if category[-1].isalpha() else ""
    return (match.group("family") + (match.group("route") or "")).strip(), number, letter


def no_worse_hazards(candidate, replaced) -> bool:
    """Tell whether every hazard class of a candidate is one of the replaced substance's, no more severe.

    Parameters
    ----------
    candidate, replaced : sequence of str
        GHS hazard classes as the library lists them.

    Returns
    -------
    bool

    Examples
    --------
    >>> no_worse_hazards(["Press. Gas (Comp.)", "Simple asphyxiant"],
    ...                  ["Press. Gas (Liq.)", "Simple asphyxiant"])
    True
    >>> no_worse_hazards(["Flam. Gas 1A"], ["Flam. Gas 1B"]), no_worse_hazards(["Flam. Gas 1B"],
    ...                                                                        ["Flam. Gas 1A"])
    (False, True)
    """
    known = {}
    for text in replaced:
        family, number, letter = hazard_class(text)
        known.setdefault(family, []).append((number, letter))
    for text in candidate:
        family, number, letter = hazard_class(text)
        if family not in known:
            return False
        # no worse: a higher category number, or the same number and not a more severe letter
        if not any(number > other or (number == other and (not letter or not other_letter
                                                            or letter >= other_letter))
                   for other, other_letter in known[family]):
            return False
    return True


def swaps_for(table, library, unknowns, replaced: int, replicates: int, count: int = 3) -> list:
    """Library substances that could replace one unknown, the nearest in molar mass first.

    Parameters
    ----------
    table : molid.planning.separability.NominalTable
        Noise-free results of the whole library.
    library : pandas.DataFrame
        The candidate library.
    unknowns : sequence of int
        Library rows of all the unknowns.
    replaced : int
        The row of the unknown to replace.
    replicates : int
        The planned number of replicate runs.
    count : int
        How many to return.

    Returns
    -------
    list of dict
        ``name``, ``separation`` (the smallest from the other unknowns) and ``ghs``; the
        nearest in molar mass to the replaced substance first, then the fewest hazard classes.
    """
    others = [row for row in unknowns if row != replaced]
    hazards = library["ghs_hazards"].to_numpy(dtype=object)
    found = []
    for position, row in enumerate(table.rows):
        if row in unknowns or not table.ok[position] or table.verdict[position] != "consistent":
            continue
        if not no_worse_hazards(hazards[row], hazards[replaced]):
            continue
        separations = [pair_separation(table, row, other, replicates)["separation"] for other in others]
        smallest = float(np.min(separations)) if separations else float("inf")
        if smallest >= SEPARATION_FACTOR:
            found.append({"name": library.at[row, "name"], "separation": smallest,
                          "ghs": list(hazards[row]), "molar_mass": float(library.at[row, "molar_mass"])})
    # nearest in molar mass first: the swap keeps the exercise's masses on the balance
    target = float(library.at[replaced, "molar_mass"])
    found.sort(key=lambda item: (abs(item["molar_mass"] - target), len(item["ghs"]), item["name"]))
    return [{key: value for key, value in item.items() if key != "molar_mass"} for item in found[:count]]
