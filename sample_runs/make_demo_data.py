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

from molid.methods import over_water  # noqa: E402
from molid.methods.vapour_flask import flask_volume_at, simulate_readings  # noqa: E402

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
             u_mass_g=0.0001, u_temp=0.05, u_pressure=0.03, glass_g=148.0,
             offset_temp=0.0, offset_pressure=0.0):
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
        # each reading's own noise, plus the instrument's calibration error, the same for all
        "temperature [degC]": f"{temp_c + offset_temp + noise(u_temp):.2f}",
        "pressure [kPa]": f"{pressure_kpa + offset_pressure + noise(u_pressure):.2f}",
        "humidity [%]": f"{rh:.0f}",
    }


def write(path, rows, columns):
    with open(path, "w", newline="", encoding="utf-8") as stream:
        writer = csv.DictWriter(stream, fieldnames=columns, lineterminator="\n")
        writer.writeheader()
        writer.writerows(rows)


def qa_cylinders(rng):
    """Incoming-goods check at the (fictional) Larkspur Coatings QA lab, cylinders from
    the (fictional) supplier Fenwick & Marr Industrial Gases.
    """
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
    # The lab's probe and barometer carry calibration errors within their certificates
    # (0.05 K and 0.03 kPa standard uncertainty): one draw, shared by every run.
    offset_temp, offset_pressure = 0.05 * rng.standard_normal(), 0.03 * rng.standard_normal()
    for number, (sample, label, gas, method, volume, operator) in enumerate(plan, start=1):
        wet = sample == "LINE-07"
        run = make_run(rng, method=method, gas=gas, volume_ml=volume,
                       temp_c=20.5 + 1.5 * rng.random(), pressure_kpa=100.2 + 1.5 * rng.random(),
                       rh=38 + 10 * rng.random(), wet=wet,
                       u_mass_g=0.00015 if method == "syringe" else 0.0001,
                       u_temp=0.03, u_pressure=0.02,
                       offset_temp=offset_temp, offset_pressure=offset_pressure)
        rows.append({"run": f"QA-{number:03d}", "sample": sample, "method": method,
                     **run, "wet": "yes" if wet else "no", "expected": label,
                     "operator": operator, "date": f"2026-11-{9 + number // 4:02d}"})
    columns = ["run", "sample", "method", "mass_tare [g]", "mass_filled [g]", "volume [mL]",
               "temperature [degC]", "pressure [kPa]", "humidity [%]", "wet", "expected",
               "operator", "date"]
    write(ROOT / "qa_cylinders.csv", rows, columns)


# QA purity check: sulfur hexafluoride with some air, densities from CoolProp's mixture model.
SF6_CAS = "2551-62-4"
AIR_PARTS = {"Nitrogen": 0.780848, "Oxygen": 0.209390, "Argon": 0.009332, "CarbonDioxide": 0.0004}


def sf6_with_air(fraction, temperature, pressure):
    """Density [kg/m³] of SF6 with a mole fraction of dry air (CIPM-2007 composition), CoolProp.

    CoolProp has no fitted SF6 pairs with the air components; the Lorentz-Berthelot rule it
    applies on request stands in (adequate for demo data).
    """
    import CoolProp.CoolProp as CP

    for cas in ("7727-37-9", "7782-44-7", "7440-37-1", "124-38-9"):
        try:
            CP.apply_simple_mixing_rule(SF6_CAS, cas, "Lorentz-Berthelot")
        except ValueError:
            pass
    parts = {"SulfurHexafluoride": 1.0 - fraction, **{k: fraction * v for k, v in AIR_PARTS.items()}}
    state = CP.AbstractState("HEOS", "&".join(parts))
    state.set_mole_fractions(list(parts.values()))
    state.specify_phase(CP.iphase_gas)
    state.update(CP.PT_INPUTS, pressure, temperature)
    return state.rhomass()


