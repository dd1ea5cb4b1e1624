"""The operating characteristic of a planned purity decision at its limit (JCGM 106:2012).

Sources: JCGM 106:2012, 7.3 (probability of conformity for a normal state of knowledge),
8.2 (simple acceptance) and 8.3.2 (guarded acceptance, guard band w = U); the standard
normal distribution, Φ(0) = 0.5 and Φ(−2) = 0.02275 (any table of the normal distribution);
binomial sampling error of a simulated fraction (common practice); runs simulated from
CoolProp 8.0's mixture model for carbon dioxide with air (GERG-2008) and its humid air
(tests/planning/coolprop_runs.py).
"""

import numpy as np
import pytest

from molid.pipeline.identify import identify
from molid.planning.conditions import nominal_conditions
from molid.planning.decision import operating_characteristic
from molid.planning.plan import make_plan

coolprop_runs = pytest.importorskip("tests.planning.coolprop_runs")

LIMIT = 2.0  # percent of air in carbon dioxide
RUNS = 400


def _at_limit(plan):
    points = plan["operating_characteristic"]
    middle = points[len(points) // 2]
    assert middle["x"] == pytest.approx(plan["qa"]["limit"])
    return middle


def test_acceptance_at_the_limit_by_hand():
    """The plan's acceptance at the limit equals the hand computation from the normal distribution.

    At x = T_U the estimate is normal about T_U with standard uncertainty u, so (by hand):
    simple acceptance accepts when x̂ ≤ T_U:        P = Φ((T_U − T_U)/u) = Φ(0) = 0.5;
    guarded acceptance (w = U = 2u) when x̂ ≤ T_U − 2u: P = Φ((T_U − 2u − T_U)/u) = Φ(−2) = 0.02275,
    at most 2.5 %; guarded rejection (x̂ > T_U + 2u) is as likely, 0.02275, and the rest,
    1 − 2 × 0.02275 = 0.9545, is undecided (standard normal table).
    """
    simple = _at_limit(make_plan(method="syringe", label="carbon dioxide", limit=LIMIT, rule="simple"))
    guarded = _at_limit(make_plan(method="syringe", label="carbon dioxide", limit=LIMIT, rule="guarded"))
    assert simple["accept"] == pytest.approx(0.5, abs=1e-6)
    assert simple["undecided"] == pytest.approx(0.0, abs=1e-6)
    assert guarded["accept"] == pytest.approx(0.02275, abs=2e-5)
    assert guarded["accept"] <= 0.025
    assert guarded["reject"] == pytest.approx(0.02275, abs=2e-5)
    assert guarded["undecided"] == pytest.approx(0.9545, abs=1e-4)


def test_characteristic_falls_from_accept_to_reject():
    """Checks behaviour: acceptance falls and rejection rises with the true fraction; the three add to 1."""
    x = np.linspace(0, 0.02, 41)
    found = operating_characteristic(x, 0.001, 0.01, "guarded")
    assert np.all(np.diff(found["accept"]) <= 1e-15) and np.all(np.diff(found["reject"]) >= -1e-15)
    assert np.allclose(found["accept"] + found["reject"] + found["undecided"], 1.0)


@pytest.mark.parametrize("rule", ["simple", "guarded"])
def test_simulated_cylinders_at_the_limit_are_accepted_as_planned(rule):
    """400 syringe runs of CO2 with exactly 2 % air (CoolProp mixture) go through identify's QA step.

    The share accepted must match the plan's operating characteristic at the limit within
    four binomial standard errors, √(P(1 − P)/n), plus 0.03 for the difference between
    CoolProp's mixture model and molid's virial mixture (a bias of about 0.05 u moves the
    simple rule's 50 % by 2 %).
    """
    plan = make_plan(method="syringe", label="carbon dioxide", contaminant="air", limit=LIMIT, rule=rule)
    planned = _at_limit(plan)["accept"]
    conditions = nominal_conditions("syringe").as_dict()
    frame = coolprop_runs.runs("syringe", conditions, "CarbonDioxide", RUNS, np.random.default_rng(3),
                               fraction=LIMIT / 100)
    frame["expected"] = "carbon dioxide"
    frame["max_contaminant [%]"] = str(LIMIT)
    outcomes = identify(frame, contaminant="air", rule=rule).quality.runs["outcome"]
    accepted = float(np.mean(outcomes == "conforms"))
    tolerance = 4 * np.sqrt(max(planned * (1 - planned), 0.02) / RUNS) + 0.03
    assert accepted == pytest.approx(planned, abs=tolerance)
    if rule == "guarded":
        assert accepted <= 0.025 + 4 * np.sqrt(0.025 * 0.975 / RUNS)
