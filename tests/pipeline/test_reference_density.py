"""Densities of results: at their own conditions, and at reference conditions read as each candidate.

Sources: weighings simulated from CoolProp 8.0 reference equations of state (tests/simulate.py;
Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498) and CoolProp's densities at 0 °C and 15 °C at
101.325 kPa; the handbook's normal densities (Kaye & Laby, from memory) and ISO 6976:2016's
relative densities (Tables A.1-A.3, from memory), both in tests/reference_values.toml
[gas_states]; GUM (JCGM 100:2008) Table G.1 for the coverage of ±2u.
"""

import json
import math

import numpy as np
import pandas as pd
import pytest

from molid.cli import main
from molid.pipeline.identify import identify

simulate = pytest.importorskip("simulate")
PropsSI = pytest.importorskip("CoolProp.CoolProp").PropsSI

# Library name → CoolProp fluid: gases at 0 °C and one atmosphere, of every polar class.
GASES = {
    "hydrogen": "Hydrogen", "helium": "Helium", "argon": "Argon", "nitrogen": "Nitrogen",
    "oxygen": "Oxygen", "air": "Air", "carbon monoxide": "CarbonMonoxide", "methane": "Methane",
    "carbon dioxide": "CarbonDioxide", "ethylene": "Ethylene", "ethane": "Ethane",
    "propane": "n-Propane", "isobutane": "IsoButane", "sulfur hexafluoride": "SulfurHexafluoride",
    "ammonia": "Ammonia", "hydrogen sulfide": "HydrogenSulfide", "sulfur dioxide": "SulfurDioxide",
    "dimethyl ether": "DimethylEther", "chloromethane": "R40", "R-134a": "R134a", "R-32": "R32",
    "R-22": "R22",
}
#: Two lab states per gas [K], [Pa]: a cool low-pressure day and a warm high-pressure one.
STATES = ((294.15, 99.8e3), (297.65, 101.9e3))
ATMOSPHERE = 101325.0


def _row(name, fluid, index, temperature, pressure):
    """One noise-free evacuated-bulb run of a gas (1 L, 0.1 mg, 0.05 K, 30 Pa), CoolProp's density."""
    volume = 1e-3
    density = PropsSI("D", "T", temperature, "P", pressure, fluid)
    tare, filled = simulate.readings("evacuated-bulb", density * volume,
                                     simulate.air_density(temperature, pressure, 0.5), volume)
    return {"run": f"{name}-{index}", "sample": name, "method": "evacuated-bulb",
            "mass_tare [kg]": float(tare), "mass_filled [kg]": float(filled), "u_mass [kg]": 0.1e-6,
            "volume [m^3]": volume, "u_volume [m^3]": 0.1e-6, "temperature [K]": temperature,
            "u_temperature [K]": 0.05, "pressure [Pa]": pressure, "u_pressure [Pa]": 30.0,
            "humidity [1]": 0.5, "u_humidity [1]": 0.03}


def _runs(gases=GASES):
    rows = [_row(name, fluid, index, T, p) for name, fluid in gases.items()
            for index, (T, p) in enumerate(STATES)]
    return pd.DataFrame(rows).astype(str)


@pytest.fixture(scope="module")
def runs():
    return _runs()


@pytest.fixture(scope="module", params=[273.15, 288.15], ids=["0 degC", "15 degC"])
def identified(request, runs):
    return identify(runs, reference_conditions=(request.param, ATMOSPHERE)), request.param


def _entry(candidates, name):
    return next(item for item in candidates if item["name"] == name)


def test_reference_densities_recover_coolprop(identified):
    """22 gases run at 21-24 °C and 100-102 kPa give CoolProp's density at 0 °C (or 15 °C) and 101.325 kPa.

    Source: CoolProp 8.0 densities, both for the simulated weighings and at the reference
    conditions; each run's and each sample's value as the true gas lies within 2u (GUM Table G.1).
    """
    result, temperature = identified
    names = result.table.text["sample"].tolist()
    for index, name in enumerate(names):
        truth = PropsSI("D", "T", temperature, "P", ATMOSPHERE, GASES[name])
        for item in (_entry(result.ranking.run_candidates(index), name),
                     _entry(result.ranking.sample_candidates(name), name)):
            block = item["reference_density"]
            assert item["verdict"] in ("consistent", "marginal")
            assert block["temperature_K"] == temperature and block["pressure_Pa"] == ATMOSPHERE
            assert abs(block["value"] - truth) <= 2 * block["u"], (name, block, truth)


