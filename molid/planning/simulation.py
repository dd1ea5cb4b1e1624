r"""Readings a method would give for a gas at nominal conditions, with the instrument profile's noise.

The planner's own simulator. The gas's density is the ideal gas law's with the
gas's second virial coefficient, from the Tsonopoulos correlation of
:mod:`molid.physics.virial` in the density form of the virial equation that the
candidate evaluation uses,

.. math:: \rho = \frac{p M}{Z R T}, \qquad Z = \tfrac{1}{2}\left(1 + \sqrt{1 + 4 B p/(R T)}\right),

(a binary mixture takes the quadratic mixing rule for B with the Tsonopoulos
cross coefficient of :mod:`molid.quality.purity`); the room air's density is
CIPM-2007's; and each method's ``simulate_readings``, written from the forces on
the balance pan apart from the measurement model's algebra, turns the gas's mass
into the two balance indications. No reference equation of state is used: the
tests compare what the planner predicts with runs simulated from CoolProp.

Noise. Every input written into a simulated run differs from the truth by a
normal error of the standard uncertainty the instrument profile gives it. The
part the profile declares common to all runs with an instrument (a calibration),
and the vessel's volume as a whole (the same calibrated vessel for every run of
a sample), are drawn once per sample; the rest once per run. Inputs a run does
not state (the room's humidity and CO2) take the profile's assumed values, and
their true values are drawn from the assumed value and its uncertainty.

References
----------
J. M. Prausnitz, R. N. Lichtenthaler, E. Gomes de Azevedo, *Molecular
Thermodynamics of Fluid-Phase Equilibria*, 3rd ed., Prentice Hall (1999), ch. 5
(the virial equation and its mixing rule). A. Picard, R. S. Davis, M. Gläser,
K. Fujii, Metrologia 45 (2008) 149 (CIPM-2007 air density). OIML D 28:2004
(indications of a balance adjusted with reference weights).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from molid.candidates.evaluation import candidate_constants
from molid.candidates.vapour_pressures import saturation_pressure
from molid.io.profiles import load_profile
from molid.methods.base import DEFAULT_GLASS_MASS
from molid.physics.air import CIPM_2007_RELATIVE_UNCERTAINTY, moist_air_density
from molid.physics.constants import GAS_CONSTANT
from molid.physics.virial import second_virial
from molid.physics.water import saturation_pressure_water
from molid.quality.purity import cross_second_virial

__all__ = [
    "WRITTEN_UNITS",
    "gas_properties",
    "mixture_properties",
    "true_readings",
    "written_inputs",
    "draw_errors",
    "run_frame",
]

#: The unit each simulated column is written in: SI, so nothing is lost in conversion.
WRITTEN_UNITS = {"mass_tare": "kg", "mass_filled": "kg", "source_before": "kg", "source_after": "kg",
                 "volume": "m^3", "temperature": "K", "pressure": "Pa", "air_temperature": "K",
                 "humidity": "1"}


def _own_virial(library, rows, temperature):
    """Each row's second virial coefficient at each temperature [m³/mol]; 0 without critical data."""
    rows = np.asarray(rows, dtype=int)
    column = {name: library[name].to_numpy(dtype=float)[rows] for name in (
        "critical_temperature", "critical_pressure", "acentric_factor", "dipole_moment", "molar_mass")}
    has = library["has_critical_data"].to_numpy(dtype=bool)[rows]
    classes = library["polar_class"].fillna("nonpolar").to_numpy(dtype=object)[rows]
    hill = library["hill"].fillna("").to_numpy(dtype=object)[rows]
    with np.errstate(all="ignore"):
        B = second_virial(temperature, np.where(has, column["critical_temperature"], 100.0),
                          np.where(has, column["critical_pressure"], 1e6),
                          np.where(has, column["acentric_factor"], 0.0),
                          np.nan_to_num(column["dipole_moment"]), np.where(has, classes, "nonpolar"),
                          column["molar_mass"], hill)
    return np.where(has, B, 0.0)


