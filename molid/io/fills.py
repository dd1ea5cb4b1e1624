"""Reading water-fill weighings: a vessel weighed empty and full of water, one fill per row.

Columns (names case-insensitive, a unit in square brackets as in a run file):
``vessel`` (id), ``mass_empty`` and ``mass_water`` (balance readings, default g),
``water_temperature`` (default degC), ``pressure`` (balance-room air pressure,
default kPa), and optionally ``air_temperature`` (default: the water's),
``humidity`` (default %; the profile's assumed value when absent), ``material``
or ``expansion [1/K]``, ``date``, and ``u_<name>`` columns (``u_mass`` for both
readings, ``u_volume_fill`` for the filling repeatability). A bad row never stops
the others; a problem with the file as a whole raises :class:`InputError`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from molid.io.cells import blank_rows, column_text, parse_numbers
from molid.io.headers import Header, parse_header
from molid.io.problems import InputError, RowProblems
from molid.io.profiles import InstrumentProfile, load_profile
from molid.io.reading import read_raw
from molid.io.units import UnitProblem, resolve_unit
from molid.vessels.calibration import DEFAULT_MATERIAL, MATERIALS, material_name

__all__ = ["FILL_COLUMNS", "REQUIRED_FILL_COLUMNS", "FillTable", "read_fills"]

#: Measured columns of a fill file and their kinds.
FILL_COLUMNS = {"mass_empty": "mass", "mass_water": "mass", "water_temperature": "temperature",
                "air_temperature": "temperature", "pressure": "pressure", "humidity": "fraction"}
#: Columns every fill file needs.
REQUIRED_FILL_COLUMNS = ("vessel", "mass_empty", "mass_water", "water_temperature", "pressure")
#: Profile table giving each fill input's default uncertainty.
_PROFILE_TABLES = {"mass_empty": "mass_tare", "mass_water": "mass_filled",
                   "water_temperature": "temperature", "air_temperature": "air_temperature",
                   "pressure": "air_pressure", "humidity": "humidity"}
_ALIASES = {"air_pressure": "pressure", "mass_full": "mass_water", "mass_filled": "mass_water",
            "mass_tare": "mass_empty", "vessel_id": "vessel"}
_EXPANSION_UNITS = {"1/k", "/k", "k^-1", "k-1", "1/degc", "1/°c", "/°c", "1/c"}


@dataclass
class FillTable:
    """Validated water fills: ids, SI values, uncertainties and their shared parts, row problems.

    Attributes
    ----------
    row_numbers : numpy.ndarray of int
        Spreadsheet row of each fill (header = row 1).
    vessel : numpy.ndarray of object
        Vessel id of each fill (None where blank).
    dates : numpy.ndarray of object
        Fill date as ``YYYY-MM-DD`` (None where not given).
    values, uncertainties, shared : dict of numpy.ndarray
        SI values of the inputs of `molid.vessels.calibration.gravimetric_volume`
        (``expansion`` included), their standard uncertainties (``fill`` too), and
        the part common to all fills with the same instrument (from the profile).
    errors, warnings : list of list of str
        Per-row problems; a row with errors is not used.
    notes : list of str
        Remarks on the file as a whole.
    """

    row_numbers: np.ndarray
    vessel: np.ndarray
    dates: np.ndarray
    values: dict
    uncertainties: dict
    shared: dict
    errors: list
    warnings: list
    notes: list = field(default_factory=list)
    source: str = ""

    @property
    def ok(self) -> np.ndarray:
        """True for fills without errors."""
        return np.array([not problems for problems in self.errors], dtype=bool)


def _headers(columns, source: str) -> dict[str, Header]:
    """Parse the headers of a fill file; stop the file for a duplicate or a missing column."""
    by_name: dict[str, Header] = {}
    for column in columns:
        header = parse_header(column)
        name = _ALIASES.get(header.name, header.name)
        if name.startswith("u_"):
            name = "u_" + _ALIASES.get(name[2:], name[2:])
        if name in by_name:
            raise InputError(f"{source}: columns '{by_name[name].original}' and '{header.original}' "
                             f"both mean '{name}'; keep one")
        by_name[name] = Header(original=header.original, name=name, unit=header.unit)
    missing = [name for name in REQUIRED_FILL_COLUMNS if name not in by_name]
    if missing:
        raise InputError(f"{source}: required column(s) missing: {', '.join(missing)}. A water-fill "
                         f"file needs {', '.join(REQUIRED_FILL_COLUMNS)}")
    return by_name


def _unit(kind: str, header: Header | None, source: str):
    """Resolve a column's unit, or stop the file naming the column."""
    try:
        return resolve_unit(kind, header.unit if header else None)
    except UnitProblem as problem:
        raise InputError(f"{source}: column '{header.original}': {problem}") from None


