"""The method of limiting densities against CoolProp's reference equations of state and numpy's line fit.

Gas densities, second and third virial coefficients and the equations' gas constants come from
CoolProp 8.0 (``PropsSI('Dmass' | 'Bvirial' | 'Cvirial' | 'gas_constant', ...)``; ``Bvirial`` and
``Cvirial`` are the molar virial coefficients in m³/mol and m⁶/mol², as AbstractState.Bvirial() and
.Cvirial() in the CoolProp.CoolProp module documentation). True molar masses come from periodictable
(IUPAC standard atomic weights); R = 8.314462618 J/(mol·K) is exact in the SI since 2019.
"""

import numpy as np
import pandas as pd
import periodictable
import pytest
from CoolProp.CoolProp import PropsSI

from molid.quality.limiting_density import (
    NOT_ONE_GAS,
    compare_B,
    fit_limiting_density,
    series_samples,
)

R = 8.314462618
GASES = {"CO2": "CO2", "SF6": "SF6", "Propane": "C3H8"}
VOLUME = 1e-3           # a 1 L bulb
U_MASS = 1e-7           # 0.1 mg on the gas's mass (common practice for a QA lab's balance)
U_TEMPERATURE = 0.05    # K
U_PRESSURE = 30.0       # Pa (0.03 kPa)


def series(fluid, pressures, temperatures):
    """Exact ideal-gas molar masses y = ρRT/p = M·(R/R_eos)/Z from CoolProp, and the QA lab's u(y)."""
    density = PropsSI("Dmass", "T", temperatures, "P", pressures, fluid)
    y = density * R * temperatures / pressures
    mass = density * VOLUME
    u = y * np.sqrt((U_MASS / mass) ** 2 + (U_TEMPERATURE / temperatures) ** 2
                    + (U_PRESSURE / pressures) ** 2)
    return y, u, density


def true_molar_mass(formula):
    """Molar mass [kg/mol] from periodictable's standard atomic weights."""
    return periodictable.formula(formula).mass / 1e3


@pytest.mark.parametrize("fluid", list(GASES))
@pytest.mark.parametrize("count", [4, 6])
def test_noise_free_series_recover_M_and_B(fluid, count):
    """A noise-free series from 30 to 101 kPa at 293.15 K gives M within 2e-4 and B within 1 %.

    Source: CoolProp 8.0 reference equations of state (Span–Wagner CO2, Guder–Wagner SF6,
    Lemmon propane) for ρ, B and C; periodictable for M. What limits the method is the third virial
    coefficient: in the density form 1/y = (1/M)(1 + Bρ_n + Cρ_n²), so the straight line's intercept
    is off by −C·c₀ and its slope by C·c₁, where c₀ + c₁ρ_n is the same weighted line through ρ_n²
    (numpy.polyfit). That predicted shift (1.5·10⁻⁵ in M for SF6 and propane, 4·10⁻⁶ for CO2; 0.2 to
    0.4 % in B), plus the equation's own R against the SI value, must account for the whole error;
    the rest (D and higher terms) is below 1·10⁻⁷. The 2·10⁻⁴ and 1 % bounds are far wider.
    """
    temperatures = np.full(count, 293.15)
    pressures = np.linspace(30e3, 101e3, count)
    y, u, density = series(fluid, pressures, temperatures)
    result = fit_limiting_density(["s"] * count, y, u, pressures, temperatures).loc["s"]
    assert result["fitted"] and result["reason"] == ""
    M = true_molar_mass(GASES[fluid])
    B = PropsSI("Bvirial", "T", 293.15, "Dmolar", 1e-6, fluid)
    C = PropsSI("Cvirial", "T", 293.15, "Dmolar", 1e-6, fluid)
    assert result["molar_mass"] == pytest.approx(M, rel=2e-4)
    assert result["B"] == pytest.approx(B, rel=0.01)
    # What remains is the third virial coefficient's curvature, and nothing else.
    molar_density = density / PropsSI("M", fluid)
    slope, intercept = np.polyfit(molar_density, molar_density**2, 1, w=y**2 / u)
    expected_M = PropsSI("M", fluid) * (R / PropsSI("gas_constant", fluid)) * (1 - C * intercept)
    assert result["molar_mass"] == pytest.approx(expected_M, rel=1e-7)
    assert result["B"] == pytest.approx(B + C * slope, rel=2e-3)
    assert result["temperature"] == pytest.approx(293.15)
    assert result["pressure_min"] == 30e3 and result["pressure_max"] == 101e3


