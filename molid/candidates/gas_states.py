r"""Named gases at a state: compression factor, molar volume, density, and conversions between states.

The gas laws of :mod:`molid.physics.gas_laws` with the compression factor of a
library gas: Z from the virial equation truncated after B in its density form,
:math:`Z = \tfrac12\bigl(1 + \sqrt{1 + 4Bp/(RT)}\bigr)`, with B from the
Tsonopoulos correlation, as the candidate evaluation uses it
(:mod:`molid.candidates.evaluation`). The correlation's model uncertainty
(:mod:`molid.candidates.model_terms`) goes with Z; a gas whose vapour pressure
at a state is below the pressure there would be liquid and gets no number.

Two uses: the notebook functions (:func:`gas_compressibility`,
:func:`gas_molar_volume`, :func:`gas_density`, :func:`convert_gas_volume`,
:func:`convert_gas_density`), which take floats, arrays or ``uncertainties``
numbers; and :func:`reference_state`, which gives every candidate's Z at the
reference conditions of an identification, where each result read as a
candidate becomes a density at reference conditions and a relative density
against dry air (ISO 6976:2016).

The model errors of Z at two states are taken as independent. Treating them as
one error of B (fully correlated) would let them cancel between nearby states, but
against CoolProp 8.0 that covers too little: for 50 gases of
``tests/coolprop_fluids.csv`` taken from 20 °C and 101.325 kPa to 0 °C, the error
of :math:`\ln(Z_1/Z_2)` fell within 2u for 80 % of them with full correlation and
for all of them with independent errors (the correlation's error changes with
temperature, for SO2 from −19 % of B at 20 °C to −25 % at 0 °C).

References
----------
C. Tsonopoulos, AIChE J. 20 (1974) 263 (B); J. M. Prausnitz, R. N. Lichtenthaler,
E. Gomes de Azevedo, *Molecular Thermodynamics of Fluid-Phase Equilibria*, 3rd ed.,
Prentice Hall (1999), ch. 5 (the virial equation); ISO 6976:2016 (relative density
against dry air of standard composition); A. Picard, R. S. Davis, M. Gläser,
K. Fujii, Metrologia 45 (2008) 149 (CIPM-2007: the composition and molar mass of
dry air, 28.965 46 g/mol, which ISO 6976:2016 adopts).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np

from molid.candidates.evaluation import candidate_constants
from molid.candidates.model_terms import (
    virial_relative_uncertainty,
    virial_truncation_uncertainty,
    virial_uncertainty,
)
from molid.candidates.vapour_pressures import saturation_pressure
from molid.physics import gas_laws
from molid.physics.air import molar_mass_dry_air
from molid.physics.constants import GAS_CONSTANT, STANDARD_ATMOSPHERE, ZERO_CELSIUS
from molid.physics.virial import second_virial

__all__ = [
    "DEFAULT_REFERENCE_CONDITIONS",
    "ReferenceState",
    "convert_gas_density",
    "convert_gas_volume",
    "gas_compressibility",
    "gas_density",
    "gas_molar_volume",
    "gas_relative_density",
    "reference_state",
    "state_properties",
]

#: Default reference conditions of a density: 0 °C and 101.325 kPa [K], [Pa].
DEFAULT_REFERENCE_CONDITIONS = (ZERO_CELSIUS, STANDARD_ATMOSPHERE)

#: A gas whose vapour pressure is within this factor above the reference pressure gets a note.
_NEAR_SATURATION = 1.25


def state_properties(constants, columns, temperature, pressure) -> dict:
    r"""Compression factor, its derivatives and model uncertainty, and vapour pressure of some candidates.

    Parameters
    ----------
    constants : dict
        From :func:`molid.candidates.evaluation.candidate_constants`.
    columns : array_like of int
        The candidates (positions in the library).
    temperature, pressure : array_like
        States, each shape (n,) [K], [Pa].

    Returns
    -------
    dict of numpy.ndarray, each shape (n, len(columns))
        ``Z`` [-], ``dZ_dT`` [1/K], ``dZ_dp`` [1/Pa], ``u_Z`` (model: u(B) and the
        truncation after B) [-] and ``saturation`` (vapour pressure, +inf above the
        critical temperature) [Pa]. Candidates without critical data are ideal (Z = 1).

    Notes
    -----
    With :math:`x = Bp/(RT)`, :math:`Z = (1 + \sqrt{1 + 4x})/2`,
    :math:`\partial Z/\partial x = 1/\sqrt{1 + 4x}`,
    :math:`\partial x/\partial T = (p/R)(B'/T - B/T^2)`, :math:`\partial x/\partial p = B/(RT)`
    and :math:`u(Z)^2 = (\partial Z/\partial x\,u(B)\,p/(RT))^2 + (k x^2)^2`, as in
    :func:`molid.candidates.evaluation.evaluate_candidates`.
    """
    columns = np.atleast_1d(np.asarray(columns, dtype=int))
    T = np.asarray(temperature, dtype=float).reshape(-1, 1)
    p = np.asarray(pressure, dtype=float).reshape(-1, 1)
    has = constants["has"][columns]
    with np.errstate(all="ignore"):
        B, dB_dT = second_virial(T, constants["critical_temperature"][columns],
                                 constants["critical_pressure"][columns],
                                 constants["acentric_factor"][columns], constants["dipole_moment"][columns],
                                 constants["classes"][columns], constants["molar_mass"][columns],
                                 constants["hill"][columns], return_derivative=True)
        B, dB_dT = np.where(has, B, 0.0), np.where(has, dB_dT, 0.0)
        u_B = np.sqrt((constants["relative_B"][columns] * B) ** 2 + constants["absolute_B"][columns] ** 2)
        x = B * p / (GAS_CONSTANT * T)
        root = np.sqrt(1.0 + 4.0 * x)
        slope = 1.0 / root
        u_Z = np.hypot(slope * u_B * p / (GAS_CONSTANT * T), constants["truncation"][columns] * x * x)
        saturation, _ = saturation_pressure(T, constants, columns, constants["relative_saturation"][columns])
    return {
        "Z": 0.5 * (1.0 + root),
        "dZ_dT": slope * p / GAS_CONSTANT * (dB_dT / T - B / (T * T)),
        "dZ_dp": slope * B / (GAS_CONSTANT * T),
        "u_Z": u_Z,
        "saturation": np.where(has, saturation, np.inf),
    }


@functools.lru_cache(maxsize=8)
def _dry_air(temperature: float, pressure: float) -> tuple:
    """Compression factor of dry air and its model u at a state, from the built-in library's air entry."""
    from molid.candidates.library import load_library

    library = load_library()
    row = library[library["name"] == "air"].iloc[0]
    classes = np.array(["nonpolar"], dtype=object)
    B = second_virial(np.array([[temperature]]), [row["critical_temperature"]], [row["critical_pressure"]],
                      [row["acentric_factor"]], [0.0], classes, [row["molar_mass"]])[0, 0]
    u_B = float(np.hypot(virial_relative_uncertainty(classes)[0] * B, virial_uncertainty(classes, 0.0)[0]))
    x = B * pressure / (GAS_CONSTANT * temperature)
    root = np.sqrt(1.0 + 4.0 * x)
    k = virial_truncation_uncertainty(classes, 1.0, GAS_CONSTANT, 1.0, form="density")[0]
    u_Z = np.hypot(u_B * pressure / (GAS_CONSTANT * temperature) / root, k * x * x)
    return float(0.5 * (1.0 + root)), float(u_Z)


