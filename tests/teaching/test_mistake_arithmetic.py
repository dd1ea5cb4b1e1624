r"""Each diagnosis code against the mistaken value computed here with plain arithmetic.

For one invented run of every method, every way of making every classic mistake
is worked out below in SI units with M = m·R·T/(p·V), without
:mod:`molid.teaching.diagnosis` or its ``mistake_model``; the values molid
reports for the variants of that code (``Diagnosis.variant_values``) must be the
same set, one for one.

The air density is CIPM-2007 as :func:`molid.physics.air.moist_air_density`
gives it (checked against A. Picard, R. S. Davis, M. Gläser and K. Fujii,
Metrologia 45 (2008) 149 in tests/physics, and against CoolProp's humid-air
model in test_worked_cases.py) at the profile's assumed 400 µmol/mol of CO2, so
the comparison isolates the arithmetic of the variants: ``TOLERANCE`` = 1 × 10⁻⁹
relative, the rounding of the exact R = N_A·k to 8.314 462 618.

Constants (definitions): R = 8.314 462 618 J/(mol·K) (SI Brochure, 9th ed.,
2019); 1 atm = 101 325 Pa (CGPM 1954, Resolution 4); 1 bar = 100 kPa and
1 mmHg = 133.322 387 415 Pa (13.5951 g/cm³ × 9.806 65 m/s² × 1 mm; SI Brochure
8th ed., 2006, Table 9); 1 L = 10⁻³ m³; 0 °C = 273.15 K; 1 cal = 4.184 J
(thermochemical calorie); conventional-mass factor 1 − ρa/8000 kg/m³ (OIML D 28:2004).
"""

import itertools

import numpy as np
import pandas as pd
import pytest

from molid.methods.mistakes import MISTAKE_CODES
from molid.methods.registry import METHODS
from molid.physics.air import moist_air_density
from molid.teaching.grading import grade

TOLERANCE = 1e-9
R = 8.314462618
PASCAL_PER = {"mmHg": 133.322387415, "atm": 101325.0, "kPa": 1e3, "bar": 1e5}
CALORIE = 4.184
#: R in each unit system a student meets, and the pressure unit (with litres) it fits.
R_SYSTEMS = {  # numeric value of R for p in the unit and V in litres (J: kPa and L)
    "J": (R, "kPa"), "L·atm": (R / 101.325, "atm"), "L·mmHg": (R / 0.133322387415, "mmHg"),
    "L·bar": (R / 100.0, "bar"), "cal": (R / CALORIE, None),
}

#: One invented run per method: indications [g], V [mL], t [°C], p [kPa], RH [%].
RUNS = {
    "evacuated-bulb": (86.4417, 86.8546, 250.0, 21.3, 100.62, 40),
    "air-tare-bulb": (119.0364, 119.1928, 250.0, 22.0, 99.80, 45),
    "syringe": (41.2205, 41.7095, 100.0, 20.8, 100.45, 50),
}


def hand_values(method):
    """Every mistaken molar mass of a run [kg/mol], by code, in plain SI arithmetic."""
    tare, filled, millilitres, celsius, kilopascal, percent = RUNS[method]
    tare, filled = tare * 1e-3, filled * 1e-3
    V = millilitres * 1e-6
    T = celsius + 273.15
    p = kilopascal * 1e3
    rho_air = float(moist_air_density(p, T, percent / 100, 0.0004))
    factor = 1.0 - rho_air / 8000.0
    # an evacuated bulb displaces the same air at both weighings: no ρa·V term
    displaced = 0.0 if method == "evacuated-bulb" else rho_air * V
    m = (filled - tare) * factor + displaced

    def molar_mass(mass=m, temperature=T, pressure=p, volume=V, gas_constant=R):
        return mass * gas_constant * temperature / (pressure * volume)

    correct = molar_mass()
    values = {
        "celsius-as-kelvin": [molar_mass(temperature=T - 273.15)],
        "volume-unit": [molar_mass(volume=V * 1000.0), molar_mass(volume=V / 1000.0)],
        # the number read in `read` is used as if in `used`
        "pressure-unit": [molar_mass(pressure=p / PASCAL_PER[read] * PASCAL_PER[used])
                          for read, used in itertools.permutations(PASCAL_PER, 2)],
        # R of `used` where the pressure unit needed R of `fits`: M scales by R_used/R_fits
        "gas-constant-units": [correct * R_SYSTEMS[used][0] / R_SYSTEMS[fits][0]
                               for fits, used in itertools.permutations(R_SYSTEMS, 2)
                               if R_SYSTEMS[fits][1] is not None],
        # nothing displaced is left out of an evacuated bulb: its value stays correct
        "no-buoyancy": [molar_mass(mass=(filled - tare) * factor)],
        "masses-swapped": [molar_mass(mass=(tare - filled) * factor + displaced)],
        # no room temperature given: the balance room is taken at the gas's temperature
        "room-temperature-for-vapour": [molar_mass(temperature=T)],
        # a dry gas in a vessel: no water vapour and no water column to leave in
        "water-vapour-not-subtracted": [correct],
        "water-column-ignored": [correct],
    }
    return correct, values


#: An invented collection over water: source before and after [g], V [mL], water t [°C],
#: barometer [kPa], water column [mm].
OVER_WATER = (15.2034, 15.0712, 55.0, 21.5, 100.90, 40.0)


