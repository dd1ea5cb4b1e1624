"""Property-based tests of the reader and the whole identify pipeline on hostile input."""

import io
import json
import re

import numpy as np
import pandas as pd
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from molid.io.json_document import to_json
from molid.io.problems import InputError
from molid.io.run_csv import to_csv
from molid.pipeline.identify import identify

COLUMNS = {
    "run": [""], "sample": [""], "method": [""],
    "mass_tare": ["", "g", "mg", "kg", "lb", "bogus"], "mass_filled": ["", "g", "mg"],
    "volume": ["", "mL", "L", "cm^3", "m^3"], "temperature": ["", "degC", "K", "degF", "°C"],
    "pressure": ["", "kPa", "Pa", "mmHg", "atm", "bar", "torr", "psi"],
    "humidity": ["", "%", "1"], "u_temperature": ["", "K"], "u_mass": ["", "mg"],
    "air_temperature": ["", "degC"], "wet": [""], "expected": [""], "notes": [""],
}
GOOD = {"mass_tare": "150.0000", "mass_filled": "150.9050", "volume": "500", "temperature": "21",
        "pressure": "100.8", "humidity": "40", "u_temperature": "0.2", "u_mass": "0.1",
        "air_temperature": "21.5"}
NASTY = ["", " ", "nan", "NaN", "inf", "-inf", "1e308", "-1e308", "1e-300", "0", "-0", "abc",
         "1,5", " 42 ", "=1+1", "<script>", "１２", "1e", "--3", "0x10", "∞", "None"]
cell = st.one_of(st.sampled_from(NASTY),
                 st.floats(allow_nan=True, allow_infinity=True).map(repr),
                 st.text(max_size=6))


@st.composite
def run_files(draw):
    chosen = ["run", "method", "mass_tare", "mass_filled", "volume", "temperature", "pressure"]
    chosen = [name for name in chosen if draw(st.floats(0, 1)) > 0.03]  # now and then drop one
    chosen += draw(st.lists(st.sampled_from(sorted(set(COLUMNS) - set(chosen))), unique=True,
                            max_size=5))
    headers = []
    for name in chosen:
        unit = draw(st.sampled_from(COLUMNS[name]))
        shown = draw(st.sampled_from([name, name.upper(), name.replace("_", " ")]))
        headers.append(f"{shown} [{unit}]" if unit else shown)
    rows = []
    for index in range(draw(st.integers(0, 12))):
        row = []
        for name in chosen:
            if name == "run":
                row.append(draw(st.sampled_from([f"r{index}", "dup", "", f"r{index}"])))
            elif name == "method":
                row.append(draw(st.sampled_from(["evacuated-bulb", "air-tare-bulb", "syringe",
                                                 "Syringe", "bulb", ""])))
            elif name == "wet":
                row.append(draw(st.sampled_from(["yes", "no", "", "maybe"])))
            elif name in GOOD and draw(st.booleans()):
                row.append(GOOD[name])
            else:
                row.append(draw(cell))
        rows.append(row)
    separator = draw(st.sampled_from([",", ";"]))
    encoding = draw(st.sampled_from(["utf-8", "utf-8-sig", "cp1252"]))
    frame = pd.DataFrame(rows, columns=headers) if rows else pd.DataFrame(columns=headers)
    text = frame.to_csv(index=False, sep=separator)
    return text.encode(encoding, errors="replace"), len(rows)


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(run_files())
def test_identify_never_crashes_and_accounts_for_every_row(case):
    """Checks behaviour: any file gives an InputError, or each row a result or an error naming it."""
    data, _ = case
    try:
        result = identify(io.BytesIO(data))
    except InputError:
        return
    table = result.table
    for index in range(len(table)):
        if result.errors[index]:
            assert all(re.match(rf"row {table.row_numbers[index]}\b", message)
                       for message in result.errors[index])
            assert np.isnan(result.molar_mass[index])
        else:
            assert np.isfinite(result.molar_mass[index]) and np.isfinite(result.u[index])
    document = json.loads(to_json(result))  # strict JSON: no NaN or inf leaks out
    assert len(document["results"]) == len(table)
    written = pd.read_csv(io.StringIO(to_csv(result)), dtype=str, keep_default_na=False)
    assert len(written) == len(table)


@settings(max_examples=60, deadline=None)
@given(st.lists(st.sampled_from(NASTY), min_size=7, max_size=7))
def test_every_bad_cell_is_named(cells):
    """Checks behaviour: nasty cells get errors naming row 2 and a column; the good row is analysed."""
    header = "run,method,mass_tare,mass_filled,volume,temperature,pressure"
    good = "ok,evacuated-bulb,150.0000,150.9050,500,21,100.8"
    bad = ",".join(f'"{item}"' for item in ["x", "syringe", *cells[2:]])
    result = identify(io.BytesIO(f"{header}\n{good}\n{bad}\n".encode()))
    assert not result.errors[0] and np.isfinite(result.molar_mass[0])
    for message in result.errors[1]:
        assert message.startswith("row 3")
