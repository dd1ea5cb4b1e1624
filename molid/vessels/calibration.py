r"""Volume of a vessel by water fill (ISO 4787), its GUM uncertainty, and replicate fills combined.

A vessel is weighed empty (indication :math:`I_E`) and full of water
(:math:`I_L`) on a balance adjusted with steel weights; the water's density
comes from its temperature (Tanaka et al. 2001, `molid.physics.water.water_density`)
and the displaced air's from the balance room's conditions (CIPM-2007,
`molid.physics.air.moist_air_density`). The volume is referred to 20 °C with the
cubic expansion coefficient of the vessel's material.

Every function takes SI arrays (kg, K, Pa, fractions, m³, 1/K). The model
`gravimetric_volume` is complex-step safe in all its inputs, so
`molid.uncertainty.propagation.propagate` gives its sensitivities exactly.

References
----------
ISO 4787:2021, Laboratory glass and plastic ware -- Volumetric instruments --
Methods for testing of capacity and for use (gravimetric method, the volume
equation and its terms).

M. Tanaka, G. Girard, R. Davis, A. Peuto, N. Bignell, Metrologia 38 (2001) 301-309.

A. Picard, R. S. Davis, M. Gläser, K. Fujii, Metrologia 45 (2008) 149-155.

JCGM 100:2008 (GUM), 5.1.2 (law of propagation of uncertainty).
"""

from __future__ import annotations

import numpy as np

from molid.physics.air import CIPM_2007_RELATIVE_UNCERTAINTY, moist_air_density
from molid.physics.constants import CONVENTIONAL_MASS_DENSITY, ZERO_CELSIUS
from molid.physics.water import TANAKA_RELATIVE_UNCERTAINTY, water_density
from molid.uncertainty.propagation import propagate
from molid.uncertainty.replicates import combine_replicates

__all__ = [
    "REFERENCE_TEMPERATURE",
    "MATERIALS",
    "DEFAULT_MATERIAL",
    "EXPANSION_RELATIVE_UNCERTAINTY",
    "DEFAULT_FILL_UNCERTAINTY",
    "CALIBRATION_INPUTS",
    "WHOLLY_SHARED",
    "material_name",
    "water_density_unknown_air",
    "gravimetric_volume",
    "calibrate_fills",
    "combine_fills",
    "volume_at_temperature",
]

#: Reference temperature of a volumetric instrument's capacity, 20 °C [K] (ISO 4787:2021; ISO 384).
REFERENCE_TEMPERATURE = ZERO_CELSIUS + 20.0

#: Cubic (volume) expansion coefficients [1/K] of vessel materials near room
#: temperature, three times the linear coefficient, with the source of each.
MATERIALS = {
    "borosilicate-3.3": (9.9e-6, "ISO 3585:1998: linear 3.3e-6 /K, cubic 3 x 3.3e-6 /K"),
    "borosilicate-5.0": (15e-6, "linear about 5e-6 /K (the glass's type name); from memory"),
    "soda-lime": (25e-6, "soda-lime glass, linear about 8.5e-6 /K; common practice, from memory"),
    "quartz": (1.6e-6, "fused silica, linear about 0.55e-6 /K; from memory"),
    "polypropylene": (240e-6, "polypropylene ware, common practice, from memory"),
    "polycarbonate": (200e-6, "polycarbonate ware, linear about 65e-6 /K; from memory"),
}

#: Other names accepted in a ``material`` cell, and the material they mean.
MATERIAL_ALIASES = {
    "borosilicate": "borosilicate-3.3", "boro-3.3": "borosilicate-3.3", "duran": "borosilicate-3.3",
    "pyrex": "borosilicate-3.3", "borosilicate-5": "borosilicate-5.0", "soda-lime-glass": "soda-lime",
    "fused-silica": "quartz", "pp": "polypropylene", "pc": "polycarbonate",
}

