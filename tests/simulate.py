"""Simulated weighings built from reference equations of state (CoolProp), for tests.

The forward model is each method's simulator of what a balance would show, written
from the forces on the pan apart from the model's algebra: the glass and the air
the vessel displaces enter both readings; an evacuated bulb displaces the same air
at both weighings; a bulb tared full of air loses that air's mass when it is
filled; a syringe displaces V more air when drawn; the indication is the mass of
8000 kg/m³ reference weights whose weight less their buoyancy equals the net
downward force (OIML R 111-1:2004, D 28:2004).
Gas densities come from CoolProp's reference equations of state and the air
density from CoolProp's humid-air model (ASHRAE RP-1485), independent of molid's
own CIPM-2007 code.
"""

import numpy as np
from CoolProp.CoolProp import PropsSI
from CoolProp.HumidAirProp import HAPropsSI

from molid.methods.registry import METHODS


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
    """Tare and filled balance indications [kg] for a gas mass [kg] in a vessel (the method's simulator)."""
    simulate = METHODS[method].simulate_readings
    tare, filled = simulate(gas_mass, rho_air, volume, glass_mass=glass, outer_volume=outer_volume)
    return np.asarray(tare), np.asarray(filled)
