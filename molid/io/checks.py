"""Checks of parsed values: run ids, method names, and values that cannot be or look like a unit slip.

A value that cannot be (a volume of zero, a temperature below absolute zero) is
an error and stops its row; a value that is possible but unusual for gas
weighing (a gas at 21 K) is a warning with, where one fits, the unit the number
would make sense in.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from molid.io.columns import METHODS
from molid.io.headers import Header
from molid.io.problems import InputError, RowProblems
from molid.io.units import ColumnUnit, resolve_unit
from molid.methods.inputs import INPUT_LABELS
from molid.methods.registry import METHODS as REGISTERED_METHODS
from molid.methods.registry import REQUIRED_EVERYWHERE, required_by_all

__all__ = ["check_run_ids", "check_methods", "check_method_columns", "check_ranges",
           "check_unused_inputs", "inputs_in_use"]


def check_run_ids(run_ids: pd.Series, first_use: np.ndarray, problems: RowProblems) -> None:
    """Errors for empty and duplicate run ids.

    Parameters
    ----------
    run_ids : pandas.Series of object
        Run id of each row, None where blank.
    first_use : numpy.ndarray of int
        For each row, the row that first used its id; 0 where new.
    problems : RowProblems
        Where the errors go.
    """
    problems.error(run_ids.isna().to_numpy(),
                   lambda i: "column 'run': the run id is empty; give each run a unique id")
    ids = run_ids.to_numpy(dtype=object)
    problems.error(
        first_use > 0,
        lambda i: f"column 'run': duplicate run id '{ids[i]}' (first used in row "
        f"{first_use[i]}); run ids must be unique",
    )


def check_methods(methods: pd.Series, written: pd.Series, problems: RowProblems) -> None:
    """Errors for methods that are not registered (a blank method included).

    Parameters
    ----------
    methods : pandas.Series of object
        Normalised method names, None where blank.
    written : pandas.Series of str
        The method cells as the user wrote them, for the messages.
    problems : RowProblems
        Where the errors go.
    """
    unknown = ~methods.isin(list(METHODS)).to_numpy()
    original = written.to_numpy()
    problems.error(
        unknown,
        lambda i: f"column 'method': '{original[i]}' is not a method; accepted: "
        + ", ".join(METHODS),
    )


def check_ranges(values: dict, units: dict[str, ColumnUnit], by_name: dict[str, Header],
                 text: pd.DataFrame, problems: RowProblems) -> None:
    """Errors for values that cannot be; warnings for values that look like a unit slip.

    Parameters
    ----------
    values : dict of numpy.ndarray
        SI values of each measured column.
    units : dict of ColumnUnit
        The unit each column was written in, to quote values as the user wrote them.
    by_name : dict of Header
        The file's headers by column name.
    text : pandas.DataFrame
        The text columns; the method decides which readings must differ.
    problems : RowProblems
        Where the errors and warnings go.
    """
    volume = values["volume"]
    problems.error(
        volume <= 0,
        lambda i: f"column '{by_name['volume'].original}': the volume must be > 0 "
        f"(got {volume[i] / units['volume'].scale:g} {units['volume'].text})",
    )
    for name in ("temperature", "air_temperature"):
        if name in by_name:
            _check_temperature(name, values[name], units[name], by_name[name], problems)
    for name in ("pressure", "air_pressure"):
        if name in by_name:
            _check_pressure(name, values[name], units[name], by_name[name], problems)
    _check_fractions(values, by_name, problems)
    odd_volume = (volume > 0) & ((volume < 1e-6) | (volume > 20e-3))
    problems.warn(
        odd_volume,
        lambda i: f"volume {_as_written(volume[i], units['volume']):g} {units['volume'].text} is "
        "unusual for a bulb or syringe; check the volume unit",
    )
    _check_method_rows(values, units, text, problems)


def _check_temperature(name: str, absolute: np.ndarray, unit: ColumnUnit, header: Header,
                       problems: RowProblems) -> None:
    """Error at or below absolute zero; warning outside 200-700 K."""
    problems.error(
        absolute <= 0,
        lambda i: (
            f"column '{header.original}': {_as_written(absolute[i], unit):g} "
            f"{unit.text} is at or below absolute zero; give a temperature above 0 K"
        ),
    )
    odd = (absolute > 0) & ((absolute < 200.0) | (absolute > 700.0))
    problems.warn(
        odd,
        lambda i: (
            f"{name.replace('_', ' ')} {_as_written(absolute[i], unit):g} "
            f"{unit.text}" + (f" = {absolute[i]:.1f} K" if unit.scale != 1
                              or unit.offset != 0 else "")
            + " is unusual for gas weighing"
            + _temperature_hint(unit, _as_written(absolute[i], unit))
        ),
    )


def _check_pressure(name: str, pressure: np.ndarray, unit: ColumnUnit, header: Header,
                    problems: RowProblems) -> None:
    """Error at or below zero; warning outside 10-250 kPa."""
    problems.error(
        pressure <= 0,
        lambda i: f"column '{header.original}': the pressure must be > 0",
    )
    odd = (pressure > 0) & ((pressure < 10e3) | (pressure > 250e3))
    problems.warn(
        odd,
        lambda i: (
            f"{name.replace('_', ' ')} {_as_written(pressure[i], unit):g} "
            f"{unit.text}" + (f" = {pressure[i] / 1000:.4g} kPa"
                              if unit.text != "kPa" else "")
            + " is unusual for a gas in glass"
            + _pressure_hint(pressure[i], unit)
        ),
    )


def _check_fractions(values: dict, by_name: dict[str, Header], problems: RowProblems) -> None:
    """Errors for a relative humidity outside 0-100 % and a CO2 fraction outside 0-0.05."""
    if "humidity" in by_name:
        humidity = values["humidity"]
        problems.error(
            (humidity < 0) | (humidity > 1),
            lambda i: f"column '{by_name['humidity'].original}': relative humidity "
            f"{humidity[i] * 100:g} % is outside 0-100 %",
        )
    if "co2" in by_name:
        co2 = values["co2"]
        problems.error(
            (co2 < 0) | (co2 > 0.05),
            lambda i: f"column '{by_name['co2'].original}': a CO2 mole fraction of "
            f"{co2[i]:g} is outside 0 to 0.05",
        )


def _check_method_rows(values: dict, units: dict[str, ColumnUnit], text: pd.DataFrame,
                       problems: RowProblems) -> None:
    """Errors where a row's readings are impossible for its method (each method's own checks)."""
    method = text["method"].to_numpy(dtype=object)

    def written(name, value):
        return f"{_as_written(value, units[name]):.6g} {units[name].text}"

    for name, entry in REGISTERED_METHODS.items():
        mine = method == name
        if not mine.any():
            continue
        # rows already in error (a missing input filled by a default) are not judged again
        clean = np.fromiter((not row for row in problems.errors), dtype=bool, count=len(method))
        for mask, message in entry.row_checks(values, written):
            problems.error(mine & clean & mask, message)


def _as_written(value_si: float, unit: ColumnUnit) -> float:
    """Convert a SI value back to the unit the user wrote it in."""
    return (value_si - unit.offset) / unit.scale


def _temperature_hint(unit: ColumnUnit, written: float) -> str:
    """Name another unit in which the number would be a lab temperature, if one fits."""
    for candidate in ("degC", "K", "degF"):
        if candidate == unit.text:
            continue
        converted = written * resolve_unit("temperature", candidate).scale + resolve_unit(
            "temperature", candidate
        ).offset
        if 273.0 <= converted <= 400.0:
            return f"; it would be a lab temperature in {candidate}"
    return ""


def _pressure_hint(value_si: float, unit: ColumnUnit) -> str:
    """Name another unit in which the number would be a room pressure, if one fits."""
    written = _as_written(value_si, unit)
    for candidate in ("mmHg", "inHg", "atm", "bar", "Pa", "hPa", "psi", "kPa"):
        if candidate == unit.text:
            continue
        if 80e3 <= written * resolve_unit("pressure", candidate).scale <= 110e3:
            return f"; the number would be an ordinary room pressure in {candidate}"
    return ""


def check_wet(method: pd.Series, wet: np.ndarray, problems: RowProblems) -> np.ndarray:
    """Error where a run says its gas is wet but its method cannot hold a wet gas; return the flags.

    A gas collected over water is always wet (its ``humidity`` says how much).

    Parameters
    ----------
    method : pandas.Series
        Each row's method name.
    wet : numpy.ndarray of bool
        The ``wet`` flags.
    problems : RowProblems
        Where the errors go.

    Returns
    -------
    numpy.ndarray of bool
        The flags, True also on every row of a method whose gas is always wet.
    """
    names = method.to_numpy(dtype=object)
    wet = np.asarray(wet, dtype=bool).copy()
    for method_name, entry in REGISTERED_METHODS.items():
        if entry.always_wet:
            wet |= names == method_name
        elif not entry.accepts_wet:
            problems.error((names == method_name) & wet, lambda i, method_name=method_name: (
                f"column 'wet': {_article(method_name)} {method_name} run holds the substance's own "
                "vapour, not a gas saturated with water; leave 'wet' empty or 'no'"))
    return wet


def check_method_inputs(method: pd.Series, blanks: dict, by_name: dict[str, Header],
                        problems: RowProblems, typed: dict | None = None) -> None:
    """Error where a run's method needs an input that its row leaves blank or the file lacks.

    Parameters
    ----------
    method : pandas.Series
        Each row's method name.
    blanks : dict of numpy.ndarray
        Per measured column, True where the row gives no usable value.
    by_name : dict of Header
        The file's headers by column name.
    problems : RowProblems
        Where the errors go.
    typed : dict of numpy.ndarray, optional
        Per column, True where the cell holds any text: such a cell that gives no
        number already has its own error, and is not called empty.
    """
    names = method.to_numpy(dtype=object)
    typed = typed or {}
    for method_name, entry in REGISTERED_METHODS.items():
        mine = names == method_name
        if not mine.any():
            continue
        for name in entry.required_inputs:
            if name in REQUIRED_EVERYWHERE:
                continue  # the file-level check and the cell check already cover these
            label = INPUT_LABELS.get(name, name)
            if name not in by_name:
                problems.error(mine, lambda i, name=name, label=label, method_name=method_name: (
                    f"column '{name}' is missing; {_article(method_name)} {method_name} run needs it "
                    f"({label})"))
            else:
                original = by_name[name].original
                empty = blanks[name] & ~typed.get(name, np.zeros(len(names), dtype=bool))
                problems.error(mine & empty, lambda i, original=original, label=label,
                               method_name=method_name: (
                    f"column '{original}': the cell is empty; {_article(method_name)} {method_name} "
                    f"run needs it ({label})"))


def check_method_columns(method: pd.Series, by_name: dict[str, Header], source: str) -> None:
    """Refuse a file that lacks a column every one of its methods needs.

    Parameters
    ----------
    method : pandas.Series
        Each row's method name (unknown names are ignored).
    by_name : dict of Header
        The file's headers by column name.
    source : str
        The file's name, for the message.

    Raises
    ------
    InputError
        Naming the missing columns and the methods that need them: no row of
        the file could be analysed.
    """
    used = [name for name in pd.unique(method.dropna()) if name in REGISTERED_METHODS]
    missing = [name for name in required_by_all(used) if name not in by_name
               and name not in REQUIRED_EVERYWHERE]
    if missing:
        raise InputError(
            f"{source}: required column(s) missing: {', '.join(missing)}; every "
            f"{', '.join(used)} run needs them. Found: "
            + ", ".join(f"'{header.original}'" for header in by_name.values()))


def inputs_in_use(method: pd.Series) -> dict:
    """Which rows use each measured input that not every method uses.

    Parameters
    ----------
    method : pandas.Series
        Each row's method name.

    Returns
    -------
    dict of numpy.ndarray of bool
        Per input that some method does not use: True on the rows whose method
        uses it (requires or takes it when given), and on rows of unknown method.
    """
    names = method.to_numpy(dtype=object)
    known = np.isin(names, list(REGISTERED_METHODS))
    inputs = set().union(*(set(entry.required_inputs) | set(entry.optional_inputs)
                           for entry in REGISTERED_METHODS.values()))
    in_use = {}
    for name in sorted(inputs):
        users = [method_name for method_name, entry in REGISTERED_METHODS.items()
                 if name in entry.required_inputs or name in entry.optional_inputs]
        if len(users) < len(REGISTERED_METHODS):
            in_use[name] = np.isin(names, users) | ~known
    return in_use


def check_unused_inputs(in_use: dict, blanks: dict, by_name: dict[str, Header],
                        method: pd.Series, problems: RowProblems) -> None:
    """Warn where a row gives a value its method does not use (it is kept in the outputs, not used).

    Parameters
    ----------
    in_use : dict of numpy.ndarray of bool
        From :func:`inputs_in_use`.
    blanks : dict of numpy.ndarray
        Per measured column, True where the row gives no usable value.
    by_name : dict of Header
        The file's headers by column name.
    method : pandas.Series
        Each row's method name.
    problems : RowProblems
        Where the warnings go.
    """
    names = method.to_numpy(dtype=object)
    for name, rows in in_use.items():
        if name in by_name:
            original = by_name[name].original
            problems.warn(~rows & ~blanks[name], lambda i, original=original: (
                f"column '{original}' is not used by {_article(names[i])} {names[i]} run; its value "
                "is ignored"))


def _article(word: str) -> str:
    """Return "an" before a vowel sound, else "a" (method names: "an evacuated-bulb run")."""
    return "an" if str(word)[:1].lower() in "aeiou" else "a"