def _measured(raw, by_name, source, problems, decimal_comma) -> tuple[dict, dict]:
    """Read each measured column in SI; errors for bad cells and blank required ones."""
    values, blanks = {}, {}
    for name, kind in FILL_COLUMNS.items():
        header = by_name.get(name)
        if header is None:
            values[name], blanks[name] = np.full(len(raw), np.nan), np.ones(len(raw), dtype=bool)
            continue
        unit = _unit(kind, header, source)
        cells = column_text(raw, header)
        numbers, blank, not_number = parse_numbers(cells, decimal_comma)
        original = cells.to_numpy()
        bad = not_number | np.isinf(numbers)
        problems.error(bad, lambda i, h=header, o=original, u=unit: (
            f"column '{h.original}': '{o[i]}' is not a number; expected a number in {u.text}"))
        if name in REQUIRED_FILL_COLUMNS:
            problems.error(blank, lambda i, h=header, u=unit: (
                f"column '{h.original}': the cell is empty; a value in {u.text} is required"))
        values[name] = np.where(bad, np.nan, numbers) * unit.scale + unit.offset
        blanks[name] = blank | bad
    return values, blanks


def _expansion(raw, by_name, source, problems, decimal_comma) -> np.ndarray:
    """Each fill's cubic expansion coefficient [1/K]: an ``expansion`` number, else the ``material``."""
    n = len(raw)
    result = np.full(n, MATERIALS[DEFAULT_MATERIAL][0])
    if "material" in by_name:
        cells = column_text(raw, by_name["material"]).str.strip()
        names = pd.Series([material_name(cell) if cell else DEFAULT_MATERIAL for cell in cells],
                          dtype=object)
        original = cells.to_numpy()
        problems.error(names.isna().to_numpy(), lambda i: (
            f"column '{by_name['material'].original}': '{original[i]}' is not a known material; "
            f"accepted: {', '.join(MATERIALS)}, or give an 'expansion [1/K]' column"))
        result = names.map(lambda name: MATERIALS[name][0] if name else np.nan).to_numpy(dtype=float)
    if "expansion" in by_name:
        header = by_name["expansion"]
        if header.unit is not None and header.unit.strip().lower().replace(" ", "") not in \
                _EXPANSION_UNITS:
            raise InputError(f"{source}: column '{header.original}': unit '{header.unit}' is not "
                             "accepted; give the cubic expansion coefficient in 1/K")
        cells = column_text(raw, header)
        numbers, blank, not_number = parse_numbers(cells, decimal_comma)
        original = cells.to_numpy()
        problems.error(not_number | np.isinf(numbers), lambda i: (
            f"column '{header.original}': '{original[i]}' is not a number; expected a cubic "
            "expansion coefficient in 1/K, e.g. 9.9e-6"))
        problems.error(~blank & ((numbers < 0) | (numbers > 1e-3)), lambda i: (
            f"column '{header.original}': {numbers[i]:g} /K is outside 0 to 0.001 /K; give the "
            "cubic (volume) expansion coefficient in 1/K"))
        result = np.where(blank, result, numbers)
    return result


