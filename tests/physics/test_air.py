"""Tests for molid.physics.air: moist-air density by the CIPM-2007 equation.

Sources: CoolProp 8.0 humid air (ASHRAE RP-1485) and Lemmon air EOS, the iapws package 1.5
(IAPWS-95), periodictable 2.1 atomic weights, and Picard et al., Metrologia 45 (2008) 149
(values from memory, tests/reference_values.toml [air]).
"""

import itertools
import sys
from pathlib import Path

import numpy as np
import periodictable
import pytest
from CoolProp.CoolProp import PropsSI
from CoolProp.HumidAirProp import HAPropsSI
from iapws.iapws95 import IAPWS95

from molid.physics import air
from molid.physics.constants import GAS_CONSTANT, ZERO_CELSIUS

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

REFERENCE = tomllib.loads((Path(__file__).parents[1] / "reference_values.toml").read_text("utf-8"))[
    "air"
]

COMPLEX_STEP = 1e-30


def _coolprop_grid():
    """Return (T, p, RH) columns of the CoolProp comparison grid."""
    entry = REFERENCE["coolprop_density_grid"]
    rows = list(
        itertools.product(
            np.array(entry["temperatures_celsius"]) + ZERO_CELSIUS,
            entry["pressures"],
            entry["relative_humidities"],
        )
    )
    return tuple(np.array(column) for column in zip(*rows, strict=True))


def test_density_against_coolprop_humid_air():
    """15-30 °C, 95-105 kPa, 10-90 % RH: rho agrees with CoolProp 8.0 HAPropsSI (1/Vha) to 6e-5."""
    temperature, pressure, humidity = _coolprop_grid()
    expected = np.array(
        [
            1.0 / HAPropsSI("Vha", "T", t, "P", p, "R", h)
            for t, p, h in zip(temperature, pressure, humidity, strict=True)
        ]
    )
    computed = air.moist_air_density(pressure, temperature, humidity)
    tolerance = REFERENCE["coolprop_density_grid"]["tolerance_relative"]
    np.testing.assert_allclose(computed, expected, rtol=tolerance, atol=0)


def test_compressibility_against_coolprop_humid_air():
    """Z of moist air agrees with CoolProp 8.0 HAPropsSI 'Z' on the same grid to 5e-5."""
    temperature, pressure, humidity = _coolprop_grid()
    expected = np.array(
        [
            HAPropsSI("Z", "T", t, "P", p, "R", h)
            for t, p, h in zip(temperature, pressure, humidity, strict=True)
        ]
    )
    fraction = air.water_vapour_mole_fraction(pressure, temperature, humidity)
    computed = air.compressibility_moist_air(pressure, temperature, fraction)
    tolerance = REFERENCE["coolprop_compressibility"]["tolerance_absolute"]
    np.testing.assert_allclose(computed, expected, rtol=0, atol=tolerance)


def test_compressibility_water_terms_against_coolprop():
    """Z(RH) - Z(0), the water terms of Z, agrees with CoolProp 8.0 HAPropsSI to 5e-6."""
    temperature, pressure, humidity = _coolprop_grid()
    expected = np.array(
        [
            HAPropsSI("Z", "T", t, "P", p, "R", h) - HAPropsSI("Z", "T", t, "P", p, "R", 0.0)
            for t, p, h in zip(temperature, pressure, humidity, strict=True)
        ]
    )
    fraction = air.water_vapour_mole_fraction(pressure, temperature, humidity)
    computed = air.compressibility_moist_air(
        pressure, temperature, fraction
    ) - air.compressibility_moist_air(pressure, temperature, 0.0)
    tolerance = REFERENCE["coolprop_compressibility_water_part"]["tolerance_absolute"]
    np.testing.assert_allclose(computed, expected, rtol=0, atol=tolerance)


def test_enhancement_factor_against_coolprop():
    """Enhancement factor equals CoolProp 8.0's saturated psi_w * p / p_sat (IAPWS-95) to 2.5e-4."""
    entry = REFERENCE["coolprop_density_grid"]
    rows = list(
        itertools.product(
            np.array(entry["temperatures_celsius"]) + ZERO_CELSIUS, entry["pressures"]
        )
    )
    temperature, pressure = (np.array(column) for column in zip(*rows, strict=True))
    expected = np.array(
        [
            HAPropsSI("psi_w", "T", t, "P", p, "R", 1.0) * p / PropsSI("P", "T", t, "Q", 0, "Water")
            for t, p in rows
        ]
    )
    computed = air.enhancement_factor(pressure, temperature)
    tolerance = REFERENCE["coolprop_enhancement_factor"]["tolerance_absolute"]
    np.testing.assert_allclose(computed, expected, rtol=0, atol=tolerance)