def gas_properties(library, rows, temperature, room_temperature):
    """Give the molar mass, B and room-temperature vapour pressure of the gas of each simulated run.

    Parameters
    ----------
    library : pandas.DataFrame
        The candidate library (see :func:`molid.candidates.library.load_library`), index 0..c-1.
    rows : array_like of int
        Each run's library row.
    temperature, room_temperature : array_like
        Each run's gas temperature and room temperature [K].

    Returns
    -------
    dict of numpy.ndarray
        ``molar_mass`` [kg/mol], ``B`` at the gas temperature [m³/mol] and
        ``room_saturation``, the vapour pressure at room temperature [Pa] (+inf
        above the critical temperature).
    """
    rows = np.asarray(rows, dtype=int)
    temperature = np.broadcast_to(np.asarray(temperature, dtype=float), rows.shape)
    room = np.broadcast_to(np.asarray(room_temperature, dtype=float), rows.shape)
    constants = candidate_constants(library)
    saturation = np.full(rows.shape, np.inf)
    for row in np.unique(rows):
        chosen = rows == row
        if constants["has"][row]:
            with np.errstate(all="ignore"):
                values, _ = saturation_pressure(room[chosen][:, None], constants, np.array([row]),
                                                constants["relative_saturation"][[row]])
            saturation[chosen] = values[:, 0]
    return {"molar_mass": library["molar_mass"].to_numpy(dtype=float)[rows],
            "B": _own_virial(library, rows, temperature), "room_saturation": saturation}


def mixture_properties(library, main, contaminant, fraction, temperature):
    """Give the molar mass and B of a binary mixture of two library gases, per run.

    Parameters
    ----------
    library : pandas.DataFrame
        The candidate library.
    main, contaminant : int
        Library rows of the main gas and of the contaminant.
    fraction : array_like
        The contaminant's mole fraction x of each run [1].
    temperature : array_like
        Gas temperature of each run [K].

    Returns
    -------
    dict of numpy.ndarray
        ``molar_mass`` (1 − x)·M₁ + x·M₂ [kg/mol], ``B`` = (1 − x)²B₁₁ + 2x(1 − x)B₁₂ + x²B₂₂
        [m³/mol] (Prausnitz et al. 1999, eq. 5-30) and ``room_saturation`` (+inf: a gas mixture).
    """
    fraction = np.asarray(fraction, dtype=float)
    temperature = np.broadcast_to(np.asarray(temperature, dtype=float), fraction.shape)
    count = fraction.shape
    B11 = _own_virial(library, np.full(count, main), temperature)
    B22 = _own_virial(library, np.full(count, contaminant), temperature)
    column = {name: library[name].to_numpy(dtype=float) for name in (
        "critical_temperature", "critical_pressure", "acentric_factor", "molar_mass")}
    has = library["has_critical_data"].to_numpy(dtype=bool)
    B12 = cross_second_virial(temperature, *((column[name][main], column[name][contaminant])
                                             for name in ("critical_temperature", "critical_pressure",
                                                          "acentric_factor")))
    B12 = B12 if has[main] and has[contaminant] else np.zeros(count)
    molar_mass = (1.0 - fraction) * column["molar_mass"][main] + fraction * column["molar_mass"][contaminant]
    B = (1.0 - fraction) ** 2 * B11 + 2.0 * fraction * (1.0 - fraction) * B12 + fraction**2 * B22
    return {"molar_mass": molar_mass, "B": B, "room_saturation": np.full(count, np.inf)}


