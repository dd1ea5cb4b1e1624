"""Regenerate the demo run files in sample_runs/ from an invented scenario.

The people, labs, suppliers and cylinders are fictional. The readings are what a
balance would show for gases whose densities come from CoolProp's reference
equations of state, with the noise of the stated instruments added, so the
demo behaves like real data. Run from the repository root:

    pip install '.[test]' && python sample_runs/make_demo_data.py
"""

import csv
import sys
from pathlib import Path

import numpy as np
from CoolProp.CoolProp import PropsSI

ROOT = Path(__file__).resolve().parent
sys.path.insert(0, str(ROOT.parent / "tests"))
import simulate  # noqa: E402

R = 8.31446261815324


def mixture_density(components, temperature, pressure):
    """Density [kg/m³] of a mixture {fluid: mole fraction}, Z mixed linearly (adequate for demo data)."""
    molar_mass = sum(x * PropsSI("M", fluid) for fluid, x in components.items())
    Z = sum(x * PropsSI("Z", "T", temperature, "P", pressure, fluid)
            for fluid, x in components.items())
    return pressure * molar_mass / (Z * R * temperature)


def water_pressure(temperature):
    return PropsSI("P", "T", temperature, "Q", 0, "Water")


def make_run(rng, *, method, gas, volume_ml, temp_c, pressure_kpa, rh, wet=False,
             u_mass_g=0.0001, u_temp=0.05, u_pressure=0.03, glass_g=148.0):
    T = temp_c + 273.15
    p = pressure_kpa * 1e3
    V = volume_ml * 1e-6
    components = gas if isinstance(gas, dict) else {gas: 1.0}
    p_gas = p - (water_pressure(T) if wet else 0.0)
    density = mixture_density(components, T, p_gas)
    mass = density * V
    if wet:
        mass += water_pressure(T) * V * 18.015e-3 / (R * T)
    rho_air = simulate.air_density(T, p, rh / 100)
    tare, filled = simulate.readings(method, mass, rho_air, V, glass=glass_g * 1e-3)
    noise = lambda u: u * rng.standard_normal()  # noqa: E731
    return {
        "mass_tare [g]": f"{tare * 1e3 + noise(u_mass_g):.4f}",
        "mass_filled [g]": f"{filled * 1e3 + noise(u_mass_g):.4f}",
        "volume [mL]": f"{volume_ml:.2f}",
        "temperature [degC]": f"{temp_c + noise(u_temp):.2f}",
        "pressure [kPa]": f"{pressure_kpa + noise(u_pressure):.2f}",
        "humidity [%]": f"{rh:.0f}",
    }


def write(path, rows, columns):
    with open(path, "w", newline="", encoding="utf-8") as stream:
        writer = csv.DictWriter(stream, fieldnames=columns, lineterminator="\n")
        writer.writeheader()
        writer.writerows(rows)


def qa_cylinders(rng):
    """Incoming-goods check at the (fictional) Larkspur Coatings QA lab, cylinders from
    the (fictional) supplier Fenwick & Marr Industrial Gases."""
    plan = [
        # sample, label, true gas, method, bulb mL, operator
        ("CYL-2231", "argon", "Argon", "evacuated-bulb", 500.12, "D. Okonkwo-Hale"),
        ("CYL-2231", "argon", "Argon", "evacuated-bulb", 500.12, "D. Okonkwo-Hale"),
        ("CYL-2231", "argon", "Argon", "evacuated-bulb", 500.12, "R. Lindqvist"),
        ("CYL-2232", "carbon dioxide", "CarbonDioxide", "evacuated-bulb", 500.12, "R. Lindqvist"),
        ("CYL-2232", "carbon dioxide", "CarbonDioxide", "evacuated-bulb", 500.12, "R. Lindqvist"),
        ("CYL-2232", "carbon dioxide", "CarbonDioxide", "air-tare-bulb", 250.31, "R. Lindqvist"),
        ("CYL-2233", "R-134a", "R134a", "evacuated-bulb", 500.12, "D. Okonkwo-Hale"),
        ("CYL-2233", "R-134a", "R134a", "evacuated-bulb", 500.12, "D. Okonkwo-Hale"),
        # Mislabelled: the label says isobutane, the cylinder holds propane.
        ("CYL-2234", "isobutane", "n-Propane", "evacuated-bulb", 500.12, "D. Okonkwo-Hale"),
        ("CYL-2234", "isobutane", "n-Propane", "evacuated-bulb", 500.12, "R. Lindqvist"),
        # Contaminated: sulfur hexafluoride with about 8 % air.
        ("CYL-2235", "sulfur hexafluoride",
         {"SulfurHexafluoride": 0.92, "Nitrogen": 0.0624, "Oxygen": 0.0168, "Argon": 0.0008},
         "evacuated-bulb", 500.12, "R. Lindqvist"),
        ("CYL-2235", "sulfur hexafluoride",
         {"SulfurHexafluoride": 0.92, "Nitrogen": 0.0624, "Oxygen": 0.0168, "Argon": 0.0008},
         "evacuated-bulb", 500.12, "R. Lindqvist"),
        ("CYL-2236", "helium", "Helium", "syringe", 100.00, "D. Okonkwo-Hale"),
        ("CYL-2236", "helium", "Helium", "syringe", 100.00, "D. Okonkwo-Hale"),
        # A purge-line sample collected over water, so saturated with water vapour.
        ("LINE-07", "nitrogen", "Nitrogen", "evacuated-bulb", 500.12, "R. Lindqvist"),
    ]
    rows = []
    for number, (sample, label, gas, method, volume, operator) in enumerate(plan, start=1):
        wet = sample == "LINE-07"
        run = make_run(rng, method=method, gas=gas, volume_ml=volume,
                       temp_c=20.5 + 1.5 * rng.random(), pressure_kpa=100.2 + 1.5 * rng.random(),
                       rh=38 + 10 * rng.random(), wet=wet,
                       u_mass_g=0.00015 if method == "syringe" else 0.0001)
        rows.append({"run": f"QA-{number:03d}", "sample": sample, "method": method,
                     **run, "wet": "yes" if wet else "no", "expected": label,
                     "operator": operator, "date": f"2026-11-{9 + number // 4:02d}"})
    columns = ["run", "sample", "method", "mass_tare [g]", "mass_filled [g]", "volume [mL]",
               "temperature [degC]", "pressure [kPa]", "humidity [%]", "wet", "expected",
               "operator", "date"]
    write(ROOT / "qa_cylinders.csv", rows, columns)


def main():
    rng = np.random.default_rng(20261112)
    qa_cylinders(rng)


if __name__ == "__main__":
    main()