@dataclass(frozen=True)
class ReferenceState:
    """Every candidate's compression factor and vapour pressure at the reference conditions.

    Attributes
    ----------
    temperature, pressure : float
        The reference conditions [K], [Pa].
    compressibility, u_compressibility : numpy.ndarray
        Each candidate's Z there and its model uncertainty [-], shape (c,).
    saturation : numpy.ndarray
        Each candidate's vapour pressure there [Pa]; +inf above its critical temperature.
    has : numpy.ndarray of bool
        Candidates with critical data (the others have no Z and no vapour pressure).
    air_compressibility, u_air_compressibility : float
        Dry air's Z there and its model uncertainty [-].
    air_molar_mass : float
        Molar mass of dry air of standard composition [kg/mol].
    """

    temperature: float
    pressure: float
    compressibility: np.ndarray
    u_compressibility: np.ndarray
    saturation: np.ndarray
    has: np.ndarray
    air_compressibility: float
    u_air_compressibility: float
    air_molar_mass: float

    def gaseous(self, columns=slice(None)) -> np.ndarray:
        """Tell which candidates are gases at the reference conditions (with critical data, p_sat ≥ p)."""
        return self.has[columns] & ~(self.saturation[columns] < self.pressure)

    def densities(self, measured, u_measured, columns=slice(None)):
        r"""Density at reference conditions and relative density of results read as candidates.

        Parameters
        ----------
        measured, u_measured : numpy.ndarray
            Results read as each candidate (M·Z_c) and their standard uncertainty without
            the candidate's own molar-mass uncertainty [kg/mol]; candidates along the last axis.
        columns : slice or array_like of int
            The candidates of that last axis.

        Returns
        -------
        density, u_density, relative, u_relative : numpy.ndarray
            ρ_ref [kg/m³] and d [-] with their standard uncertainties; NaN for candidates
            that are not gases at the reference conditions.

        Notes
        -----
        :math:`\rho = M_c p/(Z R T)` and :math:`d = (M_c/M_\mathrm{air})(Z_\mathrm{air}/Z)`
        (ISO 6976:2016), with :math:`u(\rho)^2/\rho^2 = u(M_c)^2/M_c^2 + u(Z)^2/Z^2` and
        :math:`u(d)^2/d^2` adding :math:`u(Z_\mathrm{air})^2/Z_\mathrm{air}^2`; the standard
        air's molar mass is a stated reference value (its atomic-weight uncertainty, a few
        parts in 10⁶, is left out).
        """
        Z = self.compressibility[columns]
        relative_Z = self.u_compressibility[columns] / Z
        with np.errstate(all="ignore"):
            relative_measured = u_measured / measured
            density = gas_laws.mass_density(measured, self.temperature, self.pressure, Z)
            u_density = density * np.hypot(relative_measured, relative_Z)
            relative = gas_laws.relative_density(measured, Z, self.air_molar_mass, self.air_compressibility)
            u_relative = relative * np.sqrt(relative_measured**2 + relative_Z**2
                                            + (self.u_air_compressibility / self.air_compressibility) ** 2)
        keep = self.gaseous(columns)
        return tuple(np.where(keep, item, np.nan) for item in (density, u_density, relative, u_relative))

    def conditions_text(self) -> str:
        """Name the reference conditions as a reader writes them: '0 °C and 101.325 kPa'."""
        return f"{self.temperature - ZERO_CELSIUS:.6g} °C and {self.pressure / 1000:.6g} kPa"

    def entry(self, column, measured, u_measured) -> dict:
        """Give a candidate's ``reference_density`` and ``relative_density`` JSON keys (SI in, kg/m³ out).

        A candidate that would be liquid at the reference conditions, or has no critical
        data, gets nulls and a ``note`` saying why.
        """
        block = {"value": None, "u": None, "unit": "kg/m3", "temperature_K": float(self.temperature),
                 "pressure_Pa": float(self.pressure)}
        relative = {"value": None, "u": None}
        saturation = float(self.saturation[column])
        if not self.has[column]:
            block["note"] = ("no critical data: whether it is a gas at the reference conditions, and "
                             "its compression factor there, are not known")
        elif saturation < self.pressure:
            block["note"] = (f"it would be liquid at {self.conditions_text()} (its vapour pressure there "
                             f"is about {saturation / 1000:.3g} kPa): no density as a gas")
        else:  # one candidate: the arithmetic of densities() on plain floats, much faster per entry
            Z, measured, u_measured = float(self.compressibility[column]), float(measured), float(u_measured)
            relative_Z = float(self.u_compressibility[column]) / Z
            relative_measured = u_measured / measured if measured else math.nan
            density = gas_laws.mass_density(measured, self.temperature, self.pressure, Z)
            ratio = gas_laws.relative_density(measured, Z, self.air_molar_mass, self.air_compressibility)
            u_density = density * math.hypot(relative_measured, relative_Z)
            block.update(value=_finite(density), u=_finite(u_density))
            relative.update(value=_finite(ratio), u=_finite(ratio * math.sqrt(
                relative_measured**2 + relative_Z**2
                + (self.u_air_compressibility / self.air_compressibility) ** 2)))
            if saturation < _NEAR_SATURATION * self.pressure:
                block["note"] = (f"close to its vapour pressure at the reference conditions (about "
                                 f"{saturation / 1000:.3g} kPa): it could partly condense, and its "
                                 "compression factor there is less certain")
        return {"reference_density": block, "relative_density": relative}


