"""Diagnosis of classic calculation mistakes, on simulated student runs.

The runs are what a balance shows for gases whose densities come from CoolProp's
reference equations of state (tests/simulate.py); the students' results are
computed here, by a student's own arithmetic written out step by step, so the
mistakes are planted independently of the mistake models in molid.teaching.diagnosis.
"""

import zlib

import numpy as np
import pandas as pd
import pytest

from molid.io.profiles import load_profile
from molid.io.reading import read_runs
from molid.methods.mistakes import MISTAKE_CODES, UNEXPLAINED
from molid.methods.model import measurement_model
from molid.methods.registry import METHODS as REGISTERED_METHODS
from molid.pipeline.identify import model_inputs
from molid.teaching.diagnosis import mistake_model, mistake_variants
from molid.teaching.grading import grade, written_resolution

simulate = pytest.importorskip("simulate")
PropsSI = pytest.importorskip("CoolProp.CoolProp").PropsSI

#: Library name -> CoolProp fluid, the unknowns of a typical teaching lab.
GASES = {
    "nitrogen": "Nitrogen", "oxygen": "Oxygen", "argon": "Argon",
    "carbon dioxide": "CarbonDioxide", "n-butane": "n-Butane", "propane": "n-Propane",
    "sulfur hexafluoride": "SulfurHexafluoride", "R-134a": "R134a", "helium": "Helium",
}
METHODS = ("evacuated-bulb", "air-tare-bulb", "syringe")

# The student's constants, from the definitions (tests/reference_values.toml [grading]).
R_SI = 8.314462618            # J/(mol K) = kPa L/(mol K), CODATA 2018 / SI 2019
ATM_KPA = 101.325             # definition of the standard atmosphere
MMHG_PER_ATM = 760.0          # definition of the torr, mmHg equal to 1e-7 (common practice)
BAR_KPA = 100.0               # definition of the bar
CALORIE_J = 4.184             # thermochemical calorie
KPA_PER = {"kPa": 1.0, "atm": ATM_KPA, "mmHg": ATM_KPA / MMHG_PER_ATM, "bar": BAR_KPA}
R_IN = {  # numeric value of R for pressures in the unit and volumes in litres
    "kPa": R_SI, "atm": R_SI / ATM_KPA, "mmHg": R_SI / (ATM_KPA / MMHG_PER_ATM),
    "bar": R_SI / BAR_KPA,
}
R_CALORIE = R_SI / CALORIE_J

#: Every way the tests plant each mistake; each changes one step of the student's sum.
PLANTS = {
    "celsius-as-kelvin": ["celsius"],
    "volume-unit": ["mL as L"],
    "pressure-unit": [(read, used) for read in KPA_PER for used in KPA_PER
                      if read != used and {read, used} != {"atm", "bar"}],
    "gas-constant-units": [(fits, used) for fits in R_IN for used in [*R_IN, "cal"]
                           if fits != used and {fits, used} != {"atm", "bar"}],
    "no-buoyancy": ["no air"],
    "masses-swapped": ["swapped"],
}


def simulate_run(rng, gas, method, *, pressure_unit="kPa"):
    """Written cells (text) of one run and the air density the student is given [g/L]."""
    fluid = GASES[gas]
    T = 292.0 + 4.0 * rng.random()
    p = 98.5e3 + 4.0e3 * rng.random()
    rh = 0.25 + 0.5 * rng.random()
    volume_ml = 100.0 if method == "syringe" else 250.0 + 10.0 * rng.random()
    V = volume_ml * 1e-6
    density = PropsSI("D", "T", T, "P", p, fluid)
    rho_air = simulate.air_density(T, p, rh)
    tare, filled = simulate.readings(method, density * V, rho_air, V,
                                     glass=0.09 + 0.06 * rng.random())
    pressure = p / 1e3 / KPA_PER[pressure_unit]
    decimals = {"kPa": 2, "mmHg": 1, "atm": 5, "bar": 5}[pressure_unit]
    cells = {
        "method": method,
        "mass_tare [g]": f"{float(tare) * 1e3:.4f}",
        "mass_filled [g]": f"{float(filled) * 1e3:.4f}",
        "volume [mL]": f"{volume_ml:.2f}",
        "temperature [degC]": f"{T - 273.15:.2f}",
        f"pressure [{pressure_unit}]": f"{pressure:.{decimals}f}",
        "humidity [%]": f"{rh * 100:.0f}",
    }
    return cells, round(rho_air, 4)


