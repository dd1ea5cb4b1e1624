"""Sums of runs by sample in the ranking: the same doubles as a sparse matrix product."""

import numpy as np
import pytest
from scipy.sparse import csr_matrix

from molid.candidates.ranking import _group_matrix


@pytest.mark.parametrize("runs, samples", [(0, 0), (1, 1), (15, 7), (5000, 900)])
def test_group_sums_equal_a_sparse_product_to_the_bit(runs, samples):
    """Checks behaviour: samples × runs sums equal scipy's CSR product bit for bit (1-D and 2-D).

    scipy.sparse (1.x) is the reference the ranking used before; its CSR product adds each
    row's entries in column order from zero, as the numpy sums do.
    """
    rng = np.random.default_rng(runs)
    codes = rng.integers(0, max(samples, 1), runs)
    reference = csr_matrix((np.ones(runs), (codes, np.arange(runs))), shape=(samples, runs))
    sums = _group_matrix(codes, samples, runs)
    for values in (rng.normal(size=runs) * rng.lognormal(0.0, 10.0, runs),
                   rng.normal(size=(runs, 99)) * 1e-3,
                   (rng.random((runs, 99)) > 0.5).astype(float),
                   np.where(rng.random(runs) > 0.5, -0.0, 0.0)):
        expected, got = reference @ values, sums @ values
        assert got.shape == expected.shape and got.dtype == expected.dtype
        assert np.array_equal(got.view(np.int64), expected.view(np.int64))


def test_one_code_per_run():
    """Checks behaviour: a sum matrix with fewer codes than runs is a programming error."""
    with pytest.raises(ValueError):
        _group_matrix(np.zeros(3, dtype=int), 1, 4)
