"""Replicate combination against hand computations from published definitions (Birge 1932; GUM 5.2.2)."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from molid.uncertainty.replicates import chi_square_p_value, combine_replicates


def test_weighted_mean_and_birge_ratio_by_hand():
    """Inverse-variance mean, χ² and Birge ratio equal a hand computation from Birge's definitions.

    Source: R. T. Birge, Phys. Rev. 40 (1932) 207; the Birge ratio R_B = √(χ²/ν) as in the
    CODATA adjustments (P. J. Mohr, D. B. Newell, B. N. Taylor, Rev. Mod. Phys. 88 (2016) 035009,
    appendix on least squares; from memory); widening u by R_B when R_B > 1 is the scale factor
    of the Particle Data Group's averages (common practice).

    By hand, x = (10.0, 10.3, 9.8), u = (0.1, 0.2, 0.1): w = (100, 25, 100), Σw = 225,
    Σwx = 1000 + 257.5 + 980 = 2237.5, x̄ = 2237.5/225 = 179/18; deviations 1/18, 16/45, −13/90,
    χ² = 100/324 + 25·256/2025 + 100·169/8100 = 50/9; ν = 2, R_B = √(25/9) = 5/3;
    internal u = 1/√225 = 1/15, widened u = (5/3)(1/15) = 1/9.
    """
    values = np.array([10.0, 10.3, 9.8])
    u = np.array([0.1, 0.2, 0.1])
    result = combine_replicates(["s"] * 3, values, u, {}, np.ones(3, bool)).iloc[0]
    assert result["value"] == pytest.approx(179 / 18, rel=1e-12)
    assert result["chi_square"] == pytest.approx(50 / 9, rel=1e-12)
    assert result["birge_ratio"] == pytest.approx(5 / 3, rel=1e-12)
    assert result["widened"]
    assert result["u"] == pytest.approx(1 / 9, rel=1e-12)


def test_consistent_runs_are_not_widened():
    """Runs agreeing better than their uncertainties keep the internal uncertainty 1/√Σw.

    Source: Birge, Phys. Rev. 40 (1932) 207 (internal uncertainty of a weighted mean). By hand,
    x = (10.0, 10.01), u = 0.1 each: x̄ = 10.005, χ² = 2·100·0.005² = 0.005, R_B = 0.0707 < 1,
    so u = 0.1/√2 = 0.0707107.
    """
    values = np.array([10.0, 10.01])
    u = np.array([0.1, 0.1])
    result = combine_replicates(["s", "s"], values, u, {}, np.ones(2, bool)).iloc[0]
    assert result["value"] == pytest.approx(10.005, rel=1e-12)
    assert result["birge_ratio"] == pytest.approx(0.005**0.5, rel=1e-9)
    assert not result["widened"]
    assert result["u"] == pytest.approx(0.0707107, abs=1e-7)


@settings(max_examples=50, deadline=None)
@given(st.lists(st.floats(-1e3, 1e3), min_size=2, max_size=10, unique=True), st.floats(1e-3, 1e2))
def test_equal_weights_give_the_arithmetic_mean_and_sample_standard_deviation(values, u):
    """Equal u: the weighted mean is the arithmetic mean and R_B = s/u (Birge 1932 with w_i equal).

    Source: with equal weights, χ²/(n − 1) = Σ(x_i − x̄)²/((n − 1)u²) = s²/u², s the sample
    standard deviation (GUM, JCGM 100:2008, eq. 4); numpy's mean and std(ddof=1) are the reference.
    """
    values = np.array(values)
    count = len(values)
    result = combine_replicates(["s"] * count, values, np.full(count, u), {},
                                np.ones(count, bool)).iloc[0]
    spread = values.std(ddof=1)
    assert result["value"] == pytest.approx(values.mean(), rel=1e-9, abs=1e-9)
    assert result["birge_ratio"] == pytest.approx(spread / u, rel=1e-6, abs=1e-9)
    assert result["u"] == pytest.approx(max(u, spread) / np.sqrt(count), rel=1e-6)


def test_shared_effect_is_not_averaged_down():
    """A contribution common to all runs (same bulb volume) stays whole after averaging.

    Source: GUM (JCGM 100:2008) 5.2.2, eq. (16) with correlation coefficient 1 for the shared
    part: u²(x̄) = u_s² + u_i²/n. By hand, u_s = 0.08, u_i = 0.06, n = 4:
    u² = 0.0064 + 0.0009 = 0.0073, u = 0.0854400.
    """
    values = np.array([10.0, 10.0, 10.0, 10.0])
    shared = np.full(4, 0.08)
    independent = np.full(4, 0.06)
    u = np.hypot(shared, independent)
    result = combine_replicates(["s"] * 4, values, u, {"volume": shared}, np.ones(4, bool)).iloc[0]
    assert result["u_shared"] == pytest.approx(0.08)
    assert result["u"] == pytest.approx(0.0854400, abs=1e-7)


def test_runs_with_errors_are_left_out():
    """Checks behaviour: only runs with a result take part (mean of 10.0 and 10.2 is 10.1)."""
    values = np.array([10.0, np.nan, 10.2])
    u = np.array([0.1, np.nan, 0.1])
    result = combine_replicates(["s"] * 3, values, u, {}, np.array([True, False, True])).iloc[0]
    assert result["n"] == 2 and result["value"] == pytest.approx(10.1)


def test_chi_square_p_value_against_tables():
    """Upper-tail χ² probabilities at 5.991/2 dof and 11.345/3 dof.

    Source: upper critical values of the χ² distribution as printed in statistical tables, e.g. the
    NIST/SEMATECH e-Handbook of Statistical Methods, 1.3.6.7.4 (common practice; from memory).
    """
    assert float(chi_square_p_value(5.991, 2)) == pytest.approx(0.05, abs=2e-4)
    assert float(chi_square_p_value(11.345, 3)) == pytest.approx(0.01, abs=2e-4)


def test_calibration_uncertainty_is_not_averaged_down(tmp_path):
    """A certificate's U (common to all runs) stays whole in a sample's u.

    Source: GUM (JCGM 100:2008) 5.2.2 and F.1.2.1: an effect shared by all runs (one calibrated
    barometer) is fully correlated, so averaging four runs does not divide it by 2.
    """
    from molid.pipeline.identify import identify

    profile = tmp_path / "lab.toml"
    profile.write_text('[pressure]\nunit = "kPa"\nexpanded = 0.2\nk = 2\n'
                       '[temperature]\nunit = "K"\nstandard = 0.01\n'
                       '[mass]\nunit = "g"\nstandard = 0.00001\n'
                       '[volume]\nunit = "mL"\nstandard = 0.001\n', encoding="utf-8")
    rows = ["run,sample,method,mass_tare,mass_filled,volume,temperature,pressure,humidity,u_humidity"]
    rows += [f"r{i},S,evacuated-bulb,150.0000,150.9050,500.0{i},21.0,100.80,40,1" for i in range(4)]
    runs = tmp_path / "runs.csv"
    runs.write_text("\n".join(rows) + "\n", encoding="utf-8")
    result = identify(runs, profile=profile, rank=False)
    pressure_part = abs(result.propagation.contributions["pressure"][0])
    sample_u = result.samples["u"].iat[0]
    assert sample_u >= pressure_part * 0.999  # not pressure_part / 2 for four runs
    assert result.samples["u_shared"].iat[0] == pytest.approx(pressure_part, rel=0.02)
