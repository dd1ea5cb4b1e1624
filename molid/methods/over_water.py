r"""Gas collected over water: a gas released from a weighed source into a tube standing in water.

A small source (a gas lighter, a small gas cylinder) is weighed, part of its gas is
released under water into an inverted graduated tube filled with water, the
source is dried and weighed again, and the collected volume, the water's
temperature, the barometric pressure and (where the levels are not equalised)
the height of the water column inside the tube above the outside level are read.

The source's loss is the gas released, with the conventional-mass factor of
OIML D 28 (the source's own volume does not change, so the air it displaces
cancels):

.. math:: m = (I_{before} - I_{after})\,(1 - \rho_a/\rho_c)

The gas in the tube is at the barometric pressure less the raised water column,
and is (nearly) saturated with water vapour at the water's temperature, so the
gas's own partial pressure is

.. math:: p_{dry} = p_{bar} - \rho_w(T)\,g_n\,h - \varphi\,p_{sat,w}(T)

and :math:`M = Z\,m R T / (p_{dry} V)`, with Z of the candidate at p_dry.
The water vapour is not weighed: it came from the tube's water, not from the
source. Gases that dissolve in water lose part of the released amount to the
water, so their result reads high; how much depends on the contact and is
given per candidate as a note (see :mod:`molid.candidates.dissolution`), and
gases that dissolve or react so much that they cannot be collected this way
get a verdict of their own.

Second-order effects not modelled: the gas dissolved in the water (a note, not
a correction: the contact is not recorded), the tube's graduation at a
temperature other than 20 °C (1e-4 for 10 K in borosilicate glass), and the
water vapour's non-ideality.

References
----------
OIML D 28:2004, Conventional value of the result of weighing in air.
M. Tanaka, G. Girard, R. Davis, A. Peuto and N. Bignell, Metrologia 38 (2001)
301–309 (density of water, for the column).
W. Wagner and A. Pruss, J. Phys. Chem. Ref. Data 31 (2002) 387 (saturation
pressure of water).
"""

from __future__ import annotations

import numpy as np

from molid.methods.base import DEFAULT_GLASS_MASS, Method, conventional_mass_factor, same_volume
from molid.physics.constants import CONVENTIONAL_MASS_DENSITY
from molid.physics.hydrostatics import gas_pressure_over_water, water_column_pressure
from molid.physics.water import saturation_pressure_water

__all__ = [
    "METHOD",
    "ROOM_AIR_HUMIDITY",
    "released_mass",
    "dry_gas_pressure",
    "simulate_readings",
    "row_checks",
]

#: Relative humidity taken for the balance-room air [1]: the run's humidity column is the
#: collected gas's. It only enters the conventional-mass factor, where 50 % either way
#: moves the air density by 0.5 % and the result by under 1e-6.
ROOM_AIR_HUMIDITY = 0.5

#: Longest water column a lab tube can hold above the outside level [m]; longer is a unit slip.
_LONGEST_COLUMN = 1.0


def released_mass(source_before, source_after, air_density):
    """Return the mass of gas the source released [kg].

    Parameters
    ----------
    source_before, source_after : array_like
        Balance indications of the source before and after the release [kg].
    air_density : array_like
        Air density at the balance [kg/m³].

    Returns
    -------
    numpy.ndarray
        (I_before − I_after)·(1 − ρa/ρc) [kg] (OIML D 28).

    Examples
    --------
    A lighter that loses 0.1500 g on the balance, air 1.19 kg/m³ (1 − 1.19/8000):

    >>> round(float(released_mass(15.2e-3, 15.05e-3, 1.19)) * 1e6, 3)
    149.978
    """
    return (source_before - source_after) * conventional_mass_factor(air_density)


def dry_gas_pressure(barometric_pressure, temperature, water_column, saturation=1.0):
    r"""Return the partial pressure of a gas collected over water [Pa].

    Parameters
    ----------
    barometric_pressure : array_like
        Pressure of the room [Pa].
    temperature : array_like
        Temperature of the water and the gas [K], 0 °C to 40 °C.
    water_column : array_like
        Height of the water inside the tube above the outside level [m].
    saturation : array_like
        The gas's water vapour as a fraction of saturation [1].

    Returns
    -------
    numpy.ndarray
        :math:`p_{bar} - \rho_w g_n h - \varphi\,p_{sat,w}(T)` [Pa].

    References
    ----------
    Hydrostatics and Dalton's law of partial pressures; water density from Tanaka
    et al., Metrologia 38 (2001) 301, saturation pressure from Wagner and Pruss,
    J. Phys. Chem. Ref. Data 31 (2002) 387.

    Examples
    --------
    At 22.0 °C water's saturation pressure is 2.645 kPa (Wagner and Pruss 2002);
    with 100.80 kPa and levels equalised the gas's pressure is 98.155 kPa:

    >>> round(float(dry_gas_pressure(100.80e3, 295.15, 0.0)) / 1e3, 3)
    98.155
    """
    return (gas_pressure_over_water(barometric_pressure, temperature, water_column)
            - saturation * saturation_pressure_water(temperature))


def _gas_mass(source_before, source_after, volume, air_density):
    """Return the registry's form of :func:`released_mass` [kg]."""
    return released_mass(source_before, source_after, air_density) + 0.0 * volume


def _gas_pressure(pressure, temperature, water_column):
    """Return the total pressure of the wet gas in the tube [Pa]."""
    return gas_pressure_over_water(pressure, temperature, water_column)


