"""Correlated run results (``as_ufloats``) against the GUM's covariance formula and a Monte Carlo.

Sources: JCGM 100:2008 (GUM) 5.2.2, eqs. (14) and (16), and F.1.2.3 (two estimates that depend on
one input quantity are correlated, u(y_i, y_j) = c_i c_j u²(x); clause numbers from memory);
JCGM 101:2008 (GUM Supplement 1) for the Monte Carlo that draws a shared error once per trial;
GUM 4.3.7 for the rectangular barometer error; the `uncertainties` package 3.2 (E. O. Lebigot) for
the correlation of its numbers. Gas densities for the simulated weighings come from CoolProp.
"""

import io

import numpy as np
import pytest

from molid.io.profiles import load_profile
from molid.methods.model import measurement_model
from molid.pipeline.identify import identify, model_inputs
from molid.uncertainty.replicates import SHAREABLE_INPUTS

unc = pytest.importorskip("uncertainties")
simulate = pytest.importorskip("simulate")

#: A barometer whose ±0.5 kPa accuracy is one calibration error common to every run (GUM 4.3.7).
BAROMETER = """
[pressure]
unit = "kPa"
half_width = 0.5
shared = true
"""
HALF_WIDTH = 500.0  # Pa
HEADER = ("run,sample,method,mass_tare [g],mass_filled [g],volume [mL],temperature [K],"
          "pressure [kPa],humidity [%]")
#: Trials of the Monte Carlo checks: the standard error of a sample correlation is about
#: (1 − ρ²)/√N ≤ 0.0016 (Fisher 1915, common practice), so 0.01 is over six standard errors.
DRAWS = 400_000
TOLERANCE = 0.01


def _row(run, sample, volume_ml, temperature, pressure, humidity, fluid="CO2", extra=""):
    """Simulate an evacuated-bulb run: CoolProp densities through the method's simulator."""
    air = simulate.air_density(temperature, pressure, humidity / 100)
    density, _ = simulate.gas_density(fluid, temperature, pressure)
    volume = volume_ml * 1e-6
    tare, filled = simulate.readings("evacuated-bulb", density * volume, air, volume)
    return (f"{run},{sample},evacuated-bulb,{tare * 1e3:.4f},{filled * 1e3:.4f},{volume_ml},"
            f"{temperature},{pressure / 1e3:.3f},{humidity}{extra}")


def _identify(tmp_path, rows, header=HEADER):
    profile = tmp_path / "barometer.toml"
    profile.write_text(BAROMETER, encoding="utf-8")
    result = identify(io.StringIO("\n".join([header, *rows]) + "\n"), profile=profile)
    assert result.ok.all(), result.errors
    return result, load_profile(profile)


def _monte_carlo(result, profile, groups, rng):
    """Model outputs of every run with each group's error drawn once per trial for all its runs.

    ``groups``: (input, runs it covers as a bool mask, standard uncertainty of the common part per
    run, "rectangular" or "normal"). What a run's u has beyond its common parts is drawn
    independently per run (Gaussian, JCGM 101:2008, 6.4.7).
    """
    values, _, static = model_inputs(result.table, profile)
    u = result.propagation.uncertainties
    count = len(result.table)
    drawn = {}
    for name in values:
        if name not in u:  # no uncertainty in any run: the model takes the value as it is
            drawn[name] = np.broadcast_to(values[name], (DRAWS, count))
            continue
        common_square = np.zeros(count)
        total = np.broadcast_to(values[name], (DRAWS, count)).copy()
        for group_name, rows, part, shape in groups:
            if group_name != name:
                continue
            # one standard error per trial, the same for every run of the group
            error = (rng.uniform(-np.sqrt(3), np.sqrt(3), (DRAWS, 1)) if shape == "rectangular"
                     else rng.standard_normal((DRAWS, 1)))
            total += np.where(rows, part, 0.0) * error
            common_square += np.where(rows, part, 0.0) ** 2
        rest = np.sqrt(np.maximum(u[name] ** 2 - common_square, 0.0))
        drawn[name] = total + rest * rng.standard_normal((DRAWS, count))
    flags = {key: np.broadcast_to(np.asarray(item), (DRAWS, count)) for key, item in static.items()}
    return measurement_model(**drawn, **flags)["molar_mass"]


def _pressure_slope(result, profile):
    """∂M/∂p of every run by central differences of the model (step 1 Pa; common practice)."""
    values, _, static = model_inputs(result.table, profile)
    up = dict(values, pressure=values["pressure"] + 1.0)
    down = dict(values, pressure=values["pressure"] - 1.0)
    return (measurement_model(**up, **static)["molar_mass"]
            - measurement_model(**down, **static)["molar_mass"]) / 2.0