def qa_purity(rng):
    """Second delivery at the (fictional) Larkspur Coatings QA lab: three SF6 cylinders checked
    against the purchase specification (at least 99.5 % SF6, air the expected contaminant) and one
    filled to four pressures for a model-free molar mass (the method of limiting densities).
    """
    plan = [  # sample, true air fraction, bulb fill pressure kPa
        ("CYL-2301", 0.0004, 100.6), ("CYL-2301", 0.0004, 100.9),
        ("CYL-2302", 0.0049, 100.4), ("CYL-2302", 0.0049, 100.7),
        ("CYL-2303", 0.021, 100.8), ("CYL-2303", 0.021, 100.5),
        ("CYL-2304", 0.0004, 32.0), ("CYL-2304", 0.0004, 48.5), ("CYL-2304", 0.0004, 71.0),
        ("CYL-2304", 0.0004, 100.6),
    ]
    rows = []
    offset_temp, offset_pressure = 0.03 * rng.standard_normal(), 0.02 * rng.standard_normal()
    for number, (sample, fraction, kilopascal) in enumerate(plan, start=1):
        temp_c = 20.8 + 1.0 * rng.random()
        T, p, V = temp_c + 273.15, kilopascal * 1e3, 1000.37e-6
        gas = sf6_with_air(fraction, T, p) * V
        rho_air = simulate.air_density(T, 100.8e3, 0.42)
        tare, filled = simulate.readings("evacuated-bulb", gas, rho_air, V, glass=0.2105)
        noise = rng.standard_normal(4)
        rows.append({
            "run": f"QB-{number:03d}", "sample": sample, "method": "evacuated-bulb",
            "mass_tare [g]": f"{tare * 1e3 + 1e-4 * noise[0]:.4f}",
            "mass_filled [g]": f"{filled * 1e3 + 1e-4 * noise[1]:.4f}",
            "volume [mL]": "1000.37", "u_volume [mL]": "0.05",
            "temperature [degC]": f"{temp_c + offset_temp + 0.03 * noise[2]:.2f}",
            "pressure [kPa]": f"{kilopascal + offset_pressure + 0.02 * noise[3]:.2f}",
            "air_pressure [kPa]": "100.80", "humidity [%]": "42", "expected": "sulfur hexafluoride",
            "min_purity [%]": "99.5", "operator": "R. Lindqvist", "date": "2026-12-01",
        })
    columns = ["run", "sample", "method", "mass_tare [g]", "mass_filled [g]", "volume [mL]", "u_volume [mL]",
               "temperature [degC]", "pressure [kPa]", "air_pressure [kPa]", "humidity [%]", "expected",
               "min_purity [%]", "operator", "date"]
    write(ROOT / "qa_purity.csv", rows, columns)


# Teaching section: a student's own arithmetic, with the classic mistakes some make.
ATM_IN_MMHG = 760.0            # 1 atm = 760 mmHg (definition of the standard atmosphere)
R_LITRE_ATM = R / 101.325      # L·atm/(mol·K): 101.325 J per L·atm
R_CALORIE = R / 4.184          # cal/(mol·K): thermochemical calorie 4.184 J


def student_molar_mass(cells, method, rho_air, mistake=None):
    """Compute what a student gets from the written readings, in g/mol.

    The student works in L, atm and K with R in L·atm/(mol·K), and adds the
    displaced air's mass (air density from the instructor's sheet) for an
    air-tared bulb or a syringe. ``mistake`` changes one step.
    """
    tare = float(cells["mass_tare [g]"])
    filled = float(cells["mass_filled [g]"])
    volume_ml = float(cells["volume [mL]"])
    celsius = float(cells["temperature [degC]"])
    mmhg = float(cells["pressure [mmHg]"])
    volume = volume_ml / 1000.0
    temperature = celsius + 273.15
    pressure = mmhg / ATM_IN_MMHG
    constant = R_LITRE_ATM
    air = rho_air * volume  # g, with rho_air in g/L
    mass = filled - tare + (air if method != "evacuated-bulb" else 0.0)
    if mistake == "celsius-as-kelvin":
        temperature = celsius
    elif mistake == "volume-unit":
        volume = volume_ml
    elif mistake == "pressure-unit":
        pressure = mmhg / 101.325  # divided as if the reading were in kPa
    elif mistake == "gas-constant-units":
        constant = R  # 8.314 J/(mol·K) with atm and L
    elif mistake == "no-buoyancy":
        mass = filled - tare
    elif mistake == "masses-swapped":
        mass = tare - filled + (air if method != "evacuated-bulb" else 0.0)
    elif mistake == "unexplained":
        mass = (filled - tare + air) * 1.12  # a slip no single classic mistake explains
    return mass * constant * temperature / (pressure * volume)


