"""Safety summary of a result: which substances' hazards apply, and the cautions they call for.

The substances are the candidates the measurement does not exclude (verdict
consistent or marginal), all of them. When there is none, the gas is
*unidentified*: it is to be handled as an unknown, possibly toxic, flammable,
oxidising, corrosive or asphyxiant gas, and the only substance named is the
one on the label (the ``expected`` column), marked as not confirmed. An
excluded candidate is never named, so it is never taken for the likely gas.

The plain-words cautions live in ``molid/data/cautions.toml``: one per GHS
hazard class (matched on the start of the library's ``ghs_hazards`` codes),
some per substance and per method, and one for pressures read in mmHg, torr
or inHg (a mercury barometer or manometer may have been used). The hazard
class names are those of the GHS.

References
----------
United Nations, Globally Harmonized System of Classification and Labelling of
Chemicals (GHS), tenth revised edition, ST/SG/AC.10/30/Rev.10, New York and
Geneva, 2023.
"""

from __future__ import annotations

import functools
import re
from importlib import resources
from pathlib import Path

try:  # Python 3.11+
    import tomllib
except ModuleNotFoundError:  # pragma: no cover - Python 3.10
    import tomli as tomllib

from molid.methods.registry import METHODS

__all__ = [
    "CAUTIONS_PATH",
    "LABEL_MARK",
    "SAFETY_FOOTNOTE",
    "load_cautions",
    "hazard_cautions",
    "substance_cautions",
    "unit_cautions",
    "method_cautions",
    "pressure_unit_texts",
    "unidentified_text",
    "hazard_summary",
    "grouped_substances",
    "hazard_line",
]

#: The cautions data file.
CAUTIONS_PATH = Path(str(resources.files("molid") / "data" / "cautions.toml"))

#: How the label's substance is marked when no candidate is consistent or marginal.
LABEL_MARK = "label's substance (not confirmed by the measurement)"

#: The closing line of every safety box and the JSON ``note``.
SAFETY_FOOTNOTE = (
    "These reminders are not a risk assessment: follow local codes, the site's safety rules, "
    "the substance's safety data sheet (SDS) and trained or licensed practice."
)

_NOT_EXCLUDED = ("consistent", "marginal")


@functools.lru_cache(maxsize=1)
def load_cautions() -> dict:
    """Read ``molid/data/cautions.toml`` (once).

    Returns
    -------
    dict
        ``ghs``, ``substance``, ``method`` and ``pressure_unit`` lists of tables and the
        ``unidentified`` table, as written in the file.
    """
    with open(CAUTIONS_PATH, "rb") as stream:
        return tomllib.load(stream)


def _add(found, cautions):
    for caution in cautions:
        if caution not in found:
            found.append(caution)
    return found


def hazard_cautions(hazards) -> list:
    """Give plain-words cautions for GHS hazard-class codes (no duplicates, in the file's order).

    Parameters
    ----------
    hazards : iterable of str
        Codes as in the library's ``ghs_hazards`` column.

    Returns
    -------
    list of str

    Examples
    --------
    >>> hazard_cautions(["Flam. Gas 1A", "Press. Gas (Liq.)"])[0][:22]
    'compressed-gas cylinde'
    """
    hazards = [str(item) for item in hazards]
    return _add([], [entry["caution"] for entry in load_cautions()["ghs"]
                     if any(item.startswith(entry["prefix"]) for item in hazards)])


def substance_cautions(names) -> list:
    """Give the cautions the data file keeps for particular substances (radon, HF, ...)."""
    names = set(names)
    return [entry["caution"] for entry in load_cautions()["substance"] if entry["name"] in names]


def unit_cautions(unit_texts) -> list:
    """Give the cautions for the pressure units of a file's headers (mercury for mmHg, torr, inHg).

    Examples
    --------
    >>> unit_cautions(["kPa"]), unit_cautions(["mmHg"])[0][:31]
    ([], 'if a mercury barometer or manom')
    """
    texts = [str(text) for text in unit_texts]
    return [entry["caution"] for entry in load_cautions()["pressure_unit"]
            if any(re.search(entry["pattern"], text, re.IGNORECASE) for text in texts)]


def method_cautions(methods) -> list:
    """Give the apparatus cautions the methods used declare (molid/methods/)."""
    found: list = []
    for method in dict.fromkeys(methods):
        _add(found, getattr(METHODS.get(method), "cautions", ()))
    return found


