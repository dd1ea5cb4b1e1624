"""The method registry: every registered method declares every part, and the stages use them."""

import dataclasses

import numpy as np
import pytest

from molid.io.columns import METHODS as READER_METHODS
from molid.methods.base import Method, missing_parts
from molid.methods.model import gas_mass
from molid.methods.registry import METHOD_CODES, METHODS, mistake_applies
from molid.teaching.diagnosis import mistake_variants


@pytest.mark.parametrize("name", list(METHODS))
def test_registered_method_is_complete(name):
    """Checks behaviour: each registered method has name, inputs, model, corrections, mistakes, simulator."""
    assert missing_parts(METHODS[name]) == []


def test_incomplete_method_is_reported():
    """Checks behaviour: a method missing its simulator or declaring unknown inputs is named."""
    complete = METHODS["syringe"]
    broken = dataclasses.replace(complete, simulate_readings=None, optional_inputs=("colour",))
    problems = missing_parts(broken)
    assert any("simulate_readings" in line for line in problems)
    assert any("colour" in line for line in problems)


def test_every_stage_knows_every_method():
    """Checks behaviour: the reader, the codes and the diagnosis cover exactly the registered methods."""
    assert set(READER_METHODS) == set(METHODS) == set(METHOD_CODES)
    codes = {variant.code for variant in mistake_variants()[1:]}
    for method in METHODS.values():
        assert set(method.mistakes) <= codes


@pytest.mark.parametrize("name", list(METHODS))
def test_simulated_readings_give_back_the_gas_mass(name):
    """Checks behaviour: readings drawn by the simulator give back the gas mass through the model.

    The simulator adds up the forces on the pan (glass, gas, displaced air) and balances them
    against reference weights of 8000 kg/m³ (OIML R 111-1, D 28:2004); the model works the
    other way, through the conventional-mass factor.
    """
    method = METHODS[name]
    air_density = np.array([1.15, 1.20, 1.22])
    volume = np.array([100e-6, 250e-6, 1e-3])
    mass = np.array([0.18e-3, -0.05e-3, 1.9e-3])
    tare, filled = method.simulate_readings(mass, air_density, volume)
    recovered = gas_mass(tare, filled, volume, air_density, np.full(3, METHOD_CODES[name]))
    np.testing.assert_allclose(recovered, mass, rtol=1e-12, atol=1e-15)


def test_mistakes_apply_per_method():
    """Checks behaviour: leaving out the displaced air is a mistake only where the method has that term."""
    codes = np.array([METHOD_CODES["evacuated-bulb"], METHOD_CODES["syringe"]])
    table = mistake_applies(["no-buoyancy", "masses-swapped"], codes)
    assert table.tolist() == [[False, True], [True, True]]


def test_method_is_frozen():
    """Checks behaviour: a registered method cannot be changed by accident at run time."""
    with pytest.raises(dataclasses.FrozenInstanceError):
        METHODS["syringe"].name = "other"  # type: ignore[misc]
    assert isinstance(METHODS["syringe"], Method)
