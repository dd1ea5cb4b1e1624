"""Named gases at a state: Z, molar volume, density, relative density, conversions between states.

Sources: CoolProp 8.0 reference equations of state (Bell et al., Ind. Eng. Chem. Res. 53 (2014)
2498) for densities, compression factors and their temperature derivative, with the fluids of
tests/coolprop_fluids.csv; ISO 6976:2016 Tables A.1-A.3 for relative densities and dry air's Z
(tests/reference_values.toml [gas_states.iso6976], from memory); GUM (JCGM 100:2008) Table G.1
for the coverage of ±2u.
"""

import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from uncertainties import ufloat

from molid.candidates.gas_states import (
    DEFAULT_REFERENCE_CONDITIONS,
    convert_gas_density,
    convert_gas_volume,
    gas_compressibility,
    gas_density,
    gas_molar_volume,
    gas_relative_density,
    reference_state,
)
from molid.candidates.library import load_library
from molid.physics.constants import GAS_CONSTANT

PropsSI = pytest.importorskip("CoolProp.CoolProp").PropsSI
FLUIDS = pd.read_csv(Path(__file__).parents[1] / "coolprop_fluids.csv", comment="#")
ATMOSPHERE = 101325.0


def _gaseous(fluid, temperature, pressure):
    """Tell whether CoolProp has the fluid as a gas at the state (above its vapour pressure or critical T)."""
    try:
        return PropsSI("P", "T", temperature, "Q", 0, fluid) > pressure
    except ValueError:  # above the critical temperature
        return True


def _coolprop_z(fluid, temperature, pressure):
    return pressure / (PropsSI("Dmolar", "T", temperature, "P", pressure, fluid) * GAS_CONSTANT * temperature)


@pytest.fixture(scope="module")
def density_deviations():
    """Every library gas CoolProp has, at 0, 15 and 25 °C and 101.325 kPa: (ρ − ρ_CoolProp)/u."""
    rows = []
    for fluid in FLUIDS.itertuples():
        for temperature in (273.15, 288.15, 298.15):
            if not _gaseous(fluid.coolprop_name, temperature, ATMOSPHERE):
                continue
            ours = gas_density(fluid.library_name, temperature, ATMOSPHERE, uncertain=True)
            truth = PropsSI("D", "T", temperature, "P", ATMOSPHERE, fluid.coolprop_name)
            rows.append((fluid.library_name, temperature, (ours.n - truth) / ours.s))
    return rows


def test_named_gas_densities_against_coolprop(density_deviations):
    """Densities of about 55 gases at 0, 15 and 25 °C fall within ±2u about 95 % of the time.

    Source: CoolProp 8.0 densities; the model uncertainty of Z is sized per polar class
    (molid/data/virial_model.csv) for about 95 % within 2u (GUM Table G.1: 95.45 % for a normal
    deviation), so at least 90 % of these states are within 2u and none beyond 4u.
    """
    z = np.array([row[2] for row in density_deviations])
    assert len(z) >= 150
    assert (np.abs(z) <= 2).mean() >= 0.90
    assert np.abs(z).max() <= 4, max(density_deviations, key=lambda row: abs(row[2]))


def test_molar_volume_of_nitrogen_against_coolprop():
    """Nitrogen at 0 °C and 101.325 kPa: 22.4039 L/mol, a little below the ideal gas's 22.4140.

    Source: CoolProp 8.0 (Nitrogen, Span et al. 2000 equation of state).
    """
    ours = gas_molar_volume("nitrogen", 273.15, ATMOSPHERE, uncertain=True)
    truth = 1 / PropsSI("Dmolar", "T", 273.15, "P", ATMOSPHERE, "Nitrogen")
    assert abs(ours.n - truth) <= 2 * ours.s
    assert ours.n < GAS_CONSTANT * 273.15 / ATMOSPHERE


@pytest.mark.parametrize("gas, fluid", [("carbon dioxide", "CarbonDioxide"), ("propane", "n-Propane"),
                                        ("R-134a", "R134a"), ("sulfur hexafluoride", "SulfurHexafluoride")])
