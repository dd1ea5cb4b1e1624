"""The planner's own simulator: its gas densities against CoolProp, its noise against the profile.

Sources: CoolProp 8.0 reference equations of state (densities and molar masses at 21 °C and
101 kPa); the model uncertainty molid states for each candidate's second virial coefficient
(molid/data/virial_model.csv, sized against CoolProp) as the tolerance, three standard
uncertainties (common practice for a check at about 99.7 %).
"""

import numpy as np
import pytest

from molid.candidates.library import load_library
from molid.candidates.search import find_candidate
from molid.io.profiles import load_profile
from molid.methods.registry import METHODS
from molid.planning.conditions import nominal_conditions
from molid.planning.plan import make_plan
from molid.planning.simulation import draw_errors, gas_properties, run_frame, true_readings

PropsSI = pytest.importorskip("CoolProp.CoolProp").PropsSI

GASES = [("argon", "Argon"), ("carbon dioxide", "CarbonDioxide"), ("propane", "Propane"),
         ("n-butane", "n-Butane"), ("sulfur hexafluoride", "SulfurHexafluoride"), ("helium", "Helium")]


def test_simulated_densities_agree_with_coolprop_within_the_model_terms():
    """The density behind the simulated readings is CoolProp's within 3 u of molid's virial model term.

    CoolProp's molar masses differ from the library's by up to 5e-5 relative; the comparison is
    of Z, the density scaled to the same molar mass.
    """
    library = load_library().reset_index(drop=True)
    conditions = nominal_conditions("evacuated-bulb")
    plan = make_plan(method="evacuated-bulb", unknowns=", ".join(name for name, _ in GASES))
    model = {item["name"]: item["u_model"] / item["molar_mass"] for item in plan["unknowns"]}
    T, p, V = conditions.temperature, conditions.pressure, conditions.volume
    for name, fluid in GASES:
        row = find_candidate(library, name)
        truth = {"temperature": np.array([T]), "pressure": np.array([p]), "volume": np.array([V]),
                 "room_temperature": np.array([T]), "humidity": np.array([0.5]), "co2": np.array([0.0004])}
        found = true_readings(METHODS["evacuated-bulb"], truth, gas_properties(library, [row], T, T))
        ours = found["gas_mass"][0] / V / library.at[row, "molar_mass"]
        reference = PropsSI("D", "T", T, "P", p, fluid) / PropsSI("M", fluid)
        assert abs(ours / reference - 1) <= 3 * model[name], name


def test_noise_has_the_profile_standard_uncertainties():
    """Checks behaviour: each written input's drawn errors have the profile's u; shared parts per sample."""
    method = METHODS["syringe"]
    profile = load_profile()
    count = 20000
    written = {"mass_tare": np.full(count, 0.15), "mass_filled": np.full(count, 0.15),
               "volume": np.full(count, 1e-4), "temperature": np.full(count, 294.15),
               "pressure": np.full(count, 101e3)}
    samples = np.arange(count) // 2
    errors = draw_errors(method, profile, written, samples, np.random.default_rng(1))
    for name, values in errors.items():
        expected = float(profile.rule(name).apply(written[name][0]))
        assert np.std(values) == pytest.approx(expected, rel=0.03), name
    # one vessel per sample: both runs of a sample carry the same volume error
    assert np.array_equal(errors["volume"][0::2], errors["volume"][1::2])


def test_nominal_run_sheet_reads_back_its_gas():
    """Checks behaviour: a noise-free sheet holds one row per run with the method's columns in SI units."""
    library = load_library().reset_index(drop=True)
    conditions = nominal_conditions("vapour-flask")
    row = find_candidate(library, "acetone")
    gas = gas_properties(library, [row, row], conditions.temperature, conditions.room_temperature)
    frame = run_frame(METHODS["vapour-flask"], conditions.as_dict(), gas, runs=["a", "b"], samples=["s", "s"])
    assert list(frame.columns) == ["run", "sample", "method", "mass_tare [kg]", "mass_filled [kg]",
                                   "volume [m^3]", "temperature [K]", "pressure [Pa]", "air_temperature [K]"]
    assert (frame["mass_filled [kg]"] > frame["mass_tare [kg]"]).all()
