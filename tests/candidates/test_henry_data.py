"""Tests of the Henry's-law data file molid/data/henry.csv: coverage of the library's gases and its values.

The values are checked against the IAPWS G7-04 guideline (iapws package) and against the Sander compilation
as shipped with the thermo package; the collectable column against the file's own rule (H^cp·R·T above about
5, or a reaction with water).
"""

import csv
import json
import math
from pathlib import Path

import pytest

from molid.candidates.dissolution import HENRY_PATH, henry_constants, load_henry_table, not_collectable
from molid.candidates.library import load_library

#: 20 °C: a substance whose normal boiling point lies below it is a gas on the bench (common practice).
ROOM_TEMPERATURE = 293.15

#: H^cp·R·T at 298.15 K above which more than five volumes of the gas dissolve in one volume of water, so
#: that most of a sample collected over an equal volume of water is lost (the rule in henry.csv's header).
DIMENSIONLESS_LIMIT = 5.0

#: Library gases (normal boiling point below 20 °C) deliberately without a row in henry.csv, and why.
WITHOUT_ROW = {
    # No value in any source read for the file: the compilation's web edition was not at hand for these and
    # thermo (0.6.1) ships no Sander entry for them.
    "deuterium": "no source read; expected close to hydrogen",
    "fluorine": "no source read; it reacts with water (to HF and O2), but the file needs a number for a row",
    "boron trifluoride": "no source read; it hydrolyses, but the file needs a number for a row",
    "silane": "no source read",
    "R-143a": "no source read",
    "R-1234yf": "no source read",
    "R-1234ze(E)": "no source read",
    "R-245fa": "no source read",
    "R-1233zd(E)": "no source read",
    # thermo's two Sander tables disagree by more than a factor 1.4 (the factor in brackets), or give no
    # temperature dependence, and the compilation's web edition was not at hand to decide between them.
    "1-butene": "thermo tables disagree (3.0)",
    "cis-2-butene": "thermo gives no temperature dependence",
    "trans-2-butene": "thermo gives no temperature dependence",
    "1,3-butadiene": "thermo tables disagree (6.9)",
    "cyclopropane": "thermo tables disagree (3.9)",
    "vinyl chloride": "thermo tables disagree (4.6)",
    "neopentane": "thermo tables disagree (1.7)",
    "R-125": "thermo tables disagree (3.4)",
    "R-41": "thermo tables disagree (2.7)",
    "R-218": "thermo tables disagree (2.2)",
    "R-227ea": "thermo tables disagree (16)",
}

#: Gases that react with water or ionise in it, so cannot be collected over it whatever their physical
#: constant (common practice: acids, bases and hydrolysing gases are collected by displacing air or over
#: mercury).
REACTIVE_OR_IONISING = ["nitrogen dioxide", "hydrogen bromide", "hydrogen fluoride", "hydrogen chloride",
                        "ammonia", "methylamine", "dimethylamine", "trimethylamine", "ethylene oxide",
                        "hydrogen cyanide"]


def _rows():
    with HENRY_PATH.open(encoding="utf-8", newline="") as handle:
        return list(csv.DictReader(line for line in handle if not line.startswith("#")))


def _library_gases():
    library = load_library()
    return library[library["normal_boiling_point"] < ROOM_TEMPERATURE]


def test_every_library_gas_has_a_row_or_a_reason_to_have_none():
    """Checks behaviour: each library gas at 20 °C and 1 atm has a row or is listed in WITHOUT_ROW."""
    gases = set(_library_gases()["name"])
    table = load_henry_table()
    with_row = {name for name in gases if name.lower() in table}
    assert gases - with_row == set(WITHOUT_ROW)
    assert all(name.lower() not in table for name in WITHOUT_ROW)
    assert len(with_row) >= 50


def test_not_collectable_rows_give_a_reason_clause():
    """Checks behaviour: a refused gas has a reason reading as a lower-case clause; not_collectable agrees."""
    refused = [row for row in _rows() if row["collectable"] == "no"]
    for row in refused:
        reason = row["reason"].strip()
        assert reason and reason[0].islower() and not reason.endswith("."), row["name"]
    assert not_collectable([row["name"] for row in refused]).all()


def test_very_soluble_or_reactive_gases_are_not_collectable():
    """Checks behaviour: rows with H^cp·R·T above 5 at 298.15 K, and the reactive gases, are collectable = no.

    The limit is the file's own rule; that acids, bases and hydrolysing gases are not collected over water is
    common practice.
    """
    gas_constant = 8.314462618  # J/(mol·K), SI 2019 exact
    for row in _rows():
        dimensionless = float(row["henry_cp_298_mol_per_m3_Pa"]) * gas_constant * 298.15
        if dimensionless > DIMENSIONLESS_LIMIT:
            assert row["collectable"] == "no", (row["name"], dimensionless)
    assert not_collectable(REACTIVE_OR_IONISING).all()


# Gas names as the iapws package spells them (IAPWS G7-04, H2O solvent).
IAPWS_GASES = {"helium": "He", "neon": "Ne", "argon": "Ar", "krypton": "Kr", "xenon": "Xe", "hydrogen": "H2",
               "nitrogen": "N2", "oxygen": "O2", "carbon monoxide": "CO", "carbon dioxide": "CO2",
               "hydrogen sulfide": "H2S", "methane": "CH4", "ethane": "C2H6", "sulfur hexafluoride": "SF6"}


def _iapws_henry_cp(temperature, gas):
    """H^cp [mol/(m³·Pa)] from IAPWS G7-04's k_H (iapws 1.5) and the IAPWS-95 density of water at 1 atm."""
    import warnings

    from iapws import IAPWS95
    from iapws._iapws import _Henry

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        molar_density = IAPWS95(T=temperature, P=0.101325).rho / 18.015268e-3  # mol/m³ (IAPWS-95 M_w)
        return molar_density / (_Henry(temperature, gas) * 1e6)  # k_H in MPa -> Pa


