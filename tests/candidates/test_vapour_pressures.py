"""Candidates' vapour pressures in the evaluation: their own equations, against CoolProp."""

import numpy as np
import pytest

from molid.candidates.evaluation import candidate_constants
from molid.candidates.library import load_library
from molid.candidates.vapour_pressures import saturation_pressure

CoolProp = pytest.importorskip("CoolProp.CoolProp")


@pytest.mark.parametrize(("name", "fluid"), [("acetone", "Acetone"), ("ethanol", "Ethanol"),
                                             ("n-hexane", "Hexane"), ("diethyl ether", "DiethylEther"),
                                             ("n-butane", "n-Butane")])
def test_candidate_vapour_pressure_uses_its_equation(name, fluid):
    """At 15, 20 and 25 °C the candidate's p_sat is CoolProp's within 2u (CoolProp 6.6+ EOS)."""
    library = load_library()
    constants = candidate_constants(library)
    column = np.flatnonzero(library["name"].to_numpy() == name)
    T = np.array([[288.15], [293.15], [298.15]])
    values, u_relative = saturation_pressure(T, constants, column, np.full(1, 0.05))
    reference = np.array([CoolProp.PropsSI("P", "T", t, "Q", 0, fluid) for t in T[:, 0]])
    assert np.all(u_relative[:, 0] <= 0.005)  # the equation's term, not the estimate's
    assert np.all(np.abs(values[:, 0] / reference - 1.0) <= 2 * u_relative[:, 0])


def test_outside_its_range_the_estimate_is_used():
    """Checks behaviour: below an equation's published range the corresponding-states estimate serves."""
    library = load_library()
    constants = candidate_constants(library)
    column = np.flatnonzero(library["name"].to_numpy() == "acetone")
    minimum = constants["vapour_equations"]["minimum_temperature"][column][0]
    _, u_relative = saturation_pressure(np.array([[minimum - 5.0]]), constants, column, np.full(1, 0.05))
    assert u_relative[0, 0] == 0.05