def _finite(value):
    """Return a float, or None where it is not finite (JSON has no NaN)."""
    return value if math.isfinite(value) else None


def reference_state(library, conditions=DEFAULT_REFERENCE_CONDITIONS) -> ReferenceState:
    """Give every candidate of a library its compression factor and vapour pressure at reference conditions.

    Parameters
    ----------
    library : pandas.DataFrame
        The candidate library (see :func:`molid.candidates.library.load_library`).
    conditions : tuple of float
        Reference temperature [K] and pressure [Pa].

    Returns
    -------
    ReferenceState
        Z, u(Z), vapour pressures, and dry air's Z and molar mass at those conditions.
    """
    temperature, pressure = (float(item) for item in conditions)
    constants = candidate_constants(library)
    count = len(constants["has"])
    found = state_properties(constants, np.arange(count), [temperature], [pressure])
    air, u_air = _dry_air(temperature, pressure)
    return ReferenceState(temperature, pressure, found["Z"][0], found["u_Z"][0], found["saturation"][0],
                          constants["has"].copy(), air, u_air, float(molar_mass_dry_air()))


# -- notebook functions ------------------------------------------------------------------------

def _uncertain_types():
    from uncertainties.core import AffineScalarFunc

    return AffineScalarFunc


def _carries_uncertainty(value) -> bool:
    """Tell whether a value is, or holds, an ``uncertainties`` number."""
    kind = _uncertain_types()
    if isinstance(value, kind):
        return True
    array = np.asarray(value) if not isinstance(value, (int, float)) else None
    return array is not None and array.dtype == object and any(isinstance(item, kind) for item in array.flat)


