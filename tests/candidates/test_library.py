"""Tests for molid.candidates.library: the candidate data file, its loader, merging and look-ups."""

import math
import re

import numpy as np
import pandas as pd
import pytest
from chemicals import acentric, critical, phase_change
from chemicals.dipole import dipole_moment
from chemicals.elements import atoms_to_Hill, simple_formula_parser
from chemicals.identifiers import search_chemical

from molid.candidates.library import (
    DEFAULT_LIBRARY_PATH,
    FILE_COLUMNS,
    LIBRARY_COLUMNS,
    POLAR_CLASSES,
    LibraryError,
    load_library,
)
from molid.candidates.search import find_candidate, search_library
from molid.physics.formulas import hill_formula, molar_mass

# Substances the library must hold, by CAS registry number (CAS numbers from memory;
# each is checked against the formula chemicals files under it, below).
REQUIRED = {
    "helium": "7440-59-7", "neon": "7440-01-9", "argon": "7440-37-1",
    "krypton": "7439-90-9", "xenon": "7440-63-3", "radon": "10043-92-2",
    "hydrogen": "1333-74-0", "nitrogen": "7727-37-9", "oxygen": "7782-44-7",
    "carbon monoxide": "630-08-0", "nitric oxide": "10102-43-9",
    "nitrogen dioxide": "10102-44-0", "nitrous oxide": "10024-97-2",
    "carbon dioxide": "124-38-9", "ammonia": "7664-41-7", "hydrogen sulfide": "7783-06-4",
    "sulfur dioxide": "7446-09-5", "hydrogen chloride": "7647-01-0",
    "hydrogen bromide": "10035-10-6", "hydrogen fluoride": "7664-39-3",
    "chlorine": "7782-50-5", "fluorine": "7782-41-4", "silane": "7803-62-5",
    "phosphine": "7803-51-2", "boron trifluoride": "7637-07-2",
    "sulfur hexafluoride": "2551-62-4", "nitrogen trifluoride": "7783-54-2",
    "carbon tetrafluoride": "75-73-0", "hexafluoroethane": "76-16-4",
    "carbonyl sulfide": "463-58-1", "carbon disulfide": "75-15-0",
    "methane": "74-82-8", "ethane": "74-84-0", "propane": "74-98-6",
    "n-butane": "106-97-8", "isobutane": "75-28-5", "ethylene": "74-85-1",
    "propylene": "115-07-1", "acetylene": "74-86-2", "propyne": "74-99-7",
    "1-butene": "106-98-9", "cis-2-butene": "590-18-1", "trans-2-butene": "624-64-6",
    "isobutene": "115-11-7", "1,3-butadiene": "106-99-0", "cyclopropane": "75-19-4",
    "dimethyl ether": "115-10-6", "chloromethane": "74-87-3", "vinyl chloride": "75-01-4",
    "ethylene oxide": "75-21-8", "R-32": "75-10-5", "R-125": "354-33-6",
    "R-134a": "811-97-2", "R-143a": "420-46-2", "R-152a": "75-37-6", "R-22": "75-45-6",
    "R-23": "75-46-7", "R-1234yf": "754-12-1", "R-1234ze(E)": "29118-24-9",
    "water": "7732-18-5", "methanol": "67-56-1", "ethanol": "64-17-5",
    "1-propanol": "71-23-8", "2-propanol": "67-63-0", "acetone": "67-64-1",
    "diethyl ether": "60-29-7", "n-pentane": "109-66-0", "n-hexane": "110-54-3",
    "cyclohexane": "110-82-7", "dichloromethane": "75-09-2", "chloroform": "67-66-3",
    "ethyl acetate": "141-78-6", "benzene": "71-43-2", "toluene": "108-88-3",
    "air": "132259-10-0",
}  # fmt: skip

AIR_CAS = "132259-10-0"