def test_own_density_is_coolprops_at_the_run(runs):
    """Each run's density at its temperature and pressure is CoolProp's there, within 2u.

    Source: CoolProp 8.0 density at the simulated run's state.
    """
    result = identify(runs)
    for index, name in enumerate(result.table.text["sample"]):
        T, p = STATES[index % 2]
        truth = PropsSI("D", "T", T, "P", p, GASES[name])
        assert abs(result.density[index] - truth) <= 2 * result.u_density[index]
    frame = result.sample_density.set_index("sample")
    argon = frame.loc["argon"]
    truth = PropsSI("D", "T", argon["temperature"], "P", argon["pressure"], "Argon")
    assert abs(argon["value"] - truth) <= 2 * argon["u"]


def test_normal_densities_of_the_handbook(reference):
    """Hydrogen, helium, nitrogen, oxygen, argon, carbon dioxide and air at 0 °C and 101.325 kPa.

    Source: the handbook's normal densities (Kaye & Laby, 16th ed.; reference_values.toml
    [gas_states.normal_densities], from memory), within 2u plus the table's last digit; the runs
    are simulated from CoolProp 8.0 at room conditions.
    """
    entry = reference["gas_states"]["normal_densities"]
    gases = {name: GASES[name] for name in entry["names"]}
    result = identify(_runs(gases), reference_conditions=(entry["temperature"], entry["pressure"]))
    for name, value, digit in zip(entry["names"], entry["values"], entry["last_digits"], strict=True):
        block = _entry(result.ranking.sample_candidates(name), name)["reference_density"]
        assert abs(block["value"] - value) <= 2 * block["u"] + entry["tolerance_last_digits"] * digit, \
            (name, block["value"], value)


def test_relative_densities_of_iso_6976(reference):
    """Relative densities of the ISO 6976 gases at 0 °C and 15 °C, from simulated runs, within 2u.

    Source: ISO 6976:2016 Tables A.1-A.3 and clause 9, d = (M/M_air)(Z_air/Z) with Z = 1 − s²
    (reference_values.toml [gas_states.iso6976], from memory); u combines molid's and the table's
    (from u(s) and u(Z_air)). The runs are simulated from CoolProp 8.0.
    """
    entry = reference["gas_states"]["iso6976"]
    fluids = {"n-butane": "n-Butane", "propylene": "Propylene"}
    gases = {name: GASES.get(name) or fluids[name] for name in entry["names"]}
    frame = _runs(gases)
    for temperature, column, air in ((273.15, "summation_0C", "air_compressibility_0C"),
                                     (288.15, "summation_15C", "air_compressibility_15C")):
        result = identify(frame, reference_conditions=(temperature, entry["pressure"]))
        for k, name in enumerate(entry["names"]):
            s = entry[column][k]
            Z = 1 - s * s
            iso = entry["molar_masses"][k] / entry["air_molar_mass"] * entry[air] / Z
            u_iso = iso * math.hypot(2 * s * entry["u_summation"][k] / Z, entry["u_air_compressibility"])
            ours = _entry(result.ranking.sample_candidates(name), name)["relative_density"]
            assert abs(ours["value"] - iso) <= 2 * math.hypot(ours["u"], u_iso), (name, temperature)


def test_a_candidate_liquid_at_reference_gets_a_note_not_a_number(tmp_path, capsys):
    """n-butane run at 21-24 °C, reference conditions −10 °C: no density, a note saying why.

    Source: CoolProp 8.0: n-butane's vapour pressure at −10 °C is about 69 kPa, below 101.325 kPa,
    so it would be liquid; at 0 °C (103 kPa) it is just a gas, with a note that it is close.
    """
    assert PropsSI("P", "T", 263.15, "Q", 0, "n-Butane") < ATMOSPHERE < PropsSI("P", "T", 273.15, "Q", 0,
                                                                                 "n-Butane")
    path = tmp_path / "butane.csv"
    _runs({"n-butane": "n-Butane"}).to_csv(path, index=False)
    assert main(["identify", str(path), "--json", "--reference-conditions", "-10 degC, 101.325 kPa"]) == 0
    document = json.loads(capsys.readouterr().out)
    for level in ("results", "samples"):
        item = _entry(document[level][0]["candidates"], "n-butane")
        assert item["verdict"] == "consistent"
        assert item["reference_density"]["value"] is None and item["relative_density"]["value"] is None
        assert "liquid" in item["reference_density"]["note"] and "kPa" in item["reference_density"]["note"]
    main(["identify", str(path), "--reference-conditions", "-10 degC, 101.325 kPa"])
    shown = capsys.readouterr().out
    assert "if n-butane, at -10 °C and 101.325 kPa: no density: it would be liquid" in shown
    out = tmp_path / "out.csv"
    main(["identify", str(path), "-o", str(out), "--reference-conditions", "-10 degC, 101.325 kPa"])
    capsys.readouterr()
    written = pd.read_csv(out)
    assert (written["reference_candidate"] == "n-butane").all()
    assert written["reference_density_kg_m3"].isna().all()
    main(["identify", str(path), "--json"])
    item = _entry(json.loads(capsys.readouterr().out)["samples"][0]["candidates"], "n-butane")
    assert item["reference_density"]["value"] > 0 and "close to its vapour pressure" in \
        item["reference_density"]["note"]