def pressure_unit_texts(units) -> list:
    """Pick the unit texts of a RunTable's pressure columns (``units``: name → ColumnUnit)."""
    return [unit.text for unit in units.values() if getattr(unit, "kind", "") == "pressure"]


def _substance(name, verdict, library_hazards, label=False) -> dict:
    return {"name": name, "verdict": verdict, "ghs": list(library_hazards.get(name, [])),
            "label": label}


def unidentified_text(analysed=True) -> str:
    """Say that the gas is unidentified, why, and how to handle it until it is identified."""
    reason = ("no candidate is consistent with this measurement, not even marginally" if analysed
              else "no run could be analysed")
    return f"Unidentified gas: {reason}. {load_cautions()['unidentified']['handling']}"


def hazard_summary(candidates, library_hazards, *, label=None, methods=(), units=(),
                   analysed=True) -> dict:
    """Say which substances' hazards apply to a result and which cautions they call for.

    Parameters
    ----------
    candidates : list of dict
        Every ranked candidate of the result (``name`` and ``verdict``), not only the top few.
    library_hazards : dict
        Library name → list of GHS hazard-class codes.
    label : dict, optional
        The label check (``expected``, ``name``, ``verdict``), when the file has a label.
    methods : iterable of str
        The methods of the result's runs.
    units : iterable of str
        The pressure units of the file's headers.
    analysed : bool
        False when no run of the result could be analysed.

    Returns
    -------
    dict
        ``identified`` (some candidate consistent or marginal), ``substances`` (``name``,
        ``verdict``, ``ghs``, ``label``: true for the label's substance, listed, marked as not
        confirmed, whenever the measurement does not find it consistent or marginal),
        ``cautions`` (plain words) and ``note``.
    """
    kept = [item for item in candidates if item["verdict"] in _NOT_EXCLUDED]
    substances = [_substance(item["name"], item["verdict"], library_hazards) for item in kept]
    identified = bool(kept)
    unidentified = load_cautions()["unidentified"]
    cautions: list = []
    label_name = (label.get("name") or label["expected"]) if label else None
    # the label's substance may be in the cylinder whatever the measurement says: list it, marked
    if label_name and label_name not in {item["name"] for item in substances}:
        substances.append(_substance(label_name, label["verdict"], library_hazards, label=True))
    if not identified:
        cautions.append(unidentified["caution"])
    _add(cautions, hazard_cautions(code for item in substances for code in item["ghs"]))
    _add(cautions, substance_cautions(item["name"] for item in substances))
    _add(cautions, method_cautions(methods))
    _add(cautions, unit_cautions(units))
    if identified:
        note = ("The hazards of every candidate the measurement does not exclude. "
                + SAFETY_FOOTNOTE)
    else:
        note = f"{unidentified_text(analysed)} {SAFETY_FOOTNOTE}"
    return {"identified": identified, "substances": substances, "cautions": cautions,
            "note": note}


def grouped_substances(summary, label_format="label's {name} (not confirmed)") -> list:
    """Group a summary's substances that share the same GHS classes, for a compact listing.

    Parameters
    ----------
    summary : dict
        From :func:`hazard_summary`.
    label_format : str
        How the label's substance is written (``{name}`` is its name).

    Returns
    -------
    list of (list of str, list of str)
        Per group, the substances as "name (verdict)" (the label's by ``label_format``) and
        their GHS classes; groups in the order their first member is listed.
    """
    groups: dict = {}
    for item in summary["substances"]:
        who = (label_format.format(name=item["name"]) if item["label"]
               else f"{item['name']} ({item['verdict']})")
        groups.setdefault((item["label"], tuple(item["ghs"])), []).append(who)
    return [(names, list(classes)) for (_, classes), names in groups.items()]


def hazard_line(summary) -> str:
    """One short line of a summary for a terminal: the GHS classes, or 'unidentified' first.

    Examples
    --------
    >>> hazard_line({"identified": True, "substances": [
    ...     {"name": "argon", "verdict": "consistent", "ghs": ["Press. Gas (Comp.)"],
    ...      "label": False}]})
    'argon (consistent): Press. Gas (Comp.)'
    """
    parts = [] if summary["identified"] else [load_cautions()["unidentified"]["short"]]
    for names, classes in grouped_substances(summary):
        parts.append(f"{', '.join(names)}: {', '.join(classes) or 'no GHS class in the library'}")
    return "; ".join(parts)