# Differences from the chemicals database larger than the tolerances, each explained
# in the row's note; the note must name the property and mention chemicals.
DOCUMENTED_DEVIATIONS = {
    ("10043-92-2", "acentric_factor"): "radon: no measured value at hand; 0 like Ar, Kr, Xe",
    ("7782-50-5", "critical_pressure"): "chlorine: published values scatter by 4 %",
    ("7664-39-3", "acentric_factor"): "hydrogen fluoride associates; value ill-defined",
    ("7803-62-5", "acentric_factor"): "silane: Edmister estimate supports the stored value",
    ("74-86-2", "critical_pressure"): "acetylene: CRC/Poling value kept",
    ("60-29-7", "critical_pressure"): "diethyl ether: reference-EOS value kept",
    ("75-09-2", "critical_pressure"): "dichloromethane: Kobe & Lynn value kept",
    ("67-66-3", "critical_pressure"): "chloroform: Poling/CRC value kept",
    ("74-89-5", "critical_pressure"): "methylamine: Poling value kept",
    ("74-83-9", "critical_pressure"): "bromomethane: from memory, less certain",
    ("74-83-9", "acentric_factor"): "bromomethane: Edmister estimate supports stored value",
    ("56-23-5", "molar_mass"): "CCl4: conventional Cl atomic weight 35.45 vs 35.453",
    (AIR_CAS, "acentric_factor"): "air: value given with the Lemmon et al. 2000 model",
    ("64-17-5", "dipole_moment"): "ethanol: gas-phase 1.69 D kept",
    ("110-82-7", "dipole_moment"): "cyclohexane: zero by symmetry",
}

# (CAS, property) pairs chemicals has no value for; checked so the list cannot go stale.
NOT_IN_CHEMICALS = {
    (AIR_CAS, "molar_mass"),
    (AIR_CAS, "normal_boiling_point"),
    (AIR_CAS, "dipole_moment"),
    ("7440-63-3", "dipole_moment"),
    ("10043-92-2", "dipole_moment"),
    ("811-97-2", "dipole_moment"),
    ("754-12-1", "dipole_moment"),
    ("29118-24-9", "dipole_moment"),
    ("1634-04-4", "dipole_moment"),
    ("431-89-0", "dipole_moment"),
    ("460-73-1", "dipole_moment"),
    ("102687-65-0", "dipole_moment"),
}

PROPERTY_WORDS = {
    "critical_temperature": "critical temperature",
    "critical_pressure": "critical pressure",
    "acentric_factor": "acentric factor",
    "normal_boiling_point": "boiling point",
    "molar_mass": "molar mass",
    "dipole_moment": "dipole moment",
}

# GHS/CLP hazard-class abbreviations (Regulation (EC) 1272/2008, Annex VI, Table 1.1),
# plus the OSHA HazCom 2012 "Simple asphyxiant" and a radioactivity marker.
GHS_CLASS = re.compile(
    r"(Flam\. Gas (1A|1B|2)|Flam\. Liq\. [1-3]|Ox\. Gas 1|Pyr\. Gas|Chem\. Unst\. Gas [AB]"
    r"|Press\. Gas \((Comp\.|Liq\.|Diss\.|Ref\. Liq\.)\)"
    r"|Acute Tox\. [1-4] \((oral|dermal|inhal\.)\)"
    r"|Skin Corr\. 1[ABC]?|Skin Irrit\. 2|Eye Dam\. 1|Eye Irrit\. 2|STOT SE [1-3]|STOT RE [12]"
    r"|Carc\. (1A|1B|2)|Muta\. (1A|1B|2)|Repr\. (1A|1B|2)|Asp\. Tox\. 1|Aquatic Acute 1"
    r"|Aquatic Chronic [1-4]|Ozone 1|Simple asphyxiant|Radioactive .*)"
)


@pytest.fixture(scope="module")
def library():
    return load_library()


@pytest.fixture(scope="module")
def tolerances(reference):
    return reference["library"]["chemicals_tolerances"]


def _chemicals_value(cas, name):
    """Look a property up in the chemicals database by CAS number, in the library's SI units."""
    if name == "molar_mass":
        try:
            return search_chemical(cas).MW * 1e-3
        except ValueError:
            return None
    lookup = {
        "critical_temperature": critical.Tc,
        "critical_pressure": critical.Pc,
        "acentric_factor": acentric.omega,
        "normal_boiling_point": phase_change.Tb,
        "dipole_moment": dipole_moment,
    }[name]
    return lookup(cas)


