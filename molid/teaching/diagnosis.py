"""Diagnosis of the classic mistakes of a gas-density calculation, vectorised over runs.

A student's reported molar mass is compared with molid's ideal-gas
recomputation from the student's own readings. Where the two disagree, the
readings are recomputed once for every variant of every classic mistake (each
variant a change to the student's arithmetic), and each mistake whose result
agrees with the reported value within its uncertainty is listed.

============================ ===================================================
code                         the student's arithmetic
============================ ===================================================
celsius-as-kelvin            the gas temperature in °C put into the gas law as kelvin
volume-unit                  the volume in mL used as litres, or litres used as mL
pressure-unit                a pressure in one of mmHg (torr), atm, kPa, bar used
                             as if it were in another
no-buoyancy                  an air-tared bulb or a syringe: the mass of the
                             displaced air not added to the change of the reading
masses-swapped               the two readings exchanged
gas-constant-units           R in units that do not fit the pressure and volume
                             used (L·atm, L·mmHg, L·bar, J and cal values mixed up)
room-temperature-for-vapour  a condensed-vapour flask: the room temperature put
                             into the gas law instead of the bath's
water-vapour-not-subtracted  gas collected over water: the water's vapour pressure
                             not subtracted from the pressure
water-column-ignored         gas collected over water: the raised water column in
                             the tube not subtracted from the barometric pressure
unexplained                  disagrees, and no single mistake explains it
============================ ===================================================

Every variant changes only the student's side of the calculation: the
displaced-air term, the mass difference, or the T, p, V and R put into
M = m·R·T/(p·V). The air density and the water vapour of a wet gas are those of
molid's own model. Two mistakes with the same arithmetic effect (R in L·atm
with the pressure in kPa is the pressure in kPa used as atm) are both listed.

The uncertainty of each recomputation is propagated (GUM law of propagation,
complex-step sensitivities) from the readings' uncertainties and two terms for
the student's arithmetic: a relative tolerance (rounded constants) and the
uncertainty of the air density a student uses for the displaced air. The
rounding of the reported number (half a unit of its last written digit,
rectangular) is added in quadrature.

References
----------
JCGM 100:2008, Evaluation of measurement data -- Guide to the expression of
uncertainty in measurement (GUM), 5.1.2 (propagation), 6.2 (expanded
uncertainty), F.2.2.1 (resolution of a written value: u = d/√12).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from molid.io.units import resolve_unit
from molid.methods.mistakes import DESCRIPTIONS, MISTAKE_CODES, UNEXPLAINED
from molid.methods.model import gas_mass, ideal_gas_molar_mass, measurement_model, method_readings
from molid.methods.registry import mistake_applies, select_by_method
from molid.physics.constants import GAS_CONSTANT, ZERO_CELSIUS
from molid.uncertainty.propagation import COVERAGE_FACTOR, propagate

__all__ = [
    "MISTAKE_CODES",
    "UNEXPLAINED",
    "DESCRIPTIONS",
    "Variant",
    "mistake_variants",
    "mistake_model",
    "Diagnosis",
    "diagnose",
]

_PRESSURE_UNITS = {"mmHg (torr)": "mmHg", "atm": "atm", "kPa": "kPa", "bar": "bar"}
_MASS_AS_MEASURED, _MASS_NO_BUOYANCY, _MASS_SWAPPED = 0, 1, 2


@dataclass(frozen=True)
class Variant:
    """One way of making one mistake: changes to the student's arithmetic.

    Attributes
    ----------
    code : str
        The mistake's code (one of :data:`MISTAKE_CODES`; ``""`` for the correct
        calculation).
    words : str
        What the student did, in plain words.
    temperature_offset : float
        Subtracted from the gas temperature put into the gas law [K].
    volume_factor, pressure_factor, gas_constant_factor : float
        Multiply V, p and R in the gas law.
    mass_mode : int
        0 mass as measured, 1 displaced air left out, 2 tare and filled exchanged.
    room_temperature : bool
        The room (balance) temperature is put into the gas law instead of the gas's.
    water_vapour_kept, water_column_kept : bool
        Over water: the water vapour's partial pressure, or the water column's
        pressure, is left in the pressure put into the gas law.
    """

    code: str
    words: str
    temperature_offset: float = 0.0
    volume_factor: float = 1.0
    pressure_factor: float = 1.0
    gas_constant_factor: float = 1.0
    mass_mode: int = _MASS_AS_MEASURED
    room_temperature: bool = False
    water_vapour_kept: bool = False
    water_column_kept: bool = False


def _gas_constants() -> dict:
    """R in the unit systems students meet: unit text -> (value, what it fits).

    The conversions are pint's, read back from the user cache after the first process
    (:func:`~molid.io.units.resolve_unit`), so that grading need not import pint.
    """
    litre_pressure = {
        "L·atm/(mol·K)": ("atm", "a pressure in atm and a volume in L"),
        "L·mmHg/(mol·K)": ("mmHg", "a pressure in mmHg (torr) and a volume in L"),
        "L·bar/(mol·K)": ("bar", "a pressure in bar and a volume in L"),
    }
    litre = resolve_unit("volume", "L").scale
    systems = {"J/(mol·K)": (GAS_CONSTANT, "a pressure in kPa and a volume in L (or Pa and m³)")}
    for text, (unit, fits) in litre_pressure.items():
        systems[text] = (GAS_CONSTANT / (resolve_unit("pressure", unit).scale * litre), fits)
    calorie = resolve_unit("energy", "cal").scale
    systems["cal/(mol·K)"] = (GAS_CONSTANT / calorie, None)
    return systems


def mistake_variants() -> list[Variant]:
    """Every variant of every classic mistake, the correct calculation first.

    Returns
    -------
    list of Variant
        ``variants[0]`` is the correct calculation (code ``""``).

    Examples
    --------
    >>> variants = mistake_variants()
    >>> variants[0].code, sorted({v.code for v in variants[1:]}) == sorted(MISTAKE_CODES)
    ('', True)
    """
    variants = [Variant("", "the calculation is done correctly")]
    variants.append(Variant("celsius-as-kelvin", "the temperature is used in °C instead of K",
                            temperature_offset=ZERO_CELSIUS))
    variants.append(Variant("volume-unit", "the volume in mL is used as if it were in L",
                            volume_factor=1e3))
    variants.append(Variant("volume-unit", "the volume in L is used as if it were in mL",
                            volume_factor=1e-3))
    for read, read_unit in _PRESSURE_UNITS.items():
        for used, used_unit in _PRESSURE_UNITS.items():
            if read == used:
                continue
            # a number x read in `read` is used as x `used`: p_used / p = scale(used)/scale(read)
            factor = resolve_unit("pressure", used_unit).scale / resolve_unit(
                "pressure", read_unit).scale
            variants.append(Variant("pressure-unit", f"the pressure in {read} is used as if it "
                                    f"were in {used}", pressure_factor=factor))
    constants = _gas_constants()
    for fitting, (value, fits) in constants.items():
        if fits is None:
            continue
        for used, (used_value, _) in constants.items():
            if used == fitting:
                continue
            variants.append(Variant(
                "gas-constant-units",
                f"R = {used_value:.5g} {used} is used with {fits} (which need R = "
                f"{value:.5g} {fitting})",
                gas_constant_factor=used_value / value,
            ))
    variants.append(Variant("no-buoyancy", "the mass of the displaced air is not added to the "
                            "change of the balance reading", mass_mode=_MASS_NO_BUOYANCY))
    variants.append(Variant("masses-swapped", "the tare and filled readings are exchanged",
                            mass_mode=_MASS_SWAPPED))
    variants.append(Variant("room-temperature-for-vapour", "the room temperature is used for the "
                            "vapour instead of the bath temperature", room_temperature=True))
    variants.append(Variant("water-vapour-not-subtracted", "the water's vapour pressure is not "
                            "subtracted from the pressure of the gas collected over water",
                            water_vapour_kept=True))
    variants.append(Variant("water-column-ignored", "the water column in the tube is not "
                            "subtracted from the barometric pressure", water_column_kept=True))
    return variants


def mistake_model(
    mass_tare, mass_filled, volume, temperature, pressure, humidity, air_temperature, air_pressure,
    co2, air_density_formula, water_vapour, student_air_density, student_arithmetic,
    source_before=0.0, source_after=0.0, water_column=0.0, *,
    method_code, wet, air_temperature_given, air_pressure_given,
    temperature_offset, volume_factor, pressure_factor, gas_constant_factor, mass_mode,
    room_temperature, water_vapour_kept=False, water_column_kept=False,
):
    r"""Compute the molar mass a student gets from the readings with a given mistake [kg/mol].

    Parameters
    ----------
    mass_tare, mass_filled, volume, temperature, pressure : array_like
        Readings as in :func:`molid.methods.model.measurement_model` [kg, m³, K, Pa].
    humidity, air_temperature, air_pressure, co2, air_density_formula, water_vapour : array_like
        The other inputs of :func:`molid.methods.model.measurement_model` (SI units).
    student_air_density : array_like
        Offset of the air density the student uses for the displaced air from
        molid's [kg/m³] (value 0; carries the uncertainty of a handbook value).
    student_arithmetic : array_like
        Relative offset of the student's arithmetic (value 0; carries the rounding
        of constants).
    source_before, source_after, water_column : array_like
        The readings of a gas collected over water [kg, kg, m].
    method_code, wet, air_temperature_given, air_pressure_given : array_like
        Flags of :func:`molid.methods.model.measurement_model`.
    temperature_offset, volume_factor, pressure_factor, gas_constant_factor : array_like
        The variant's changes to T [K], V, p and R (see :class:`Variant`).
    mass_mode : array_like of int
        0 as measured, 1 displaced air left out, 2 tare and filled exchanged.
    room_temperature : array_like of bool
        The room temperature put into the gas law instead of the gas's.
    water_vapour_kept, water_column_kept : array_like of bool
        Over water: the water vapour's, or the water column's, pressure left in p.

    Returns
    -------
    dict of numpy.ndarray
        ``molar_mass`` [kg/mol] and the model's intermediate values.

    Notes
    -----
    .. math:: M' = \frac{m'\,(R f_R)\,(T - T_0)}{(p_d f_p)\,(V f_V)}\,(1 + \epsilon)

    with m' the mass the student takes (as measured, without the displaced air,
    or from the exchanged readings), less the water of a wet gas, and p_d the
    dry-gas pressure.
    """
    correct = measurement_model(
        mass_tare=mass_tare, mass_filled=mass_filled, volume=volume, temperature=temperature,
        pressure=pressure, humidity=humidity, air_temperature=air_temperature,
        air_pressure=air_pressure, co2=co2, air_density_formula=air_density_formula,
        water_vapour=water_vapour, source_before=source_before, source_after=source_after,
        water_column=water_column, method_code=method_code, wet=wet,
        air_temperature_given=air_temperature_given, air_pressure_given=air_pressure_given,
    )
    air_density = correct["air_density"] + student_air_density
    first, second = method_readings(
        {"mass_tare": mass_tare, "mass_filled": mass_filled, "source_before": source_before,
         "source_after": source_after}, method_code)
    as_measured = gas_mass(first, second, volume, air_density, method_code)
    # a method without a displaced-air term cannot make this mistake; its rows keep the correct mass
    no_buoyancy = select_by_method(method_code, lambda method: (
        method.gas_mass_without_displaced_air or method.gas_mass)(
        mass_tare, mass_filled, volume, air_density))
    swapped = gas_mass(second, first, volume, air_density, method_code)
    total = np.where(mass_mode == _MASS_SWAPPED, swapped,
                     np.where(mass_mode == _MASS_NO_BUOYANCY, no_buoyancy, as_measured))
    mass = total - correct["water_mass"]
    molar_mass = ideal_gas_molar_mass(
        mass, np.where(room_temperature, air_temperature, temperature - temperature_offset),
        (correct["dry_pressure"] + np.where(water_vapour_kept, correct["water_pressure"], 0.0)
         + np.where(water_column_kept, correct["column_pressure"], 0.0)) * pressure_factor,
        volume * volume_factor,
    ) * gas_constant_factor * (1.0 + student_arithmetic)
    return {**correct, "molar_mass": molar_mass}


@dataclass
class Diagnosis:
    """The diagnosis of every run.

    Attributes
    ----------
    codes : list of list of str
        Mistake codes per run ([] when the reported value agrees or is absent).
    text : list of str
        Plain words per run ("" when there is nothing to say).
    agrees : numpy.ndarray of bool
        The reported value agrees with the recomputation (True where not reported).
    recomputed, u_recomputed : numpy.ndarray
        The correct recomputation and its standard uncertainty including the
        student's arithmetic [kg/mol].
    normalised_deviation : numpy.ndarray
        (reported − recomputed)/u of the comparison; NaN where not reported.
    variant_values : numpy.ndarray
        Shape (variants, runs): every variant's molar mass [kg/mol].
    variants : list of Variant
        The variants, in the order of ``variant_values``.
    """

    codes: list
    text: list
    agrees: np.ndarray
    recomputed: np.ndarray
    u_recomputed: np.ndarray
    normalised_deviation: np.ndarray
    variant_values: np.ndarray
    variants: list


def diagnose(values, uncertainties, static, reported, u_reported, *, arithmetic_tolerance=0.001,
             air_density_tolerance=0.01, usable=None) -> Diagnosis:
    r"""Diagnose each run's reported molar mass against recomputations with each mistake.

    Parameters
    ----------
    values, uncertainties, static : dict
        The model inputs of every run, as :func:`molid.pipeline.identify.model_inputs` returns
        them (SI units).
    reported : array_like
        The student's molar mass [kg/mol]; NaN where not reported.
    u_reported : array_like
        Standard uncertainty of the written value from its rounding [kg/mol].
    arithmetic_tolerance : float
        Relative standard uncertainty of the student's arithmetic [fraction].
    air_density_tolerance : float
        Standard uncertainty of the student's air density [kg/m³].
    usable : array_like of bool, optional
        Runs whose readings can be evaluated; others get no diagnosis.

    Returns
    -------
    Diagnosis
        Codes and words per run.

    Notes
    -----
    A run agrees when :math:`|M_r - M| \le k\sqrt{u^2(M) + u_r^2}` (k = 2); a
    variant explains it when :math:`|M_r - M'| \le k\sqrt{u^2(M') + u_r^2}`. For the
    mass mistakes the sign of M' may be dropped by the student, so |M'| is also tried.

    References
    ----------
    JCGM 100:2008 (GUM), 5.1.2 and 6.2.
    """
    reported = np.asarray(reported, dtype=float)
    runs = len(reported)
    usable = np.ones(runs, dtype=bool) if usable is None else np.asarray(usable, dtype=bool)
    variants = mistake_variants()
    value, u = _variant_values(values, uncertainties, static, variants, usable,
                               arithmetic_tolerance, air_density_tolerance)
    u_reported = np.nan_to_num(np.asarray(u_reported, dtype=float))
    with np.errstate(invalid="ignore"):
        window = COVERAGE_FACTOR * np.sqrt(u**2 + u_reported**2)
        deviation = np.abs(reported - value)
        mass_mistake = np.array([v.mass_mode != _MASS_AS_MEASURED for v in variants])[:, None]
        deviation = np.where(mass_mistake, np.minimum(deviation, np.abs(reported + value)),
                             deviation)
        fits = deviation <= window
        normalised = (reported - value[0]) / (window[0] / COVERAGE_FACTOR)
    reported_here = np.isfinite(reported) & usable
    agrees = ~reported_here | fits[0]
    applicable = mistake_applies([v.code or "correct" for v in variants], static["method_code"])
    applicable[0] = True
    fits = fits & applicable & (reported_here & ~agrees)[None, :]
    # closeness of each fitting variant, to name the best one per code
    closeness = np.where(fits, deviation / np.where(window > 0, window, np.inf), np.inf)
    codes, text = _explain(agrees, fits, closeness, variants)
    return Diagnosis(codes=codes, text=text, agrees=agrees, recomputed=value[0],
                     u_recomputed=u[0], normalised_deviation=np.where(reported_here, normalised,
                                                                      np.nan),
                     variant_values=value, variants=variants)


def _variant_values(values, uncertainties, static, variants, usable, arithmetic_tolerance,
                    air_density_tolerance):
    """Every variant's molar mass and standard uncertainty for every run, shape (variants, runs)."""
    runs = len(usable)
    count = len(variants)
    tiled_values = {name: np.tile(np.asarray(item, dtype=float), count)
                    for name, item in values.items()}
    tiled_u = {name: np.tile(np.asarray(item, dtype=float), count)
               for name, item in uncertainties.items()}
    method_code = np.asarray(static["method_code"])
    # the student computes an air density only where the method adds displaced air
    displaces = select_by_method(method_code, lambda method: float(
        method.gas_mass_without_displaced_air is not None)) != 0
    tiled_u["student_air_density"] = np.tile(np.where(displaces, air_density_tolerance, 0.0),
                                             count)
    tiled_u["student_arithmetic"] = np.full(runs * count, arithmetic_tolerance)
    tiled_static = {name: np.tile(np.asarray(item), count) for name, item in static.items()}
    for name in ("temperature_offset", "volume_factor", "pressure_factor", "gas_constant_factor",
                 "mass_mode", "room_temperature", "water_vapour_kept", "water_column_kept"):
        tiled_static[name] = np.repeat(np.array([getattr(v, name) for v in variants]), runs)
    # rows that cannot be evaluated get harmless stand-ins, so the arrays stay finite
    safe = np.tile(usable, count)
    stand_ins = {"air_density_formula": 0.0, "water_vapour": 0.0, "humidity": 0.5, "co2": 0.0004,
                 "water_column": 0.0}
    for name in tiled_values:
        tiled_values[name] = np.where(safe, tiled_values[name], stand_ins.get(name, 1.0))
    tiled_values["student_air_density"] = np.zeros(runs * count)
    tiled_values["student_arithmetic"] = np.zeros(runs * count)
    with np.errstate(all="ignore"):
        propagation = propagate(mistake_model, tiled_values, tiled_u, tiled_static,
                                output="molar_mass")
    return (propagation.value.reshape(count, runs),
            propagation.standard_uncertainty.reshape(count, runs))


def _explain(agrees, fits, closeness, variants):
    """Codes and plain words per run from which variants fit it."""
    codes, text = [], []
    for run in range(len(agrees)):
        if agrees[run]:
            codes.append([])
            text.append("")
            continue
        found = np.flatnonzero(fits[:, run])
        if not len(found):
            codes.append([UNEXPLAINED])
            text.append(DESCRIPTIONS[UNEXPLAINED])
            continue
        best = {}
        for index in found[np.argsort(closeness[found, run], kind="stable")]:
            best.setdefault(variants[index].code, index)
        run_codes = [code for code in MISTAKE_CODES if code in best]
        codes.append(run_codes)
        text.append("your result is what you get if " + "; or if ".join(
            variants[best[code]].words for code in run_codes))
    return codes, text

