"""Tests for molid.physics.water: saturation pressure of water and its molar mass."""

import sys
from pathlib import Path

import chemicals
import numpy as np
import pytest
from iapws.iapws95 import IAPWS95

from molid.physics.water import (
    CRITICAL_PRESSURE_WATER,
    CRITICAL_TEMPERATURE_WATER,
    MOLAR_MASS_WATER,
    molar_mass_water,
    saturation_pressure_valid,
    saturation_pressure_water,
    water_density,
    water_density_valid,
)

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

REFERENCE = tomllib.loads((Path(__file__).parents[1] / "reference_values.toml").read_text("utf-8"))[
    "water"
]

# IAPWS95 in the iapws package works in MPa.
MEGAPASCAL = 1e6


def test_triple_point_pressure():
    """p_sat(273.16 K) matches the IAPWS-95 triple-point pressure 611.655 Pa.

    Source: IAPWS R6-95(2018) (from memory; reference_values.toml [water.triple_point]).
    """
    entry = REFERENCE["triple_point"]
    computed = saturation_pressure_water(entry["temperature"])
    assert computed == pytest.approx(entry["pressure"], rel=entry["tolerance_relative"])


def test_saturation_pressure_at_100_celsius():
    """p_sat(373.15 K) matches the IAPWS-95 table value 101.418 kPa.

    Source: Wagner and Pruss, J. Phys. Chem. Ref. Data 31 (2002) 387, saturation table (from memory).
    """
    entry = REFERENCE["saturation_100C"]
    computed = saturation_pressure_water(entry["temperature"])
    assert computed == pytest.approx(entry["pressure"], rel=entry["tolerance_relative"])


def test_critical_point_returns_critical_pressure():
    """At T_c the series vanishes and p_sat = p_c (IAPWS R2-83(1992) critical point, from memory)."""
    entry = REFERENCE["critical_point"]
    assert CRITICAL_TEMPERATURE_WATER == entry["temperature"]
    assert CRITICAL_PRESSURE_WATER == entry["pressure"]
    computed = saturation_pressure_water(entry["temperature"])
    assert computed == pytest.approx(entry["pressure"], rel=entry["tolerance_relative"])


def test_against_full_iapws95_saturation():
    """0-100 °C: the auxiliary equation agrees with full IAPWS-95 (iapws package 1.5) to 1e-4."""
    entry = REFERENCE["iapws95_saturation"]
    temperatures = np.array(entry["temperatures"])
    expected = np.array([IAPWS95(T=t, x=0).P * MEGAPASCAL for t in temperatures])
    computed = saturation_pressure_water(temperatures)
    np.testing.assert_allclose(computed, expected, rtol=entry["tolerance_relative"], atol=0)


def test_against_iapws_auxiliary_equation():
    """p_sat and dp_sat/dT (complex step) equal the iapws 1.5 implementation of SR1-86 to 1e-12."""
    entry = REFERENCE["iapws_auxiliary_equation"]
    temperatures = np.array(entry["temperatures"])
    expected = np.array([IAPWS95._Vapor_Pressure(t) * MEGAPASCAL for t in temperatures])
    expected_slope = np.array([IAPWS95._dPdT_sat(t) * MEGAPASCAL for t in temperatures])
    step = 1e-30
    shifted = saturation_pressure_water(temperatures + 1j * step)
    tolerance = entry["tolerance_relative"]
    np.testing.assert_allclose(shifted.real, expected, rtol=tolerance, atol=0)
    np.testing.assert_allclose(shifted.imag / step, expected_slope, rtol=tolerance, atol=0)


def test_complex_step_matches_central_difference():
    """Complex-step dp_sat/dT agrees with a central finite difference to 1e-7 (common practice)."""
    temperatures = np.linspace(275.0, 370.0, 7)
    step = 1e-30
    complex_step = saturation_pressure_water(temperatures + 1j * step).imag / step
    increment = 1e-3
    central = (
        saturation_pressure_water(temperatures + increment)
        - saturation_pressure_water(temperatures - increment)
    ) / (2 * increment)
    np.testing.assert_allclose(complex_step, central, rtol=1e-7)


def test_broadcasting_keeps_shape():
    """Checks behaviour: a 2-D temperature array gives a 2-D result equal to element-wise evaluation."""
    temperatures = np.array([[280.0, 300.0, 320.0], [340.0, 360.0, 380.0]])
    grid = saturation_pressure_water(temperatures)
    assert grid.shape == temperatures.shape
    single = [float(saturation_pressure_water(t)) for t in temperatures.ravel()]
    np.testing.assert_array_equal(grid.ravel(), single)