def _nominal(value) -> np.ndarray:
    """Nominal values of a float, array or ``uncertainties`` number, as a float array."""
    from uncertainties import unumpy

    return np.asarray(unumpy.nominal_values(np.asarray(value, dtype=object)), dtype=float) \
        if _carries_uncertainty(value) else np.asarray(value, dtype=float)


def _scalar(value):
    """Unwrap a 0-d array to its float or ``uncertainties`` number."""
    if isinstance(value, np.ndarray) and value.ndim == 0:
        return value.item() if value.dtype == object else float(value)
    return value


def _named_gas(gas, library):
    """Find a gas in the library: its position, the library's constants and its name."""
    from molid.candidates.library import load_library
    from molid.candidates.search import find_candidate

    library = (load_library() if library is None else library).reset_index(drop=True)
    found = find_candidate(library, str(gas))
    if found is None:
        raise ValueError(f"'{gas}' names no single library entry; give a name, alias, CAS number or "
                         "formula that `molid library` lists (isomers need their names)")
    position = int(found)
    constants = candidate_constants(library)
    name = library["name"].iat[position]
    if not constants["has"][position]:
        raise ValueError(f"{name} has no critical data in the library, so its compression factor is "
                         "not known; use molid.physics.gas_laws with Z = 1 for the ideal gas")
    return position, constants, name, library