def _dates(raw, by_name, problems) -> np.ndarray:
    """Each fill's date as YYYY-MM-DD, None where blank; an error where it is not a date."""
    if "date" not in by_name:
        return np.full(len(raw), None, dtype=object)
    cells = column_text(raw, by_name["date"]).str.strip()
    parsed = pd.to_datetime(cells.where(cells != ""), errors="coerce", format="mixed", dayfirst=False)
    bad = ((cells != "") & parsed.isna()).to_numpy()
    original = cells.to_numpy()
    problems.error(bad, lambda i: (f"column '{by_name['date'].original}': '{original[i]}' is not a "
                                   "date; write it as YYYY-MM-DD"))
    text = parsed.dt.strftime("%Y-%m-%d").to_numpy(dtype=object)
    return np.where(parsed.isna().to_numpy(), None, text)


def _stated(raw, by_name, source, notes, problems, decimal_comma) -> dict:
    """Read the standard uncertainties stated in ``u_`` columns, in SI (NaN where none)."""
    kinds = {**FILL_COLUMNS, "volume_fill": "volume", "expansion": None}
    stated: dict = {}
    for name, header in by_name.items():
        if not name.startswith("u_"):
            continue
        target = name[2:]
        targets = ("mass_empty", "mass_water") if target == "mass" else (target,)
        if target != "mass" and target not in kinds:
            notes.append(f"column '{header.original}' is not an uncertainty of a fill input and was "
                         "not used; uncertainty columns: u_mass, u_" + ", u_".join(kinds))
            continue
        kind = kinds[targets[0]]
        unit_header = header if header.unit else by_name.get(targets[0])
        scale = _unit(kind, unit_header, source).delta_scale if kind else 1.0
        cells = column_text(raw, header)
        numbers, blank, not_number = parse_numbers(cells, decimal_comma)
        original = cells.to_numpy()
        bad = not_number | np.isinf(numbers) | (numbers < 0)
        problems.error(bad, lambda i, h=header, o=original: (
            f"column '{h.original}': '{o[i]}' is not a standard uncertainty; give a number >= 0"))
        for item in targets:
            if item in stated and target == "mass":
                continue  # a column naming one reading beats u_mass
            stated[item] = np.where(blank | bad, np.nan, numbers) * scale
    return stated


def _check_fills(vessel, values, blanks, by_name, problems) -> None:
    """Errors for fills that cannot be: no id, no water gained, water outside 0-40 °C, and so on."""
    problems.error(pd.isna(pd.Series(vessel, dtype=object)).to_numpy(), lambda i: (
        f"column '{by_name['vessel'].original}': the vessel id is empty; name the vessel filled"))
    gained = values["mass_water"] - values["mass_empty"]
    problems.error(gained <= 0, lambda i: (
        f"columns '{by_name['mass_water'].original}'/'{by_name['mass_empty'].original}': the reading "
        f"with water is not above the empty reading (difference {gained[i] * 1e3:.6g} g); check "
        "the two readings"))
    celsius = values["water_temperature"] - 273.15
    problems.error((celsius < 0) | (celsius > 40), lambda i: (
        f"column '{by_name['water_temperature'].original}': water at {celsius[i]:.6g} °C is outside "
        "0-40 °C, the range of the water-density formula (Tanaka et al. 2001)"))
    if "air_temperature" in by_name:
        problems.error(values["air_temperature"] <= 0, lambda i: (
            f"column '{by_name['air_temperature'].original}': the temperature is at or below "
            "absolute zero"))
    problems.error(values["pressure"] <= 0, lambda i: (
        f"column '{by_name['pressure'].original}': the pressure must be > 0"))
    if "humidity" in by_name:
        humidity = values["humidity"]
        problems.error((humidity < 0) | (humidity > 1), lambda i: (
            f"column '{by_name['humidity'].original}': relative humidity {humidity[i] * 100:g} % is "
            "outside 0-100 %"))


def _check_one_material(vessel, expansion, row_numbers, problems) -> None:
    """Error where a vessel's fill gives another expansion coefficient than its first fill."""
    frame = pd.DataFrame({"vessel": vessel, "expansion": expansion, "row": row_numbers})
    first = frame.groupby("vessel", sort=False, dropna=True).transform("first")
    differs = (frame["vessel"].notna() & (first["expansion"] != frame["expansion"])
               & frame["expansion"].notna() & first["expansion"].notna()).to_numpy()
    problems.error(differs, lambda i: (
        f"column 'material': vessel '{vessel[i]}' has expansion {expansion[i]:g} /K here but "
        f"{first['expansion'].iloc[i]:g} /K in row {first['row'].iloc[i]}; one vessel is one material"))


