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
    """p_sat(273.16 K) matches the IAPWS-95 triple-point pressure 611.655 Pa."""
    entry = REFERENCE["triple_point"]
    computed = saturation_pressure_water(entry["temperature"])
    assert computed == pytest.approx(entry["pressure"], rel=entry["tolerance_relative"])


def test_saturation_pressure_at_100_celsius():
    """p_sat(373.15 K) matches the IAPWS-95 table value 101.418 kPa."""
    entry = REFERENCE["saturation_100C"]
    computed = saturation_pressure_water(entry["temperature"])
    assert computed == pytest.approx(entry["pressure"], rel=entry["tolerance_relative"])


def test_critical_point_returns_critical_pressure():
    """At T_c the series vanishes and p_sat = p_c (IAPWS R2-83(1992) critical point)."""
    entry = REFERENCE["critical_point"]
    assert CRITICAL_TEMPERATURE_WATER == entry["temperature"]
    assert CRITICAL_PRESSURE_WATER == entry["pressure"]
    computed = saturation_pressure_water(entry["temperature"])
    assert computed == pytest.approx(entry["pressure"], rel=entry["tolerance_relative"])


def test_against_full_iapws95_saturation():
    """0-100 °C: the auxiliary equation agrees with full IAPWS-95 (iapws package) to 1e-4."""
    entry = REFERENCE["iapws95_saturation"]
    temperatures = np.array(entry["temperatures"])
    expected = np.array([IAPWS95(T=t, x=0).P * MEGAPASCAL for t in temperatures])
    computed = saturation_pressure_water(temperatures)
    np.testing.assert_allclose(computed, expected, rtol=entry["tolerance_relative"], atol=0)


def test_against_iapws_auxiliary_equation():
    """p_sat and dp_sat/dT (complex step) equal the iapws implementation of SR1-86 to 1e-12."""
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
    """A 2-D temperature array gives a 2-D result equal to element-wise evaluation."""
    temperatures = np.array([[280.0, 300.0, 320.0], [340.0, 360.0, 380.0]])
    grid = saturation_pressure_water(temperatures)
    assert grid.shape == temperatures.shape
    single = [float(saturation_pressure_water(t)) for t in temperatures.ravel()]
    np.testing.assert_array_equal(grid.ravel(), single)


def test_outside_range_still_evaluated_and_flagged():
    """Below the triple point the formula value is returned; the validity helper flags it."""
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
    """M(H2O) from periodictable agrees with chemicals' 18.01528 g/mol to 5e-5."""
    entry = REFERENCE["molar_mass"]
    assert molar_mass_water() == MOLAR_MASS_WATER
    assert chemicals.MW("water") / 1000.0 == pytest.approx(entry["value"], rel=1e-9)
    assert molar_mass_water() == pytest.approx(entry["value"], rel=entry["tolerance_relative"])
