"""Vessel calibration by water fill (ISO 4787) against independent recomputations written out here."""

import io
import math

import numpy as np
import pytest
from iapws.iapws95 import IAPWS95
from uncertainties import ufloat, umath

from molid.pipeline.calibration import calibrate
from molid.vessels.calibration import (
    CALIBRATION_INPUTS,
    calibrate_fills,
    combine_fills,
    gravimetric_volume,
    material_name,
    volume_at_temperature,
)

# An invented bulb: empty and water-filled readings [g], water 22.5 °C, room air 23.0 °C,
# 99.80 kPa, 45 % relative humidity, borosilicate 3.3 (gamma = 9.9e-6 /K).
EMPTY, FULL = 120.0000, 369.2000
WATER_C, AIR_C, PRESSURE_HPA, HUMIDITY_PERCENT = 22.5, 23.0, 998.0, 45.0
GAMMA = 9.9e-6


def _air_density_oiml(pressure_hpa, celsius, humidity_percent, exp=math.exp):
    """Approximate CIPM air density of OIML R 111-1:2004, eq. (E.3-1) (from memory), kg/m³.

    rho_a = (0.34848 p - 0.009 h exp(0.061 t)) / (273.15 + t), p in hPa, h in %, t in °C;
    relative uncertainty about 2e-4 near room conditions.
    """
    return (0.34848 * pressure_hpa - 0.009 * humidity_percent * exp(0.061 * celsius)) / (273.15 + celsius)


def _dissolved_air_midpoint(celsius):
    """Half the air-saturation correction of Tanaka et al. (2001), s0 + s1·t, kg/m³."""
    return 0.5 * (-4.612e-3 + 0.106e-3 * celsius)


def _iso4787(empty_g, full_g, water_density, air_density, gamma, water_celsius):
    """ISO 4787:2021 volume at 20 °C, mL, with rho_B = 8000 kg/m³ (OIML R 111-1 reference density)."""
    return ((full_g - empty_g) / (water_density - air_density) * (1 - air_density / 8000.0)
            * (1 - gamma * (water_celsius - 20.0)) * 1000.0)


def test_volume_against_iso4787_with_iapws_water():
    """V20 of an invented bulb equals ISO 4787's equation evaluated by hand, to 2e-6 relative.

    The water is IAPWS-95 (iapws package) at the room pressure, set midway between air-free
    and air-saturated with Tanaka et al.'s (Metrologia 38 (2001) 301) dissolved-air term;
    the air is OIML R 111-1's approximate CIPM formula. IAPWS-95 and Tanaka agree to about
    1e-6 relative, the approximate air formula to 2e-4 of rho_a (3e-7 of V).
    """
    water = IAPWS95(T=WATER_C + 273.15, P=PRESSURE_HPA * 1e-4).rho + _dissolved_air_midpoint(WATER_C)
    air = _air_density_oiml(PRESSURE_HPA, AIR_C, HUMIDITY_PERCENT)
    expected = _iso4787(EMPTY, FULL, water, air, GAMMA, WATER_C)
    computed = gravimetric_volume(EMPTY * 1e-3, FULL * 1e-3, WATER_C + 273.15, AIR_C + 273.15,
                                  PRESSURE_HPA * 100.0, HUMIDITY_PERCENT / 100.0, GAMMA) * 1e6
    assert computed == pytest.approx(expected, rel=2e-6)


def test_uncertainty_against_linear_propagation_by_uncertainties_package():
    """u(V20) of one fill equals first-order propagation by the uncertainties package, within 1 %.

    The hand model writes Tanaka's formula (Metrologia 38 (2001) 301, eq. 1, air-free plus half
    the dissolved-air term), OIML R 111-1's approximate air density and ISO 4787's equation with
    ufloat inputs; the water-density formula's own 1.4e-6 relative u (Tanaka's ~1e-6 and the
    dissolved-air half-width 1.25e-3 kg/m³ / sqrt(3)) and a 0.02 mL filling term are added in
    quadrature as in molid's budget.
    """
    u_mass = math.hypot(0.0001, 0.0001 / math.sqrt(12))  # default profile: 0.1 mg and its readability
    u_temperature = 0.5 / math.sqrt(3)
    empty, full = ufloat(EMPTY, u_mass), ufloat(FULL, u_mass)
    water_c, air_c = ufloat(WATER_C, u_temperature), ufloat(AIR_C, u_temperature)
    pressure = ufloat(PRESSURE_HPA, 1.0 / math.sqrt(3))
    humidity = ufloat(HUMIDITY_PERCENT, 10.0 / math.sqrt(3))
    gamma = ufloat(GAMMA, 0.1 * GAMMA)
    water = 999.974950 * (1 - (water_c - 3.983035) ** 2 * (water_c + 301.797)
                          / (522528.9 * (water_c + 69.34881))) + _dissolved_air_midpoint(WATER_C)
    water = water * (1 + 50.74e-11 * (pressure * 100 - 101325))
    air = _air_density_oiml(pressure, air_c, humidity, exp=umath.exp)
    volume = _iso4787(empty, full, water, air, gamma, water_c)
    density_term = volume.n * math.hypot(1e-6, 1.246e-3 / math.sqrt(3) / water.n)
    expected = math.sqrt(volume.s**2 + density_term**2 + 0.02**2 + (volume.n * 22e-6 * air.n
                                                                     / water.n) ** 2)
    values = {"mass_empty": [EMPTY * 1e-3], "mass_water": [FULL * 1e-3],
              "water_temperature": [WATER_C + 273.15], "air_temperature": [AIR_C + 273.15],
              "pressure": [PRESSURE_HPA * 100], "humidity": [HUMIDITY_PERCENT / 100],
              "expansion": [GAMMA]}
    uncertainties = {"mass_empty": [u_mass * 1e-3], "mass_water": [u_mass * 1e-3],
                     "water_temperature": [u_temperature], "air_temperature": [u_temperature],
                     "pressure": [100 / math.sqrt(3)], "humidity": [0.1 / math.sqrt(3)]}
    propagation = calibrate_fills({k: np.array(v) for k, v in values.items()},
                                  {k: np.array(v) for k, v in uncertainties.items()})
    assert propagation.standard_uncertainty[0] * 1e6 == pytest.approx(expected, rel=0.01)
    assert set(propagation.sensitivities) == set(CALIBRATION_INPUTS)


