"""The weighing model and the balance simulator against published buoyancy and conventional-mass values.

Two routes through molid are checked against each value: the forward route, a body or a gas weighed
by a method's simulator (forces on the pan balanced by 8000 kg/m³ reference weights), and the
backward route, the balance readings turned into a true mass by a method's ``gas_mass`` model.
Reference numbers and their provenance are in the ``buoyancy`` section of tests/reference_values.toml.
"""

import numpy as np
import pytest

from molid.methods.registry import METHODS
from molid.physics.constants import CONVENTIONAL_AIR_DENSITY, CONVENTIONAL_MASS_DENSITY

MILLIGRAM = 1e-6
GRAM = 1e-3


def weigh_body(method, true_mass, density, air_density):
    """Weigh a body of a given mass [kg] and density [kg/m³] with a method's simulator; the indication [kg].

    The body is the "glass" of an empty vessel of no inner volume: its tare reading is the body alone.
    """
    tare, _ = METHODS[method].simulate_readings(0.0, air_density, 0.0, glass_mass=true_mass,
                                                outer_volume=true_mass / density)
    return float(tare)


def true_mass_by_model(mass_tare, mass_filled, density, air_density):
    """Return the true mass [kg] of a load of known density from two readings, by the syringe's model.

    The syringe's model m = ΔI (1 − ρ_a/ρ_c) + ρ_a V is the weighing of a load that brings its own
    volume V onto the pan; for a liquid or a solid V = m/ρ, so the model is solved by fixed-point
    iteration (each step gains a factor ρ_a/ρ, about 1e-3).
    """
    model = METHODS["syringe"].gas_mass
    mass = mass_filled - mass_tare
    for _ in range(8):
        mass = float(model(mass_tare, mass_filled, mass / density, air_density))
    return mass


def test_reference_weights_are_oiml(reference):
    """The reference-weight and air densities are those of conventional mass (OIML R 111-1, D 28)."""
    entry = reference["buoyancy"]["conventional_mass_definition"]
    assert CONVENTIONAL_MASS_DENSITY == entry["reference_density"]
    assert CONVENTIONAL_AIR_DENSITY == entry["reference_air_density"]


@pytest.mark.parametrize("method", list(METHODS))
@pytest.mark.parametrize("air_density", [1.05, 1.2, 1.3])
def test_reference_weight_reads_its_mass_in_any_air(method, air_density):
    """A weight of the reference density 8000 kg/m³ reads its own mass whatever the air.

    Source: OIML R 111-1:2004 / D 28:2004, definition of conventional mass (a body of density ρ_c
    has m_c = m; the balance is adjusted with such weights). Weighed by each method's simulator.
    """
    reading = weigh_body(method, 0.2, CONVENTIONAL_MASS_DENSITY, air_density)
    assert reading == pytest.approx(0.2, rel=1e-14)


@pytest.mark.parametrize("method", list(METHODS))
def test_conventional_mass_of_a_steel_kilogram(method, reference):
    """A 1 kg stainless-steel weight of density 7950 kg/m³ has a conventional mass 0.94354 mg below 1 kg.

    Source: OIML R 111-1:2004 and D 28:2004 definition m_c = m (1 − ρ0/ρ)/(1 − ρ0/ρc), ρ0 = 1.2 kg/m³,
    ρc = 8000 kg/m³. Hand computation:
    m_c − m = −m (1.2/7950 − 1.2/8000)/(1 − 1.2/8000) = −(1.2 × 50)/(7950 × 8000)/0.99985 kg
    = −9.43396e-7/0.99985 kg = −9.4354e-7 kg = −0.94354 mg.
    Forward: the weight read by the simulator in air of 1.2 kg/m³. Backward: that reading through the
    syringe's model (a load bringing its volume 1/7950 m³ onto the pan) gives back 1 kg.
    """
    entry = reference["buoyancy"]["steel_kilogram_7950"]
    mass, density, air = entry["true_mass"], entry["density"], entry["air_density"]
    reading = weigh_body(method, mass, density, air)
    difference_mg = (reading - mass) / MILLIGRAM
    assert difference_mg == pytest.approx(entry["conventional_minus_true_mg"],
                                          abs=entry["tolerance_absolute_mg"])
    recovered = float(METHODS["syringe"].gas_mass(0.0, reading, mass / density, air))
    assert recovered == pytest.approx(mass, abs=1e-12)