#: Material assumed when a fill names none: the common glass of laboratory bulbs.
DEFAULT_MATERIAL = "borosilicate-3.3"

#: Relative standard uncertainty of a material's expansion coefficient (a generic
#: value for a material class, not a measured one; common practice).
EXPANSION_RELATIVE_UNCERTAINTY = 0.10

#: Default standard uncertainty of filling a vessel to its mark or stopcock, and of
#: water drops left outside [m³]: 0.02 mL, an assumption of the order a stopcock's
#: bore leaves (common practice); give a ``u_volume_fill`` column for your vessels.
DEFAULT_FILL_UNCERTAINTY = 0.02e-6

#: Inputs whose whole uncertainty every fill of a vessel shares.
WHOLLY_SHARED = ("expansion", "water_density_formula", "air_density_formula")

#: The uncertain inputs of a fill, in budget order.
CALIBRATION_INPUTS = (
    "mass_empty", "mass_water", "water_temperature", "air_temperature", "pressure", "humidity",
    "expansion", "water_density_formula", "air_density_formula", "fill",
)


def material_name(text: str) -> str | None:
    """Return the material a cell names (lower case, words joined by hyphens), None if unknown.

    Parameters
    ----------
    text : str
        The cell, e.g. ``"Borosilicate 3.3"``.

    Returns
    -------
    str or None
        A key of `MATERIALS`.

    Examples
    --------
    >>> material_name("Borosilicate 3.3"), material_name("PP"), material_name("steel")
    ('borosilicate-3.3', 'polypropylene', None)
    """
    name = "-".join(str(text).strip().lower().replace("_", " ").replace("-", " ").split())
    name = MATERIAL_ALIASES.get(name, name)
    return name if name in MATERIALS else None


def water_density_unknown_air(temperature, pressure):
    r"""Return the density of water whose dissolved air is unknown, and the half-width of that doubt.

    Parameters
    ----------
    temperature : array_like
        Water temperature [K], 0 °C to 40 °C.
    pressure : array_like
        Pressure on the water [Pa].

    Returns
    -------
    density : numpy.ndarray
        Midway between air-free and air-saturated water [kg/m³].
    half_width : numpy.ndarray
        Half the difference between the two [kg/m³], about 2.3e-3 kg/m³ near 20 °C.

    Notes
    -----
    .. math:: \rho_\mathrm{W} = \tfrac12\left[\rho_\mathrm{free} + \rho_\mathrm{sat}\right],
              \qquad a = \tfrac12\left|\rho_\mathrm{sat} - \rho_\mathrm{free}\right|

    Water standing in a lab is neither degassed nor surely saturated; a
    rectangular distribution over the span (GUM 4.3.7) gives u = a/√3.

    References
    ----------
    M. Tanaka et al., Metrologia 38 (2001) 301-309 (formula and dissolved-air term).

    Examples
    --------
    >>> density, half_width = water_density_unknown_air(293.15, 101325.0)
    >>> round(float(density), 4), round(float(half_width), 5)
    (998.2055, 0.00125)
    """
    free = water_density(temperature, pressure)
    saturated = water_density(temperature, pressure, air_saturated=True)
    return 0.5 * (free + saturated), 0.5 * (free - saturated)


