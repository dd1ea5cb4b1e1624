"""Gas laws: molar volume, density, state conversions and relative density.

Sources: CODATA 2018 molar volume of an ideal gas (tests/reference_values.toml
[gas_states.ideal_molar_volume_atm] and [constants.standard_molar_volume]); hand calculations
shown in each test; CoolProp 8.0 reference equations of state (densities and compression factors
of real gases); ISO 6976:2016 for the relative density; the `uncertainties` package 3.2 and
GUM (JCGM 100:2008) 5.1.6 for the propagation.
"""

import math

import numpy as np
import pytest
from uncertainties import correlated_values, ufloat

from molid.physics.constants import GAS_CONSTANT
from molid.physics.gas_laws import (
    convert_density,
    convert_volume,
    mass_density,
    molar_volume,
    relative_density,
)

PropsSI = pytest.importorskip("CoolProp.CoolProp").PropsSI


def _coolprop_compressibility(fluid, temperature, pressure):
    """Z = p/(ρ_molar·R·T) from CoolProp's reference equation of state."""
    return pressure / (PropsSI("Dmolar", "T", temperature, "P", pressure, fluid) * GAS_CONSTANT * temperature)


def test_ideal_molar_volume_at_one_atmosphere_is_codata(reference):
    """V_m of the ideal gas at 273.15 K and 101.325 kPa is 22.413 969 54 L/mol.

    Source: CODATA 2018 (reference_values.toml [gas_states.ideal_molar_volume_atm]).
    """
    entry = reference["gas_states"]["ideal_molar_volume_atm"]
    value = molar_volume(entry["temperature"], entry["pressure"]) * 1e3
    assert value == pytest.approx(entry["value"], abs=entry["tolerance_absolute"])


def test_ideal_molar_volume_at_one_bar_is_codata(reference):
    """V_m of the ideal gas at 273.15 K and 100 kPa is 22.710 954 64 L/mol.

    Source: CODATA 2018 (reference_values.toml [constants.standard_molar_volume]).
    """
    entry = reference["constants"]["standard_molar_volume"]
    value = molar_volume(entry["temperature"], entry["pressure"]) * 1e3
    assert value == pytest.approx(entry["value"], rel=entry["tolerance_relative"])


def test_convert_volume_by_hand():
    """The combined gas law, by hand.

    1.000 L at 20 °C and 98.0 kPa is, at 0 °C and 101.325 kPa,
    1.000 × (98.0/101.325) × (273.15/293.15) = 0.967 185 × 0.931 775 = 0.901 199 L; and 2.50 L at
    25 °C and 100 kPa at 50 °C and 200 kPa is 2.50 × 0.5 × (323.15/298.15) = 1.25 × 1.083 850 = 1.354 81 L.
    Source: hand calculation from pV/T constant (Atkins & de Paula, Physical Chemistry, 8th ed., 1.2).
    """
    assert convert_volume(1.000, 293.15, 98.0e3, 273.15, 101325.0) == pytest.approx(0.901199, abs=1e-6)
    assert convert_volume(2.50, 298.15, 100e3, 323.15, 200e3) == pytest.approx(1.354813, abs=1e-6)


def test_convert_density_by_hand():
    """Density between states, by hand: the inverse ratio of the volume's.

    1.2 kg/m³ at 0 °C and 101.325 kPa is, at 20 °C and 98.0 kPa,
    1.2 × (98.0/101.325) × (273.15/293.15) = 1.081 439 kg/m³; with Z = 0.99 at the first state and
    0.995 at the second, × 0.99/0.995 = 1.076 005 kg/m³.
    Source: hand calculation from ρ = pM/(ZRT) at both states.
    """
    assert convert_density(1.2, 273.15, 101325.0, 293.15, 98.0e3) == pytest.approx(1.081439, abs=1e-6)
    assert convert_density(1.2, 273.15, 101325.0, 293.15, 98.0e3, 0.99, 0.995) == \
        pytest.approx(1.076005, abs=1e-6)


