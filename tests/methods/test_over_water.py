"""Gas collected over water: pressures against IAPWS-95, simulated lighter runs against CoolProp.

Independent references: the water's saturation pressure and density from IAPWS-95
(the ``iapws`` package, IAPWS R6-95(2018)); the gases' densities from CoolProp's
reference equations of state (n-butane: Bücker and Wagner 2006; isobutane: Bücker
and Wagner 2006; propane: Lemmon et al. 2009); the air from CoolProp's humid-air
model (ASHRAE RP-1485). Dalton's law and the hydrostatic equation are common practice.
"""

import numpy as np
import pandas as pd
import pytest
from CoolProp import CoolProp
from iapws import IAPWS95

from molid.cli import main
from molid.methods.over_water import dry_gas_pressure, released_mass, simulate_readings
from molid.pipeline.identify import identify
from molid.teaching.grading import grade
from tests.simulate import air_density

G_N = 9.80665  # m/s², standard acceleration of free fall (3rd CGPM, 1901)


def _water(temperature, pressure=101325.0):
    """IAPWS-95 saturation pressure [Pa] and liquid density [kg/m³] at the given pressure."""
    return IAPWS95(T=temperature, x=0).P * 1e6, IAPWS95(T=temperature, P=pressure / 1e6).rho


@pytest.mark.parametrize("celsius", [10.0, 15.0, 20.0, 25.0, 30.0, 35.0])
def test_dry_gas_pressure_against_iapws(celsius):
    """p_dry = p − ρw·g·h − p_sat,w within 2 Pa of IAPWS-95 at 100.5 kPa and a 75 mm column.

    2 Pa is 2e-5 of the pressure: the Wagner–Pruss auxiliary equation reproduces
    IAPWS-95's saturation pressure to about 0.01 % (Wagner and Pruss 2002), and
    Tanaka et al. (2001) its density to about 1e-5.
    """
    T = celsius + 273.15
    saturation, density = _water(T, 100.5e3)
    expected = 100.5e3 - density * G_N * 0.075 - saturation
    assert float(dry_gas_pressure(100.5e3, T, 0.075)) == pytest.approx(expected, abs=2.0)


def test_released_mass_by_hand():
    """Loss 0.1500 g in air of 1.2 kg/m³: 0.1500 × (1 − 1.2/8000) = 0.149 977 5 g (OIML D 28:2004)."""
    assert float(released_mass(15.2e-3, 15.05e-3, 1.2)) == pytest.approx(0.1499775e-3, rel=1e-9)


#: Fluids a teaching lab releases from lighters and small cylinders (library name, CoolProp name).
GASES = [("n-butane", "n-Butane"), ("isobutane", "IsoButane"), ("propane", "Propane")]


def _lighter_runs(rng, repeats, noise=1.0, column_range=(0.0, 0.08), balance=0.001, tube=0.5):
    """Over-water runs from CoolProp gas densities and IAPWS-95 water, with teaching noise.

    The collected gas is the pure gas at its partial pressure p_dry, saturated with
    water; its cross virial coefficient with the water vapour (a mole fraction of about
    0.03) is neglected, which moves its density by a few 1e-4, well inside the
    run's uncertainty. Noise: ``balance`` per reading [g] (1 mg), ``tube`` [mL] on the
    volume (0.5 mL), 0.3 K, 0.1 kPa, 2 mm of column.
    """
    rows = []
    for name, fluid in GASES:
        for repeat in range(repeats):
            T = rng.uniform(291.0, 298.0)
            barometer = rng.uniform(98.0e3, 102.5e3)
            column = rng.uniform(*column_range)
            volume = rng.uniform(40e-6, 95e-6)
            saturation, density = _water(T, barometer)
            p_dry = barometer - density * G_N * column - saturation
            gas = CoolProp.PropsSI("D", "T", T, "P", p_dry, fluid) * volume
            before, after = simulate_readings(gas, air_density(T, barometer, 0.5), volume,
                                              glass_mass=14.9e-3)

            def normal(sd):
                return rng.normal(0.0, sd * noise)
            rows.append({
                "run": f"{name}-{repeat}", "method": "over-water", "expected": name,
                "source_before [g]": f"{before * 1e3 + normal(balance):.6f}",
                "source_after [g]": f"{after * 1e3 + normal(balance):.6f}",
                "u_mass [g]": f"{balance:g}",
                "volume [mL]": f"{volume * 1e6 + normal(tube):.3f}", "u_volume [mL]": f"{tube:g}",
                "temperature [K]": f"{T + normal(0.3):.3f}", "u_temperature [K]": "0.3",
                "pressure [kPa]": f"{barometer / 1e3 + normal(0.1):.3f}", "u_pressure [kPa]": "0.1",
                # a level read at or just below the outside one is written as 0
                "water_column [mm]": f"{max(column * 1e3 + normal(2.0), 0.0):.1f}",
                "u_water_column [mm]": "2",
            })
    return pd.DataFrame(rows)