def test_saturation_vapour_pressure_against_iapws95():
    """CIPM-2007 psv agrees with the IAPWS-95 saturation pressure (iapws package 1.5) to 1e-4."""
    entry = REFERENCE["saturation_vapour_pressure_iapws95"]
    temperatures = np.array(entry["temperatures_celsius"]) + ZERO_CELSIUS
    expected = np.array([IAPWS95(T=t, x=0).P * 1e6 for t in temperatures])
    computed = air.saturation_vapour_pressure_cipm(temperatures)
    np.testing.assert_allclose(computed, expected, rtol=entry["tolerance_relative"], atol=0)


def test_reference_conditions_density():
    """20 °C, 101.325 kPa, 50 % RH, 400 µmol/mol CO2 gives about 1.1993 kg/m³.

    Source: common practice, from memory (reference_values.toml [air.reference_conditions]).
    """
    entry = REFERENCE["reference_conditions"]
    computed = air.moist_air_density(
        entry["pressure"],
        entry["temperature"],
        entry["relative_humidity"],
        entry["co2_mole_fraction"],
    )
    assert computed == pytest.approx(entry["density"], abs=entry["tolerance_absolute"])


def test_molar_mass_dry_air_published_value():
    """Ma(x_CO2 = 0.0004) is the published 28.96546 g/mol (Picard et al. 2008, from memory)."""
    entry = REFERENCE["molar_mass_dry_air"]
    computed = air.molar_mass_dry_air(entry["co2_mole_fraction"])
    assert computed == pytest.approx(entry["value"], rel=entry["tolerance_relative"])


def test_molar_mass_dry_air_from_composition():
    """Ma from the CIPM-2007 air composition and periodictable atomic weights agrees to 3e-5.

    Source: Picard et al. 2008, Table 1 composition (from memory); periodictable 2.1 atomic weights.
    """
    entry = REFERENCE["dry_air_composition"]
    fractions = np.array(entry["mole_fractions"])
    masses = np.array([periodictable.formula(name).mass for name in entry["species"]])
    balance = 1.0 - fractions.sum()
    molar_mass = (fractions @ masses + balance * periodictable.formula(entry["balance"]).mass) / 1e3
    co2_fraction = fractions[entry["species"].index("CO2")]
    computed = air.molar_mass_dry_air(co2_fraction)
    assert computed == pytest.approx(molar_mass, rel=entry["tolerance_relative"])


def test_molar_mass_dry_air_co2_slope_is_carbon():
    """dMa/dx_CO2 is M(CO2) - M(O2) = M(C): CO2 replaces O2 in dry air.

    Source: Picard et al. 2008, Ma = [28.96546 + 12.011 (x_CO2 - 0.0004)] 1e-3 kg/mol (from
    memory); M(C) from periodictable 2.1 atomic weights.
    """
    slope = air.molar_mass_dry_air(0.0004 + 1j * COMPLEX_STEP).imag / COMPLEX_STEP
    carbon = (periodictable.formula("CO2").mass - periodictable.formula("O2").mass) / 1e3
    assert slope == pytest.approx(carbon, rel=1e-4)


def test_gas_constant_choice(monkeypatch):
    """Density uses SI 2019 R; the paper's CODATA 2006 R changes it by the ratio of the two (1.1e-6).

    Sources: R = 8.314 462 618 J/(mol K) (SI Brochure, 9th ed., 2019) against the CODATA 2006
    8.314 472 built into CIPM-2007 (Mohr, Taylor, Newell, Rev. Mod. Phys. 80 (2008) 633; from
    memory); the formula's own 22e-6 from Picard et al. 2008 (from memory).
    """
    entry = REFERENCE["gas_constant_cipm_2007"]
    conditions = (101325.0, 293.15, 0.5)
    density = air.moist_air_density(*conditions)
    monkeypatch.setattr(air, "GAS_CONSTANT", entry["value"])
    paper_density = air.moist_air_density(*conditions)
    assert density / paper_density == pytest.approx(entry["value"] / GAS_CONSTANT, rel=1e-14)
    assert density != paper_density
    # The change of R is far below the formula's own uncertainty.
    assert abs(density / paper_density - 1) < air.CIPM_2007_RELATIVE_UNCERTAINTY / 10