@pytest.mark.parametrize("scatter", [1e-4, 2e-3])
def test_weighted_line_and_uncertainties_agree_with_numpy(scatter):
    """M, B and their u equal numpy.polyfit's weighted line and covariance through the GUM law.

    Source: numpy.polyfit(x, y, 1, w=1/σ) (Bevington & Robinson ch. 6 least squares, from memory):
    cov='unscaled' is the covariance from the stated σ alone; cov=True scales it by χ²/(n − 2), the
    squared Birge ratio (numpy 2.x; the scaling of gh-11196). GUM 5.2.2 for M = 1/a and B = b/a²,
    with ∂M/∂a = −1/a², ∂B/∂a = −2b/a³, ∂B/∂b = 1/a² and the covariance of a and b. A scatter of
    1·10⁻⁴ is within the runs' u (R_B < 1, not widened); 2·10⁻³ is not (R_B > 1, widened).
    """
    temperatures = np.array([293.0, 293.4, 292.8, 293.1, 293.2])
    pressures = np.array([30e3, 45e3, 60e3, 80e3, 101e3])
    y, u, _ = series("SF6", pressures, temperatures)
    y = y * (1 + np.array([1, -1, 0.5, 0, -0.5]) * scatter)
    result = fit_limiting_density(["s"] * 5, y, u, pressures, temperatures).loc["s"]
    density = y * pressures / (R * temperatures)
    widened = scatter > 1e-3
    (b, a), covariance = np.polyfit(density, 1 / y, 1, w=y**2 / u, cov=True if widened else "unscaled")
    assert result["widened"] == widened and (result["birge_ratio"] > 1) == widened
    gradient_B = np.array([1 / a**2, -2 * b / a**3])
    assert result["molar_mass"] == pytest.approx(1 / a, rel=1e-10)
    assert result["u_molar_mass"] == pytest.approx(np.sqrt(covariance[1, 1]) / a**2, rel=1e-8)
    assert result["B"] == pytest.approx(b / a**2, rel=1e-8)
    assert result["u_B"] == pytest.approx(np.sqrt(gradient_B @ covariance @ gradient_B), rel=1e-8)


def test_a_shared_relative_error_adds_its_share_of_M_in_quadrature():
    """A shared relative error ε of every y (a bulb's volume) adds (εM)² to u²(M).

    Source: GUM 5.2.2 with r = +1: the intercept is a linear combination Σα_i(1/y_i) with Σα_i·(1/y_i)
    = a, so a common factor (1 + ε) on every y moves M by εM exactly, like the shared term
    (Σw_i c_i/Σw_i)² of a weighted mean (molid's replicate combination).
    """
    temperatures = np.full(5, 293.15)
    pressures = np.linspace(30e3, 101e3, 5)
    y, u, _ = series("CO2", pressures, temperatures)
    alone = fit_limiting_density(["s"] * 5, y, u, pressures, temperatures).loc["s"]
    shared = fit_limiting_density(["s"] * 5, y, u, pressures, temperatures, u_shared=3e-4 * y).loc["s"]
    expected = np.hypot(alone["u_molar_mass"], 3e-4 * alone["molar_mass"])
    assert shared["u_molar_mass"] == pytest.approx(expected, rel=1e-9)
    assert shared["molar_mass"] == alone["molar_mass"]