def _within(name, value, expected, tolerances):
    if name == "molar_mass":
        return abs(value - expected) * 1e3 <= tolerances["molar_mass_absolute"]
    if name == "acentric_factor":
        allowed = max(
            tolerances["acentric_factor_absolute"],
            tolerances["acentric_factor_relative"] * abs(expected),
        )
        return abs(value - expected) <= allowed
    if name == "dipole_moment":
        allowed = max(
            tolerances["dipole_moment_absolute"],
            tolerances["dipole_moment_relative"] * abs(expected),
        )
        return abs(value - expected) <= allowed
    relative = {
        "critical_temperature": tolerances["critical_temperature_relative"],
        "critical_pressure": tolerances["critical_pressure_relative"],
        "normal_boiling_point": tolerances["normal_boiling_point_relative"],
    }[name]
    return abs(value / expected - 1) <= relative


@pytest.mark.parametrize("name", list(PROPERTY_WORDS))
def test_values_agree_with_chemicals(library, tolerances, name):
    """Molar mass, Tc, Pc, omega, Tb and dipole agree with the chemicals database by CAS.

    Source: chemicals 1.5 (Caleb Bell et al.), looked up by CAS number; tolerances in
    tests/reference_values.toml [library.chemicals_tolerances]. A larger difference
    must be listed in DOCUMENTED_DEVIATIONS and explained in the row's note.
    """
    failures = []
    for row in library.itertuples():
        key = (row.cas, name)
        expected = _chemicals_value(row.cas, name)
        if expected is None:
            if key not in NOT_IN_CHEMICALS:
                failures.append(f"{row.name}: chemicals has no {name}; list it or fix the CAS")
            continue
        if key in NOT_IN_CHEMICALS:
            failures.append(f"{row.name}: chemicals now has {name}; remove it from the list")
        agrees = _within(name, getattr(row, name), expected, tolerances)
        if key in DOCUMENTED_DEVIATIONS:
            note = row.note.casefold()
            if agrees:
                failures.append(f"{row.name}: {name} now agrees; the exception is stale")
            elif "chemicals" not in note or PROPERTY_WORDS[name] not in note:
                failures.append(f"{row.name}: note does not explain the {name} difference")
        elif not agrees:
            failures.append(f"{row.name}: {name} {getattr(row, name):g} vs chemicals {expected:g}")
    assert not failures, "\n".join(failures)


def test_formula_matches_chemicals_formula_for_the_cas_number(library):
    """Each formula is the one chemicals 1.5 files under the row's CAS (catches CAS typos)."""
    failures = []
    for row in library[library["formula"] != ""].itertuples():
        theirs = atoms_to_Hill(simple_formula_parser(search_chemical(row.cas).formula))
        if row.hill != theirs:
            failures.append(f"{row.name} ({row.cas}): {row.hill} vs chemicals {theirs}")
    assert not failures, "\n".join(failures)


def test_air_molar_mass_from_the_cipm_2007_composition(library, reference):
    """Air's stored molar mass equals the CIPM-2007 composition weighted by periodictable masses.

    Source: Picard et al., Metrologia 45 (2008) 149, composition of dry air and
    M_a = 28.96546 g/mol at x(CO2) = 0.0004 (tests/reference_values.toml [library.dry_air]).
    """
    entry = reference["library"]["dry_air"]
    fractions = np.array(entry["mole_fractions"])
    masses = np.array([molar_mass(component) for component in entry["components"]])
    from_composition = float(fractions @ masses / fractions.sum()) * 1e3
    stored = library.loc[find_candidate(library, "air"), "molar_mass"] * 1e3
    assert stored == pytest.approx(entry["molar_mass"], abs=1e-9)
    assert from_composition == pytest.approx(stored, abs=entry["tolerance_absolute"])


def test_air_uncertainty_is_the_co2_variation_stated_in_its_note(library):
    """u(M_air) = 12.011 g/mol x 0.0004 / sqrt(3): x_CO2 anywhere in 0-800 µmol/mol.

    Sources: the CIPM-2007 CO2 slope 12.011 g/mol (Picard et al., Metrologia 45 (2008) 149; from
    memory) and a rectangular half-width a -> a/√3 (GUM, JCGM 100:2008, 4.3.7).
    """
    row = library.loc[find_candidate(library, "air")]
    assert row.u_molar_mass * 1e3 == pytest.approx(12.011 * 0.0004 / math.sqrt(3), abs=1e-4)
    assert "√3" in row.note