def test_replicate_fills_combined_by_hand():
    """Three fills of one vessel: weighted mean, Birge ratio and shared part as Birge (1932) and GUM F.1.2.

    By hand from each fill's value x_i, independent u_i (total minus the shared expansion and
    formula contributions) and shared contribution s_i: w_i = 1/u_i², x̄ = Σw x/Σw,
    R_B = √(χ²/2), u = √((max(1, R_B)/√Σw)² + (Σw s/Σw)²) per shared input.
    """
    full = np.array([369.2000, 369.2100, 369.1950]) * 1e-3
    n = len(full)
    values = {"mass_empty": np.full(n, EMPTY * 1e-3), "mass_water": full,
              "water_temperature": np.array([22.5, 22.4, 22.7]) + 273.15,
              "air_temperature": np.full(n, AIR_C + 273.15), "pressure": np.full(n, 99800.0),
              "humidity": np.full(n, 0.45), "expansion": np.full(n, GAMMA)}
    uncertainties = {name: np.full(n, u) for name, u in (
        ("mass_empty", 1e-7), ("mass_water", 1e-7), ("water_temperature", 0.05),
        ("air_temperature", 0.3), ("pressure", 60.0), ("humidity", 0.05))}
    propagation = calibrate_fills(values, uncertainties)
    combined = combine_fills(["B-1"] * n, propagation, {}, np.ones(n, bool)).iloc[0]
    x = propagation.value
    shared_names = ("expansion", "water_density_formula", "air_density_formula")
    shared = {name: propagation.contributions[name] for name in shared_names}
    independent = np.sqrt(propagation.standard_uncertainty**2 - sum(s**2 for s in shared.values()))
    w = 1 / independent**2
    mean = np.sum(w * x) / np.sum(w)
    birge = math.sqrt(np.sum(w * (x - mean) ** 2) / (n - 1))
    u_shared_sq = sum((np.sum(w * s) / np.sum(w)) ** 2 for s in shared.values())
    expected_u = math.sqrt((max(1.0, birge) / math.sqrt(np.sum(w))) ** 2 + u_shared_sq)
    assert combined["value"] == pytest.approx(mean, rel=1e-12)
    assert combined["birge_ratio"] == pytest.approx(birge, rel=1e-9)
    assert combined["u"] == pytest.approx(expected_u, rel=1e-9)
    assert combined["widened"] == (birge > 1)


def test_volume_at_gas_temperature_by_hand():
    """V(T) = V20·(1 + γ(T − 20 °C)), the expansion law of ISO 4787; u adds V20·ΔT·0.1γ in quadrature."""
    volume, u = volume_at_temperature(500.0e-6, 0.02e-6, 9.9e-6, 273.15 + 35.0)
    assert volume * 1e6 == pytest.approx(500.0 * (1 + 9.9e-6 * 15.0), rel=1e-12)
    assert u * 1e6 == pytest.approx(math.hypot(0.02 * (1 + 9.9e-6 * 15), 500 * 15 * 0.99e-6), rel=1e-12)


def test_material_names():
    """Checks behaviour: material cells are matched without regard to case, spaces or hyphens."""
    assert material_name(" Soda lime ") == "soda-lime"
    assert material_name("BOROSILICATE_3.3") == "borosilicate-3.3"
    assert material_name("glass") is None


def test_demo_fill_file_gives_three_vessels():
    """Checks behaviour: the demo fills give three vessels of three fills each, and no row errors."""
    calibration = calibrate("sample_runs/qa_vessel_fills.csv")
    assert calibration.ok.all()
    assert calibration.vessels["vessel"].tolist() == ["B-500-1", "B-500-2", "B-250-3"]
    assert calibration.vessels["n"].tolist() == [3, 3, 3]
    assert calibration.vessels["source_rows"].tolist() == ["2;3;4", "5;6;7", "8;9;10"]


def test_decimal_comma_fill_file_reads_the_same():
    """Checks behaviour: a semicolon file with decimal commas gives the same volume; ids keep their commas."""
    header = "vessel{0}mass_empty [g]{0}mass_water [g]{0}water_temperature [degC]{0}pressure [kPa]\n"
    point = calibrate(io.BytesIO((header.format(",") + "B-1,120.0001,369.2001,21.0,100.8\n").encode()))
    comma = calibrate(io.BytesIO((header.format(";") + "B,1;120,0001;369,2001;21,0;100,8\n").encode()))
    assert comma.vessels["vessel"].tolist() == ["B,1"]
    assert comma.vessels["volume"].iloc[0] == point.vessels["volume"].iloc[0]