def teaching_section(rng):
    """Write a teaching section and its answer key.

    Two lab sections at the (fictional) Bramblewood Community College chemistry labs
    weigh unknown gases in gas syringes and air-tared flasks; a few students make
    the classic mistakes in their own calculation.
    """
    unknowns = {  # sample: (key entry, CoolProp fluid)
        "U-01": ("N2", "Nitrogen"), "U-02": ("O2", "Oxygen"), "U-03": ("Ar", "Argon"),
        "U-04": ("CO2", "CarbonDioxide"), "U-05": ("n-butane", "n-Butane"),
        "U-06": ("propane", "n-Propane"), "U-07": ("SF6", "SulfurHexafluoride"),
        "U-08": ("R-134a", "R134a"), "U-09": ("He", "Helium"),
    }
    students = [
        # name, section, sample, method, mistake
        ("Amara Quillfeather", "CHEM 1120-02", "U-01", "syringe", None),
        ("Bastian Okerlund", "CHEM 1120-02", "U-02", "air-tare-bulb", None),
        ("Carmen Vellacott", "CHEM 1120-02", "U-03", "syringe", "celsius-as-kelvin"),
        ("Dmitri Halloway", "CHEM 1120-02", "U-04", "air-tare-bulb", "no-buoyancy"),
        ("Esi Marchbanks", "CHEM 1120-02", "U-05", "syringe", None),
        ("Farid Ostrander", "CHEM 1120-02", "U-06", "air-tare-bulb", None),
        ("Greta Penhallow", "CHEM 1120-02", "U-07", "syringe", None),
        ("Hiroshi Tamblyn", "CHEM 1120-02", "U-08", "air-tare-bulb", "volume-unit"),
        ("Ines Carrowmore", "CHEM 1120-02", "U-09", "syringe", None),
        ("Jonah Featherstone", "CHEM 1120-02", "U-04", "syringe", None),
        ("Kalinda Brisbane", "CHEM 1120-02", "U-01", "air-tare-bulb", "pressure-unit"),
        ("Lucien Abernethy", "CHEM 1120-02", "U-06", "syringe", None),
        ("Mireille Dunstable", "CHEM 1120-04", "U-02", "syringe", None),
        ("Nnamdi Ravensworth", "CHEM 1120-04", "U-03", "air-tare-bulb", None),
        ("Oksana Pellinore", "CHEM 1120-04", "U-04", "syringe", "masses-swapped"),
        ("Pavel Winterbourne", "CHEM 1120-04", "U-05", "air-tare-bulb", None),
        ("Quentin Marlowe-Tey", "CHEM 1120-04", "U-06", "syringe", "gas-constant-units"),
        ("Rosalind Achterberg", "CHEM 1120-04", "U-07", "air-tare-bulb", None),
        ("Sefa Lindgarth", "CHEM 1120-04", "U-08", "syringe", None),
        ("Tamsin Orrell", "CHEM 1120-04", "U-09", "syringe", "no-buoyancy"),
        ("Ulrich Bellweather", "CHEM 1120-04", "U-01", "syringe", None),
        ("Valentina Stroud", "CHEM 1120-04", "U-07", "syringe", "unexplained"),
        ("Wen Hartigan", "CHEM 1120-04", "U-05", "syringe", None),
        ("Xavier Colquhoun", "CHEM 1120-04", "U-03", "syringe", None),
    ]
    rows = []
    room_c = 21.0 + rng.random()
    room_mmhg = 748.0 + 6.0 * rng.random()
    rh = 35 + 15 * rng.random()
    for number, (name, section, sample, method, mistake) in enumerate(students, start=1):
        volume_ml = 100.0 if method == "syringe" else 250.3
        temp_c = room_c + 0.3 * rng.standard_normal()
        run = make_run(rng, method=method, gas=unknowns[sample][1], volume_ml=volume_ml,
                       temp_c=temp_c, pressure_kpa=room_mmhg * 0.133322387415, rh=rh,
                       u_mass_g=0.0001, u_temp=0.1, u_pressure=0.0)
        pressure_kpa = float(run.pop("pressure [kPa]"))
        run["pressure [mmHg]"] = f"{pressure_kpa / 0.133322387415:.1f}"
        run["u_volume [mL]"] = "0.5" if method == "syringe" else "0.1"
        # the instructor's sheet gives the room's air density, rounded to 0.001 g/L
        T = float(run["temperature [degC]"]) + 273.15
        rho_air = round(simulate.air_density(T, pressure_kpa * 1e3, rh / 100), 3)
        reported = student_molar_mass(run, method, rho_air, mistake)
        rows.append({"run": f"B{number:02d}", "student": name, "section": section,
                     "sample": sample, "method": method, **run,
                     "reported_molar_mass [g/mol]": f"{reported:#.4g}"})
    # A student who handed in no readings.
    rows.append({"run": "B25", "student": "Yara Thistlewood", "section": "CHEM 1120-04",
                 "sample": "U-02", "method": "syringe"})
    columns = ["run", "student", "section", "sample", "method", "mass_tare [g]",
               "mass_filled [g]", "volume [mL]", "u_volume [mL]", "temperature [degC]",
               "pressure [mmHg]", "humidity [%]", "reported_molar_mass [g/mol]"]
    write(ROOT / "teaching_section.csv", rows, columns)
    write(ROOT / "teaching_key.csv",
          [{"sample": sample, "expected": entry} for sample, (entry, _) in unknowns.items()],
          ["sample", "expected"])


