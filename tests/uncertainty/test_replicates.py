"""Replicate combination against hand computation (Birge 1932; GUM F.1.2)."""

import numpy as np
import pytest

from molid.uncertainty.replicates import chi_square_p_value, combine_replicates


def test_weighted_mean_and_birge_ratio_by_hand():
    """Inverse-variance mean, χ² and Birge ratio equal the hand computation; scatter widens u."""
    values = np.array([10.0, 10.3, 9.8])
    u = np.array([0.1, 0.2, 0.1])
    result = combine_replicates(["s"] * 3, values, u, {}, np.ones(3, bool)).iloc[0]
    w = 1 / u**2
    mean = (w * values).sum() / w.sum()
    chi2 = (w * (values - mean) ** 2).sum()
    birge = np.sqrt(chi2 / 2)
    assert result["value"] == pytest.approx(mean)
    assert result["chi_square"] == pytest.approx(chi2)
    assert result["birge_ratio"] == pytest.approx(birge)
    assert birge > 1 and result["widened"]
    assert result["u"] == pytest.approx(birge / np.sqrt(w.sum()))


def test_consistent_runs_are_not_widened():
    """Runs agreeing better than their uncertainties keep the internal uncertainty 1/√Σw."""
    values = np.array([10.0, 10.01])
    u = np.array([0.1, 0.1])
    result = combine_replicates(["s", "s"], values, u, {}, np.ones(2, bool)).iloc[0]
    assert not result["widened"]
    assert result["u"] == pytest.approx(0.1 / np.sqrt(2))


def test_shared_effect_is_not_averaged_down():
    """A contribution common to all runs (same bulb volume) stays whole after averaging (GUM F.1.2)."""
    values = np.array([10.0, 10.0, 10.0, 10.0])
    shared = np.full(4, 0.08)
    independent = np.full(4, 0.06)
    u = np.hypot(shared, independent)
    result = combine_replicates(["s"] * 4, values, u, {"volume": shared}, np.ones(4, bool)).iloc[0]
    assert result["u_shared"] == pytest.approx(0.08)
    assert result["u"] == pytest.approx(np.hypot(0.08, 0.06 / 2))


def test_runs_with_errors_are_left_out():
    """Only runs with a result take part."""
    values = np.array([10.0, np.nan, 10.2])
    u = np.array([0.1, np.nan, 0.1])
    result = combine_replicates(["s"] * 3, values, u, {}, np.array([True, False, True])).iloc[0]
    assert result["n"] == 2 and result["value"] == pytest.approx(10.1)


def test_chi_square_p_value_against_tables():
    """Upper-tail χ² probabilities at 5.991/2 dof and 11.345/3 dof (common practice: tables)."""
    assert float(chi_square_p_value(5.991, 2)) == pytest.approx(0.05, abs=2e-4)
    assert float(chi_square_p_value(11.345, 3)) == pytest.approx(0.01, abs=2e-4)


def test_calibration_uncertainty_is_not_averaged_down(tmp_path):
    """A certificate's U (common to all runs) stays whole in a sample's u (GUM F.1.2.1)."""
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