def gravimetric_volume(mass_empty, mass_water, water_temperature, air_temperature, pressure, humidity,
                       expansion, water_density_formula=0.0, air_density_formula=0.0, fill=0.0):
    r"""Return a vessel's volume at 20 °C from its weighings empty and full of water (ISO 4787).

    Parameters
    ----------
    mass_empty, mass_water : array_like
        Balance indications of the vessel empty and full of water [kg].
    water_temperature : array_like
        Temperature of the water, taken as the vessel's [K], 0 °C to 40 °C.
    air_temperature, pressure, humidity : array_like
        Balance-room air: temperature [K], pressure [Pa] (also the pressure on
        the water) and relative humidity [1].
    expansion : array_like
        Cubic expansion coefficient of the vessel's material γ [1/K].
    water_density_formula, air_density_formula : array_like, optional
        Relative corrections to the water and air densities [1], value 0; their
        uncertainties are those of the formulas.
    fill : array_like, optional
        Volume correction for filling to the mark and water outside [m³], value 0.

    Returns
    -------
    numpy.ndarray
        Volume at 20 °C, :math:`V_{20}` [m³].

    Notes
    -----
    ISO 4787:2021, the gravimetric volume equation:

    .. math:: V_{20} = (I_L - I_E)\,\frac{1}{\rho_W - \rho_A}
              \left(1 - \frac{\rho_A}{\rho_B}\right)\left[1 - \gamma (t - 20\ °\mathrm{C})\right]

    with :math:`\rho_B` = 8000 kg/m³, the reference density of the balance's
    adjustment weights (OIML R 111-1:2004), :math:`\rho_A` by CIPM-2007 at CO2
    0.0004 and :math:`\rho_W` from `water_density_unknown_air`.

    References
    ----------
    ISO 4787:2021, Laboratory glass and plastic ware -- Volumetric instruments --
    Methods for testing of capacity and for use.

    Examples
    --------
    A bulb holding 249.5 g of water at 20 °C in air of 20 °C, 101.325 kPa and 50 %:
    249.5 g / (998.2055 − 1.1993) kg/m³ × (1 − 1.1993/8000) = 250.212 mL.

    >>> volume = gravimetric_volume(0.1, 0.3495, 293.15, 293.15, 101325.0, 0.5, 9.9e-6)
    >>> round(float(volume) * 1e6, 3)
    250.212
    """
    air = moist_air_density(pressure, air_temperature, humidity) * (1.0 + air_density_formula)
    water, _ = water_density_unknown_air(water_temperature, pressure)
    water = water * (1.0 + water_density_formula)
    return ((mass_water - mass_empty) / (water - air) * (1.0 - air / CONVENTIONAL_MASS_DENSITY)
            * (1.0 - expansion * (water_temperature - REFERENCE_TEMPERATURE)) + fill)


def calibrate_fills(values: dict, uncertainties: dict):
    """Propagate each fill's input uncertainties to its volume at 20 °C (GUM, complex step).

    Parameters
    ----------
    values : dict of numpy.ndarray
        SI values of the measured inputs of `gravimetric_volume` (``mass_empty``,
        ``mass_water``, ``water_temperature``, ``air_temperature``, ``pressure``,
        ``humidity``, ``expansion``), one per fill.
    uncertainties : dict of numpy.ndarray
        Their standard uncertainties, and ``fill`` (filling repeatability [m³]).
        ``expansion``, ``fill`` and the water-density and air-density formulas
        get their defaults where absent or NaN.

    Returns
    -------
    Propagation
        Volume [m³], sensitivities and contributions per input of `CALIBRATION_INPUTS`.

    References
    ----------
    JCGM 100:2008 (GUM), 5.1.2; ISO 4787:2021.
    """
    n = len(values["mass_water"])
    inputs = {name: np.asarray(values[name], dtype=float) for name in CALIBRATION_INPUTS[:7]}
    inputs.update({name: np.zeros(n) for name in CALIBRATION_INPUTS[7:]})
    density, half_width = water_density_unknown_air(inputs["water_temperature"], inputs["pressure"])
    defaults = {
        "expansion": EXPANSION_RELATIVE_UNCERTAINTY * inputs["expansion"],
        # The formula's own uncertainty and the unknown dissolved air (rectangular, GUM 4.3.7).
        "water_density_formula": np.hypot(TANAKA_RELATIVE_UNCERTAINTY,
                                          half_width / np.sqrt(3.0) / density),
        "air_density_formula": np.full(n, CIPM_2007_RELATIVE_UNCERTAINTY),
        "fill": np.full(n, DEFAULT_FILL_UNCERTAINTY),
    }
    widths = {}
    for name in CALIBRATION_INPUTS:
        given = np.broadcast_to(np.asarray(uncertainties.get(name, np.nan), dtype=float), (n,))
        widths[name] = np.where(np.isnan(given), defaults.get(name, np.nan), given)
    return propagate(gravimetric_volume, inputs, widths)