@pytest.mark.parametrize("text", ["15 degC", "15 bananas, 101.325 kPa", "1 atm, 1 bar", "fifteen, 1 atm",
                                  "-300 degC, 1 atm", "15 degC, 0 kPa"])
def test_bad_reference_conditions_exit_2(text, tmp_path, capsys):
    """Checks behaviour: an unreadable --reference-conditions exits 2, quoting it and the accepted form."""
    path = tmp_path / "runs.csv"
    _runs({"argon": "Argon"}).to_csv(path, index=False)
    with pytest.raises(SystemExit) as stop:
        main(["identify", str(path), "--reference-conditions", text])
    assert stop.value.code == 2
    err = capsys.readouterr().err
    assert repr(text) in err and "15 degC, 101.325 kPa" in err and "Traceback" not in err


def test_reference_conditions_in_any_units_and_the_api(tmp_path, capsys):
    """Checks behaviour: '59 degF; 14.695949 psi' is 15 °C and 101.325 kPa, in the command and the API."""
    path = tmp_path / "runs.csv"
    _runs({"argon": "Argon"}).to_csv(path, index=False)
    main(["identify", str(path), "--json", "--reference-conditions", "59 degF; 14.695949 psi"])
    block = json.loads(capsys.readouterr().out)["samples"][0]["candidates"][0]["reference_density"]
    assert block["temperature_K"] == pytest.approx(288.15) and block["pressure_Pa"] == pytest.approx(
        ATMOSPHERE, abs=0.01)
    result = identify(str(path), reference_conditions=(288.15, ATMOSPHERE))
    assert result.ranking.sample_candidates("argon")[0]["reference_density"]["value"] == \
        pytest.approx(block["value"], rel=1e-6)
    with pytest.raises(ValueError, match="reference_conditions"):
        identify(str(path), reference_conditions=(288.15,))
    with pytest.raises(ValueError, match="reference_conditions"):
        identify(str(path), reference_conditions=(-5.0, ATMOSPHERE))


def test_only_consistent_and_marginal_candidates_carry_reference_keys(runs):
    """Checks behaviour: reference keys on consistent and marginal entries only; each result has a density."""
    result = identify(runs)
    from molid.io.json_document import to_document

    document = to_document(result)
    for entry in document["results"] + document["samples"]:
        assert entry["density"]["unit"] == "kg/m3" and entry["density"]["value"] > 0
        for item in entry["candidates"]:
            carries = "reference_density" in item
            assert carries == (item["verdict"] in ("consistent", "marginal")), item
            if carries:
                assert item["reference_density"]["unit"] == "kg/m3"
                assert set(item["relative_density"]) == {"value", "u"}


def test_csv_columns_name_the_leading_consistent_candidate(runs, tmp_path):
    """Checks behaviour: the per-run CSV's reference columns hold the first consistent candidate's numbers."""
    from molid.io.run_csv import csv_frame

    result = identify(runs)
    frame = csv_frame(result)
    for index in range(len(frame)):
        leading = next(item for item in result.ranking.run_candidates(index)
                       if item["verdict"] == "consistent")
        assert frame["reference_candidate"].iat[index] == leading["name"]
        assert frame["reference_density_kg_m3"].iat[index] == pytest.approx(
            leading["reference_density"]["value"], rel=1e-12)
        assert frame["u_relative_density"].iat[index] == pytest.approx(leading["relative_density"]["u"],
                                                                       rel=1e-12)
    assert np.all(frame["reference_temperature_K"] == 273.15)
    assert list(frame.columns[-9:]) == ["density_kg_m3", "u_density_kg_m3", "reference_candidate",
                                        "reference_density_kg_m3", "u_reference_density_kg_m3",
                                        "relative_density", "u_relative_density",
                                        "reference_temperature_K", "reference_pressure_Pa"]