@pytest.mark.parametrize("material", ["aluminium", "platinum"])
def test_relative_deviation_of_conventional_mass_by_material(material, reference):
    """m_c/m − 1 is about −3e-4 for aluminium and +1e-4 for platinum (OIML D 28:2004, 5).

    Densities 2700 and 21450 kg/m³ (CRC Handbook, from memory). Weighed by the evacuated bulb's
    simulator in the conventional air of 1.2 kg/m³.
    """
    entry = reference["buoyancy"]["relative_deviation_by_material"]
    reading = weigh_body("evacuated-bulb", 1.0, entry[f"{material}_density"], CONVENTIONAL_AIR_DENSITY)
    assert reading - 1.0 == pytest.approx(entry[f"{material}_deviation"], abs=entry["tolerance_absolute"])


@pytest.mark.parametrize("method", list(METHODS))
def test_e1_density_limits_of_a_kilogram(method, reference):
    """OIML R 111-1:2004 Table 5 limits a 1 kg E1 weight to 7934–8067 kg/m³ (from memory).

    The limits keep the change of its conventional-mass reading, when the air is 10 % away from
    1.2 kg/m³, within a quarter of the E1 maximum permissible error of 0.5 mg (Table 1; the rule
    from memory). The simulator must find the published limits inside that bound and the next
    whole kg/m³ outside them beyond it, so it reproduces the table to its rounding.
    """
    entry = reference["buoyancy"]["e1_kilogram_density_limits"]
    mass = entry["nominal_mass"]
    bound = entry["fraction_of_error"] * entry["maximum_permissible_error_mg"] * MILLIGRAM
    step = entry["tolerance_absolute"]
    airs = CONVENTIONAL_AIR_DENSITY * (1.0 + np.array([-1.0, 1.0]) * entry["air_density_deviation_relative"])

    def largest_change(density):
        at_reference = weigh_body(method, mass, density, CONVENTIONAL_AIR_DENSITY)
        return max(abs(weigh_body(method, mass, density, air) - at_reference) for air in airs)

    for limit, outward in ((entry["density_minimum"], -step), (entry["density_maximum"], step)):
        assert largest_change(limit) <= bound
        assert largest_change(limit + outward) > bound


TEXTBOOK_CASES = ["textbook_tris", "textbook_water", "textbook_liquid_in_bottle"]


def _textbook_readings(entry):
    """Tare and filled readings [kg] of a textbook case (a bare object has a tare of zero)."""
    if "tare_g" in entry:
        return entry["tare_g"] * GRAM, entry["filled_g"] * GRAM
    return 0.0, entry["apparent_mass_g"] * GRAM


@pytest.mark.parametrize("case", TEXTBOOK_CASES)
def test_textbook_buoyancy_examples_through_the_model(case, reference):
    """True masses of the analytical-chemistry buoyancy equation, from the readings through molid's model.

    m = m' (1 − d_a/d_w)/(1 − d_a/d), d_a = 0.0012 g/mL, d_w = 8.0 g/mL (Harris, Quantitative Chemical
    Analysis, 8th ed., Eq. 2-1, from memory). Cases, each with its source in reference_values.toml:
    tris 1.33 g/mL, 100.00 g → 100.08 g (Harris, from memory); water 1.00 g/mL, 100.00 g → 100.105 g
    (hand: 100.00 × 0.99985/0.9988); an organic liquid of 0.92 g/cm³ weighed in a bottle, 7.6500 g
    empty and 9.9700 g filled → 2.3227 g (Skoog et al., 9th ed., Example 2-1, from memory).
    """
    equation = reference["buoyancy"]["textbook_buoyancy_equation"]
    assert (equation["air_density"], equation["weight_density"]) == (
        CONVENTIONAL_AIR_DENSITY, CONVENTIONAL_MASS_DENSITY)
    entry = reference["buoyancy"][case]
    tare, filled = _textbook_readings(entry)
    mass = true_mass_by_model(tare, filled, entry["density"], equation["air_density"])
    assert mass / GRAM == pytest.approx(entry["true_mass_g"], abs=entry["tolerance_absolute_g"])