def student_result(cells, rho_air, mistake=None, how=None):
    """Compute the molar mass as a student does, from the written cells [g/mol].

    Grams, litres, kelvin, the pressure converted to kPa and R = 8.314 J/(mol K);
    the displaced air's mass (rho_air in g/L) added for an air-tared bulb or syringe.
    """
    method = cells["method"]
    tare, filled = float(cells["mass_tare [g]"]), float(cells["mass_filled [g]"])
    volume_ml = float(cells["volume [mL]"])
    celsius = float(cells["temperature [degC]"])
    unit = next(key[10:-1] for key in cells if key.startswith("pressure ["))
    reading = float(cells[f"pressure [{unit}]"])
    air = rho_air * volume_ml / 1000.0 if method != "evacuated-bulb" else 0.0
    mass = filled - tare + air
    temperature = celsius + 273.15
    litres = volume_ml / 1000.0
    pressure = reading * KPA_PER[unit]
    constant = R_SI
    if mistake == "celsius-as-kelvin":
        temperature = celsius
    elif mistake == "volume-unit":
        litres = volume_ml
    elif mistake == "pressure-unit":
        read, used = how  # the reading was in `read`; the student converts it as `used`
        pressure = pressure / KPA_PER[read] * KPA_PER[used]
    elif mistake == "gas-constant-units":
        fits, used = how  # pressure in `fits` units, R taken for `used`
        pressure = pressure / KPA_PER[fits]
        constant = R_CALORIE if used == "cal" else R_IN[used]
    elif mistake == "no-buoyancy":
        mass = filled - tare
    elif mistake == "masses-swapped":
        mass = tare - filled + air
    elif mistake == UNEXPLAINED:
        mass = mass * how
    return mass * constant * temperature / (pressure * litres)


def _section(rows):
    frame = pd.DataFrame(rows).fillna("")
    return frame


def _diagnosed(rows):
    return grade(_section(rows)).grades


@pytest.mark.parametrize("method", METHODS)
def test_correct_runs_have_no_diagnosis(method):
    """Correct ideal-gas arithmetic on CoolProp-simulated readings gives an empty diagnosis.

    Readings from CoolProp's reference equations of state and humid-air model; the
    student's sum uses R = 8.314 462 618 J/(mol·K) (SI Brochure 2019).
    """
    rng = np.random.default_rng(11)
    rows = []
    for number, gas in enumerate(GASES):
        cells, rho_air = simulate_run(rng, gas, method)
        rows.append({"run": f"c{number}", "expected": gas, **cells,
                     "reported_molar_mass": f"{student_result(cells, rho_air):#.5g}"})
    grades = _diagnosed(rows)
    assert grades["error"].isna().all(), grades["error"].tolist()
    assert [list(codes) for codes in grades["diagnosis"]] == [[]] * len(rows)


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("mistake", MISTAKE_CODES)
def test_each_planted_mistake_gets_its_code(mistake, method):
    """Every way of making each mistake, on every method, is diagnosed with its code.

    Readings from CoolProp; each mistake planted in the student's own sum
    (``student_result``) with the defined units: 1 atm = 101.325 kPa (CGPM 1954),
    760 mmHg = 1 atm and 1 bar = 100 kPa (common practice), R = 8.314 462 618
    J/(mol·K) (SI Brochure 2019), 1 cal = 4.184 J. Worked cases with every number
    written out are in test_worked_cases.py.
    """
    if mistake not in REGISTERED_METHODS[method].mistakes:
        pytest.skip(f"not a mistake of the {method} method (e.g. an evacuated bulb displaces the "
                    "same air at both weighings; only a vapour flask has a room and a bath)")
    rng = np.random.default_rng(zlib.crc32(f"{mistake} {method}".encode()))
    files = {}  # one file per pressure unit: the readings are in the unit the student read
    gases = list(GASES)
    for number, how in enumerate(PLANTS[mistake]):
        gas = gases[number % len(gases)]
        unit = how[0] if isinstance(how, tuple) else "kPa"
        cells, rho_air = simulate_run(rng, gas, method, pressure_unit=unit)
        value = student_result(cells, rho_air, mistake, how)
        rows, planted = files.setdefault(unit, ([], []))
        rows.append({"run": f"m{number}", "expected": gas, **cells,
                     "reported_molar_mass": f"{value:#.5g}"})
        planted.append(how)
    for rows, planted in files.values():
        grades = _diagnosed(rows)
        for codes, how in zip(grades["diagnosis"], planted, strict=True):
            assert mistake in codes, (how, codes)
            assert UNEXPLAINED not in codes


