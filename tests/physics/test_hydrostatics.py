"""Tests for molid.physics.hydrostatics: the pressure of a gas collected over a water column."""

import numpy as np
import pytest
from iapws.iapws95 import IAPWS95

from molid.physics.hydrostatics import gas_pressure_over_water, water_column_pressure

# IAPWS95 in the iapws package works in MPa.
MEGAPASCAL = 1e6


def test_column_by_hand():
    """120 mm of water at 20 °C is 1174.7 Pa, worked by hand from the definitions.

    Hand computation: ρ_w(20 °C) = 998.207 kg/m³ (Tanaka et al. 2001, Table; from memory),
    g_n = 9.80665 m/s² (3rd CGPM 1901), 998.207 × 9.80665 × 0.120 m = 1174.69 Pa.
    """
    assert water_column_pressure(293.15, 0.120) == pytest.approx(998.207 * 9.80665 * 0.120, rel=2e-6)
    assert gas_pressure_over_water(100000.0, 293.15, 0.120) == pytest.approx(100000.0 - 1174.69, abs=0.02)


@pytest.mark.parametrize("celsius", [5.0, 15.0, 20.0, 25.0, 35.0])
def test_column_against_iapws95(celsius):
    """ρ_w g_n h equals the IAPWS-95 density (iapws package 1.5) times g_n h within 1e-4 relative."""
    T = 273.15 + celsius
    heights = np.array([-0.25, 0.05, 0.30])
    rho_iapws = IAPWS95(T=T, P=101325.0 / MEGAPASCAL).rho
    expected = 101325.0 - rho_iapws * 9.80665 * heights
    got = gas_pressure_over_water(101325.0, T, heights)
    assert np.allclose(101325.0 - got, 101325.0 - expected, rtol=1e-4)


def test_inside_level_lower_raises_pressure():
    """Checks behaviour: a negative height (inside level lower) gives a pressure above the barometer."""
    assert gas_pressure_over_water(1.0e5, 293.15, -0.1) > 1.0e5


def test_complex_step_matches_finite_difference():
    """Checks behaviour: complex-step derivatives in T, h and p agree with central differences (1e-6)."""
    T, h, p = 295.0, 0.15, 99000.0
    step = 1e-20
    for index in range(3):
        values = [T, h, p]
        values[index] = values[index] + 1j * step
        complex_derivative = np.imag(gas_pressure_over_water(values[2], values[0], values[1])) / step
        delta = [1e-3, 1e-6, 1e-2][index]
        plus, minus = [T, h, p], [T, h, p]
        plus[index] += delta
        minus[index] -= delta
        central = (gas_pressure_over_water(plus[2], plus[0], plus[1])
                   - gas_pressure_over_water(minus[2], minus[0], minus[1])) / (2 * delta)
        assert complex_derivative == pytest.approx(central, rel=1e-6, abs=1e-9)
