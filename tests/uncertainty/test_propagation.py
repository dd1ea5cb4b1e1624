"""GUM propagation against the `uncertainties` package, finite differences and Monte Carlo."""

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
    """Syringe/air-tare model with the air density as an input (numpy form)."""
    mass = (filled - tare) * (1 - air_density / 8000.0) + air_density * volume
    return mass * GAS_CONSTANT * temperature / (pressure * volume)


def test_propagation_matches_uncertainties_package():
    """u_c from complex-step sensitivities equals the `uncertainties` package (relative 1e-9)."""
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
    """Complex-step sensitivities of the full model (CIPM-2007, wet gas) equal central differences."""
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
    """GUM Supplement 1 Monte Carlo agrees with the law of propagation for a near-linear run."""
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


@settings(max_examples=50, deadline=None)
@given(st.lists(st.floats(1e-6, 1e3), min_size=1, max_size=8))
def test_budget_sums_to_100(contributions):
    """Budget shares sum to 100 % (GUM eq. 10 decomposed)."""
    shares = budget_percent({f"x{i}": np.array([c]) for i, c in enumerate(contributions)})
    assert sum(share[0] for share in shares.values()) == pytest.approx(100.0)


@settings(max_examples=50, deadline=None)
@given(st.floats(-1e6, 1e6), st.floats(1e-9, 1e3))
def test_difference_of_a_quantity_with_itself_has_no_uncertainty(x, u):
    """X − x has zero uncertainty: the propagation keeps the correlation (common practice)."""
    result = propagate(lambda a: a - a, {"a": [x]}, {"a": [u]})
    assert result.standard_uncertainty[0] == 0.0


def test_type_b_rules():
    """Type B rules: rectangular a/√3, readability d/√12, certificate U/k (GUM 4.3.7, F.2.2.1, 4.3.3)."""
    assert type_b_standard_uncertainty(half_width=1.0) == pytest.approx(1 / math.sqrt(3))
    assert type_b_standard_uncertainty(readability=1.0) == pytest.approx(1 / math.sqrt(12))
    assert type_b_standard_uncertainty(expanded=0.4, coverage_factor=2) == pytest.approx(0.2)
    assert type_b_standard_uncertainty(standard=3.0, expanded=8.0, coverage_factor=2) == 5.0
