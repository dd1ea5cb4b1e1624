"""Simulated weighings built from reference equations of state (CoolProp), for tests.

The forward model is what a balance would show: the glass and the displaced air
enter both readings; an evacuated bulb displaces the same air at both weighings;
a bulb tared full of air loses that air's mass when it is filled; a syringe
displaces V more air when drawn. A balance adjusted with 8000 kg/m³ steel weights
indicates an added volume-less mass m as m/(1 − ρ_a/8000) (OIML D 28:2004).
Gas densities come from CoolProp's reference equations of state and the air
density from CoolProp's humid-air model (ASHRAE RP-1485), independent of molid's
own CIPM-2007 code.
"""

import numpy as np
from CoolProp.CoolProp import PropsSI
from CoolProp.HumidAirProp import HAPropsSI

CONVENTIONAL_DENSITY = 8000.0  # OIML D 28:2004


def air_density(temperature, pressure, relative_humidity):
    """Humid-air density [kg/m³] from CoolProp: (1 + W)/Vha (Vha per kg of dry air)."""
    ratio = HAPropsSI("W", "T", temperature, "P", pressure, "R", relative_humidity)
    volume = HAPropsSI("Vda", "T", temperature, "P", pressure, "R", relative_humidity)
    return (1.0 + ratio) / volume


def gas_density(fluid, temperature, pressure):
    """Mass density [kg/m³] and molar mass [kg/mol] of a pure fluid from CoolProp."""
    density = PropsSI("D", "T", temperature, "P", pressure, fluid)
    molar_mass = PropsSI("M", fluid)
    return density, molar_mass


def readings(method, gas_mass, rho_air, volume, glass=0.15234, outer_volume=None):
    """Tare and filled balance indications [kg] for a gas mass [kg] in a vessel."""
    outer_volume = volume * 1.08 if outer_volume is None else outer_volume
    factor = 1.0 - rho_air / CONVENTIONAL_DENSITY
    if method == "evacuated-bulb":
        tare = glass - rho_air * outer_volume
        filled = tare + gas_mass
    elif method == "air-tare-bulb":
        tare = glass + rho_air * volume - rho_air * outer_volume
        filled = glass + gas_mass - rho_air * outer_volume
    elif method == "syringe":
        tare = glass - rho_air * outer_volume
        filled = glass + gas_mass - rho_air * (outer_volume + volume)
    else:
        raise ValueError(method)
    return np.asarray(tare) / factor, np.asarray(filled) / factor
