"""Noisy runs of every method simulated from reference equations of state, for the planning tests.

Independent of molid's own models: gas and vapour densities from CoolProp 8.0's reference
equations of state (mixtures by its GERG-2008 / Kunz–Wagner departure functions), humid
air from CoolProp's HAPropsSI (ASHRAE RP-1485) with the CIPM-2007 dependence on the CO2
fraction, M_a = (28.96546 + 12.011 (x_CO2 − 0.0004)) g/mol (Picard et al., Metrologia 45
(2008) 149, from memory), the saturation pressure of water and of each liquid from CoolProp,
a flask's volume at the bath from the cubic expansion of borosilicate glass 3.3, 3 × 3.3e-6 /K
(ISO 3585:1998), and the balance readings from each method's force-balance simulator
(``simulate_readings``, written from the forces on the pan; see tests/simulate.py).

Noise is drawn with the standard uncertainties the instrument profile states: normal errors
on the readings, volume, temperatures and pressure; the room humidity and CO2 a run does not
state are drawn from the profile's assumed ranges (rectangular); a gas collected over water
has its water vapour's pressure off by the profile's relative ``wet`` term. Runs of one sample
share what one session shares: the room, the vessel, and each instrument's calibration.
"""

import numpy as np
import pandas as pd
from CoolProp import CoolProp as CP
from CoolProp.CoolProp import PropsSI

from molid.io.profiles import load_profile
from molid.methods.registry import METHODS
from tests.simulate import air_density

#: Cubic expansion of borosilicate glass 3.3 [1/K] (ISO 3585:1998: linear 3.3e-6 /K).
GLASS_EXPANSION = 3 * 3.3e-6
#: Dry air at the CIPM-2007 composition (Picard et al. 2008), as CoolProp mixture fluids.
AIR = {"Nitrogen": 0.780848, "Oxygen": 0.209390, "Argon": 0.009332, "CarbonDioxide": 0.0004}


def mixture_density(fluid, fraction, temperature, pressure):
    """Mass density [kg/m³] of a CoolProp fluid with a mole fraction of air (CoolProp's mixture model)."""
    parts = {fluid: 1.0 - fraction}
    for other, share in AIR.items():
        parts[other] = parts.get(other, 0.0) + fraction * share
    state = CP.AbstractState("HEOS", "&".join(parts))
    state.set_mole_fractions(list(parts.values()))
    state.specify_phase(CP.iphase_gas)
    state.update(CP.PT_INPUTS, pressure, temperature)
    return state.rhomass()


def _truth(method, conditions, count, rng, profile, samples):
    """Draw the true room humidity and CO2 of each sample, the water vapour's relative error of each run."""
    groups = samples[-1] + 1
    value, rule = profile.assumed["humidity"]
    humidity = value + np.sqrt(3) * float(rule.apply(value)) * rng.uniform(-1, 1, groups)[samples]
    value, rule = profile.assumed["co2"]
    co2 = value + np.sqrt(3) * float(rule.apply(value)) * rng.uniform(-1, 1, groups)[samples]
    co2 = np.clip(co2, 0, None)
    wet = profile.wet_relative * rng.standard_normal(count) if method.always_wet else np.zeros(count)
    return humidity, co2, wet


def runs(method_name, conditions, fluid, count, rng, *, fraction=0.0, profile=None, first=0, humidity=None,
         replicates=1):
    """Noisy runs of one fluid (with a fraction of air) at nominal conditions, as a run sheet.

    Parameters
    ----------
    method_name : str
        The method.
    conditions : dict
        ``volume`` [m³], ``temperature`` [K], ``pressure`` [Pa], ``room_temperature`` [K].
    fluid : str
        CoolProp fluid name.
    count : int
        Runs.
    rng : numpy.random.Generator
        Random numbers.
    fraction : float
        Mole fraction of air mixed in.
    profile : InstrumentProfile, optional
        The stated uncertainties (the default profile when None).
    first : int
        Number of the first run id.
    humidity : float, optional
        The room's true relative humidity [1], then measured and written with the profile's u;
        without it the runs state none and it is drawn from the profile's assumed range.
    replicates : int
        Runs per sample (one session, one vessel): the room's humidity and CO2, the vessel's
        volume error and the part of each instrument's error its profile declares common to
        all runs are drawn once per sample; with more than one, a ``sample`` column is written.
    """
    method = METHODS[method_name]
    profile = profile or load_profile()
    T, p, V = conditions["temperature"], conditions["pressure"], conditions["volume"]
    room = conditions["room_temperature"]
    samples = np.arange(count) // replicates
    drawn, co2, wet = _truth(method, conditions, count, rng, profile, samples)
    measured = humidity is not None
    humidity = np.full(count, humidity) if measured else drawn
    water = PropsSI("P", "T", T, "Q", 0, "Water") * (1 + wet) if method.always_wet else np.zeros(count)
    volume = V * (1 + GLASS_EXPANSION * (T - 293.15)) if "residual-vapour" in method.candidate_corrections \
        else V
    density = np.array([mixture_density(fluid, fraction, T, p - w) if fraction else
                        PropsSI("D", "T", T, "P", p - w, fluid) for w in np.atleast_1d(water)])
    room_humidity = np.full(count, 0.5) if method.always_wet else humidity
    rho_air = np.array([air_density(room, p, h) for h in room_humidity])
    rho_air *= 1 + 12.011 / 28.96546 * (co2 - 0.0004)
    options = {}
    if "residual-vapour" in method.candidate_corrections:
        options["saturation_ratio"] = min(PropsSI("P", "T", room, "Q", 0, fluid) / p, 1.0)
    first_reading, second_reading = method.simulate_readings(density * volume, rho_air, V, **options)

    def noisy(name, value):
        rule = profile.rule(name)
        total = rule.apply(value)
        shared = total if name == "volume" else rule.apply_shared(value)
        independent = np.sqrt(np.maximum(total**2 - shared**2, 0.0))
        return value + shared * rng.standard_normal(samples[-1] + 1)[samples] \
            + independent * rng.standard_normal(count)

    frame = {"run": [f"c{first + index}" for index in range(count)], "method": method_name,
             f"{method.readings[0]} [kg]": noisy(method.readings[0], np.asarray(first_reading)),
             f"{method.readings[1]} [kg]": noisy(method.readings[1], np.asarray(second_reading)),
             "volume [m^3]": noisy("volume", np.full(count, V)),
             "temperature [K]": noisy("temperature", np.full(count, T)),
             "pressure [Pa]": noisy("pressure", np.full(count, p))}
    if "air_temperature" in method.required_inputs:
        frame["air_temperature [K]"] = noisy("air_temperature", np.full(count, room))
    if measured:
        frame["humidity [1]"] = np.clip(noisy("humidity", humidity), 0.0, 1.0)
    if replicates > 1:
        frame["sample"] = [f"s{first + index}" for index in samples]
    return pd.DataFrame(frame)