def test_conversions_between_states_against_coolprop(gas, fluid):
    """From 25 °C and 100 kPa to 0 °C and 101.325 kPa, volume and density, within 2u of CoolProp.

    Source: CoolProp 8.0 densities at both states; the ideal gas law alone misses by the Z ratio.
    """
    first, second = (298.15, 100e3), (273.15, ATMOSPHERE)
    rho1 = PropsSI("D", "T", first[0], "P", first[1], fluid)
    rho2 = PropsSI("D", "T", second[0], "P", second[1], fluid)
    density = convert_gas_density(gas, rho1, *first, *second, uncertain=True)
    volume = convert_gas_volume(gas, 1 / rho1, *first, *second, uncertain=True)
    assert abs(density.n - rho2) <= 2 * density.s
    assert abs(volume.n - 1 / rho2) <= 2 * volume.s
    assert abs(convert_gas_density(gas, rho1, *first, *second) - density.n) < 1e-12


def test_conversion_model_terms_cover_coolprop():
    """The Z ratio between 20 °C and 0 °C, with independent model errors, covers CoolProp's.

    Source: CoolProp 8.0 Z at 20 °C, 101.325 kPa and 0 °C, 101.325 kPa for every library gas that is
    a gas at both: the error of ln(Z₁/Z₂) lies within 2u for at least 95 % of them (GUM Table G.1),
    u from both states' model terms taken as independent.
    """
    inside = []
    for fluid in FLUIDS.itertuples():
        if not _gaseous(fluid.coolprop_name, 273.15, ATMOSPHERE):
            continue
        ratio = convert_gas_volume(fluid.library_name, 1.0, 293.15, ATMOSPHERE, 273.15, ATMOSPHERE,
                                   uncertain=True) / (273.15 / 293.15)  # Z(0 °C)/Z(20 °C)
        truth = _coolprop_z(fluid.coolprop_name, 273.15, ATMOSPHERE) / _coolprop_z(fluid.coolprop_name,
                                                                                 293.15, ATMOSPHERE)
        inside.append(abs(ratio.n - truth) <= 2 * ratio.s)
    assert len(inside) >= 45
    assert np.mean(inside) >= 0.95


def test_temperature_uncertainty_carries_coolprops_slope():
    """A ufloat temperature gives u(ρ) = |∂ρ/∂T|·u(T) with the real gas's slope.

    Source: CoolProp 8.0 propane density, slope by central difference over ±0.5 K at 15 °C and
    101.325 kPa; molid's slope includes dZ/dT and agrees within 0.5 %.
    """
    ours = gas_density("propane", ufloat(288.15, 0.2, "T"), ATMOSPHERE)
    slope = (PropsSI("D", "T", 288.65, "P", ATMOSPHERE, "n-Propane")
             - PropsSI("D", "T", 287.65, "P", ATMOSPHERE, "n-Propane")) / 1.0
    from_temperature = [abs(value) for variable, value in ours.derivatives.items() if variable.tag == "T"]
    assert from_temperature[0] == pytest.approx(abs(slope), rel=5e-3)


def test_relative_densities_against_iso_6976(reference):
    """Relative densities of 15 gases at 0 °C and 15 °C agree with ISO 6976:2016 within 2u.

    Source: ISO 6976:2016 Tables A.1-A.3, clause 9 (reference_values.toml [gas_states.iso6976]):
    d = (M/M_air)(Z_air/Z) with Z = 1 − s²; its u from u(s) and u(Z_air); from memory.
    """
    entry = reference["gas_states"]["iso6976"]
    for k, name in enumerate(entry["names"]):
        for temperature, column, air in ((273.15, "summation_0C", "air_compressibility_0C"),
                                         (288.15, "summation_15C", "air_compressibility_15C")):
            s = entry[column][k]
            Z = 1 - s * s
            iso = entry["molar_masses"][k] / entry["air_molar_mass"] * entry[air] / Z
            u_iso = iso * math.hypot(2 * s * entry["u_summation"][k] / Z, entry["u_air_compressibility"])
            ours = gas_relative_density(name, temperature, entry["pressure"], uncertain=True)
            assert abs(ours.n - iso) <= 2 * math.hypot(ours.s, u_iso), (name, temperature, ours, iso)