def _uncertainties(values, blanks, stated, profile: InstrumentProfile, notes) -> tuple[dict, dict]:
    """Each input's standard uncertainty (stated, else the profile's) and its shared part."""
    uncertainties, shared = {}, {}
    for name, table in _PROFILE_TABLES.items():
        rule = profile.rule(table)
        default, default_shared = rule.apply(values[name]), rule.apply_shared(values[name])
        if name == "humidity":
            assumed_value, assumed_rule = profile.assumed["humidity"]
            values[name] = np.where(blanks[name], assumed_value, values[name])
            # One assumption for every fill: it does not average out.
            default = np.where(blanks[name], assumed_rule.apply(assumed_value), default)
            default_shared = np.where(blanks[name], default, default_shared)
        given = stated.get(name, np.full(len(default), np.nan))
        use_default = np.isnan(given)
        uncertainties[name] = np.where(use_default, default, given)
        shared[name] = np.where(use_default, default_shared, 0.0)
    uncertainties["fill"] = stated.get("volume_fill", np.full(len(values["mass_water"]), np.nan))
    if "expansion" in stated:
        uncertainties["expansion"] = stated["expansion"]
    if blanks["humidity"].any():
        value, rule = profile.assumed["humidity"]
        notes.append(f"relative humidity not given for some or all fills: assumed {value * 100:g} % "
                     f"with standard uncertainty {rule.apply(value) * 100:.1f} %")
    return uncertainties, shared


def read_fills(source, *, profile: InstrumentProfile | str | None = None) -> FillTable:
    """Read and validate a water-fill file (CSV, .xlsx or ``-`` for standard input).

    Parameters
    ----------
    source : str, pathlib.Path, file-like or pandas.DataFrame
        The fills, one per row (see the module's columns).
    profile : InstrumentProfile or path, optional
        Default uncertainties: ``mass`` for the readings, ``temperature`` for the
        water, ``air_temperature``, ``air_pressure`` and ``humidity`` for the air.

    Returns
    -------
    FillTable
        Every non-blank row, with its problems.

    Raises
    ------
    InputError
        For a file that cannot be read, a missing column, an unknown unit, or no data rows.
    """
    if profile is None or isinstance(profile, (str, Path)):
        profile = load_profile(profile)
    raw, decimal_comma, notes, name = read_raw(source)
    by_name = _headers(raw.columns, name)
    blank = blank_rows(raw)
    row_numbers = np.arange(2, 2 + len(raw))[~blank]
    raw = raw.loc[~blank].reset_index(drop=True)
    if len(raw) == 0:
        raise InputError(f"{name}: the file has a header but no data rows")
    problems = RowProblems(row_numbers)
    cells = column_text(raw, by_name["vessel"]).str.strip().to_numpy(dtype=object)
    vessel = np.where(cells == "", None, cells)
    values, blanks = _measured(raw, by_name, name, problems, decimal_comma)
    if blanks["air_temperature"].any():
        notes.append("air temperature not given for some or all fills: the water's temperature used")
    values["air_temperature"] = np.where(blanks["air_temperature"], values["water_temperature"],
                                         values["air_temperature"])
    values["expansion"] = _expansion(raw, by_name, name, problems, decimal_comma)
    stated = _stated(raw, by_name, name, notes, problems, decimal_comma)
    dates = _dates(raw, by_name, problems)
    _check_fills(vessel, values, blanks, by_name, problems)
    _check_one_material(vessel, values["expansion"], row_numbers, problems)
    uncertainties, shared = _uncertainties(values, blanks, stated, profile, notes)
    return FillTable(row_numbers=row_numbers, vessel=vessel, dates=dates, values=values,
                     uncertainties=uncertainties, shared=shared, errors=problems.errors,
                     warnings=problems.warnings, notes=notes, source=name)