# Condensed-vapour flask section: vapour densities at the bath and vapour pressures at room
# temperature from CoolProp, the readings from the method's own force-balance simulator.
MMHG_IN_KPA = 0.133322387415   # 1 mmHg = 101.325/760 kPa (definition of the standard atmosphere)


def flask_student_molar_mass(cells, route, mistake=None):
    """Compute a student's textbook ideal-gas molar mass from the written flask readings, in g/mol.

    M = m·R·T_bath/(p·V) with m the mass gained, without the residual-vapour correction.
    ``route`` is the unit the student works in: "atm" (mmHg/760, R in L·atm/(mol·K)) or
    "kPa" (mmHg × 0.1333, R in L·kPa/(mol·K)). ``mistake`` changes one step.
    """
    mass = float(cells["mass_filled [g]"]) - float(cells["mass_tare [g]"])
    volume_ml = float(cells["volume [mL]"])
    celsius = float(cells["temperature [degC]"])
    mmhg = float(cells["pressure [mmHg]"])
    volume, temperature = volume_ml / 1000.0, celsius + 273.15
    pressure, constant = ((mmhg / ATM_IN_MMHG, R_LITRE_ATM) if route == "atm"
                          else (mmhg * MMHG_IN_KPA, R))
    if mistake == "celsius-as-kelvin":
        temperature = celsius
    elif mistake == "volume-unit":
        volume = volume_ml
    elif mistake == "pressure-unit":
        pressure, constant = mmhg, R  # the mmHg reading used as if it were in kPa
    return mass * constant * temperature / (pressure * volume)


def flask_run(rng, fluid, nominal_ml):
    """One student's flask readings as written: true state from CoolProp, teaching-lab noise added.

    Balance with 1 mg readability (1 mg noise per reading, written to the mg), thermometer
    0.3 K, barometer 0.1 kPa (written in mmHg, the lab's barometer scale).
    """
    volume_ml = round(nominal_ml * (1.06 + 0.06 * rng.random()), 1)  # to the brim, by water fill
    # the instruments' readings span the stated ranges; the true state is a reading less its error
    noise = rng.standard_normal(5)
    bath_read, room_read = 98.5 + 1.3 * rng.random(), 19.5 + 3.5 * rng.random()
    pressure_read = 99.0 + 3.5 * rng.random()  # kPa
    bath, room = 273.15 + bath_read - 0.3 * noise[2], 273.15 + room_read - 0.3 * noise[3]
    pressure = 1e3 * (pressure_read - 0.1 * noise[4])
    rh = 35 + 25 * rng.random()
    volume = volume_ml * 1e-6
    vapour = PropsSI("D", "T", bath, "P", pressure, fluid) * flask_volume_at(volume, bath)
    ratio = PropsSI("P", "T", room, "Q", 0, fluid) / pressure
    glass = (1e-3 * (78.0 + 12.0 * rng.random()) if nominal_ml == 125
             else 1e-3 * (88.0 + 14.0 * rng.random()))
    tare, final = simulate_readings(vapour, simulate.air_density(room, pressure, rh / 100),
                                    flask_volume_at(volume, room), glass_mass=glass,
                                    saturation_ratio=ratio)
    return {
        "mass_tare [g]": f"{float(tare) * 1e3 + 1e-3 * noise[0]:.3f}",
        "mass_filled [g]": f"{float(final) * 1e3 + 1e-3 * noise[1]:.3f}",
        # the lab states its top-loading balance (1 mg), well above the default analytical one
        "u_mass_tare [g]": "0.001", "u_mass_filled [g]": "0.001",
        "volume [mL]": f"{volume_ml:.1f}",
        "temperature [degC]": f"{bath_read:.1f}",
        "air_temperature [degC]": f"{room_read:.1f}",
        "pressure [mmHg]": f"{pressure_read / MMHG_IN_KPA:.1f}",
        "humidity [%]": f"{rh:.0f}",
    }