def test_library_size_and_required_substances(library):
    """Checks behaviour: at least 80 entries, and every required substance is present by CAS number.

    The CAS numbers are from memory; test_formula_matches_chemicals_formula_for_the_cas_number
    checks each row's CAS against chemicals 1.5.
    """
    assert len(library) >= 80
    missing = {name for name, cas in REQUIRED.items() if cas not in set(library["cas"])}
    assert not missing


def test_no_duplicate_names_cas_or_lookup_keys(library):
    """Checks behaviour: names and CAS numbers are unique, and no name or alias finds two rows."""
    assert not library["name"].str.casefold().duplicated().any()
    assert not library["cas"].duplicated().any()
    owners = {}
    for index, row in library.iterrows():
        for label in [row["name"], *row["aliases"]]:
            assert find_candidate(library, label) == index, label
            owners.setdefault(label.casefold(), set()).add(index)
    assert all(len(rows) == 1 for rows in owners.values())


def test_polar_class_vocabulary_and_small_dipoles_explained(library):
    """Checks behaviour: polar_class is in the vocabulary; weakly polar 'nonpolar' rows say so.

    That polar classes need a dipole above about 0.3 D is common practice for the Tsonopoulos
    correlation (Tsonopoulos, AIChE J. 20 (1974) 263).
    """
    assert set(library["polar_class"]) <= set(POLAR_CLASSES)
    weakly_polar = library[(library["polar_class"] == "nonpolar") & (library["dipole_moment"] > 0)]
    unexplained = [
        row.name
        for row in weakly_polar.itertuples()
        if "nonpolar for the virial correlation" not in row.note
    ]
    assert not unexplained
    polar = library[~library["polar_class"].isin(["nonpolar", "quantum"])]
    assert (polar["dipole_moment"] > 0.3).all()


def test_quantum_gases(library):
    """H2, D2, He and Ne are the quantum gases (common practice)."""
    quantum = set(library.loc[library["polar_class"] == "quantum", "name"])
    assert quantum == {"hydrogen", "deuterium", "helium", "neon"}


def test_source_columns_filled(library):
    """Checks behaviour: every row names a source for its critical data, dipole moment and GHS classes."""
    for column in ("source_critical", "source_dipole", "source_ghs"):
        assert (library[column].str.strip() != "").all(), column


def test_ghs_entries_are_hazard_classes(library):
    """Every GHS entry is a GHS/CLP hazard class with its category.

    Source: the hazard-class abbreviations of Regulation (EC) No 1272/2008 (CLP), Annex VI (from memory).
    """
    bad = [
        (row.name, entry)
        for row in library.itertuples()
        for entry in row.ghs_hazards
        if not GHS_CLASS.fullmatch(entry)
    ]
    assert not bad


def test_ghs_hazards_present_for_hazardous_gases(library):
    """Known flammable, toxic and pressurised gases carry the classes one expects (common practice).

    Only water has no GHS classification among the library's substances.
    """
    unclassified = set(library.loc[library["ghs_hazards"].map(len) == 0, "name"])
    assert unclassified == {"water"}

    def classes(name):
        return " ; ".join(library.loc[find_candidate(library, name), "ghs_hazards"])

    for name in ("hydrogen", "methane", "propane", "n-butane", "ethylene", "acetylene"):
        assert "Flam. Gas 1A" in classes(name), name
    for name in (
        "hydrogen sulfide",
        "carbon monoxide",
        "chlorine",
        "ammonia",
        "sulfur dioxide",
        "hydrogen chloride",
        "phosphine",
        "hydrogen fluoride",
    ):
        assert "Acute Tox." in classes(name), name
    for name in ("oxygen", "nitrous oxide", "fluorine", "chlorine"):
        assert "Ox. Gas 1" in classes(name), name
    # Anything boiling below 0 °C is sold in a cylinder (radon is not a cylinder gas).
    cold = library[(library["normal_boiling_point"] < 273.15) & (library["name"] != "radon")]
    assert all(any(e.startswith("Press. Gas") for e in row) for row in cold["ghs_hazards"])


