"""Chi-squared tail probabilities of the replicate check, and scipy only when a sample has replicates."""

import subprocess
import sys

import numpy as np
import pytest

from molid.uncertainty.replicates import chi_square_p_value


@pytest.mark.parametrize("dof, critical", [(1, 3.841), (2, 5.991), (3, 7.815), (5, 11.070), (10, 18.307)])
def test_five_percent_points(dof, critical):
    """The tabulated 5 % points of chi-squared give p = 0.05.

    NIST/SEMATECH e-Handbook of Statistical Methods, 1.3.6.7.4, critical values of the
    chi-square distribution (from memory).
    """
    assert float(chi_square_p_value(critical, dof)) == pytest.approx(0.05, abs=5e-5)


def test_no_replicates_gives_nan_without_scipy():
    """Checks behaviour: with no degree of freedom anywhere the p-values are NaN and scipy is not imported."""
    code = ("import sys, numpy as np\n"
            "from molid.uncertainty.replicates import chi_square_p_value\n"
            "p = chi_square_p_value(np.array([0.0, 0.0]), np.array([0, 0]))\n"
            "print(np.isnan(p).all(), p.shape, 'scipy' in sys.modules)\n")
    output = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert output.split() == ["True", "(2,)", "False"]


def test_mixed_samples_keep_nan_where_no_replicate():
    """Checks behaviour: one sample with replicates and one without: a p-value and a NaN."""
    p = chi_square_p_value(np.array([3.841, 0.0]), np.array([1, 0]))
    assert p[0] == pytest.approx(0.05, abs=5e-5) and np.isnan(p[1])