@pytest.mark.parametrize("fluid, states", [
    ("CarbonDioxide", ((298.15, 100e3), (273.15, 101325.0))),
    ("R134a", ((293.15, 98.5e3), (288.15, 101325.0))),
    ("n-Propane", ((303.15, 101.3e3), (273.15, 120e3))),
])
def test_real_gas_conversion_with_coolprop_compressibility(fluid, states):
    """With Z of a real gas at both states the conversion is exact.

    Source: CoolProp 8.0 (Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498): density and Z at each
    state; the ideal-gas conversion alone is off by the ratio of the two Z.
    """
    (T1, p1), (T2, p2) = states
    Z1, Z2 = _coolprop_compressibility(fluid, T1, p1), _coolprop_compressibility(fluid, T2, p2)
    rho1, rho2 = PropsSI("D", "T", T1, "P", p1, fluid), PropsSI("D", "T", T2, "P", p2, fluid)
    assert convert_density(rho1, T1, p1, T2, p2, Z1, Z2) == pytest.approx(rho2, rel=1e-9)
    assert convert_volume(1 / rho1, T1, p1, T2, p2, Z1, Z2) == pytest.approx(1 / rho2, rel=1e-9)
    assert abs(convert_density(rho1, T1, p1, T2, p2) / rho2 - 1) > 1e-4  # the ideal gas is not enough
    molar_mass = PropsSI("M", fluid)
    assert mass_density(molar_mass, T2, p2, Z2) == pytest.approx(rho2, rel=1e-9)
    assert molar_volume(T2, p2, Z2) == pytest.approx(molar_mass / rho2, rel=1e-9)


def test_relative_density_of_methane_as_iso_6976(reference):
    """Methane at 15 °C and 101.325 kPa: d = (M/M_air)(Z_air/Z) with ISO 6976's tabulated values.

    By hand: 16.042 46/28.965 46 × 0.999 595/(1 − 0.044 52²) = 0.553 853 × 1.001 581 = 0.554 72.
    Source: ISO 6976:2016 Tables A.1-A.3 and clause 9 (reference_values.toml [gas_states.iso6976]).
    """
    entry = reference["gas_states"]["iso6976"]
    k = entry["names"].index("methane")
    d = relative_density(entry["molar_masses"][k], 1 - entry["summation_15C"][k] ** 2,
                         entry["air_molar_mass"], entry["air_compressibility_15C"])
    assert d == pytest.approx(0.55472, abs=1e-5)


def test_uncertainties_propagate_as_the_gum_product_rule():
    """The u of a converted volume from independent inputs: (u/V₂)² = Σ (u_i/x_i)², a product of powers.

    Source: GUM (JCGM 100:2008) 5.1.6, by hand: V = 1.000(2) L, T₁ = 293.15(10) K, p₁ = 98.00(5) kPa,
    T₂ and p₂ exact: relative u = √(0.002² + (0.1/293.15)² + (0.05/98)²) = 2.092 × 10⁻³; the
    `uncertainties` package carries the same number.
    """
    converted = convert_volume(ufloat(1.000, 0.002), ufloat(293.15, 0.10), ufloat(98.00e3, 50.0),
                               273.15, 101325.0)
    hand = math.sqrt(0.002**2 + (0.1 / 293.15) ** 2 + (50.0 / 98.0e3) ** 2)
    assert converted.s / converted.n == pytest.approx(hand, rel=1e-9)
    assert hand == pytest.approx(2.092e-3, abs=1e-6)


def test_correlated_inputs_cancel_on_a_round_trip():
    """There and back with the same uncertain state gives the volume back with its own u only.

    Source: the `uncertainties` package 3.2 (first-order correlations); GUM 5.2 (correlated inputs).
    """
    temperature, pressure = correlated_values([293.15, 98.0e3], np.diag([0.1**2, 50.0**2]))
    volume = ufloat(1.0, 0.001)
    there = convert_volume(volume, temperature, pressure, 273.15, 101325.0)
    back = convert_volume(there, 273.15, 101325.0, temperature, pressure)
    assert back.n == pytest.approx(1.0, rel=1e-12)
    assert back.s == pytest.approx(0.001, rel=1e-9)
    assert there.s > 0.001  # one way the state's uncertainty counts


def test_arrays_and_complex_step():
    """Arrays broadcast, and a complex step gives the analytic derivative ∂ρ/∂T = −ρ/T.

    Source: calculus of ρ = pM/(ZRT); Squire & Trapp, SIAM Review 40 (1998) 110 (complex step).
    """
    temperature = np.array([273.15, 288.15, 293.15])
    densities = mass_density(44.0095e-3, temperature, 101325.0)
    assert densities.shape == (3,)
    step = 1e-30
    derivative = np.imag(mass_density(44.0095e-3, temperature + 1j * step, 101325.0)) / step
    assert derivative == pytest.approx(-densities / temperature, rel=1e-12)