def true_readings(method, truth: dict, gas: dict) -> dict:
    """Compute the two balance indications of each run from the true conditions and the gas [kg].

    Parameters
    ----------
    method : molid.methods.base.Method
        The method.
    truth : dict of numpy.ndarray
        True ``temperature``, ``pressure``, ``volume``, ``room_temperature`` [K, Pa, m³, K],
        ``humidity`` (the room air's, or over water the collected gas's) and ``co2`` [1];
        optionally the true relative errors of the CIPM-2007 air density
        (``air_density_formula``) and of a wet gas's water-vapour pressure (``water_vapour``).
    gas : dict of numpy.ndarray
        From :func:`gas_properties` or :func:`mixture_properties`.

    Returns
    -------
    dict of numpy.ndarray
        The method's two readings by name, and ``gas_mass`` [kg].

    Notes
    -----
    The gas's own pressure is the method's (over water: the barometric pressure,
    levels equalised, less the water's vapour at the gas's humidity); the density
    is :math:`pM/(ZRT)` at that pressure, the mass that density times the gas's
    volume (a flask's at the bath temperature). Over water the weighed source never
    held the water vapour; in a vessel the gas is dry.
    """
    T, p, V = truth["temperature"], truth["pressure"], truth["volume"]
    zero = np.zeros_like(T)
    saturation = method.vapour_saturation(truth["humidity"], np.full(T.shape, method.always_wet))
    with np.errstate(all="ignore"):
        water = np.where(saturation > 0, saturation * saturation_pressure_water(T), 0.0)
    water = water * (1.0 + truth.get("water_vapour", 0.0))
    own_pressure = method.gas_pressure(p, T, zero) - water
    x = gas["B"] * own_pressure / (GAS_CONSTANT * T)
    with np.errstate(invalid="ignore"):
        Z = 0.5 * (1.0 + np.sqrt(1.0 + 4.0 * x))
    gas_mass = own_pressure * gas["molar_mass"] / (Z * GAS_CONSTANT * T) * method.gas_volume(V, T)
    air_density = moist_air_density(p, truth["room_temperature"], method.air_humidity(truth["humidity"]),
                                    truth["co2"]) * (1.0 + truth.get("air_density_formula", 0.0))
    options = {}
    if "residual-vapour" in method.candidate_corrections:
        # the cooled flask keeps the substance's vapour, at most the whole flask
        options["saturation_ratio"] = np.minimum(gas["room_saturation"] / p, 1.0)
    first, second = method.simulate_readings(gas_mass, air_density, V, glass_mass=DEFAULT_GLASS_MASS,
                                             **options)
    return {method.readings[0]: np.asarray(first, dtype=float),
            method.readings[1]: np.asarray(second, dtype=float), "gas_mass": gas_mass}


def written_inputs(method, humidity=False) -> tuple:
    """List the inputs a simulated run of a method writes: its two readings, then its conditions.

    ``humidity``: the room's humidity is measured and written too.
    """
    inputs = list(method.readings) + ["volume", "temperature", "pressure"]
    if "air_temperature" in method.required_inputs:
        inputs.append("air_temperature")
    if humidity:
        inputs.append("humidity")
    return tuple(inputs)


def _room_truth(method, profile, samples, rng, humidity=None):
    """Draw the true room humidity and CO2 of each run, and the true errors of two model terms.

    Without ``rng`` the assumed values themselves. With it, each assumed value is drawn
    once per sample (one room, one session) from a rectangular distribution of the
    profile's standard uncertainty about it (an assumption's range, as the default
    profile states it), and the CIPM-2007 formula's and a wet gas's water-vapour terms
    per run from normal distributions of theirs. A measured ``humidity`` is the truth itself.
    """
    count = len(samples)
    groups = int(samples.max()) + 1 if count else 0
    defaults = {name: value for name, value, _ in method.input_defaults}
    truth = {}
    for name, low, high in (("humidity", 0.0, 1.0), ("co2", 0.0, 0.01)):
        if name in defaults or (name == "humidity" and humidity is not None):
            # a method's fixed default (over water: a saturated gas), or the room as measured
            truth[name] = np.full(count, float(defaults.get(name, humidity)))
            continue
        value, rule = profile.assumed[name]
        half_width = np.sqrt(3.0) * float(rule.apply(value))
        draws = rng.uniform(-1.0, 1.0, groups)[samples] if rng is not None else np.zeros(count)
        truth[name] = np.clip(value + half_width * draws, low, high)
    normal = rng.standard_normal if rng is not None else np.zeros
    truth["air_density_formula"] = CIPM_2007_RELATIVE_UNCERTAINTY * normal(count)
    truth["water_vapour"] = (profile.wet_relative if method.always_wet else 0.0) * normal(count)
    return truth