def test_volume_in_litres_used_as_millilitres():
    """A volume column in litres, used as if in mL, is a volume-unit mistake (reverse case).

    1 L = 1000 mL (SI Brochure 2019); readings from CoolProp for argon.
    """
    rng = np.random.default_rng(5)
    cells, rho_air = simulate_run(rng, "argon", "evacuated-bulb")
    value = student_result(cells, rho_air) * 1000.0  # V in L taken as mL: 1000 times too big
    litres = f"{float(cells.pop('volume [mL]')) / 1000:.5f}"
    grades = _diagnosed([{"run": "v", "expected": "argon", **cells, "volume [L]": litres,
                          "reported_molar_mass": f"{value:#.5g}"}])
    assert grades["diagnosis"].iat[0] == ["volume-unit"]


def test_unexplained_slip():
    """A result 12 % off its own readings, by no classic mistake, is 'unexplained'.

    Checks behaviour: a slip that no variant reproduces gets the catch-all code and words.
    """
    rng = np.random.default_rng(7)
    rows = []
    for number, gas in enumerate(("carbon dioxide", "sulfur hexafluoride", "argon")):
        cells, rho_air = simulate_run(rng, gas, "air-tare-bulb")
        value = student_result(cells, rho_air, UNEXPLAINED, 1.12)
        rows.append({"run": f"u{number}", "expected": gas, **cells,
                     "reported_molar_mass": f"{value:#.5g}"})
    grades = _diagnosed(rows)
    assert [list(codes) for codes in grades["diagnosis"]] == [[UNEXPLAINED]] * 3
    assert all("no single classic mistake" in text for text in grades["diagnosis_text"])


def test_student_words_name_the_mistake():
    """The student sheet text says what was done (°C for K), in plain words.

    Checks behaviour: the wording of a diagnosis.
    """
    rng = np.random.default_rng(8)
    cells, rho_air = simulate_run(rng, "argon", "syringe")
    value = student_result(cells, rho_air, "celsius-as-kelvin")
    grades = _diagnosed([{"run": "t", "expected": "argon", **cells,
                          "reported_molar_mass": f"{value:#.4g}"}])
    assert grades["diagnosis"].iat[0] == ["celsius-as-kelvin"]
    assert grades["diagnosis_text"].iat[0] == (
        "your result is what you get if the temperature is used in °C instead of K")


def test_no_reported_value_no_diagnosis():
    """Without a reported value there is nothing to diagnose: an empty list.

    Checks behaviour.
    """
    rng = np.random.default_rng(9)
    cells, _ = simulate_run(rng, "oxygen", "syringe")
    grades = _diagnosed([{"run": "n", "expected": "oxygen", **cells}])
    assert grades["diagnosis"].iat[0] == []
    assert np.isnan(grades["reported_molar_mass"].iat[0])


def test_rounded_report_still_agrees():
    """A correct result written to three significant figures is not a mistake (GUM F.2.2.1)."""
    rng = np.random.default_rng(10)
    rows = []
    for number, gas in enumerate(GASES):
        cells, rho_air = simulate_run(rng, gas, "evacuated-bulb")
        rows.append({"run": f"r{number}", "expected": gas, **cells,
                     "reported_molar_mass": f"{student_result(cells, rho_air):#.3g}"})
    grades = _diagnosed(rows)
    assert [list(codes) for codes in grades["diagnosis"]] == [[]] * len(rows)