def combine_fills(vessel, propagation, shared: dict, ok):
    """Combine the replicate fills of each vessel: weighted mean, Birge ratio, shared effects.

    Parameters
    ----------
    vessel : array_like of str
        The vessel id of each fill.
    propagation : Propagation
        From `calibrate_fills`.
    shared : dict of numpy.ndarray
        Per measured input, the part of each fill's standard uncertainty common to
        every fill of the vessel (a calibration error of an instrument, an assumed
        humidity) [input's SI unit]. The inputs of `WHOLLY_SHARED` (the material's
        expansion, the water- and air-density formulas) count as common whole.
    ok : array_like of bool
        Fills without errors.

    Returns
    -------
    pandas.DataFrame
        One row per vessel, as `molid.uncertainty.replicates.combine_replicates`
        (``sample`` is the vessel id; ``value`` and ``u`` in m³).

    Notes
    -----
    The run-to-run part of the uncertainty (readings, water temperature, filling)
    is averaged; the shared part is added back after the mean; when the fills
    scatter more than their run-to-run uncertainties explain, the run-to-run part
    is widened by the Birge ratio.

    References
    ----------
    R. T. Birge, Phys. Rev. 40 (1932) 207-227; JCGM 100:2008 (GUM), F.1.2.
    """
    contributions = {}
    for name in CALIBRATION_INPUTS:
        # One material and the same formulas for every fill of a vessel: wholly common.
        part = propagation.uncertainties[name] if name in WHOLLY_SHARED else shared.get(name, 0.0)
        contributions[name] = np.nan_to_num(propagation.sensitivities[name] * part)
    return combine_replicates(np.asarray(vessel, dtype=object), propagation.value,
                              propagation.standard_uncertainty, contributions, ok)


def volume_at_temperature(volume, u_volume, expansion, temperature):
    r"""Return a vessel's volume at another temperature, and its standard uncertainty.

    Parameters
    ----------
    volume, u_volume : array_like
        Volume at 20 °C and its standard uncertainty [m³].
    expansion : array_like
        Cubic expansion coefficient γ [1/K], with relative standard uncertainty
        `EXPANSION_RELATIVE_UNCERTAINTY`.
    temperature : array_like
        The vessel's temperature [K].

    Returns
    -------
    volume : numpy.ndarray
        :math:`V(T) = V_{20}\,[1 + \gamma (T - 293.15\ \mathrm{K})]` [m³].
    u : numpy.ndarray
        :math:`\sqrt{u_{V20}^2 [1 + \gamma\Delta T]^2 + (V_{20}\,\Delta T\, u_\gamma)^2}` [m³].

    References
    ----------
    ISO 4787:2021 (the same linear expansion law that refers a volume to 20 °C).

    Examples
    --------
    A 500 mL borosilicate bulb at 30 °C holds 0.05 mL more:

    >>> value, u = volume_at_temperature(500e-6, 0.02e-6, 9.9e-6, 303.15)
    >>> round(float(value) * 1e6, 4)
    500.0495
    """
    difference = np.asarray(temperature, dtype=float) - REFERENCE_TEMPERATURE
    factor = 1.0 + np.asarray(expansion, dtype=float) * difference
    value = np.asarray(volume, dtype=float) * factor
    u_expansion = EXPANSION_RELATIVE_UNCERTAINTY * np.asarray(expansion, dtype=float)
    u = np.hypot(np.asarray(u_volume, dtype=float) * factor, volume * difference * u_expansion)
    return value, u