@pytest.mark.parametrize("method", ["air-tare-bulb", "syringe"])
@pytest.mark.parametrize("case", TEXTBOOK_CASES)
def test_textbook_buoyancy_examples_through_the_simulator(method, case, reference):
    """The published true masses, weighed by the simulator, read the published apparent masses.

    Same sources as the model test above. The object enters the vessel as its "gas" with V = m/ρ: in
    the drawn syringe it pushes aside V more air, in the air-tare bulb it takes the place of V of air;
    either way the reading changes as it does for the object set on the pan.
    """
    air = reference["buoyancy"]["textbook_buoyancy_equation"]["air_density"]
    entry = reference["buoyancy"][case]
    tare, filled = _textbook_readings(entry)
    mass = entry["true_mass_g"] * GRAM
    simulated_tare, simulated_filled = METHODS[method].simulate_readings(
        mass, air, mass / entry["density"], glass_mass=0.05, outer_volume=20e-6)
    change = float(simulated_filled - simulated_tare)
    # The published true mass is rounded, so the reading is allowed the same rounding.
    assert change / GRAM == pytest.approx((filled - tare) / GRAM, abs=entry["tolerance_absolute_g"])


@pytest.mark.parametrize("index", range(3))
def test_hand_computed_gas_weighings(index, reference):
    """Gas masses of a 250 mL evacuated bulb, a 250 mL air-tare bulb and a 100 mL syringe, by hand.

    Air of 1.19 kg/m³; 1 − 1.19/8000 = 0.99985125 (OIML D 28:2004 weighing against 8000 kg/m³ weights).
    Evacuated bulb, rise 0.4603 g: 0.4603 × 0.99985125 = 0.46023153 g.
    Air-tare bulb, rise 0.1628 g: 0.1628 × 0.99985125 + 1.19 kg/m³ × 250 mL
    = 0.16277578 g + 0.2975 g = 0.46027578 g.
    Syringe drawn out by 100 mL, change −0.1024 g: −0.10238477 g + 0.119 g = 0.01661523 g.
    Backward through each method's model; forward, the hand gas mass weighed by the method's simulator
    gives back the change of indication.
    """
    entry = reference["buoyancy"]["hand_gas_weighings"]
    method = METHODS[entry["methods"][index]]
    volume = entry["volumes_mL"][index] * 1e-6
    change = entry["indication_changes_g"][index] * GRAM
    air = entry["air_density"]
    tolerance = entry["tolerance_absolute_g"]
    mass = float(method.gas_mass(0.3, 0.3 + change, volume, air))
    assert mass / GRAM == pytest.approx(entry["gas_masses_g"][index], abs=tolerance)
    tare, filled = method.simulate_readings(entry["gas_masses_g"][index] * GRAM, air, volume)
    assert float(filled - tare) / GRAM == pytest.approx(entry["indication_changes_g"][index], abs=tolerance)


@pytest.mark.parametrize("name", list(METHODS))
def test_simulator_calls_nothing_the_model_uses(name):
    """Checks behaviour: a simulator refers to no function at all, so it shares no helper with the model.

    Every global name the simulator's code reads must be a plain value (the reference density),
    never a callable such as the conventional-mass factor the models apply.
    """
    simulate = METHODS[name].simulate_readings
    module_globals = simulate.__globals__
    used = [module_globals[word] for word in simulate.__code__.co_names if word in module_globals]
    assert used, "the simulator should read the reference-weight density"
    assert not any(callable(value) for value in used)