def test_written_resolution_reads_the_last_digit():
    """The resolution of a written number is one unit of its last digit (common practice)."""
    got = written_resolution(["59.96", "4.003", "4544.", "1.5e2", "-24.89", "28", "x"], 1e-3)
    expected = [1e-5, 1e-6, 1e-3, 1e-2, 1e-5, 1e-3, np.nan]  # 1.5e2: tens of g/mol
    np.testing.assert_allclose(got, expected, rtol=1e-12)


def test_mistake_model_correct_variant_is_the_measurement_model():
    """With no mistake, the mistake model reproduces molid's measurement model exactly.

    Checks behaviour: the diagnosis's correct variant is the identify pipeline's model.
    """
    rng = np.random.default_rng(12)
    rows = []
    for number, method in enumerate(METHODS * 3):
        cells, _ = simulate_run(rng, list(GASES)[number], method)
        rows.append({"run": f"k{number}", **cells})
    profile = load_profile()
    table = read_runs(_section(rows), profile=profile)
    values, _, static = model_inputs(table, profile)
    expected = measurement_model(**values, **static)["molar_mass"]
    zeros = np.zeros(len(table))
    got = mistake_model(**values, student_air_density=zeros, student_arithmetic=zeros,
                        **static, temperature_offset=zeros, volume_factor=zeros + 1,
                        pressure_factor=zeros + 1, gas_constant_factor=zeros + 1,
                        mass_mode=zeros.astype(int), room_temperature=zeros.astype(bool))["molar_mass"]
    np.testing.assert_array_equal(got, expected)


def test_pressure_and_gas_constant_factors_from_definitions(reference):
    """The variants' unit factors are the defined ratios of atm, mmHg, kPa, bar and R values.

    Sources in tests/reference_values.toml [grading]: CGPM 1954 Resolution 4
    (standard atmosphere), the SI Brochure's tables of non-SI units (mmHg, bar) and
    R in L·atm, L·Torr and cal units (from memory).
    """
    units = reference["grading"]["pressure_units"]
    constants = reference["grading"]["gas_constant_other_units"]
    kpa = {"kPa": 1.0, "atm": units["atm_kPa"], "mmHg": units["atm_kPa"] / units["mmHg_per_atm"],
           "bar": units["bar_kPa"]}
    wanted = {kpa[used] / kpa[read] for read in kpa for used in kpa if read != used}
    got = [v.pressure_factor for v in mistake_variants() if v.code == "pressure-unit"]
    assert len(got) == len(wanted)
    for factor in wanted:
        assert min(abs(g / factor - 1) for g in got) < units["tolerance_relative"]
    values = {"SI": R_SI, "atm": constants["litre_atm"], "torr": constants["litre_torr"],
              "bar": R_SI / units["bar_kPa"], "cal": constants["calorie"]}
    ratios = {values[b] / values[a] for a in values for b in values if a != b and a != "cal"}
    got = [v.gas_constant_factor for v in mistake_variants() if v.code == "gas-constant-units"]
    assert len(got) == len(ratios)
    for ratio in ratios:
        assert min(abs(g / ratio - 1) for g in got) < constants["tolerance_relative"] * 10


def test_rows_with_errors_are_not_diagnosed():
    """A run that cannot be evaluated gets no diagnosis, and the others still do.

    Checks behaviour: a bad row is named and does not stop the others.
    """
    rng = np.random.default_rng(13)
    cells, rho_air = simulate_run(rng, "argon", "syringe")
    wrong = student_result(cells, rho_air, "celsius-as-kelvin")
    broken = dict(cells, **{"volume [mL]": "-5"})
    grades = _diagnosed([
        {"run": "ok", "expected": "argon", **cells, "reported_molar_mass": f"{wrong:#.4g}"},
        {"run": "bad", "expected": "argon", **broken, "reported_molar_mass": "12.0"},
    ])
    assert grades["diagnosis"].tolist() == [["celsius-as-kelvin"], []]
    assert grades["error"].iat[1] and "volume" in grades["error"].iat[1]
