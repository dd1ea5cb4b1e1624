"""GUM propagation against a GUM worked example, `uncertainties`, finite differences and Monte Carlo.

Sources: JCGM 100:2008 (GUM) H.1 (end-gauge calibration) and 5.1.2; the `uncertainties` package
(E. O. Lebigot, version 3.2) as an independent implementation of first-order propagation;
central finite differences; JCGM 101:2008 (GUM Supplement 1) for the Monte Carlo method.
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from molid.io.profiles import load_profile
from molid.io.reading import read_runs
from molid.methods.model import measurement_model
from molid.physics.constants import GAS_CONSTANT
from molid.pipeline.identify import model_inputs
from molid.uncertainty.propagation import budget_percent, complex_step_jacobian, monte_carlo, propagate
from molid.uncertainty.type_b import type_b_standard_uncertainty

unc = pytest.importorskip("uncertainties")
umath = pytest.importorskip("uncertainties.umath")


def syringe_model(tare, filled, volume, temperature, pressure, air_density):
    """Syringe/air-tare model with the air density as an input (numpy form).

    8000 kg/m³ is the conventional density of weights (OIML D 28:2004).
    """
    mass = (filled - tare) * (1 - air_density / 8000.0) + air_density * volume
    return mass * GAS_CONSTANT * temperature / (pressure * volume)


def test_propagation_matches_uncertainties_package():
    """u_c from complex-step sensitivities equals the `uncertainties` package 3.2 (relative 1e-9)."""
    rng = np.random.default_rng(7)
    n = 200
    values = {
        "tare": 50 + rng.random(n) * 1e-3 * 0 + rng.random(n) * 10,
        "volume": 1e-4 * (0.5 + rng.random(n)),
        "temperature": 285 + 20 * rng.random(n),
        "pressure": 95e3 + 10e3 * rng.random(n),
        "air_density": 1.1 + 0.1 * rng.random(n),
    }
    values["filled"] = values["tare"] + (rng.random(n) - 0.6) * 2e-4
    u = {name: np.abs(v) * 10 ** rng.uniform(-6, -3, n) for name, v in values.items()}
    result = propagate(syringe_model, values, u)
    for i in range(n):
        args = {name: unc.ufloat(values[name][i], u[name][i]) for name in values}
        reference = syringe_model(**args)
        assert result.value[i] == pytest.approx(reference.nominal_value, rel=1e-12)
        assert result.standard_uncertainty[i] == pytest.approx(reference.std_dev, rel=1e-9)


def test_full_model_derivatives_match_finite_differences():
    """Complex-step sensitivities of the full model (CIPM-2007, wet gas) equal central differences.

    Reference: central finite differences, step 1e-6 relative (common practice); the complex step
    is Squire and Trapp, SIAM Review 40 (1998) 110.
    """
    table = read_runs("sample_runs/qa_cylinders.csv")
    values, u, static = model_inputs(table, load_profile())
    static = {key: np.ones(len(table), dtype=item.dtype) * 0 + item for key, item in static.items()}
    static["wet"] = np.ones(len(table), dtype=bool)  # exercise the water-vapour branch too
    value, jac, _ = complex_step_jacobian(measurement_model, values, static, output="molar_mass")
    for name in values:
        step = np.where(values[name] == 0, 1e-6, np.abs(values[name]) * 1e-6)
        up = dict(values, **{name: values[name] + step})
        down = dict(values, **{name: values[name] - step})
        numeric = (measurement_model(**up, **static)["molar_mass"]
                   - measurement_model(**down, **static)["molar_mass"]) / (2 * step)
        scale = np.abs(value / np.where(values[name] == 0, 1.0, np.abs(values[name])))
        assert np.allclose(jac[name], numeric, rtol=1e-5, atol=1e-7 * scale.max()), name


def test_monte_carlo_agrees_with_linear_propagation():
    """GUM Supplement 1 Monte Carlo agrees with the law of propagation for a near-linear run.

    Source: JCGM 101:2008, 8 (validating the GUM uncertainty framework by a Monte Carlo
    calculation); 1.96 is the 97.5 % point of the standard normal (GUM Table G.1, common practice).
    """
    values = {"tare": 50.0, "filled": 49.9995, "volume": 1e-4, "temperature": 295.0,
              "pressure": 100e3, "air_density": 1.19}
    u = {"tare": 1e-7, "filled": 1e-7, "volume": 1e-7, "temperature": 0.1, "pressure": 30.0,
         "air_density": 2e-3}
    linear = propagate(syringe_model, {k: [v] for k, v in values.items()},
                       {k: [v] for k, v in u.items()})
    mean, sd, low, high = monte_carlo(syringe_model, values, u, draws=200000, seed=3)
    assert mean == pytest.approx(linear.value[0], rel=1e-4)
    assert sd == pytest.approx(linear.standard_uncertainty[0], rel=0.01)
    assert (high - low) / 2 == pytest.approx(1.96 * linear.standard_uncertainty[0], rel=0.02)


def end_gauge_length(standard_length, difference, expansion_standard, temperature_deviation,
                     expansion_difference, temperature_difference):
    """End-gauge length, GUM H.1 eq. (H.3): l = l_s + d − l_s(δα θ + α_s δθ) [m]."""
    return standard_length + difference - standard_length * (
        expansion_difference * temperature_deviation + expansion_standard * temperature_difference)


def test_gum_end_gauge_example_h1():
    """GUM H.1 end-gauge calibration: l = 50.000 838 mm, u_c(l) = 32 nm, c(α_s) = c(θ) = 0.

    Source: JCGM 100:2008 (GUM), H.1.3-H.1.4 and Table H.1 (from memory): l_s = 50.000 623 mm with
    U = 0.075 µm (k = 3); d = 215 nm, u(d) = 9.7 nm; α_s = 11.5e-6 /°C, u = 1.2e-6 /°C;
    θ = −0.1 °C, u = 0.41 °C; δα = 0 within ±1e-6 /°C and δθ = 0 within ±0.05 °C, both
    rectangular (GUM 4.3.7). Table H.1 sums the contributions 25, 9.7, 2.9 and 16.6 nm to
    about 1002 nm², so u_c(l) = 32 nm.
    """
    values = {"standard_length": [50.000623e-3], "difference": [215e-9],
              "expansion_standard": [11.5e-6], "temperature_deviation": [-0.1],
              "expansion_difference": [0.0], "temperature_difference": [0.0]}
    u = {"standard_length": [type_b_standard_uncertainty(expanded=0.075e-6, coverage_factor=3)],
         "difference": [9.7e-9], "expansion_standard": [1.2e-6], "temperature_deviation": [0.41],
         "expansion_difference": [type_b_standard_uncertainty(half_width=1e-6)],
         "temperature_difference": [type_b_standard_uncertainty(half_width=0.05)]}
    result = propagate(end_gauge_length, values, u)
    assert result.value[0] == pytest.approx(50.000838e-3, abs=0.5e-9)
    assert result.sensitivities["expansion_standard"][0] == 0.0
    assert result.sensitivities["temperature_deviation"][0] == 0.0
    contributions = {name: abs(item[0]) * 1e9 for name, item in result.contributions.items()}
    assert contributions["standard_length"] == pytest.approx(25.0, abs=0.05)
    assert contributions["expansion_difference"] == pytest.approx(2.9, abs=0.05)
    assert contributions["temperature_difference"] == pytest.approx(16.6, abs=0.05)
    assert result.standard_uncertainty[0] ** 2 * 1e18 == pytest.approx(1002.0, abs=1.5)
    assert round(result.standard_uncertainty[0] * 1e9) == 32


@settings(max_examples=60, deadline=None)
@given(
    tare=st.floats(1.0, 200.0), gain=st.floats(-5e-5, 5e-4), volume=st.floats(5e-5, 1e-3),
    temperature=st.floats(270.0, 320.0), pressure=st.floats(80e3, 110e3),
    air_density=st.floats(1.0, 1.3),
    exponents=st.lists(st.floats(-6.0, -3.0), min_size=6, max_size=6),
)
def test_propagated_u_agrees_with_uncertainties_and_a_numerical_derivative(
        tare, gain, volume, temperature, pressure, air_density, exponents):
    """For any plausible run, u_c equals the `uncertainties` package and central differences.

    References: the `uncertainties` package 3.2 (first-order propagation by automatic
    differentiation) and GUM eq. (10) with sensitivities from central differences (step 1e-6
    relative; common practice).
    """
    values = {"tare": tare, "filled": tare + gain, "volume": volume, "temperature": temperature,
              "pressure": pressure, "air_density": air_density}
    u = {name: abs(value) * 10**exponent
         for (name, value), exponent in zip(values.items(), exponents, strict=True)}
    result = propagate(syringe_model, {k: [v] for k, v in values.items()},
                       {k: [v] for k, v in u.items()})
    reference = syringe_model(**{name: unc.ufloat(values[name], u[name]) for name in values})
    assert result.standard_uncertainty[0] == pytest.approx(reference.std_dev, rel=1e-9)
    squares = 0.0
    for name, value in values.items():
        step = abs(value) * 1e-6
        above = syringe_model(**dict(values, **{name: value + step}))
        below = syringe_model(**dict(values, **{name: value - step}))
        squares += ((above - below) / (2 * step) * u[name]) ** 2
    assert result.standard_uncertainty[0] == pytest.approx(math.sqrt(squares), rel=1e-5)


@settings(max_examples=50, deadline=None)
@given(st.lists(st.floats(1e-6, 1e3), min_size=1, max_size=8))
def test_budget_sums_to_100(contributions):
    """Budget shares sum to 100 %: each share is (c_i u_i)²/u_c², summing to one by GUM eq. (10)."""
    shares = budget_percent({f"x{i}": np.array([c]) for i, c in enumerate(contributions)})
    assert sum(share[0] for share in shares.values()) == pytest.approx(100.0)


@settings(max_examples=50, deadline=None)
@given(st.floats(-1e6, 1e6), st.floats(1e-9, 1e3))
def test_difference_of_a_quantity_with_itself_has_no_uncertainty(x, u):
    """A quantity minus itself has zero uncertainty: c = ∂(x − x)/∂x = 0 in GUM eq. (10) (common practice)."""
    result = propagate(lambda a: a - a, {"a": [x]}, {"a": [u]})
    assert result.standard_uncertainty[0] == 0.0


def test_type_b_rules():
    """Type B rules: rectangular a/√3, readability d/√12, certificate U/k (GUM 4.3.7, F.2.2.1, 4.3.3)."""
    assert type_b_standard_uncertainty(half_width=1.0) == pytest.approx(1 / math.sqrt(3))
    assert type_b_standard_uncertainty(readability=1.0) == pytest.approx(1 / math.sqrt(12))
    assert type_b_standard_uncertainty(expanded=0.4, coverage_factor=2) == pytest.approx(0.2)
    assert type_b_standard_uncertainty(standard=3.0, expanded=8.0, coverage_factor=2) == 5.0
