"""Conformity decisions against JCGM 106:2012 and hand computations from the normal distribution."""

import math

import numpy as np
import pytest

from molid.quality.conformity import conformity_probability, decide


def _phi(z):
    """Return the standard normal distribution function, Φ(z) = (1 + erf(z/√2))/2 (any statistics text)."""
    return 0.5 * (1.0 + math.erf(z / math.sqrt(2.0)))


@pytest.mark.parametrize(("estimate", "u", "limit"), [
    (0.003, 0.001, 0.005), (0.005, 0.001, 0.005), (0.0062, 0.0008, 0.005), (0.0, 0.0015, 0.001)])
def test_probability_of_conformity_is_the_normal_tail(estimate, u, limit):
    """p_c = Φ((T_U − x̂)/u), JCGM 106:2012 7.3 for a single upper limit and a normal PDF.

    Hand values: Φ(2) = 0.97725, Φ(0) = 0.5, Φ(−1.5) = 0.06681, Φ(0.6667) = 0.74751
    (standard normal tables).
    """
    assert float(conformity_probability(estimate, u, limit)) == pytest.approx(_phi((limit - estimate) / u),
                                                                              abs=1e-12)


def test_guarded_acceptance_at_its_acceptance_limit_leaves_at_most_2_3_percent_risk():
    """With the guard band w = U = 2u, a result at the acceptance limit conforms with p_c = Φ(2) ≈ 0.977.

    JCGM 106:2012 8.3.2 (guarded acceptance; with w = U and k = 2 the specific consumer's
    risk at the acceptance limit is about 2.3 %, from memory of its Figure 10 discussion).
    """
    outcome, probability = decide([0.003], 0.001, 0.005, "guarded")
    assert outcome[0] == "conforms"
    assert float(probability[0]) == pytest.approx(_phi(2.0), abs=1e-12)
    outcome, _ = decide([0.0030001], 0.001, 0.005, "guarded")
    assert outcome[0] == "undecided"


def test_simple_acceptance_at_the_limit_is_a_coin_toss():
    """Simple acceptance (JCGM 106:2012 8.2): a result on the limit conforms, with p_c = 0.5."""
    outcome, probability = decide([0.005, 0.00501], 0.001, 0.005, "simple")
    assert outcome.tolist() == ["conforms", "does-not-conform"]
    assert float(probability[0]) == pytest.approx(0.5)


def test_the_wrong_gas_does_not_conform_and_no_limit_means_no_decision():
    """Checks behaviour: identity first; without a specification there is no outcome."""
    outcome, probability = decide([0.001, 0.001], 0.001, [0.005, np.nan], "guarded", [False, True])
    assert outcome.tolist() == ["does-not-conform", ""]
    assert float(probability[0]) == 0.0 and np.isnan(probability[1])


def test_unknown_rule_is_refused():
    """Checks behaviour: only the two documented rules exist."""
    with pytest.raises(ValueError, match="guarded"):
        decide([0.0], 0.001, 0.005, "lenient")