def test_stored_formulas_are_hill_and_molar_masses_blank():
    """Checks behaviour: the data file stores Hill formulas and types no molar mass for a pure substance."""
    raw = pd.read_csv(DEFAULT_LIBRARY_PATH, dtype=str, keep_default_na=False)
    assert tuple(raw.columns) == FILE_COLUMNS
    pure = raw[raw["formula"] != ""]
    assert (pure["formula"].map(hill_formula) == pure["formula"]).all()
    assert (pure["molar_mass_g_per_mol"] == "").all()
    assert (pure["u_molar_mass_g_per_mol"] == "").all()
    assert set(raw.loc[raw["formula"] == "", "name"]) == {"air"}


def test_loaded_table_is_si(library):
    """Columns and units: CO2 M [kg/mol] from periodictable, Pc [Pa] = 7.3773 MPa x 1e6.

    Source: Span & Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509 (pc of CO2, from memory).
    """
    assert tuple(library.columns) == LIBRARY_COLUMNS
    row = library.loc[find_candidate(library, "carbon dioxide")]
    assert row.molar_mass == pytest.approx(search_chemical("124-38-9").MW * 1e-3, abs=1e-5)
    assert row.critical_pressure == pytest.approx(7.3773e6)
    assert row.u_molar_mass == 0.0
    assert row.has_critical_data
    assert row.origin == "default"
    assert isinstance(row.aliases, list) and "R-744" in row.aliases


def test_cache_returns_independent_copies():
    """Checks behaviour: mutating a loaded table, its list cells included, does not change the next load."""
    first = load_library()
    first.loc[0, "critical_temperature"] = -1.0
    first.loc[0, "aliases"].append("tampered")
    second = load_library()
    assert second.loc[0, "critical_temperature"] > 0
    assert "tampered" not in second.loc[0, "aliases"]


USER_HEADER = ",".join(FILE_COLUMNS)


def _write(tmp_path, lines, name="mine.csv"):
    path = tmp_path / name
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def test_merge_replaces_by_name_or_cas_and_adds_new_rows(tmp_path, library):
    """Checks behaviour: user rows replace default rows sharing a name or CAS; new rows are added."""
    path = _write(tmp_path, [
        "name,formula,cas,critical_temperature_K,critical_pressure_MPa,acentric_factor",
        "Carbon Dioxide,CO2,124-38-9,304.0,7.38,0.225",
        "methyl argon,CH4,74-82-8,190.0,4.6,0.011",
        "cyclobutane,C4H8,287-23-0,460.0,4.98,0.18",
    ])  # fmt: skip
    merged = load_library(path)
    assert len(merged) == len(library) + 1
    replaced = merged.loc[find_candidate(merged, "124-38-9")]
    assert replaced["name"] == "Carbon Dioxide" and replaced.critical_temperature == 304.0
    assert replaced.origin == "mine.csv"
    assert find_candidate(merged, "methane") is None
    assert merged.loc[find_candidate(merged, "74-82-8"), "name"] == "methyl argon"
    added = merged.loc[find_candidate(merged, "cyclobutane")]
    assert added.molar_mass == pytest.approx(search_chemical("287-23-0").MW * 1e-3, abs=1e-5)
    assert added.polar_class == "nonpolar" and added.dipole_moment == 0.0


def test_replace_mode_uses_only_the_user_file(tmp_path):
    """Checks behaviour: in replace mode the user file is the whole library; a formula-only row has no Tc."""
    path = _write(tmp_path, ["name,formula", "krypton,Kr", "xenon,Xe"])
    replaced = load_library(path, mode="replace")
    assert list(replaced["name"]) == ["krypton", "xenon"]
    assert not replaced["has_critical_data"].any()
    assert replaced["critical_temperature"].isna().all()