def draw_errors(method, profile, written: dict, samples, rng, humidity=False) -> dict:
    """Errors of every written input: a part drawn once per sample and a part once per run.

    Parameters
    ----------
    method : molid.methods.base.Method
        The method.
    profile : molid.io.profiles.InstrumentProfile
        Standard uncertainties of the inputs.
    written : dict of numpy.ndarray
        The true value of every input written (SI).
    samples : numpy.ndarray of int
        Each run's sample number (runs of one sample share the common part).
    rng : numpy.random.Generator
        The random numbers.
    humidity : bool
        The room's humidity is written (measured) too.

    Returns
    -------
    dict of numpy.ndarray
        The error to add to each input [SI].
    """
    samples = np.asarray(samples, dtype=int)
    count = int(samples.max()) + 1 if len(samples) else 0
    errors = {}
    for name in written_inputs(method, humidity):
        rule = profile.rule(name)
        total = rule.apply(written[name])
        # one calibrated vessel per sample: its volume's error is the same in all its runs
        shared = total if name == "volume" else rule.apply_shared(written[name])
        independent = np.sqrt(np.maximum(total**2 - shared**2, 0.0))
        per_sample = rng.standard_normal(count)[samples] if count else np.zeros(0)
        errors[name] = shared * per_sample + independent * rng.standard_normal(len(samples))
    return errors


def run_frame(method, conditions, gas: dict, *, runs, samples=None, profile=None, rng=None,
              extra=None) -> pd.DataFrame:
    """Write a run sheet of simulated runs, as the reader takes it: readings and conditions in SI.

    Parameters
    ----------
    method : molid.methods.base.Method
        The method.
    conditions : dict
        Nominal ``volume`` [m³], ``temperature`` [K], ``pressure`` [Pa] and
        ``room_temperature`` [K] (scalars or arrays over runs); optionally ``humidity`` [1],
        the room's as measured (None: not measured, the profile's assumed value).
    gas : dict of numpy.ndarray
        Per run, from :func:`gas_properties` or :func:`mixture_properties`.
    runs : sequence of str
        Run ids.
    samples : sequence of str, optional
        Sample ids (runs of one sample share the errors that are common to all runs).
    profile : molid.io.profiles.InstrumentProfile, optional
        The assumed room conditions and, with ``rng``, the noise; the default profile when None.
    rng : numpy.random.Generator, optional
        Random numbers for the noise; without, the nominal readings themselves.
    extra : dict, optional
        Further columns (``expected``, a specification), each a sequence over runs.

    Returns
    -------
    pandas.DataFrame
        Columns ``run``, ``sample`` (when given), ``method`` and the written inputs,
        each header carrying its unit.
    """
    count = len(runs)
    shape = (count,)
    truth = {name: np.broadcast_to(np.asarray(conditions[name], dtype=float), shape).copy()
             for name in ("volume", "temperature", "pressure", "room_temperature")}
    profile = profile or load_profile()
    codes = pd.factorize(pd.Series(samples if samples is not None else runs, dtype=object))[0]
    humidity = conditions.get("humidity")
    truth.update(_room_truth(method, profile, codes, rng, humidity))
    written = {name: truth[name] for name in ("volume", "temperature", "pressure")}
    written["air_temperature"], written["humidity"] = truth["room_temperature"], truth["humidity"]
    written.update({name: value for name, value in true_readings(method, truth, gas).items()
                    if name != "gas_mass"})
    if humidity is not None and rng is None:
        # a hygrometer is read afresh for every run: identical nominal readings would look like
        # one shared value to the combination of replicates, so each run's differs by 1e-12
        written["humidity"] = written["humidity"] + 1e-12 * np.arange(count)
    if rng is not None:
        errors = draw_errors(method, profile, written, codes, rng, humidity is not None)
        for name, error in errors.items():
            written[name] = written[name] + error
        written["humidity"] = np.clip(written["humidity"], 0.0, 1.0)  # a hygrometer reads 0-100 %
    frame = {"run": list(runs)}
    if samples is not None:
        frame["sample"] = list(samples)
    frame["method"] = [method.name] * count
    for name in written_inputs(method, humidity is not None):
        frame[f"{name} [{WRITTEN_UNITS[name]}]"] = written[name]
    for name, values in (extra or {}).items():
        frame[name] = list(values)
    return pd.DataFrame(frame)