def _compressibility(gas, temperature, pressure, library, uncertain):
    """Z of a named gas at states, as floats or (when ``uncertain``) ``uncertainties`` numbers."""
    position, constants, name, library = _named_gas(gas, library)
    nominal_T, nominal_p = np.broadcast_arrays(_nominal(temperature), _nominal(pressure))
    if np.any(~(nominal_T > 0)) or np.any(~(nominal_p > 0)):
        raise ValueError("temperatures [K] and pressures [Pa] must be positive numbers")
    found = {key: item[:, 0].reshape(nominal_T.shape)
             for key, item in state_properties(constants, [position], nominal_T.ravel(),
                                               nominal_p.ravel()).items()}
    liquid = found["saturation"] < nominal_p
    if np.any(liquid):
        first = np.flatnonzero(liquid.ravel())[0]
        raise ValueError(
            f"{name} would be liquid at {nominal_T.ravel()[first]:.6g} K and "
            f"{nominal_p.ravel()[first] / 1000:.6g} kPa (its vapour pressure there is about "
            f"{found['saturation'].ravel()[first] / 1000:.3g} kPa): it has no gas density or volume there")
    molar_mass = float(library["molar_mass"].iat[position])
    if not uncertain:
        return _scalar(found["Z"]), molar_mass
    from uncertainties import ufloat, unumpy

    model = unumpy.uarray(np.zeros(nominal_T.shape), found["u_Z"])
    # first order in the inputs' own uncertainties, so their correlations carry through
    Z = (found["Z"] + found["dZ_dT"] * (np.asarray(temperature, dtype=object) - nominal_T)
         + found["dZ_dp"] * (np.asarray(pressure, dtype=object) - nominal_p) + model)
    u_molar_mass = float(library["u_molar_mass"].iat[position])
    if u_molar_mass > 0:
        molar_mass = ufloat(molar_mass, u_molar_mass, f"molar mass of {name}")
    return _scalar(Z), molar_mass


def _wants_uncertainty(uncertain, *values) -> bool:
    return any(_carries_uncertainty(value) for value in values) if uncertain is None else bool(uncertain)


def gas_compressibility(gas, temperature, pressure, *, library=None, uncertain=None):
    """Compression factor Z of a named gas at a state [-].

    Parameters
    ----------
    gas : str
        A library name, alias, CAS number or formula (``"carbon dioxide"``, ``"R-134a"``, ``"CO2"``).
    temperature : float, array_like or ufloat
        Temperature [K].
    pressure : float, array_like or ufloat
        Pressure [Pa].
    library : pandas.DataFrame, optional
        The candidate library; the built-in one when None.
    uncertain : bool, optional
        Return ``uncertainties`` numbers carrying the model uncertainty of Z and the
        inputs' own: by default when an input is one.

    Returns
    -------
    float, numpy.ndarray or ufloat
        Z from the virial equation truncated after B (density form), B by Tsonopoulos.

    Raises
    ------
    ValueError
        An unknown gas, one without critical data, or a state where it would be liquid.

    Notes
    -----
    See :func:`state_properties`; the model uncertainty is that of the gas's polar
    class (``molid/data/virial_model.csv``).

    References
    ----------
    C. Tsonopoulos, AIChE J. 20 (1974) 263; Prausnitz et al. (1999), ch. 5.

    Examples
    --------
    Carbon dioxide at 0 °C and 101.325 kPa (CoolProp 8.0 gives 0.99325; not part of molid):

    >>> round(gas_compressibility("carbon dioxide", 273.15, 101325.0), 4)
    0.9932
    """
    uncertain = _wants_uncertainty(uncertain, temperature, pressure)
    return _compressibility(gas, temperature, pressure, library, uncertain)[0]


