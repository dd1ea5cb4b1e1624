"""What the reader fills in where a file is silent, and the notes that say so.

Balance-room conditions default to the gas's, humidity and CO2 to the profile's
assumed values, and every uncertainty the file does not state to the instrument
profile's Type B value. Each default that applies adds one file-level note, so
a reader of the report knows what was assumed.
"""

from __future__ import annotations

import numpy as np

from molid.io.columns import UNCERTAIN_INPUTS
from molid.io.profiles import InstrumentProfile
from molid.methods.inputs import INPUT_LABELS
from molid.methods.registry import METHODS

__all__ = ["fill_defaults"]

#: Inputs that may be left out altogether: the profile gives a value and its uncertainty.
ASSUMED_INPUTS = ("humidity", "co2")
#: Balance-room conditions and the gas's conditions that stand in for them.
AIR_CONDITIONS = (("air_temperature", "temperature"), ("air_pressure", "pressure"))


def fill_defaults(values: dict, blanks: dict, stated: dict, profile: InstrumentProfile,
                  notes: list, method=None, in_use=None) -> tuple[dict, dict, dict]:
    """Fill missing values and uncertainties from the gas's conditions and the profile.

    Parameters
    ----------
    values : dict of numpy.ndarray
        SI values of each measured column; air conditions, humidity and CO2 are
        filled in place where blank.
    blanks : dict of numpy.ndarray
        True where a column gives no usable value.
    stated : dict of numpy.ndarray
        Uncertainties stated in ``u_`` columns, NaN where a cell gives none.
    profile : InstrumentProfile
        Default uncertainties and assumed values.
    notes : list of str
        File-level remarks, extended with one per kind of default applied.
    method : array_like of str, optional
        Each row's method: its own defaults (``Method.input_defaults``) apply first.
    in_use : dict of numpy.ndarray, optional
        Per input, the rows whose method uses it (see :func:`molid.io.checks.inputs_in_use`);
        elsewhere the input is 0 with no uncertainty, and no note speaks of it.

    Returns
    -------
    given : dict of numpy.ndarray
        For air_temperature and air_pressure: True where the row gives its own value.
    uncertainties : dict of numpy.ndarray
        Standard uncertainty of each input, in SI.
    shared : dict of numpy.ndarray
        The part of each uncertainty common to every run with the same instrument.
    """
    in_use = in_use or {}
    if method is not None:
        _fill_method_defaults(np.asarray(method, dtype=object), values, blanks, stated, notes)
    for name, rows in in_use.items():
        # an input the row's method does not use: neither assumed nor defaulted, and harmless
        values[name] = np.where(rows, values[name], 0.0)
        blanks[name] = blanks[name] & rows
    given = {}
    for name, gas_name in AIR_CONDITIONS:
        given[name] = ~blanks[name]
        values[name] = np.where(given[name], values[name], values[gas_name])
    assumed_rows = _fill_assumed_inputs(values, blanks, profile, notes)
    uncertainties, shared = _uncertainties(values, stated, given, assumed_rows, profile, notes, in_use)
    for name, rows in in_use.items():
        uncertainties[name] = np.where(rows, uncertainties[name], 0.0)
        shared[name] = np.where(rows, shared[name], 0.0)
    return given, uncertainties, shared


def _fill_method_defaults(method, values: dict, blanks: dict, stated: dict, notes: list) -> None:
    """Put each method's own defaults (a value, no uncertainty) where its rows leave an input blank."""
    for method_name, entry in METHODS.items():
        mine = method == method_name
        if not entry.input_defaults or not mine.any():
            continue
        for name, value, meaning in entry.input_defaults:
            rows = mine & blanks[name]
            if not rows.any():
                continue
            values[name] = np.where(rows, value, values[name])
            blanks[name] = blanks[name] & ~rows
            stated[name] = np.where(rows, 0.0, stated.get(name, np.full(len(method), np.nan)))
            how_many = "any" if rows.sum() == mine.sum() else "some"
            label = INPUT_LABELS.get(name, name)
            notes.append(f"{label} not given for {how_many} {method_name} runs: taken as {meaning}")


def _fill_assumed_inputs(values: dict, blanks: dict, profile: InstrumentProfile,
                         notes: list) -> dict:
    """Put the profile's assumed humidity and CO2 where blank; return where they were."""
    assumed_rows = {}
    for name in ASSUMED_INPUTS:
        assumed_value, assumed_rule = profile.assumed[name]
        assumed_rows[name] = blanks[name]
        if blanks[name].any():
            how_many = "every row" if blanks[name].all() else "some rows"
            width = assumed_rule.apply(assumed_value)
            label = "relative humidity" if name == "humidity" else "CO2 mole fraction"
            shown = f"{assumed_value * 100:g} %" if name == "humidity" else f"{assumed_value:g}"
            shown_u = f"{width * 100:.1f} %" if name == "humidity" else f"{width:.2g}"
            notes.append(
                f"{label} not given for {how_many}: assumed {shown} with standard "
                f"uncertainty {shown_u}"
            )
        values[name] = np.where(blanks[name], assumed_value, values[name])
    return assumed_rows


def _uncertainties(values: dict, stated: dict, given: dict, assumed_rows: dict,
                   profile: InstrumentProfile, notes: list, in_use: dict) -> tuple[dict, dict]:
    """Give each input the stated uncertainty where there is one, else the profile's, and its shared part."""
    uncertainties: dict[str, np.ndarray] = {}
    shared: dict[str, np.ndarray] = {}
    defaulted = []
    for name in UNCERTAIN_INPUTS:
        default, default_shared = _profile_uncertainty(name, values, given, assumed_rows, profile)
        if name in stated:
            use_default = np.isnan(stated[name])
            uncertainties[name] = np.where(use_default, default, stated[name])
            use_default = use_default & in_use.get(name, True)
            # A u_<name> cell says nothing of calibration: it counts as run-to-run.
            shared[name] = np.where(use_default, default_shared, 0.0)
            if name in given:
                uncertainties[name] = np.where(given[name], uncertainties[name], 0.0)
                shared[name] = np.where(given[name], shared[name], 0.0)
        else:
            use_default = in_use.get(name, np.ones(len(values[name]), dtype=bool))
            uncertainties[name] = default
            shared[name] = default_shared
        # Assumed inputs have a note of their own; an air condition taken from the gas has none.
        if use_default.any() and name not in ASSUMED_INPUTS and (
            name not in given or (given[name] & use_default).any()
        ):
            defaulted.append(name)
    if defaulted:
        where = (profile.source if profile.source == "default profile"
                 else f"profile {profile.source}")
        notes.append(
            "no stated uncertainty for " + ", ".join(defaulted)
            + f" in some or all rows: used the values of the {where}"
        )
    return uncertainties, shared


def _profile_uncertainty(name: str, values: dict, given: dict, assumed_rows: dict,
                         profile: InstrumentProfile) -> tuple[np.ndarray, np.ndarray]:
    """Return the profile's uncertainty of one input and its shared part, row by row."""
    rule = profile.rule(name)
    if name in assumed_rows:
        _, assumed_rule = profile.assumed[name]
        rows = assumed_rows[name]
        return (np.where(rows, assumed_rule.apply(values[name]), rule.apply(values[name])),
                np.where(rows, assumed_rule.apply_shared(values[name]), rule.apply_shared(values[name])))
    if name in given:
        # Where the gas's value stands in, the gas's uncertainty already covers it.
        return (np.where(given[name], rule.apply(values[name]), 0.0),
                np.where(given[name], rule.apply_shared(values[name]), 0.0))
    return rule.apply(values[name]), rule.apply_shared(values[name])