def lighter_student_molar_mass(cells, mistake=None):
    """Compute a student's ideal-gas molar mass of a gas collected over water, in g/mol.

    The student converts the barometer (mmHg) to atm, subtracts the water column as mm of
    mercury (h/13.6) and the water's vapour pressure from the lab's table (to 0.1 mmHg),
    and uses R in L·atm/(mol·K). ``mistake`` leaves one subtraction out.
    """
    mass = float(cells["source_before [g]"]) - float(cells["source_after [g]"])
    celsius = float(cells["temperature [degC]"])
    column = float(cells["water_column [mm]"] or 0.0) / 13.6
    water = round(PropsSI("P", "T", celsius + 273.15, "Q", 0, "Water") / 1e3 / MMHG_IN_KPA, 1)
    mmhg = float(cells["pressure [mmHg]"])
    if mistake != "water-vapour-not-subtracted":
        mmhg -= water
    if mistake != "water-column-ignored":
        mmhg -= column
    return mass * R_LITRE_ATM * (celsius + 273.15) / (mmhg / ATM_IN_MMHG * float(cells["volume [mL]"]) / 1e3)


def lighter_run(rng, fluid, column_read=None):
    """One student's over-water readings as written: gas released from a lighter into a 100 mL tube.

    Analytical balance (0.2 mg per reading, written to 0.1 mg: the loss is only 0.1-0.3 g),
    tube read to 0.2 mL, thermometer 0.3 K, barometer 0.1 kPa, column read to 2 mm (most
    students level the tube, a few leave 40-90 mm). The collected gas is
    the pure gas at its partial pressure, saturated with water (CoolProp densities).
    """
    noise = rng.standard_normal(6)
    volume_read = round(60.0 + 35.0 * rng.random(), 1)
    water_read, pressure_read = 20.0 + 3.0 * rng.random(), 99.0 + 3.5 * rng.random()
    if column_read is None:
        column_read = float(rng.choice([0.0, 0.0, 0.0, round(40 + 50 * rng.random())]))
    temperature = 273.15 + water_read - 0.3 * noise[0]
    pressure = 1e3 * (pressure_read - 0.1 * noise[1])
    column = max(column_read - 2.0 * noise[2], 0.0) * 1e-3
    volume = (volume_read - 0.2 * noise[3]) * 1e-6
    partial = float(over_water.dry_gas_pressure(pressure, temperature, column))
    gas = PropsSI("D", "T", temperature, "P", partial, fluid) * volume
    glass = 1e-3 * (14.0 + 3.0 * rng.random())
    before, after = over_water.simulate_readings(gas, simulate.air_density(temperature, pressure, 0.5),
                                                 volume, glass_mass=glass)
    return {
        "source_before [g]": f"{float(before) * 1e3 + 2e-4 * noise[4]:.4f}",
        "source_after [g]": f"{float(after) * 1e3 + 2e-4 * noise[5]:.4f}",
        "u_source_before [g]": "0.0002", "u_source_after [g]": "0.0002",
        "volume [mL]": f"{volume_read:.1f}", "u_volume [mL]": "0.2",
        "temperature [degC]": f"{water_read:.1f}",
        "pressure [mmHg]": f"{pressure_read / MMHG_IN_KPA:.1f}",
        "water_column [mm]": f"{column_read:.0f}",
    }