def _true_z(result, position, name):
    return next(item["z"] for item in result.ranking.run_candidates(position, None)
                if item["name"] == name)


def test_noise_free_lighter_runs_recover_the_molar_mass():
    """Noise-free runs: the true gas's own value (M·Z) is its molar mass within 0.15 %.

    The references are CoolProp's densities and IAPWS-95's water; what is left is the
    virial correlation's Z: 1 − Z is about 0.03 for the butanes, and the Tsonopoulos
    B differs from the reference equations of state by up to about 4 % (measured:
    n-butane −0.07 %, isobutane −0.11 %, propane −0.03 %).
    """
    frame = _lighter_runs(np.random.default_rng(3), repeats=2, noise=0.0)
    result = identify(frame)
    assert result.ok.all(), result.errors
    for position, name in enumerate(frame["expected"]):
        item = next(item for item in result.ranking.run_candidates(position, None) if item["name"] == name)
        assert item["measured"]["value"] == pytest.approx(item["molar_mass"], rel=1.5e-3), name


def test_lighter_runs_cover_the_true_gas():
    """Simulated runs with teaching-lab noise: the true gas's |z| ≤ 2 in about 95 % of runs.

    Over 3 × 30 runs at least 88 % within 2 and 50 % within 1 (binomial slack on 90 runs).
    Measured on 3 × 200 runs (seed 7): 95.5 % within |z| ≤ 2, 70.5 % within |z| ≤ 1.
    """
    frame = _lighter_runs(np.random.default_rng(20261203), repeats=30)
    result = identify(frame)
    assert result.ok.all(), result.errors
    zs = np.abs([_true_z(result, position, name) for position, name in enumerate(frame["expected"])])
    assert np.mean(zs <= 2.0) >= 0.88, np.sort(zs)[-10:]
    assert np.mean(zs <= 1.0) >= 0.5


SHEET = (
    "run,method,source_before [g],source_after [g],volume [mL],temperature [degC],pressure [kPa],"
    "water_column [mm]\n"
    "W1,over-water,15.2034,15.0712,55.0,21.5,100.9,40\n"
    "W2,over-water,15.0712,15.2034,55.0,21.5,100.9,40\n"
    "W3,over-water,15.2034,15.0712,55.0,21.5,100.9,-12\n"
    "W4,over-water,15.2034,15.0712,0,21.5,100.9,40\n"
    "W5,over-water,15.2034,15.0712,55.0,55.0,100.9,40\n"
    "W6,over-water,15.2034,15.0712,55.0,21.5,100.9,4000\n"
    "W7,over-water,15.2034,15.0712,55.0,21.5,100.9,\n"
)


def test_rows_that_cannot_be(tmp_path):
    """Checks behaviour: each impossible row gets an error naming its row and column; the rest run."""
    path = tmp_path / "water.csv"
    path.write_text(SHEET, encoding="utf-8")
    result = identify(path)
    errors = {row: " ".join(problems) for row, problems in zip(result.table.row_numbers, result.errors,
                                                               strict=True)}
    assert errors[2] == "" and errors[8] == ""
    assert "row 3" in errors[3] and "source_before" in errors[3] and "lose" in errors[3]
    assert "row 4" in errors[4] and "water_column" in errors[4] and "negative" in errors[4]
    assert "row 5" in errors[5] and "volume" in errors[5]
    assert "row 6" in errors[6] and "temperature" in errors[6] and "40" in errors[6]
    assert "row 7" in errors[7] and "longer than any" in errors[7]
    assert any("equalised" in note for note in result.table.notes)


def test_missing_source_columns_stop_an_over_water_file(tmp_path, capsys):
    """Checks behaviour: a file of over-water runs without source_after is refused (exit 2)."""
    path = tmp_path / "water.csv"
    path.write_text("run,method,source_before,volume,temperature,pressure\n"
                    "W1,over-water,15.2,55,21.5,100.9\n", encoding="utf-8")
    assert main(["identify", str(path)]) == 2
    assert "source_after" in capsys.readouterr().err