def gas_molar_volume(gas, temperature, pressure, *, library=None, uncertain=None):
    """Molar volume of a named gas at a state, V_m = Z·R·T/p [m³/mol].

    Parameters
    ----------
    gas, temperature, pressure, library, uncertain
        As for :func:`gas_compressibility`.

    Returns
    -------
    float, numpy.ndarray or ufloat
        Molar volume [m³/mol].

    Notes
    -----
    :func:`molid.physics.gas_laws.molar_volume` with the gas's Z.

    References
    ----------
    P. Atkins, J. de Paula, *Physical Chemistry*, 8th ed. (2006), 1.3.

    Examples
    --------
    Nitrogen at 0 °C and 101.325 kPa: a little below the ideal gas's 22.414 L/mol
    (CoolProp 8.0: 22.403 L/mol):

    >>> round(gas_molar_volume("nitrogen", 273.15, 101325.0) * 1e3, 3)
    22.403
    """
    uncertain = _wants_uncertainty(uncertain, temperature, pressure)
    Z, _ = _compressibility(gas, temperature, pressure, library, uncertain)
    return _scalar(gas_laws.molar_volume(temperature, pressure, Z))


def gas_density(gas, temperature, pressure, *, library=None, uncertain=None):
    """Density of a named gas at a state, ρ = p·M/(Z·R·T) [kg/m³].

    Parameters
    ----------
    gas, temperature, pressure, library, uncertain
        As for :func:`gas_compressibility`; with ``uncertain``, the library's
        uncertainty of the molar mass counts too.

    Returns
    -------
    float, numpy.ndarray or ufloat
        Density [kg/m³].

    Notes
    -----
    :func:`molid.physics.gas_laws.mass_density` with the gas's M and Z.

    References
    ----------
    P. Atkins, J. de Paula, *Physical Chemistry*, 8th ed. (2006), 1.2 and 1.3.

    Examples
    --------
    Propane at 15 °C and 101.325 kPa (CoolProp 8.0: 1.8992 kg/m³; not part of molid):

    >>> round(gas_density("propane", 288.15, 101325.0), 4)
    1.8999

    With the model uncertainty of its Z (and an input's own, when it carries one):

    >>> gas_density("propane", 288.15, 101325.0, uncertain=True)  # doctest: +ELLIPSIS
    1.8999...+/-0.0014...
    """
    uncertain = _wants_uncertainty(uncertain, temperature, pressure)
    Z, molar_mass = _compressibility(gas, temperature, pressure, library, uncertain)
    return _scalar(gas_laws.mass_density(molar_mass, temperature, pressure, Z))


def gas_relative_density(gas, temperature, pressure, *, library=None, uncertain=None):
    """Relative density of a named gas: its density over dry air's at the same state [-].

    Parameters
    ----------
    gas, temperature, pressure, library, uncertain
        As for :func:`gas_compressibility`; with ``uncertain``, dry air's model
        uncertainty counts too.

    Returns
    -------
    float, numpy.ndarray or ufloat
        d = (M/M_air)·(Z_air/Z), dry air of standard composition (28.965 46 g/mol).

    Notes
    -----
    :func:`molid.physics.gas_laws.relative_density`; dry air's Z from the same virial
    model with the built-in library's air constants (pseudo-critical point of
    Lemmon et al. 2000).

    References
    ----------
    ISO 6976:2016, clause 3 and section 9; Picard et al., Metrologia 45 (2008) 149.

    Examples
    --------
    Propane at 15 °C and 101.325 kPa (ISO 6976:2016 gives 1.5497 from its Tables A.1
    and A.3, summation factor 0.1344, Z_air = 0.999 595; from memory):

    >>> round(gas_relative_density("propane", 288.15, 101325.0), 4)
    1.5502
    """
    uncertain = _wants_uncertainty(uncertain, temperature, pressure)
    Z, molar_mass = _compressibility(gas, temperature, pressure, library, uncertain)
    air = np.vectorize(_dry_air, otypes=[float, float])(_nominal(temperature), _nominal(pressure))
    air_Z = air[0]
    if uncertain:
        from uncertainties import unumpy

        air_Z = unumpy.uarray(air[0], air[1])
    return _scalar(np.asarray(gas_laws.relative_density(molar_mass, Z, float(molar_mass_dry_air()),
                                                        air_Z)))