def flask_section(rng):
    """Write a condensed-vapour flask section and its answer key.

    Section CHEM 1410-L3 of the (fictional) Alder Creek College general-chemistry lab,
    instructor Dr. Priyanka Vosloo-Garand: each student vaporises one of four volatile
    unknowns in a capped 125 mL or 150 mL borosilicate flask in a boiling-water bath, on one
    of the section's lab days. Most report the textbook ideal-gas value; three slip a unit.
    """
    unknowns = {  # sample: (key entry, CoolProp fluid)
        "V-1": ("acetone", "Acetone"), "V-2": ("ethanol", "Ethanol"),
        "V-3": ("n-hexane", "n-Hexane"), "V-4": ("methanol", "Methanol"),
    }
    students = [
        # name, sample, flask nominal mL, the unit the student works in, mistake, significant figures
        ("Adaeze Morrow-Okafor", "V-1", 125, "atm", None, 4),
        ("Bao Tran Whitcombe", "V-2", 150, "kPa", None, 3),
        ("Cosima Ferreira-Lund", "V-3", 125, "atm", None, 4),
        ("Dariusz Penhaligon", "V-4", 150, "atm", "celsius-as-kelvin", 3),
        ("Elif Arslanoglu", "V-1", 150, "kPa", None, 4),
        ("Femi Castellanos", "V-2", 125, "atm", None, 4),
        ("Gwen Ashdown-Raines", "V-3", 150, "kPa", None, 3),
        ("Hamid Rostami-Vale", "V-4", 125, "kPa", None, 4),
        ("Isla MacCready", "V-1", 125, "atm", "volume-unit", 3),
        ("Joaquin Berrocal", "V-2", 150, "atm", None, 3),
        ("Keoni Makaiwi", "V-3", 125, "kPa", "pressure-unit", 4),
        ("Ludmila Sorokina-Hart", "V-4", 150, "atm", None, 4),
        ("Mateo Quisbert", "V-1", 150, "atm", None, 4),
        ("Noor Al-Tamimi", "V-2", 125, "kPa", None, 4),
        ("Oluwaseun Brightwater", "V-3", 150, "atm", None, 3),
        ("Pilar Anzaldua-Reyes", "V-4", 125, "kPa", None, 4),
    ]
    rows = []
    for number, (name, sample, nominal, route, mistake, digits) in enumerate(students, start=1):
        run = flask_run(rng, unknowns[sample][1], nominal)
        reported = flask_student_molar_mass(run, route, mistake)
        rows.append({"run": f"F{number:02d}", "student": name, "section": "CHEM 1410-L3",
                     "sample": sample, "method": "vapour-flask", **run,
                     "reported_molar_mass [g/mol]": f"{reported:#.{digits}g}"})
    # the same section's second lab day: lighter gas collected over water, two refill brands
    gases = {"G-1": ("isobutane", "IsoButane"), "G-2": ("n-butane", "n-Butane")}
    collectors = [
        ("Adaeze Morrow-Okafor", "G-1", None), ("Bao Tran Whitcombe", "G-2", None),
        ("Cosima Ferreira-Lund", "G-1", "water-vapour-not-subtracted"),
        ("Dariusz Penhaligon", "G-2", None), ("Elif Arslanoglu", "G-1", None),
        ("Femi Castellanos", "G-2", "water-column-ignored"),
    ]
    for number, (name, sample, mistake) in enumerate(collectors, start=1):
        # the student who ignores the column never levelled the tube
        run = lighter_run(rng, gases[sample][1], 150.0 if mistake == "water-column-ignored" else None)
        reported = lighter_student_molar_mass(run, mistake)
        rows.append({"run": f"W{number:02d}", "student": name, "section": "CHEM 1410-L3",
                     "sample": sample, "method": "over-water", **run,
                     "reported_molar_mass [g/mol]": f"{reported:#.4g}"})
    unknowns.update(gases)
    columns = ["run", "student", "section", "sample", "method", "mass_tare [g]", "mass_filled [g]",
               "u_mass_tare [g]", "u_mass_filled [g]", "source_before [g]", "source_after [g]",
               "u_source_before [g]", "u_source_after [g]", "volume [mL]", "u_volume [mL]",
               "temperature [degC]", "air_temperature [degC]", "pressure [mmHg]", "water_column [mm]",
               "humidity [%]", "reported_molar_mass [g/mol]"]
    write(ROOT / "flask_section.csv", rows, columns)
    write(ROOT / "flask_key.csv",
          [{"sample": sample, "expected": entry} for sample, (entry, _) in unknowns.items()],
          ["sample", "expected"])


def main():
    rng = np.random.default_rng(20261112)
    qa_cylinders(rng)
    teaching_section(np.random.default_rng(20261203))
    flask_section(np.random.default_rng(20270118))
    qa_purity(np.random.default_rng(20261201))


if __name__ == "__main__":
    main()
