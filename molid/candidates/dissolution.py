r"""How much of a gas collected over water dissolves in it: Henry's law per candidate.

The constants live in ``molid/data/henry.csv`` (Henry's-law solubility H^cp at
298.15 K and its temperature dependence, with a source for every row, after the
compilation of Sander 2015). The file is read once and cached; candidates are
matched by their library name, case-insensitively. A candidate without a row
gets NaN, never a guess.

The over-water method (:mod:`molid.methods.over_water`) uses it per candidate
(see :mod:`molid.candidates.evaluation`): a note of how much of the gas an equal
volume of water could take up, and the ``dissolves`` verdict for gases marked
not collectable.
"""

import csv
import functools
from importlib import resources
from pathlib import Path

import numpy as np

from molid.physics.constants import GAS_CONSTANT

__all__ = [
    "HENRY_PATH",
    "HENRY_REFERENCE_TEMPERATURE",
    "dissolution_bias",
    "dissolved_fraction",
    "henry_constants",
    "henry_solubility",
    "load_henry_table",
    "not_collectable",
]

#: The Henry's-law data file shipped with molid.
HENRY_PATH = Path(str(resources.files("molid") / "data" / "henry.csv"))

#: Reference temperature of the tabulated constants T° [K] (Sander 2015, sect. 2).
HENRY_REFERENCE_TEMPERATURE = 298.15


@functools.lru_cache(maxsize=1)
def load_henry_table():
    """Read the Henry's-law data file once.

    Returns
    -------
    dict
        Lower-case name → (H^cp at 298.15 K [mol/(m³·Pa)], d ln H/d(1/T) [K] or NaN,
        collectable (bool), reason (str), source (str)).
    """
    with HENRY_PATH.open(encoding="utf-8", newline="") as handle:
        rows = csv.DictReader(line for line in handle if not line.startswith("#"))
        table = {}
        for row in rows:
            slope = row["d_ln_henry_d_inverse_T_K"].strip()
            table[row["name"].strip().lower()] = (
                float(row["henry_cp_298_mol_per_m3_Pa"]),
                float(slope) if slope else float("nan"),
                row["collectable"].strip().lower() == "yes",
                row["reason"].strip(),
                row["source"].strip(),
            )
    return table


def henry_constants(names):
    """Return the tabulated constants of the named candidates.

    Parameters
    ----------
    names : sequence of str
        Candidate names as in the library (matched case-insensitively).

    Returns
    -------
    henry_298 : numpy.ndarray
        H^cp at 298.15 K [mol/(m³·Pa)], NaN where the file has no row.
    temperature_dependence : numpy.ndarray
        d ln H^cp / d(1/T) [K], NaN where the file has no row or no value.
    """
    table = load_henry_table()
    missing = (float("nan"), float("nan"))
    pairs = [table.get(str(name).strip().lower(), missing)[:2] for name in names]
    henry_298 = np.array([pair[0] for pair in pairs], dtype=float)
    temperature_dependence = np.array([pair[1] for pair in pairs], dtype=float)
    return henry_298, temperature_dependence


def not_collectable(names):
    """Return which candidates cannot be collected over water at all.

    Parameters
    ----------
    names : sequence of str
        Candidate names as in the library.

    Returns
    -------
    numpy.ndarray of bool
        True where henry.csv marks the gas ``collectable = no`` (its ``reason``
        column says why: it dissolves or reacts so much that little gas is left).
        False for collectable gases and for names without a row.

    Examples
    --------
    >>> not_collectable(["ammonia", "nitrogen", "unobtainium"]).tolist()
    [True, False, False]
    """
    table = load_henry_table()
    return np.array([str(name).strip().lower() in table and not table[str(name).strip().lower()][2]
                     for name in names], dtype=bool)


def henry_solubility(temperature, henry_298, temperature_dependence):
    r"""Return Henry's-law solubility constants at a temperature (van 't Hoff).

    Parameters
    ----------
    temperature : array_like
        Temperature of the water [K]. Real or complex (complex-step safe).
    henry_298 : array_like
        H^cp at 298.15 K [mol/(m³·Pa)].
    temperature_dependence : array_like
        d ln H^cp / d(1/T) [K].

    Returns
    -------
    numpy.ndarray
        H^cp(T) [mol/(m³·Pa)], broadcast over the inputs.

    Notes
    -----
    Integrated van 't Hoff equation with a constant enthalpy of dissolution, the
    form in which Sander 2015 [1]_ tabulates every temperature dependence (the
    equation's number in the paper was not checked):

    .. math:: H^{cp}(T) = H^{cp\ominus}\,\exp\!\left[\frac{\mathrm{d}\ln H^{cp}}
              {\mathrm{d}(1/T)}\left(\frac{1}{T} - \frac{1}{T^\ominus}\right)\right],
              \qquad T^\ominus = 298.15\ \mathrm{K}.

    A positive slope means that the solubility falls as the temperature rises.

    References
    ----------
    .. [1] R. Sander, "Compilation of Henry's law constants (version 4.0) for water
       as solvent", Atmos. Chem. Phys. 15 (2015) 4399–4981, doi:10.5194/acp-15-4399-2015.

    Examples
    --------
    Carbon dioxide (3.3e-4 mol/(m³·Pa), 2400 K) at 10 °C: 1/283.15 − 1/298.15 =
    1.7768e-4 /K, exp(2400 × 1.7768e-4) = 1.532, so 5.06e-4 mol/(m³·Pa).

    >>> round(float(henry_solubility(283.15, 3.3e-4, 2400.0)), 7)
    0.0005055
    """
    inverse_difference = 1.0 / temperature - 1.0 / HENRY_REFERENCE_TEMPERATURE
    return henry_298 * np.exp(temperature_dependence * inverse_difference)