@pytest.mark.parametrize("name", sorted(IAPWS_GASES))
def test_constants_against_iapws_guideline(name):
    """H^cp(298.15 K) within 10 % and d ln H/d(1/T) within 400 K of IAPWS G7-04 (iapws 1.5).

    IAPWS G7-04 (Fernández-Prini, Alvarez and Harvey 2003) gives k_H = lim f/x; H^cp = c_w/k_H with the
    IAPWS-95 molar density of water. The tolerances are the scatter among the compilation's own
    literature-review entries for these gases (xenon 4.2e-5 to 4.5e-5 mol/(m³·Pa); SF6 2100 K to 3100 K;
    helium 15 K to 320 K), not the guideline's uncertainty.
    """
    gas = IAPWS_GASES[name]
    step = 0.5
    reference = _iapws_henry_cp(298.15, gas)
    rise = math.log(_iapws_henry_cp(298.15 + step, gas)) - math.log(_iapws_henry_cp(298.15 - step, gas))
    slope = rise / (1.0 / (298.15 + step) - 1.0 / (298.15 - step))
    henry_298, temperature_dependence = henry_constants([name])
    assert henry_298[0] == pytest.approx(reference, rel=0.10)
    assert abs(temperature_dependence[0] - slope) < 400.0


#: Water's molar density at 298.15 K [mol/m³] (IAPWS-95 997.047 kg/m³ over 18.01528 g/mol), the factor the
#: existing handbook test uses to turn H_px into H^cp.
WATER_MOLAR_DENSITY = 55344.59


def _thermo_sander_tables():
    thermo = pytest.importorskip("thermo")
    folder = Path(thermo.__file__).parent / "Interaction Parameters"
    tables = []
    for file_name in ("Sander_henry_const.json", "Sander_henry_T_dep.json"):
        with (folder / file_name).open(encoding="utf-8") as handle:
            tables.append(json.load(handle)["data"])
    return tables


def test_constants_against_thermo_sander():
    """Each row agrees with the Sander compilation as shipped with thermo 0.6.1, within its scatter.

    thermo keeps two tables per (gas, water) pair, ln(H_px/Pa) = A + B/T: one constant-only, one with a
    temperature dependence; it does not say which entry of the compilation each keeps, and for some gases
    they differ by a factor 2 to 16 (carbonyl sulfide's constant-only value is 0.16 of the compilation's
    recommended 2.0e-4, bromomethane's temperature-dependent one 0.18 of 1.7e-3). So H^cp must lie within a
    factor 1.5 of the closer of the two (the spread of the compilation's type-L and type-M entries for a gas,
    e.g. chloromethane 7.9e-4 to 1.3e-3), and the slope within 1000 K of thermo's wherever that table's
    H^cp is within 25 % of the row's (entries for one gas span 1600 K to 3400 K for methyl mercaptan).
    Hydrogen chloride is left out: its row is the physical solubility of a strong acid, on which the
    compilation's own entries span 1.1e-2 to 25 mol/(m³·Pa).
    """
    constant_only, temperature_dependent = _thermo_sander_tables()
    library = load_library()
    cas_of = dict(zip(library["name"], library["cas"], strict=True))
    compared = 0
    for row in _rows():
        if row["name"] == "hydrogen chloride":
            continue
        key = f"{cas_of[row['name']]} 7732-18-5"
        henry = float(row["henry_cp_298_mol_per_m3_Pa"])
        candidates = []
        if key in constant_only:
            candidates.append(WATER_MOLAR_DENSITY / math.exp(constant_only[key]["A"]))
        if key in temperature_dependent:
            entry = temperature_dependent[key]
            thermo_henry = WATER_MOLAR_DENSITY / math.exp(entry["A"] + entry["B"] / 298.15)
            candidates.append(thermo_henry)
            if row["d_ln_henry_d_inverse_T_K"] and abs(math.log(thermo_henry / henry)) < math.log(1.25):
                assert abs(float(row["d_ln_henry_d_inverse_T_K"]) + entry["B"]) < 1000.0, row["name"]
        if not candidates:
            continue
        compared += 1
        closest = min(abs(math.log(value / henry)) for value in candidates)
        assert closest < math.log(1.5), (row["name"], henry, candidates)
    assert compared >= 50


#: CIPM-2007 dry-air mole fractions of the four main components (Picard et al., Metrologia 45 (2008) 149,
#: Table 1; from memory).
CIPM_2007_AIR = {"nitrogen": 0.780848, "oxygen": 0.209390, "argon": 0.009332, "carbon dioxide": 0.0004}


def test_air_row_is_the_mole_fraction_weighted_sum():
    """Air's row is the CIPM-2007-weighted sum of the N2, O2, Ar and CO2 rows (Henry's law per component).

    Dissolved amount = V_w Σ H_i p y_i, so H_air = Σ y_i H_i; its slope is Σ y_i H_i s_i / H_air. Two
    significant digits in the file, hence 1 % and 30 K.
    """
    names = sorted(CIPM_2007_AIR)
    henry, slope = henry_constants(names)
    fractions = [CIPM_2007_AIR[name] for name in names]
    weighted = sum(y * h for y, h in zip(fractions, henry, strict=True))
    weighted_slope = sum(y * h * s for y, h, s in zip(fractions, henry, slope, strict=True)) / weighted
    air_henry, air_slope = henry_constants(["air"])
    assert air_henry[0] == pytest.approx(weighted, rel=0.01)
    assert abs(air_slope[0] - weighted_slope) < 30.0