def test_dry_air_compressibility_against_iso_6976(reference):
    """Dry air's Z at 0 °C and 15 °C, 101.325 kPa, from the virial model: ISO 6976 within 2u.

    Source: ISO 6976:2016 Table A.1: Z_air = 0.999 419 and 0.999 595, u = 0.000 015 (from memory).
    """
    entry = reference["gas_states"]["iso6976"]
    library = load_library()
    for temperature, key in ((273.15, "air_compressibility_0C"), (288.15, "air_compressibility_15C")):
        state = reference_state(library, (temperature, entry["pressure"]))
        combined = math.hypot(state.u_air_compressibility, entry["u_air_compressibility"])
        assert abs(state.air_compressibility - entry[key]) <= 2 * combined
        assert state.air_molar_mass * 1e3 == pytest.approx(entry["air_molar_mass"], abs=1e-5)


def test_reference_state_knows_which_candidates_are_liquid():
    """At 0 °C and 101.325 kPa n-pentane, water and acetone are liquid, propane and n-butane gases.

    Source: CoolProp 8.0 vapour pressures at 0 °C (n-pentane 24 kPa, water 0.6 kPa, acetone 9 kPa,
    propane 474 kPa, n-butane 103 kPa: just above one atmosphere).
    """
    library = load_library()
    state = reference_state(library, DEFAULT_REFERENCE_CONDITIONS)
    names = library["name"].tolist()
    for name, fluid in (("n-pentane", "n-Pentane"), ("water", "Water"), ("acetone", "Acetone"),
                        ("propane", "n-Propane"), ("n-butane", "n-Butane")):
        liquid = PropsSI("P", "T", 273.15, "Q", 0, fluid) < ATMOSPHERE
        assert bool(state.gaseous([names.index(name)])[0]) is not liquid, name


def test_a_liquid_state_gets_no_number():
    """Checks behaviour: a state where the gas would be liquid raises, naming it and the vapour pressure."""
    with pytest.raises(ValueError, match=r"n-pentane would be liquid at 273\.15 K.*vapour pressure"):
        gas_density("n-pentane", 273.15, ATMOSPHERE)
    with pytest.raises(ValueError, match="liquid"):
        gas_density("isobutane", np.array([293.15, 253.15]), ATMOSPHERE)


def test_unknown_and_ideal_only_gases_are_refused():
    """Checks behaviour: an unknown name, isomers by formula, and a gas without critical data are refused."""
    with pytest.raises(ValueError, match="names no single library entry"):
        gas_density("unobtainium", 273.15, ATMOSPHERE)
    with pytest.raises(ValueError, match="names no single library entry"):
        gas_density("C4H10", 273.15, ATMOSPHERE)
    library = load_library(extra_candidates=("C5H8O2=methyl methacrylate-like test ester",))
    with pytest.raises(ValueError, match="no critical data"):
        gas_compressibility("methyl methacrylate-like test ester", 373.15, ATMOSPHERE, library=library)


def test_plain_inputs_give_plain_numbers_and_arrays_broadcast():
    """Checks behaviour: floats in, a float out; arrays broadcast; ufloats only when asked or given."""
    value = gas_density("carbon dioxide", 273.15, ATMOSPHERE)
    assert isinstance(value, float)
    values = gas_density("carbon dioxide", np.array([273.15, 288.15]), ATMOSPHERE)
    assert values.shape == (2,) and values[0] == pytest.approx(value)
    assert gas_density("CO2", 273.15, ATMOSPHERE, uncertain=True).n == pytest.approx(value)
    uncertain = gas_density("CO2", np.array([ufloat(273.15, 0.1), ufloat(288.15, 0.1)]), ATMOSPHERE)
    assert uncertain.shape == (2,) and uncertain[0].n == pytest.approx(value)