def test_dry_air_limit():
    """At RH = 0 the density is CoolProp 8.0's dry humid-air density, and exactly p Ma / (Z R T).

    Sources: CoolProp HAPropsSI 1/Vha at R = 0 (tolerance of [air.coolprop_density_grid]); the
    form rho = p Ma / (Z R T) [1 - x_v (1 - Mv/Ma)] with x_v = 0 is CIPM-2007 eq. (1),
    Picard et al., Metrologia 45 (2008) 149 (from memory).
    """
    pressure = np.array([95000.0, 101325.0, 105000.0])
    temperature = np.array([288.15, 293.15, 300.15])
    computed = air.moist_air_density(pressure, temperature, 0.0)
    coolprop = np.array(
        [
            1.0 / HAPropsSI("Vha", "T", t, "P", p, "R", 0.0)
            for t, p in zip(temperature, pressure, strict=True)
        ]
    )
    tolerance = REFERENCE["coolprop_density_grid"]["tolerance_relative"]
    np.testing.assert_allclose(computed, coolprop, rtol=tolerance, atol=0)
    equation_1 = (
        pressure
        * air.molar_mass_dry_air()
        / (air.compressibility_moist_air(pressure, temperature, 0.0) * GAS_CONSTANT * temperature)
    )
    np.testing.assert_allclose(computed, equation_1, rtol=1e-15)


def test_dry_air_molar_density_against_lemmon_air():
    """At RH = 0, rho / Ma agrees with the molar density of CoolProp 8.0's air EOS to 5e-5.

    Source: CoolProp 'Air' pseudo-pure fluid, Lemmon et al., J. Phys. Chem. Ref. Data 29 (2000) 331.
    """
    pressure = np.array([95000.0, 101325.0, 105000.0])
    temperature = np.array([288.15, 293.15, 300.15])
    expected = np.array(
        [
            PropsSI("Dmolar", "T", t, "P", p, "Air")
            for t, p in zip(temperature, pressure, strict=True)
        ]
    )
    computed = air.moist_air_density(pressure, temperature, 0.0) / air.molar_mass_dry_air()
    tolerance = REFERENCE["coolprop_compressibility"]["tolerance_absolute"]
    np.testing.assert_allclose(computed, expected, rtol=tolerance, atol=0)


def test_formula_uncertainty_constant():
    """The module's own relative uncertainty is the paper's 22e-6 (Picard et al. 2008, from memory)."""
    entry = REFERENCE["formula_uncertainty"]
    assert air.CIPM_2007_RELATIVE_UNCERTAINTY == entry["value"]


@pytest.mark.parametrize("argument", ["pressure", "temperature", "relative_humidity"])
def test_complex_step_matches_central_difference(argument):
    """Complex-step d rho / d(p, T, RH) equals a central finite difference to 1e-7.

    Reference: central differences (common practice); complex step after Squire and Trapp,
    SIAM Review 40 (1998) 110.
    """
    point = {"pressure": 99000.0, "temperature": 296.15, "relative_humidity": 0.45}
    increments = {"pressure": 1.0, "temperature": 1e-3, "relative_humidity": 1e-5}
    shifted = dict(point, **{argument: point[argument] + 1j * COMPLEX_STEP})
    complex_step = air.moist_air_density(**shifted).imag / COMPLEX_STEP
    above = air.moist_air_density(
        **dict(point, **{argument: point[argument] + increments[argument]})
    )
    below = air.moist_air_density(
        **dict(point, **{argument: point[argument] - increments[argument]})
    )
    central = (above - below) / (2 * increments[argument])
    assert complex_step == pytest.approx(central, rel=1e-7)


def test_complex_step_over_array():
    """Checks behaviour: complex step works element-wise on arrays, against central differences."""
    temperature = np.array([288.15, 293.15, 298.15, 303.15])
    shifted = air.moist_air_density(101325.0, temperature + 1j * COMPLEX_STEP, 0.5)
    increment = 1e-3
    central = (
        air.moist_air_density(101325.0, temperature + increment, 0.5)
        - air.moist_air_density(101325.0, temperature - increment, 0.5)
    ) / (2 * increment)
    np.testing.assert_allclose(shifted.imag / COMPLEX_STEP, central, rtol=1e-7)
    np.testing.assert_allclose(shifted.real, air.moist_air_density(101325.0, temperature, 0.5))


def test_broadcasting_shapes():
    """Checks behaviour: pressure (3, 1) against temperature (4,) broadcasts to (3, 4) like single calls."""
    pressure = np.array([[95000.0], [100000.0], [105000.0]])
    temperature = np.array([288.15, 293.15, 298.15, 303.15])
    grid = air.moist_air_density(pressure, temperature, 0.5)
    assert grid.shape == (3, 4)
    element = air.moist_air_density(100000.0, 298.15, 0.5)
    assert grid[1, 2] == element


def test_humidity_lowers_density():
    """Water vapour is lighter than dry air, so rho falls as RH rises (common practice)."""
    humidity = np.linspace(0.0, 1.0, 11)
    density = air.moist_air_density(101325.0, 293.15, humidity)
    assert np.all(np.diff(density) < 0)