def simulate_series(fluid, count, runs, rng):
    """Noisy series as a QA lab weighs them: one 1 L bulb, 30 to 101 kPa, about 293 K.

    Independent per run: 0.1 mg on the gas's mass, 0.05 K, 0.03 kPa. Shared within a series, drawn
    once per series: the bulb's calibrated volume (2·10⁻⁴ relative, common practice for a
    gravimetric water fill of a 1 L vessel) and the barometer's calibration offset (20 Pa).
    """
    pressures = np.tile(np.linspace(30e3, 101e3, runs), count)
    temperatures = 293.15 + rng.uniform(-0.5, 0.5, pressures.size)
    density = PropsSI("Dmass", "T", temperatures, "P", pressures, fluid)
    mass = density * VOLUME + rng.normal(0, U_MASS, pressures.size)
    temperature_read = temperatures + rng.normal(0, U_TEMPERATURE, pressures.size)
    offset = np.repeat(rng.normal(0, 20.0, count), runs)
    pressure_read = pressures + offset + rng.normal(0, U_PRESSURE, pressures.size)
    volume = VOLUME * (1 + np.repeat(rng.normal(0, 2e-4, count), runs))
    y = mass * R * temperature_read / (pressure_read * volume)
    u = y * np.sqrt((U_MASS / mass) ** 2 + (U_TEMPERATURE / temperature_read) ** 2
                    + (U_PRESSURE / pressure_read) ** 2)
    shared = {"volume": 2e-4 * y, "barometer": -y * 20.0 / pressure_read}
    samples = np.repeat([f"{fluid}-{index}" for index in range(count)], runs)
    return samples, y, u, pressure_read, temperature_read, shared


@pytest.mark.parametrize("fluid", list(GASES))
def test_k2_intervals_cover_the_truth(fluid):
    """Over 200 simulated series per gas, M's k = 2 interval covers the true M and B's CoolProp's B.

    Source: GUM (JCGM 100:2008) 6.2 and G.1: k = 2 covers about 95 % of a normal distribution;
    the truth is periodictable's molar mass and CoolProp 8.0's B at the fit's mean temperature.
    Measured with this seed (5 runs a series): M covered 0.965 (CO2), 0.98 (SF6), 0.97 (propane), B
    0.96 for each; over 20 seeds 0.964 (M) and 0.963 (B) on average, lowest 0.935. About 38 % of the
    series are widened by the Birge ratio, which puts the figures a little above 95 %. Leaving out
    the shared terms (volume, barometer offset) drops M's coverage to 0.905 to 0.915. No series of
    one gas is rejected as a mixture.
    """
    rng = np.random.default_rng(20240611)
    samples, y, u, p, T, shared = simulate_series(fluid, 200, 5, rng)
    table = fit_limiting_density(samples, y, u, p, T, u_shared=shared)
    assert table["fitted"].all()
    B = PropsSI("Bvirial", "T", table["temperature"].to_numpy(), "Dmolar", np.full(len(table), 1e-6), fluid)
    covered_M = np.mean(np.abs(table["molar_mass"] - true_molar_mass(GASES[fluid]))
                        <= 2 * table["u_molar_mass"])
    covered_B = np.mean(np.abs(table["B"] - B) <= 2 * table["u_B"])
    assert covered_M >= 0.90
    assert covered_B >= 0.88


def test_two_gases_in_one_series_are_not_fitted():
    """CO2 at 30–50 kPa and propane at 70–101 kPa in one sample: not one line, so not fitted.

    Source: CoolProp 8.0 densities. The two molar masses differ by only 0.2 % (44.01 and 44.10
    g/mol, periodictable), but B differs threefold (−128 and −405 cm³/mol at 293 K), so the six
    points cannot share one line within the QA lab's uncertainties: noise-free, χ² on 4 degrees of
    freedom is 64.7 (p = 3·10⁻¹³); with the lab's noise, at least 95 of 100 such samples are
    rejected (measured with this seed: 100 of 100; 99.4 % over 500 draws).
    """
    temperatures = np.full(3, 293.15)
    low, high = np.array([30e3, 40e3, 50e3]), np.array([70e3, 85e3, 101e3])
    y_co2, u_co2, _ = series("CO2", low, temperatures)
    y_propane, u_propane, _ = series("Propane", high, temperatures)
    y, u = np.r_[y_co2, y_propane], np.r_[u_co2, u_propane]
    p, T = np.r_[low, high], np.r_[temperatures, temperatures]
    result = fit_limiting_density(["mixed"] * 6, y, u, p, T).loc["mixed"]
    assert not result["fitted"] and result["reason"] == NOT_ONE_GAS
    assert np.isnan(result["molar_mass"]) and np.isnan(result["B"])
    assert result["p_value"] < 1e-6 and result["birge_ratio"] > 3
    rng = np.random.default_rng(7)
    noisy = y * (1 + rng.normal(0, 1, (100, 6)) * u / y)
    samples = np.repeat(np.arange(100).astype(str), 6)
    table = fit_limiting_density(samples, noisy.ravel(), np.tile(u, 100), np.tile(p, 100), np.tile(T, 100))
    assert (~table["fitted"]).sum() >= 95