def test_a_mixed_file_errs_only_the_rows_that_lack_their_inputs(tmp_path):
    """Checks behaviour: bulb and over-water rows in one file; each lacks only its own columns' cells."""
    path = tmp_path / "mixed.csv"
    path.write_text(
        "run,method,mass_tare,mass_filled,source_before,source_after,volume,temperature,pressure\n"
        "B1,evacuated-bulb,150.0000,150.5870,,,500,21.0,100.8\n"
        "W1,over-water,,,15.2034,15.0712,55.0,21.5,100.9\n"
        "W2,over-water,,,15.2034,,55.0,21.5,100.9\n", encoding="utf-8")
    result = identify(path)
    assert result.ok.tolist() == [True, True, False]
    assert "source_after" in " ".join(result.errors[2])


def test_water_soluble_gases_cannot_be_collected(tmp_path):
    """Ammonia and hydrogen chloride get the verdict ``dissolves`` over water, never elsewhere.

    Sander (2015), Atmos. Chem. Phys. 15, 4399: both dissolve hundreds of times their
    volume (common practice: neither is collected over water).
    """
    path = tmp_path / "water.csv"
    path.write_text(SHEET.split("W2")[0] + "B1,evacuated-bulb,,,,,500,21.0,100.8\n"
                    .replace("B1,evacuated-bulb,,,,,", "B1,evacuated-bulb,150.0000,150.5870,"),
                    encoding="utf-8")
    path.write_text("run,method,mass_tare,mass_filled,source_before,source_after,volume,temperature,"
                    "pressure\nW1,over-water,,,15.2034,15.0712,55.0,21.5,100.9\n"
                    "B1,evacuated-bulb,150.0000,150.5870,,,500,21.0,100.8\n", encoding="utf-8")
    result = identify(path)
    over_water = {item["name"]: item for item in result.ranking.run_candidates(0, None)}
    bulb = {item["name"]: item for item in result.ranking.run_candidates(1, None)}
    for name in ("ammonia", "hydrogen chloride"):
        assert over_water[name]["verdict"] == "dissolves"
        assert "cannot be collected over water" in over_water[name]["note"]
        assert bulb[name]["verdict"] != "dissolves"
    assert "dissolves in water" in over_water["n-butane"]["note"]


def _graded_runs(mistake):
    """Noise-free lighter runs with the student's reported value computed with one mistake.

    An analytical balance (0.1 mg), a burette read to 0.05 mL and columns of
    150-250 mm (a tube not levelled): the mistakes move the result by 2-3 % and
    1.5-2.5 %, several times its uncertainty.
    """
    frame = _lighter_runs(np.random.default_rng(11), repeats=2, noise=0.0, column_range=(0.15, 0.25),
                          balance=0.0001, tube=0.05)
    reported = []
    for _, row in frame.iterrows():
        T = float(row["temperature [K]"])
        barometer = float(row["pressure [kPa]"]) * 1e3
        column = float(row["water_column [mm]"]) * 1e-3
        saturation, density = _water(T, barometer)
        mass = (float(row["source_before [g]"]) - float(row["source_after [g]"])) * 1e-3
        pressure = barometer - saturation - density * G_N * column
        if mistake == "water-vapour-not-subtracted":
            pressure += saturation
        elif mistake == "water-column-ignored":
            pressure += density * G_N * column
        volume = float(row["volume [mL]"]) * 1e-6
        reported.append(f"{mass * 8.314462618 * T / (pressure * volume) * 1e3:.3f}")
    frame["reported_molar_mass [g/mol]"] = reported
    return frame


@pytest.mark.parametrize("mistake", ["water-vapour-not-subtracted", "water-column-ignored"])
def test_over_water_mistakes_are_diagnosed(mistake):
    """A student who leaves the water vapour or the column in the pressure gets that code.

    The student's arithmetic is written here by hand (ideal gas law, IAPWS-95 water,
    no buoyancy factor: 1.5e-4, inside the diagnosis tolerance).
    """
    grading = grade(_graded_runs(mistake))
    diagnosed = grading.grades["diagnosis"].tolist()
    assert all(mistake in str(codes) for codes in diagnosed), diagnosed


def test_correct_over_water_reports_have_no_diagnosis():
    """Checks behaviour: the hand arithmetic done right agrees with the recomputation."""
    grading = grade(_graded_runs(None))
    assert all(not codes for codes in grading.grades["diagnosis"].tolist())
