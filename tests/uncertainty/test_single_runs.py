"""Samples of one run each are combined without grouping, and give what grouping gives, to the bit."""

import numpy as np
import pandas as pd
import pytest

from molid.uncertainty import replicates


def _runs(seed, count=40):
    generator = np.random.default_rng(seed)
    sign = generator.choice([1.0, -1.0, 0.0], count, p=[0.9, 0.05, 0.05])
    value = generator.uniform(2e-3, 0.35, count) * sign
    u = np.abs(value) * generator.uniform(1e-5, 0.05, count) + generator.choice([0.0, 1e-6], count)
    contributions = {name: u * generator.uniform(0.0, 0.9, count) for name in ("volume", "humidity")}
    contributions["humidity"][generator.random(count) < 0.2] = np.nan
    contributions["volume"][generator.random(count) < 0.2] = 0.0
    sample = np.array([f"S-{index}" for index in generator.permutation(count)], dtype=object)
    return sample, value, u, contributions


@pytest.mark.parametrize("seed", range(20))
def test_single_runs_equal_the_grouped_combination(seed):
    """Checks behaviour: the one-run path gives the grouped path's frame, every float to the bit."""
    sample, value, u, contributions = _runs(seed)
    weight = 1.0 / np.maximum(u, 1e-300) ** 2
    fast = replicates._single_runs(sample, value, weight, contributions)
    grouped = replicates._grouped(sample, value, weight, contributions)
    pd.testing.assert_frame_equal(fast, grouped)
    for column in ("value", "u", "u_independent", "u_shared", "chi_square", "birge_ratio", "p_value"):
        assert fast[column].to_numpy().tobytes() == grouped[column].to_numpy().tobytes(), column


@pytest.mark.parametrize("seed", range(5))
def test_combination_and_shared_inputs_of_single_runs(seed):
    """Checks behaviour: combine_replicates and shared_inputs take the one-run path, as grouping would."""
    sample, value, u, contributions = _runs(seed)
    ok = np.random.default_rng(seed).random(len(sample)) < 0.9
    values = {name: np.full(len(sample), 1.0) for name in ("volume", "humidity", "co2")}
    uncertainties = {"volume": u, "humidity": u}
    fast = replicates.shared_inputs(sample, values, uncertainties, ok)
    grouped = replicates._shared_by_grouping(sample, values, uncertainties, ok)
    assert fast.keys() == grouped.keys() == {"volume", "humidity"}
    for name in fast:
        assert np.array_equal(fast[name], grouped[name])
    combined = replicates.combine_replicates(sample, value, u, contributions, ok)
    assert combined["n"].tolist() == [1] * int(ok.sum())
    assert combined["p_value"].isna().all() and not combined["widened"].any()