def test_runs_sharing_a_barometer_have_the_gum_correlation(tmp_path):
    """Two runs read on one barometer: r = c₁c₂s²/(u₁u₂) (GUM F.1.2.3 and eq. 14), also by Monte Carlo.

    The runs are of different samples in different bulbs, with measured humidity, so the
    barometer's calibration error (s = 0.5 kPa/√3, rectangular, GUM 4.3.7) is all they share. The
    sensitivities come from central differences of the model and u from the linear propagation;
    the Monte Carlo (JCGM 101:2008) draws the barometer error once per trial, uniformly, for both
    runs. A third run states its own u_pressure: a stated uncertainty counts as run to run, so it
    is uncorrelated with the others (checks behaviour: molid's documented rule).
    """
    rows = [_row("a", "A", 500, 293.2, 100.5e3, 41),
            _row("b", "B", 250, 296.1, 99.2e3, 55),
            _row("c", "C", 300, 294.0, 100.1e3, 47) + ",0.2887"]
    rows[0] += ","
    rows[1] += ","
    result, profile = _identify(tmp_path, rows, HEADER + ",u_pressure [kPa]")
    numbers = result.as_ufloats()
    correlation = np.array(unc.correlation_matrix(list(numbers)))
    shared = HALF_WIDTH / np.sqrt(3.0)
    slope = _pressure_slope(result, profile)
    expected = slope[0] * slope[1] * shared**2 / (result.u[0] * result.u[1])
    assert 0.2 < expected < 0.9  # a correlation worth checking
    assert correlation[0, 1] == pytest.approx(expected, rel=1e-5)
    assert correlation[0, 2] == 0.0 and correlation[1, 2] == 0.0
    barometer = np.array([True, True, False])
    outputs = _monte_carlo(result, profile, [("pressure", barometer, np.full(3, shared), "rectangular")],
                           np.random.default_rng(11))
    drawn = np.corrcoef(outputs.T)
    assert drawn[0, 1] == pytest.approx(correlation[0, 1], abs=TOLERANCE)
    assert drawn[0, 2] == pytest.approx(0.0, abs=TOLERANCE)


def test_runs_of_one_bulb_share_its_volume_and_the_barometer(tmp_path):
    """Three runs of one sample in one bulb and a fourth elsewhere: correlations as a Monte Carlo gives.

    Within the sample, the inputs with one value and one u in every run (the bulb's volume, the
    assumed CO2, the air-density formula; replicates.SHAREABLE_INPUTS) have one error per trial;
    the barometer's error is common to all four runs (GUM 5.2.2 and F.1.2.3; JCGM 101:2008 for
    the drawing). The sample's combined number keeps the combination's value and u (checks
    behaviour: the same weighted mean as molid's replicate combination).
    """
    rows = [_row("s1", "S", 500, 293.2, 100.5e3, 41), _row("s2", "S", 500, 293.9, 100.2e3, 44),
            _row("s3", "S", 500, 294.4, 100.9e3, 38), _row("x", "X", 250, 296.1, 99.2e3, 55)]
    result, profile = _identify(tmp_path, rows)
    runs, samples = result.as_ufloats("both")
    correlation = np.array(unc.correlation_matrix(list(runs)))
    values, _, _ = model_inputs(result.table, profile)
    u = result.propagation.uncertainties
    in_sample = np.array([True, True, True, False])
    groups = [("pressure", np.ones(4, bool), np.full(4, HALF_WIDTH / np.sqrt(3.0)), "rectangular")]
    for name in SHAREABLE_INPUTS:
        if name in u and np.ptp(values[name][in_sample]) == 0 and np.ptp(u[name][in_sample]) == 0:
            groups.append((name, in_sample, u[name], "normal"))
    assert {group[0] for group in groups} >= {"pressure", "volume", "co2", "air_density_formula"}
    outputs = _monte_carlo(result, profile, groups, np.random.default_rng(12))
    drawn = np.corrcoef(outputs.T)
    assert np.abs(drawn - correlation).max() < TOLERANCE
    assert correlation[0, 1] > correlation[0, 3] > 0.0  # the bulb adds to the barometer
    combined = result.samples.set_index("sample").loc["S"]
    assert samples["S"].nominal_value == pytest.approx(combined["value"] * 1e3, rel=1e-12)
    assert samples["S"].std_dev == pytest.approx(combined["u"] * 1e3, rel=1e-9)


def test_numbers_agree_with_the_covariance_matrix():
    """Checks behaviour: the numbers' covariances equal ``covariance_matrix`` and their u the runs' u."""
    from molid.pipeline.correlations import covariance_matrix

    result = identify("sample_runs/qa_cylinders.csv", profile="sample_runs/qa_lab_profile.toml")
    numbers = result.as_ufloats()
    assert list(numbers.index) == list(result.table.text["run"][result.ok])
    matrix = covariance_matrix(result).to_numpy()
    assert np.allclose(np.array(unc.covariance_matrix(list(numbers))), matrix, rtol=1e-9, atol=0)
    assert np.allclose([number.std_dev for number in numbers], result.u[result.ok] * 1e3, rtol=1e-12)
    assert result.as_ufloats("samples").index.name == "sample"
    with pytest.raises(ValueError, match="level"):
        result.as_ufloats("everything")