def test_measured_B_points_to_the_right_gas():
    """A CO2 series' B agrees with CO2's and not with SF6's or propane's.

    Source: CoolProp 8.0 Bvirial at 293.15 K for the candidates (taken as exact here); the measured
    B comes from a CoolProp-simulated CO2 series with the QA lab's uncertainties (u_B ≈ 20 %).
    """
    temperatures = np.full(5, 293.15)
    pressures = np.linspace(30e3, 101e3, 5)
    y, u, _ = series("CO2", pressures, temperatures)
    result = fit_limiting_density(["s"] * 5, y, u, pressures, temperatures).loc["s"]
    candidates = np.array([PropsSI("Bvirial", "T", 293.15, "Dmolar", 1e-6, fluid) for fluid in GASES])
    z = compare_B(result["B"], result["u_B"], candidates, np.zeros(3))
    assert abs(z[0]) < 1
    assert np.all(z[1:] > 4)
    expected = (result["B"] - candidates) / result["u_B"]
    assert z == pytest.approx(expected)


def test_series_samples_edge_cases():
    """Checks behaviour: which runs make a series (3 usable runs, a factor 2 in pressure).

    Sample a: three runs spanning exactly 2 (kept). b: two runs (too few). c: three runs spanning
    1.9 (too narrow). d: four runs of which the one that makes the span is an error row (ok False),
    leaving 1.5. e: three runs whose third has no sample id. The error row of a kept sample is not
    returned.
    """
    samples = ["a", "a", "a", "b", "b", "c", "c", "c", "d", "d", "d", "d", "e", "e", None, "a"]
    pressure = [40e3, 60e3, 80e3, 30e3, 90e3, 40e3, 50e3, 76e3, 40e3, 50e3, 60e3, 101e3,
                30e3, 90e3, 60e3, 50e3]
    ok = [True] * 11 + [False] + [True] * 3 + [False]
    chosen = series_samples(samples, pressure, ok)
    assert chosen.tolist() == [True] * 3 + [False] * 13
    assert series_samples(samples, pressure, ok, min_ratio=1.9).tolist()[5:8] == [True] * 3


def test_reasons_say_why_a_series_is_not_fitted():
    """Checks behaviour: each sample gets a row; the reason names what the series lacks; errors are left out.

    Values are CoolProp CO2 ideal-gas molar masses so that the kept sample fits; a run with a
    missing molar mass (an error row) is not counted.
    """
    samples = ["few", "few", "narrow", "narrow", "narrow", "good", "good", "good", "good"]
    pressure = np.array([30e3, 90e3, 40e3, 50e3, 76e3, 30e3, 50e3, 70e3, 100e3])
    temperature = np.full(9, 293.15)
    y, u, _ = series("CO2", pressure, temperature)
    y[8] = np.nan
    table = fit_limiting_density(samples, y, u, pressure, temperature)
    assert list(table.index) == ["few", "narrow", "good"]
    assert table["fitted"].tolist() == [False, False, True]
    assert table.loc["few", "reason"].startswith("only 2 usable runs")
    assert "factor of 1.9 (40 to 76 kPa)" in table.loc["narrow", "reason"]
    assert table.loc["good", "runs"] == 3 and table.loc["good", "pressure_max"] == 70e3
    blank = ["molar_mass", "u_molar_mass", "B", "u_B", "birge_ratio", "p_value"]
    assert table[blank].iloc[:2].isna().all().all()
    assert isinstance(table, pd.DataFrame) and table.index.name == "sample"