def test_outside_range_still_evaluated_and_flagged():
    """Checks behaviour: below the triple point the value is returned and the validity helper flags it.

    That supercooled water's vapour pressure lies below the triple-point pressure is common practice;
    the range 273.16 K to T_c is that of the Wagner-Pruss auxiliary equation (IAPWS SR1-86).
    """
    below = 263.15
    assert np.isfinite(saturation_pressure_water(below))
    # Supercooled water has a lower vapour pressure than at the triple point.
    assert saturation_pressure_water(below) < saturation_pressure_water(273.16)
    assert not saturation_pressure_valid(below)
    assert saturation_pressure_valid(273.16)
    assert saturation_pressure_valid(CRITICAL_TEMPERATURE_WATER)
    assert not saturation_pressure_valid(CRITICAL_TEMPERATURE_WATER + 1.0)
    assert saturation_pressure_valid(293.15 + 1e-30j)


def test_molar_mass_water():
    """M(H2O) from periodictable agrees with chemicals 1.5's 18.01528 g/mol to 5e-5."""
    entry = REFERENCE["molar_mass"]
    assert molar_mass_water() == MOLAR_MASS_WATER
    assert chemicals.MW("water") / 1000.0 == pytest.approx(entry["value"], rel=1e-9)
    assert molar_mass_water() == pytest.approx(entry["value"], rel=entry["tolerance_relative"])


# Tanaka et al., "Recommended table for the density of water between 0 °C and 40 °C",
# Metrologia 38 (2001) 301-309: the paper's table of the density of air-free SMOW at
# 101.325 kPa, in kg/m³, four decimals (values from memory of that table).
TANAKA_TABLE = {0.0: 999.8428, 5.0: 999.9668, 10.0: 999.7027, 15.0: 999.1026, 20.0: 998.2067,
                25.0: 997.0470, 30.0: 995.6488, 35.0: 994.0326, 40.0: 992.2152}


def test_water_density_against_tanaka_table():
    """Tanaka formula against the paper's own table (Metrologia 38 (2001) 301), within 1e-4 kg/m³."""
    celsius = np.array(list(TANAKA_TABLE))
    expected = np.array(list(TANAKA_TABLE.values()))
    computed = water_density(celsius + 273.15)
    np.testing.assert_allclose(computed, expected, rtol=0, atol=1e-4)


def test_water_density_against_iapws95():
    """Tanaka against IAPWS-95 (iapws package) at 101.325 kPa, 1-40 °C, within 2e-3 kg/m³.

    The two are independent fits: IAPWS-95 (Wagner & Pruss 2002) rests on data
    older than the four studies Tanaka et al. evaluated. They differ by -0.2e-3 to
    +1.2e-3 kg/m³ over the range (about 1 part in 10⁶, IAPWS-95's own stated
    uncertainty of liquid density near ambient conditions, from memory).
    """
    celsius = np.array([1.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0])
    expected = np.array([IAPWS95(T=t + 273.15, P=0.101325).rho for t in celsius])
    computed = water_density(celsius + 273.15)
    np.testing.assert_allclose(computed, expected, rtol=0, atol=2e-3)


def test_water_density_corrections():
    """Dissolved air and compressibility as Tanaka et al. (2001) give them, and IAPWS-95's slope in p.

    Air-saturated water is lighter by s0 + s1·t (s0 = -4.612e-3 kg/m³, s1 = 0.106e-3
    kg/(m³·°C), after Bignell, Metrologia 19 (1983) 57). A 100 kPa rise at 20 °C
    compresses water by about 4.6e-4 relative; IAPWS-95 (iapws package) agrees to 2 %.
    """
    temperature = 293.15
    air_free = water_density(temperature)
    saturated = water_density(temperature, air_saturated=True)
    assert saturated - air_free == pytest.approx(-4.612e-3 + 0.106e-3 * 20.0, abs=1e-9)
    raised = water_density(temperature, pressure=201325.0)
    reference = IAPWS95(T=temperature, P=0.201325).rho / IAPWS95(T=temperature, P=0.101325).rho
    assert (raised / air_free - 1.0) == pytest.approx(reference - 1.0, rel=0.02)


def test_water_density_complex_step_and_range():
    """Checks behaviour: complex-step dρ/dT equals a central difference; the range helper flags 0-40 °C."""
    temperatures = np.linspace(274.0, 312.0, 6)
    step = 1e-30
    complex_step = water_density(temperatures + 1j * step).imag / step
    increment = 1e-3
    central = (water_density(temperatures + increment) - water_density(temperatures - increment)) / (
        2 * increment)
    np.testing.assert_allclose(complex_step, central, rtol=1e-6, atol=1e-9)
    assert water_density_valid([273.15, 313.15]).all()
    assert not water_density_valid([273.0, 313.2]).any()