def _two_states(gas, temperature_from, pressure_from, temperature_to, pressure_to, library, uncertain):
    values = (temperature_from, pressure_from, temperature_to, pressure_to)
    Z_from, _ = _compressibility(gas, temperature_from, pressure_from, library, uncertain)
    Z_to, _ = _compressibility(gas, temperature_to, pressure_to, library, uncertain)
    return values, Z_from, Z_to


def convert_gas_volume(gas, volume, temperature_from, pressure_from, temperature_to, pressure_to, *,
                       library=None, uncertain=None):
    """Volume of an amount of a named gas at a second state, with its Z at both [unit of ``volume``].

    Parameters
    ----------
    gas, library, uncertain
        As for :func:`gas_compressibility`.
    volume : float, array_like or ufloat
        Volume at the first state (any unit; the result is in the same one).
    temperature_from, pressure_from, temperature_to, pressure_to : float, array_like or ufloat
        The two states [K], [Pa].

    Returns
    -------
    float, numpy.ndarray or ufloat
        Volume at the second state.

    Notes
    -----
    :func:`molid.physics.gas_laws.convert_volume` with the gas's Z at each state; the
    model errors of the two Z are taken as independent (see the module's notes).

    References
    ----------
    P. Atkins, J. de Paula, *Physical Chemistry*, 8th ed. (2006), 1.2 and 1.3.

    Examples
    --------
    1 L of carbon dioxide at 25 °C and 100 kPa, at 0 °C and 101.325 kPa: the ideal gas
    would take 1 × (100/101.325) × (273.15/298.15) = 0.9042 L, the real gas less
    (CoolProp 8.0: 0.9026 L; not part of molid):

    >>> round(convert_gas_volume("CO2", 1.0, 298.15, 100e3, 273.15, 101325.0), 4)
    0.9026
    """
    uncertain = _wants_uncertainty(uncertain, volume, temperature_from, pressure_from, temperature_to,
                                   pressure_to)
    states, Z_from, Z_to = _two_states(gas, temperature_from, pressure_from, temperature_to, pressure_to,
                                       library, uncertain)
    return _scalar(gas_laws.convert_volume(volume, *states, Z_from, Z_to))


def convert_gas_density(gas, density, temperature_from, pressure_from, temperature_to, pressure_to, *,
                        library=None, uncertain=None):
    """Density of a named gas at a second state, from its density at a first [unit of ``density``].

    Parameters
    ----------
    gas, library, uncertain
        As for :func:`gas_compressibility`.
    density : float, array_like or ufloat
        Density at the first state (any unit; the result is in the same one).
    temperature_from, pressure_from, temperature_to, pressure_to : float, array_like or ufloat
        The two states [K], [Pa].

    Returns
    -------
    float, numpy.ndarray or ufloat
        Density at the second state.

    Notes
    -----
    :func:`molid.physics.gas_laws.convert_density` with the gas's Z at each state.

    References
    ----------
    P. Atkins, J. de Paula, *Physical Chemistry*, 8th ed. (2006), 1.2 and 1.3.

    Examples
    --------
    Propane weighed at 1.8000 kg/m³ at 22 °C and 97.5 kPa, at 15 °C and 101.325 kPa
    (ideal gas: 1.8 × (101.325/97.5) × (295.15/288.15) = 1.9161 kg/m³; CoolProp 8.0:
    1.9199 kg/m³; not part of molid):

    >>> round(convert_gas_density("propane", 1.8000, 295.15, 97.5e3, 288.15, 101325.0), 4)
    1.92
    """
    uncertain = _wants_uncertainty(uncertain, density, temperature_from, pressure_from, temperature_to,
                                   pressure_to)
    states, Z_from, Z_to = _two_states(gas, temperature_from, pressure_from, temperature_to, pressure_to,
                                       library, uncertain)
    return _scalar(gas_laws.convert_density(density, *states, Z_from, Z_to))