def test_extra_candidates(library):
    """Checks behaviour: --candidate FORMULA[=name] adds rows without critical data; M from periodictable.

    Source: chemicals MW of formaldehyde (CAS 50-00-0).
    """
    extended = load_library(extra_candidates=["CH2O=formaldehyde", "C5H8", "CO2"])
    assert len(extended) == len(library) + 2
    added = extended.loc[find_candidate(extended, "formaldehyde")]
    assert added.molar_mass == pytest.approx(search_chemical("50-00-0").MW * 1e-3, abs=1e-5)
    assert not added.has_critical_data and math.isnan(added.critical_temperature)
    assert added.origin == "--candidate"
    assert find_candidate(extended, "C5H8") is not None
    # same name, same formula: already there, nothing added
    assert len(load_library(extra_candidates=["CO2=carbon dioxide"])) == len(library)


def test_extra_candidate_errors_are_collected():
    """Checks behaviour: bad --candidate strings are reported together, each quoted."""
    with pytest.raises(LibraryError) as caught:
        load_library(extra_candidates=["Xy2", "CH4=carbon dioxide", "CO="])
    message = str(caught.value)
    assert "3 problems in --candidate options" in message
    assert "'Xy2'" in message and "unknown element" in message
    assert "already used for CO2" in message
    assert "empty name after '='" in message


def test_validation_reports_every_problem_with_row_and_column(tmp_path):
    """Checks behaviour: a broken user file gives one LibraryError naming each row (header = 1) and column."""
    path = _write(tmp_path, [
        USER_HEADER,
        "gas a,CO2,124-38-9,,304,7.4,0.22,195,0,nonpolar,,,,,,,",         # row 2: fine
        ",N2,,,126,3.4,0.04,77,0,nonpolar,,,,,,,",                         # 3: missing name
        "gas b,Xy3,,,100,1,0.1,50,0,nonpolar,,,,,,,",                      # 4: bad formula
        "gas c,Ar,,,hot,4.9,0,87,0,nonpolar,,,,,,,",                       # 5: Tc not a number
        "gas d,Kr,,,209,-5,0,120,0,nonpolar,,,,,,,",                       # 6: negative Pc
        "gas e,Xe,,,290,5.8,3.5,165,0,nonpolar,,,,,,,",                    # 7: omega > 2
        "gas f,NH3,,,405,11.3,0.25,240,1.47,very polar,,,,,,,",            # 8: polar class
        "Gas A,He,,,5.2,0.23,-0.38,4.2,0,quantum,,,,,,,",                  # 9: duplicate name
        "gas g,Ne,124-38-8,,44,2.7,-0.04,27,0,quantum,,,,,,,",             # 10: CAS digit
        "gas h,CH4,,,190,,,111,0,nonpolar,,,,,,,",                         # 11: partial
        "gas i,C2H6,,,305,4.9,0.1,185,0,nonpolar,30.07,,,,,,",             # 12: typed M
    ])  # fmt: skip
    with pytest.raises(LibraryError) as caught:
        load_library(path)
    message = str(caught.value)
    assert message.startswith(f"10 problems in {path}:")
    expected = [
        "row 3, column 'name': missing name",
        "row 4, column 'formula': not a chemical formula: 'Xy3': unknown element Xy",
        "row 5, column 'critical_temperature_K': 'hot' is not a number",
        "row 6, column 'critical_pressure_MPa': -5 must be above zero",
        "row 7, column 'acentric_factor': 3.5 outside -0.5 to 2.0",
        "row 8, column 'polar_class': unknown polar class 'very polar'",
        "row 9, column 'name': duplicate name 'Gas A' (also row 2)",
        "row 10, column 'cas': '124-38-8': check digit should be 9",
        "row 11, column 'critical_temperature_K': incomplete critical data",
        "row 12, column 'molar_mass_g_per_mol': a molar mass is given",
    ]
    for text in expected:
        assert text in message, text
    assert "accepted: one of nonpolar, quantum," in message
    assert "row 2" not in message.replace("(also row 2)", "")