def over_water_hand_values():
    """Every mistaken molar mass of the over-water run [kg/mol], by code, in plain SI arithmetic.

    Water: saturation pressure from IAPWS-95 (the ``iapws`` package, IAPWS R6-95(2018)),
    density from IAPWS-95 at the barometric pressure; g_n = 9.80665 m/s² (3rd CGPM, 1901).
    The collected gas is saturated; the balance-room air is taken at 50 % RH.
    """
    from iapws import IAPWS95

    before, after, millilitres, celsius, kilopascal, millimetres = OVER_WATER
    V, T, p, h = millilitres * 1e-6, celsius + 273.15, kilopascal * 1e3, millimetres * 1e-3
    rho_air = float(moist_air_density(p, T, 0.5, 0.0004))
    m = (before - after) * 1e-3 * (1.0 - rho_air / 8000.0)
    water_pressure = IAPWS95(T=T, x=0).P * 1e6
    column = IAPWS95(T=T, P=p / 1e6).rho * 9.80665 * h
    p_dry = p - column - water_pressure

    def molar_mass(mass=m, temperature=T, pressure=p_dry, volume=V):
        return mass * R * temperature / (pressure * volume)

    correct = molar_mass()
    return correct, {
        "celsius-as-kelvin": [molar_mass(temperature=T - 273.15)],
        "volume-unit": [molar_mass(volume=V * 1000.0), molar_mass(volume=V / 1000.0)],
        "pressure-unit": [molar_mass(pressure=p_dry / PASCAL_PER[read] * PASCAL_PER[used])
                          for read, used in itertools.permutations(PASCAL_PER, 2)],
        "gas-constant-units": [correct * R_SYSTEMS[used][0] / R_SYSTEMS[fits][0]
                               for fits, used in itertools.permutations(R_SYSTEMS, 2)
                               if R_SYSTEMS[fits][1] is not None],
        "masses-swapped": [-correct],
        "water-vapour-not-subtracted": [molar_mass(pressure=p_dry + water_pressure)],
        "water-column-ignored": [molar_mass(pressure=p_dry + column)],
    }


def test_over_water_variants_are_the_plain_arithmetic_of_their_mistakes():
    """Over water, each applicable code's variant values are the hand-computed mistaken values.

    Sources: as for the vessel methods, plus IAPWS-95 for the water (``iapws``
    package); the tolerance is wider, 2e-5 relative, because molid's water
    vapour pressure (Wagner and Pruss 2002 auxiliary equation) and water density
    (Tanaka et al. 2001) differ from IAPWS-95 by up to that much at 21.5 °C.
    """
    before, after, millilitres, celsius, kilopascal, millimetres = OVER_WATER
    cells = {"run": "w1", "expected": "n-butane", "method": "over-water",
             "source_before [g]": f"{before:.4f}", "source_after [g]": f"{after:.4f}",
             "volume [mL]": f"{millilitres:.1f}", "temperature [degC]": f"{celsius:.1f}",
             "pressure [kPa]": f"{kilopascal:.2f}", "water_column [mm]": f"{millimetres:.0f}"}
    diagnosis = grade(pd.DataFrame([cells])).diagnosis
    reported = diagnosis.variant_values[:, 0]
    correct, values = over_water_hand_values()
    assert reported[0] == pytest.approx(correct, rel=2e-5)
    assert set(values) == set(METHODS["over-water"].mistakes)
    for code, expected in values.items():
        got = [value for variant, value in zip(diagnosis.variants, reported, strict=True)
               if variant.code == code]
        np.testing.assert_allclose(sorted(got), sorted(expected), rtol=2e-5, err_msg=code)


@pytest.mark.parametrize("method", list(RUNS))
def test_every_variant_is_the_plain_arithmetic_of_its_mistake(method):
    """For every code, molid's variant values are the hand-computed mistaken values, one for one.

    Sources: the definitions in the module docstring (SI Brochure 2019, CGPM 1954,
    OIML D 28:2004) and the ideal gas law M = m·R·T/(p·V).
    """
    tare, filled, millilitres, celsius, kilopascal, percent = RUNS[method]
    cells = {"run": "a1", "expected": "argon", "method": method, "mass_tare [g]": f"{tare:.4f}",
             "mass_filled [g]": f"{filled:.4f}", "volume [mL]": f"{millilitres:.1f}",
             "temperature [degC]": f"{celsius:.1f}", "pressure [kPa]": f"{kilopascal:.2f}",
             "humidity [%]": f"{percent}"}
    diagnosis = grade(pd.DataFrame([cells])).diagnosis
    reported = diagnosis.variant_values[:, 0]
    correct, values = hand_values(method)
    assert diagnosis.variants[0].code == ""
    assert reported[0] == pytest.approx(correct, rel=TOLERANCE)
    assert set(values) == set(MISTAKE_CODES)
    for code, expected in values.items():
        got = [value for variant, value in zip(diagnosis.variants, reported, strict=True)
               if variant.code == code]
        assert len(got) == len(expected), code
        np.testing.assert_allclose(sorted(got), sorted(expected), rtol=TOLERANCE, err_msg=code)


def test_evacuated_bulb_cannot_leave_out_displaced_air():
    """An evacuated bulb has no displaced-air term, so ``no-buoyancy`` is not tried for it.

    Checks behaviour: the method declares the mistakes its students can make; the
    evacuated bulb displaces the same outer volume of air at both weighings (OIML
    D 28:2004 buoyancy), so leaving the air out changes nothing and cannot be seen.
    """
    assert "no-buoyancy" not in METHODS["evacuated-bulb"].mistakes
    assert "no-buoyancy" in METHODS["air-tare-bulb"].mistakes
    assert "no-buoyancy" in METHODS["syringe"].mistakes