def dissolution_bias(temperature, partial_pressure, gas_volume, water_volume, names):
    r"""Return the fraction of a collected gas that dissolved in the water it touched.

    Parameters
    ----------
    temperature : array_like, shape (runs,)
        Temperature of gas and water at equilibrium [K]. Real or complex.
    partial_pressure : array_like, shape (runs,)
        Partial pressure of the collected gas at equilibrium (total minus water
        vapour) [Pa]. Real or complex.
    gas_volume : array_like, shape (runs,)
        Volume of the collected gas at equilibrium, V_g [m³]. Real or complex.
    water_volume : array_like, shape (runs,)
        Volume of water that came to equilibrium with it, V_w [m³]. Real or complex.
    names : sequence of str, length candidates
        Candidate names as in the library.

    Returns
    -------
    numpy.ndarray, shape (runs, candidates)
        Fraction x of the gas (collected plus dissolved) that is in the water
        [1], NaN for candidates without a constant (or without a temperature
        dependence). The collected amount is (1 − x) of what was generated.

    Notes
    -----
    At equilibrium the water holds :math:`n_\mathrm{aq} = H^{cp}(T)\,p\,V_\mathrm{w}`
    (Henry's law in the H^cp = c_aq/p form of [1]_) and the gas phase holds
    :math:`n_\mathrm{g} = p V_\mathrm{g}/(R T)` (ideal gas), so

    .. math:: x = \frac{n_\mathrm{aq}}{n_\mathrm{g} + n_\mathrm{aq}}
              = \frac{H^{cp}(T)\,p\,V_\mathrm{w}}{p V_\mathrm{g}/(R T) + H^{cp}(T)\,p\,V_\mathrm{w}}
              = \frac{H^{cp} R T\,V_\mathrm{w}}{V_\mathrm{g} + H^{cp} R T\,V_\mathrm{w}},

    with :math:`H^{cp}(T)` from `henry_solubility`. It is an upper bound for a
    run in which the water did not reach equilibrium (fresh water, short
    contact), and assumes gas-free water at the start: water already saturated
    with the gas takes none up. Only arithmetic and exp are used, so every input
    may be complex.

    References
    ----------
    .. [1] R. Sander, "Compilation of Henry's law constants (version 4.0) for water
       as solvent", Atmos. Chem. Phys. 15 (2015) 4399–4981, doi:10.5194/acp-15-4399-2015.

    Examples
    --------
    Carbon dioxide at 25 °C and 100 kPa, 100 mL of gas over 100 mL of water,
    by hand: n_g = 100 000 × 1e-4 / (8.31446 × 298.15) = 4.034e-3 mol;
    n_aq = 3.3e-4 × 100 000 × 1e-4 = 3.300e-3 mol; x = 3.300 / (4.034 + 3.300)
    = 0.450, so 45 % of the gas is in the water.

    >>> x = dissolution_bias([298.15], [1.0e5], [1.0e-4], [1.0e-4], ["carbon dioxide", "nitrogen"])
    >>> [round(float(v), 4) for v in x[0]]
    [0.45, 0.0156]
    """
    henry_298, temperature_dependence = henry_constants(names)
    return dissolved_fraction(np.asarray(temperature)[:, np.newaxis],
                              np.asarray(partial_pressure)[:, np.newaxis],
                              np.asarray(gas_volume)[:, np.newaxis],
                              np.asarray(water_volume)[:, np.newaxis], henry_298, temperature_dependence)


def dissolved_fraction(temperature, partial_pressure, gas_volume, water_volume, henry_298,
                       temperature_dependence):
    """Return the fraction of a gas in the water at equilibrium, from its Henry's-law constants.

    Parameters
    ----------
    temperature, partial_pressure, gas_volume, water_volume : array_like
        As for :func:`dissolution_bias` [K, Pa, m³, m³], broadcast against the constants.
    henry_298, temperature_dependence : array_like
        As returned by :func:`henry_constants` [mol/(m³·Pa)], [K].

    Returns
    -------
    numpy.ndarray
        x = H R T V_w / (V_g + H R T V_w) [1] (see :func:`dissolution_bias` for the
        derivation and the source).
    """
    T = temperature
    p = partial_pressure
    henry = henry_solubility(T, henry_298, temperature_dependence)
    dissolved = henry * p * water_volume
    gaseous = p * gas_volume / (GAS_CONSTANT * T)
    return dissolved / (gaseous + dissolved)