def test_validation_unknown_column_and_separator_hint(tmp_path):
    """Checks behaviour: an unknown header is row 1; a semicolon-separated export gets a hint."""
    with pytest.raises(LibraryError, match=r"row 1, column 'boiling': unknown column"):
        load_library(_write(tmp_path, ["name,formula,boiling", "argon,Ar,87"]))
    with pytest.raises(LibraryError, match=r"row 1, column 'name': column appears more than once"):
        load_library(_write(tmp_path, ["name,formula,name", "argon,Ar,x"], name="twice.csv"))
    with pytest.raises(LibraryError, match=r"seems to use ';'"):
        load_library(_write(tmp_path, ["name;formula", "argon;Ar"], name="semi.csv"))


def test_unreadable_files_are_library_errors(tmp_path):
    """Checks behaviour: a missing, empty or ragged file is a LibraryError naming the file, not a crash."""
    with pytest.raises(LibraryError, match="cannot be opened"):
        load_library(tmp_path / "absent.csv")
    with pytest.raises(LibraryError, match="the file is empty"):
        load_library(_write(tmp_path, [""], name="empty.csv"))
    with pytest.raises(LibraryError, match="row 2: 3 fields where the header has 2"):
        load_library(_write(tmp_path, ["name,formula", "argon,Ar,extra"], name="ragged.csv"))


def test_validation_row_numbers_survive_blank_lines(tmp_path):
    """Checks behaviour: blank lines are skipped but still counted, as a spreadsheet shows them."""
    path = _write(tmp_path, ["name,formula", "argon,Ar", "", "bad,Qq"])
    with pytest.raises(LibraryError, match=r"row 4, column 'formula'"):
        load_library(path, mode="replace")


@pytest.mark.parametrize(
    "label, name",
    [
        ("carbon dioxide", "carbon dioxide"),
        ("Carbon Dioxide", "carbon dioxide"),
        ("R-744", "carbon dioxide"),
        ("124-38-9", "carbon dioxide"),
        ("CO2", "carbon dioxide"),
        ("CO₂", "carbon dioxide"),
        ("co2", "carbon dioxide"),
        ("nh3", "ammonia"),
        ("R134a", "R-134a"),
        ("norflurane", "R-134a"),
        ("1,1,1,2-tetrafluoroethane", "R-134a"),
        ("2-methylpropane", "isobutane"),
        ("R-600a", "isobutane"),
        ("CH3CH2OH", "ethanol"),
        ("CH3OCH3", "dimethyl ether"),
        ("HCl", "hydrogen chloride"),
        ("D2", "deuterium"),
        ("dry air", "air"),
    ],
)
def test_find_candidate_by_name_alias_cas_formula(library, label, name):
    """Checks behaviour: labels a user types in an 'expected' column find the right row.

    Aliases (R-744, norflurane, R-600a) are the ASHRAE 34 refrigerant numbers and common names
    (common practice).
    """
    assert library.loc[find_candidate(library, label), "name"] == name


@pytest.mark.parametrize(
    "label", ["C4H10", "C3H2F4", "C2H6O", "C4H8", "c4h10", "", "xyz", "Co", "no", "unobtainium"]
)
def test_find_candidate_ambiguous_or_unknown(library, label):
    """Checks behaviour: isomers by formula are ambiguous (None); Co is cobalt, not CO; 'no' is not NO."""
    assert find_candidate(library, label) is None


def test_search_library(library):
    """Checks behaviour: substring search over names/aliases/formulas/CAS and a molar-mass window [g/mol].

    That CO2, N2O, propane and ethylene oxide all lie near 44.0-44.1 g/mol is common practice.
    """
    assert set(search_library(library, "butene")["name"]) == {
        "1-butene",
        "cis-2-butene",
        "trans-2-butene",
        "isobutene",
    }
    assert set(search_library(library, "CH3CH2OH")["name"]) == {"ethanol", "dimethyl ether"}
    near_44 = search_library(library, molar_mass_window=(43.9, 44.2))
    assert set(near_44["name"]) == {"carbon dioxide", "nitrous oxide", "propane", "ethylene oxide"}
    both = search_library(library, "oxide", molar_mass_window=(43.9, 44.2))
    assert set(both["name"]) == {"carbon dioxide", "nitrous oxide", "ethylene oxide"}
    assert len(search_library(library)) == len(library)
    with pytest.raises(ValueError, match="low end is above the high end"):
        search_library(library, molar_mass_window=(50, 40))