def _vapour_saturation(humidity, wet):
    """Return the collected gas's humidity: the humidity column is the gas's, not the room's."""
    return humidity + 0.0 * np.asarray(wet, dtype=float)


def _air_humidity(humidity):
    """Return the balance-room humidity taken for these runs (the column is the gas's)."""
    return ROOM_AIR_HUMIDITY + 0.0 * humidity


def simulate_readings(gas_mass, air_density, volume, glass_mass=DEFAULT_GLASS_MASS, outer_volume=None):
    """Simulate the indications of an ideal balance for the source before and after [kg].

    Parameters
    ----------
    gas_mass : array_like
        Mass of gas released [kg].
    air_density : array_like
        Room-air density [kg/m³].
    volume : array_like
        Volume of the collected gas [m³] (not needed: the source's volume is fixed).
    glass_mass : float
        Mass of the source after the release [kg].
    outer_volume : array_like, optional
        Volume the source displaces [m³]; 20 mL by default.

    Returns
    -------
    tuple of numpy.ndarray
        Indications before and after the release [kg].

    Notes
    -----
    Forces on the pan over g: the source's mass (with its gas before the
    release) less the air its fixed outside displaces; reference weights of
    mass I pull with I·(1 − ρa/ρc) (OIML R 111-1, D 28).
    """
    outer_volume = 20e-6 + 0.0 * np.asarray(volume) if outer_volume is None else outer_volume
    outside = air_density * outer_volume
    weights_per_force = CONVENTIONAL_MASS_DENSITY / (CONVENTIONAL_MASS_DENSITY - air_density)
    before = (glass_mass + gas_mass - outside) * weights_per_force
    after = (glass_mass - outside) * weights_per_force
    return before, after


def row_checks(values, written):
    """Rows a collection over water cannot have produced.

    Parameters
    ----------
    values : dict of numpy.ndarray
        The file's readings in SI units.
    written : callable
        ``written(name, value)``: a SI value as text in the unit the user wrote.

    Returns
    -------
    list of (numpy.ndarray, callable)
        The rows at fault and the message for row i: a source that did not lose
        mass, water outside 0–40 °C, a negative or impossibly long water column,
        or a column and water vapour that leave the gas no pressure.
    """
    count = len(values["temperature"])
    before = values.get("source_before", np.full(count, np.nan))
    after = values.get("source_after", np.full(count, np.nan))
    column = np.nan_to_num(values.get("water_column", np.zeros(count)))
    water = values["temperature"]
    with np.errstate(all="ignore"):
        liquid = (water > 273.15) & (water < 313.15)
        left = values["pressure"] - water_column_pressure(np.where(liquid, water, 293.15), column) \
            - saturation_pressure_water(np.where(liquid, water, 293.15))
    return [
        (after >= before, lambda i: (
            f"columns 'source_before'/'source_after': the source weighed "
            f"{written('source_before', before[i])} before and {written('source_after', after[i])} "
            "after the release; it must lose the gas it released (check the order of the readings)")),
        (~liquid, lambda i: (
            f"column 'temperature': water at {written('temperature', water[i])} cannot hold a "
            "collection over water here; give the water temperature, between 0 and 40 °C")),
        (column < 0, lambda i: (
            f"column 'water_column': {written('water_column', column[i])} is negative; give the "
            "height of the water inside the tube above the outside level (0 when levelled)")),
        (column > _LONGEST_COLUMN, lambda i: (
            f"column 'water_column': {written('water_column', column[i])} is longer than any "
            "collection tube; check the unit (default mm)")),
        (liquid & (column >= 0) & (column <= _LONGEST_COLUMN) & (left <= 0), lambda i: (
            "columns 'pressure'/'water_column': the water column and the water's vapour pressure "
            "leave the gas no pressure of its own; check the pressure and its unit")),
    ]


METHOD = Method(
    name="over-water",
    summary="a source weighed before and after releasing its gas, collected in a tube over water",
    vessel="a tube collecting gas over water",
    required_inputs=("source_before", "source_after", "volume", "temperature", "pressure"),
    optional_inputs=("water_column", "humidity", "air_temperature", "air_pressure", "co2"),
    gas_mass=_gas_mass,
    gas_mass_without_displaced_air=None,
    candidate_corrections=("compressibility", "solubility"),
    mistakes=("celsius-as-kelvin", "volume-unit", "pressure-unit", "masses-swapped",
              "gas-constant-units", "water-vapour-not-subtracted", "water-column-ignored"),
    simulate_readings=simulate_readings,
    row_checks=row_checks,
    cautions=(
        "gas released under water is still flammable: no flames or sparks near the tube or the "
        "trough, and vent the collected gas in a fume hood",
        "never puncture, heat or refill a gas lighter or a small cylinder; release gas only "
        "through its own valve",
        "water and electrical equipment do not mix: keep the balance and its power supply dry",
    ),
    gas_volume=same_volume,
    readings=("source_before", "source_after"),
    gas_pressure=_gas_pressure,
    vapour_saturation=_vapour_saturation,
    air_humidity=_air_humidity,
    weighs_water=False,
    always_wet=True,
    # the collected gas bubbled through the water: saturated unless measured; levels equalised
    input_defaults=(("humidity", 1.0, "the collected gas saturated with water vapour (100 %)"),
                    ("water_column", 0.0, "the water levels inside and outside the tube equalised")),
)
