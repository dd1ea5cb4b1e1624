"""Per-candidate evaluation and ranking: which substances the weighed gas can be.

For every candidate the run is re-evaluated under that candidate's own
non-ideality: if the gas is candidate c, its molar mass is ``M·Z_c`` where M is
the ideal-gas result and ``Z_c = 1 + B_c(T)·p/(R·T)``. The candidate's
correlated second virial coefficient carries a model uncertainty that enters the
budget. The deviation ``z = (M·Z_c − M_c)/u`` then gives the verdict:

========== =====================================================
consistent |z| ≤ 2
marginal   2 < |z| ≤ 3
excluded   |z| > 3
condenses  the pure substance would be liquid at the run's T and p
========== =====================================================

Candidates are ranked by |z|, condensing ones last. The ``expected`` label of a
run is matched against the library and reported, but never used to rank.

References
----------
JCGM 100:2008 (GUM), 5.1.2, for the propagation; C. Tsonopoulos, AIChE J. 20
(1974) 263, for B(T); D. Ambrose and J. Walton, Pure Appl. Chem. 61 (1989)
1395, for the vapour pressure that decides ``condenses``.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from molid.candidates.model_terms import (
    vapour_pressure_relative_uncertainty,
    virial_relative_uncertainty,
    virial_truncation_uncertainty,
    virial_uncertainty,
)
from molid.methods.model import INPUT_LABELS
from molid.physics.constants import GAS_CONSTANT
from molid.physics.vapour_pressure import vapour_pressure_ambrose_walton
from molid.physics.virial import second_virial
from molid.physics.water import saturation_pressure_water

__all__ = [
    "VERDICTS",
    "CONSISTENT_LIMIT",
    "MARGINAL_LIMIT",
    "Ranking",
    "evaluate_candidates",
    "verdicts",
    "rank_identification",
]

VERDICTS = ("consistent", "marginal", "excluded", "condenses")
CONSISTENT_LIMIT = 2.0
MARGINAL_LIMIT = 3.0
#: The true candidate within 2u and the other beyond 3u: the gap must be 5u.
SEPARATION_FACTOR = CONSISTENT_LIMIT + MARGINAL_LIMIT
_G = 1e3


def evaluate_candidates(molar_mass, sensitivities, uncertainties, temperature, pressure, library):
    r"""Each run's molar mass as implied by each candidate's real-gas behaviour.

    Parameters
    ----------
    molar_mass : numpy.ndarray
        Ideal-gas molar mass of each run, shape (n,) [kg/mol].
    sensitivities, uncertainties : dict of numpy.ndarray
        The ideal-gas model's sensitivity coefficients and the inputs' standard
        uncertainties, each shape (n,), SI.
    temperature : numpy.ndarray
        Gas temperature, shape (n,) [K].
    pressure : numpy.ndarray
        Partial pressure of the (dry) gas, shape (n,) [Pa].
    library : pandas.DataFrame
        Candidates (see :func:`molid.candidates.library.load_library`), c rows.

    Returns
    -------
    dict of numpy.ndarray, each shape (n, c)
        ``Z``, ``measured`` [kg/mol], ``u_measured`` [kg/mol] (without the
        candidate's own molar-mass uncertainty), ``u_model`` (the model term's
        contribution, kg/mol), ``u_total``, ``z``, ``saturation_pressure`` [Pa],
        ``condenses`` and ``near_saturation`` (bool).

    Notes
    -----
    The virial equation truncated after B in its density (Leiden) form,
    solved for Z at the measured pressure:

    .. math:: Z = \tfrac{1}{2}\left(1 + \sqrt{1 + 4x}\right), \qquad x = \frac{Bp}{RT},

    which leaves a smaller truncation error than the pressure form
    :math:`Z = 1 + x` (Prausnitz et al. 1999, ch. 5). The sensitivities of
    :math:`MZ` are :math:`Z\,\partial M/\partial x_i` for every input, plus
    :math:`M\,\partial Z/\partial T` for temperature and
    :math:`M\,\partial Z/\partial p` for pressure; the model term combines
    u(B) from the correlation with the truncation term of
    :func:`molid.candidates.model_terms.virial_truncation_uncertainty`.

    References
    ----------
    J. M. Prausnitz, R. N. Lichtenthaler, E. Gomes de Azevedo, *Molecular
    Thermodynamics of Fluid-Phase Equilibria*, 3rd ed., Prentice Hall (1999), ch. 5.
    JCGM 100:2008 (GUM), 5.1.2.
    """
    constants = candidate_constants(library)
    has = constants["has"]
    column = constants
    classes, hill = constants["classes"], constants["hill"]
    critical_temperature = constants["critical_temperature"]
    critical_pressure = constants["critical_pressure"]
    acentric = constants["acentric_factor"]
    dipole = constants["dipole_moment"]
    T = np.asarray(temperature, dtype=float)[:, None]
    p = np.asarray(pressure, dtype=float)[:, None]
    M = np.asarray(molar_mass, dtype=float)[:, None]
    with np.errstate(all="ignore"):
        # B depends on T alone: evaluate it once per distinct temperature (runs recorded
        # to 0.01 K share values) and gather; the result is the same, bit for bit.
        distinct, back = np.unique(T[:, 0], return_inverse=True)
        B, dB_dT = second_virial(distinct[:, None], critical_temperature, critical_pressure,
                                 acentric, dipole, classes, column["molar_mass"], hill,
                                 return_derivative=True)
        if not has.all():
            B = np.where(has, B, 0.0)
            dB_dT = np.where(has, dB_dT, 0.0)
        # Everything that depends on T alone is done on the distinct rows, then gathered.
        u_B_distinct = np.sqrt((constants["relative_B"] * B) ** 2 + constants["absolute_B"] ** 2)
        slope_distinct = dB_dT - B / distinct[:, None]
        B, slope, u_B = B[back], slope_distinct[back], u_B_distinct[back]
        p_over_RT = p / (GAS_CONSTANT * T)  # (n, 1)
        x = B * p_over_RT
        root = np.sqrt(1.0 + 4.0 * x)
        Z = 0.5 * (1.0 + root)
        dZ_dx = 1.0 / root
        measured = M * Z
        # Z changes only the temperature and pressure sensitivities; the rest scale with Z.
        u_ideal_square = sum((sensitivities[name] * uncertainties[name]) ** 2
                             for name in sensitivities)[:, None]
        c_T = (sensitivities["temperature"] * uncertainties["temperature"])[:, None]
        c_p = (sensitivities["pressure"] * uncertainties["pressure"])[:, None]
        # M·∂Z/∂T·u_T and M·∂Z/∂p·u_p, with the (n, 1) factors combined first
        scale_T = M * p_over_RT * uncertainties["temperature"][:, None]
        scale_p = M * uncertainties["pressure"][:, None] / (GAS_CONSTANT * T)
        rest = np.maximum(u_ideal_square - c_T**2 - c_p**2, 0.0)
        term_T = Z * c_T + dZ_dx * slope * scale_T
        term_p = Z * c_p + dZ_dx * B * scale_p
        variance = Z * Z * rest + term_T * term_T + term_p * term_p
        u_truncation = constants["truncation"] * x * x
        model_B = dZ_dx * u_B * p_over_RT
        u_model_square = (M * M) * (model_B * model_B + u_truncation * u_truncation)
        u_model = np.sqrt(u_model_square)
        u_measured_square = variance + u_model_square
        u_measured = np.sqrt(u_measured_square)
        u_total = np.sqrt(u_measured_square + column["u_molar_mass"] ** 2)
        z = (measured - column["molar_mass"]) / u_total
        saturation, u_relative_saturation = _saturation(T, p, constants)
        # Condenses only when even the high end of the estimate is below p.
        condenses = saturation * (1.0 + 2.0 * u_relative_saturation) < p
        near = ~condenses & (saturation < p * NEAR_SATURATION)
    return {
        "Z": Z,
        "measured": measured,
        "u_measured": u_measured,
        "u_model": u_model,
        "u_total": u_total,
        "z": z,
        "saturation_pressure": saturation,
        "condenses": condenses,
        "near_saturation": near,
    }


#: A candidate whose vapour pressure is within this factor above the gas pressure
#: gets a note: close to condensing, its real-gas correction is less certain.
NEAR_SATURATION = 1.25


_CONSTANTS_CACHE: dict = {}


def candidate_constants(library) -> dict:
    """Per-candidate arrays the evaluation needs, computed once per library table.

    Candidates without critical data get harmless stand-ins (and zero model
    terms), so that they come out as ideal gases.
    """
    key = id(library)
    cached = _CONSTANTS_CACHE.get(key)
    if cached is not None and cached[0] is library:
        return cached[1]
    has = library["has_critical_data"].to_numpy(dtype=bool)
    raw = {name: library[name].to_numpy(dtype=float) for name in (
        "critical_temperature", "critical_pressure", "acentric_factor", "dipole_moment",
        "molar_mass", "u_molar_mass")}
    classes = library["polar_class"].fillna("nonpolar").to_numpy(dtype=object)
    classes = np.where(has, classes, "nonpolar")
    # With B·p/(R·T) = 1 the truncation term returns its factor k itself.
    truncation = virial_truncation_uncertainty(classes, 1.0, GAS_CONSTANT, 1.0, form="density")
    constants = {
        "has": has,
        "classes": classes,
        "hill": library["hill"].fillna("").to_numpy(dtype=object),
        "critical_temperature": np.where(has, raw["critical_temperature"], 100.0),
        "critical_pressure": np.where(has, raw["critical_pressure"], 1e6),
        "acentric_factor": np.where(has, raw["acentric_factor"], 0.0),
        "dipole_moment": np.nan_to_num(raw["dipole_moment"]),
        "molar_mass": raw["molar_mass"],
        "u_molar_mass": raw["u_molar_mass"],
        "relative_B": np.where(has, virial_relative_uncertainty(classes), 0.0),
        "absolute_B": np.where(has, virial_uncertainty(classes, 0.0), 0.0),
        "truncation": np.where(has, truncation, 0.0),
        "relative_saturation": vapour_pressure_relative_uncertainty(classes),
    }
    _CONSTANTS_CACHE.clear()
    _CONSTANTS_CACHE[key] = (library, constants)
    return constants


def _saturation(T, p, constants):
    """Vapour pressure of each candidate at each run's T [Pa], and its relative uncertainty.

    The vapour pressure rises with temperature, so a candidate whose estimate at
    the coldest run is already far above the highest pressure cannot condense in
    any run; only the others are evaluated run by run. Water uses its own
    saturation equation (Wagner and Pruss 2002) rather than the estimate.
    """
    has, hill = constants["has"], constants["hill"]
    critical_temperature = constants["critical_temperature"]
    critical_pressure = constants["critical_pressure"]
    acentric = constants["acentric_factor"]
    shape = np.broadcast_shapes(T.shape, critical_temperature.shape)
    saturation = np.full(shape, np.inf)
    u_relative = np.zeros(shape)
    if T.size == 0:
        return saturation, u_relative
    coldest, highest = float(np.nanmin(T)), float(np.nanmax(p))
    estimate_cold = vapour_pressure_ambrose_walton(coldest, critical_temperature,
                                                   critical_pressure, acentric)
    water = hill == "H2O"
    if water.any():
        estimate_cold = np.where(water, saturation_pressure_water(min(coldest, 647.0)),
                                 estimate_cold)
    relative = constants["relative_saturation"]
    needed = has & (estimate_cold * (1.0 - 3.0 * relative) < highest * NEAR_SATURATION * 1.01)
    columns = np.flatnonzero(needed)
    if len(columns):
        values = vapour_pressure_ambrose_walton(T, critical_temperature[columns],
                                                critical_pressure[columns], acentric[columns])
        water_columns = water[columns]
        if water_columns.any():
            values[:, water_columns] = saturation_pressure_water(
                np.broadcast_to(T, (T.shape[0], int(water_columns.sum()))))
        saturation[:, columns] = values
        u_relative[:, columns] = np.where(water_columns, WATER_SATURATION_RELATIVE_UNCERTAINTY,
                                          relative[columns])
    return saturation, u_relative


#: Relative standard uncertainty of the Wagner–Pruss saturation pressure (about 1e-4
#: of IAPWS-95 over 0–100 °C, as the water tests measure), with a margin.
WATER_SATURATION_RELATIVE_UNCERTAINTY = 2e-4


def verdicts(z, condenses) -> np.ndarray:
    """Verdict codes (index into :data:`VERDICTS`) from z and the condensation flag.

    Examples
    --------
    >>> [VERDICTS[code] for code in verdicts(np.array([0.5, -2.5, 4.0, 0.1]),
    ...                                      np.array([False, False, False, True]))]
    ['consistent', 'marginal', 'excluded', 'condenses']
    """
    size = np.abs(z)
    codes = np.where(size <= CONSISTENT_LIMIT, 0, np.where(size <= MARGINAL_LIMIT, 1, 2))
    codes = np.where(np.isnan(size), 2, codes)
    return np.where(condenses, 3, codes)


def _order(z, condenses) -> np.ndarray:
    size = np.where(np.isnan(z), np.inf, np.abs(z))
    key = size + np.where(condenses, 1e300, 0.0)
    return np.argsort(key, axis=-1, kind="stable")


class Ranking:
    """Ranked candidates for the runs and samples of one identification."""

    def __init__(self, library, runs, samples, run_index, sample_names, run_budget, labels,
                 sample_labels, sample_budget):
        self.library = library.reset_index(drop=True)
        self.runs = runs
        self.samples = samples
        self.run_index = run_index  # positions of the evaluated runs in the table
        self.sample_names = sample_names
        self._run_position = {int(i): k for k, i in enumerate(run_index)}
        self._sample_position = {name: k for k, name in enumerate(sample_names)}
        self.run_budget = run_budget
        self.sample_budget = sample_budget
        self.labels = labels
        self.sample_labels = sample_labels
        self._names = self.library["name"].to_numpy(dtype=object)
        self._formulas = self.library["formula"].fillna("").to_numpy(dtype=object)
        self._hill = self.library["hill"].fillna("").to_numpy(dtype=object)
        self._molar_mass = self.library["molar_mass"].to_numpy(dtype=float)
        self._has = self.library["has_critical_data"].to_numpy(dtype=bool)

    # -- candidate lists ---------------------------------------------------------------
    def _candidates(self, block, k, top):
        z = block["z"][k]
        condenses = block["condenses"][k]
        order = _order(z, condenses)
        codes = verdicts(z, condenses)
        if top is not None:
            order = order[:top]
        items = []
        for rank, j in enumerate(order, start=1):
            z_value = float(z[j]) if np.isfinite(z[j]) else None
            Z = float(block["Z"][k, j])
            item = {
                "rank": rank,
                "name": self._names[j],
                "formula": self._formulas[j] or None,
                "molar_mass": float(self._molar_mass[j] * _G),
                "measured": {"value": _finite(block["measured"][k, j] * _G),
                             "u": _finite(block["u_total"][k, j] * _G)},
                "z": z_value,
                "verdict": VERDICTS[codes[j]],
                "Z": _finite(Z),
                "model": "virial, Tsonopoulos" if self._has[j] else "ideal gas (no critical data)",
            }
            if not np.isfinite(Z):
                item["note"] = ("the virial equation has no solution at this pressure: far "
                                "outside its range for this substance")
            elif block["condenses"][k, j]:
                item["note"] = (f"its vapour pressure here is about "
                                f"{block['saturation_pressure'][k, j] / 1000:.3g} kPa, below the "
                                "gas pressure: it would condense")
            elif block["near_saturation"][k, j]:
                item["note"] = (f"close to its vapour pressure (about "
                                f"{block['saturation_pressure'][k, j] / 1000:.3g} kPa): it could "
                                "partly condense on cool surfaces, and its real-gas correction "
                                "is less certain")
            items.append(item)
        return items

    def run_candidates(self, index, top=None):
        """Ranked candidate dicts for run ``index`` (table position)."""
        k = self._run_position.get(int(index))
        return [] if k is None else self._candidates(self.runs, k, top)

    def sample_candidates(self, name, top=None):
        """Ranked candidate dicts for sample ``name``."""
        k = self._sample_position.get(name)
        return [] if k is None else self._candidates(self.samples, k, top)

    # -- what the run can and cannot tell apart -----------------------------------------
    def _distinguish(self, block, k, budget):
        z = block["z"][k]
        condenses = block["condenses"][k]
        order = _order(z, condenses)
        codes = verdicts(z, condenses)
        notes = []
        consistent = [j for j in order if codes[j] == 0]
        if not consistent:
            notes.append(
                "no candidate is consistent with this result: the gas may be a mixture or "
                "contaminated (for example with air), not in the library, or the run may hold "
                "a mistake"
            )
        if len(consistent) > 1:
            names = ", ".join(self._names[j] for j in consistent[:8])
            more = f" and {len(consistent) - 8} more" if len(consistent) > 8 else ""
            notes.append(f"cannot be told apart by this run: {names}{more}")
        first, second = order[0], order[1] if len(order) > 1 else None
        if second is None or codes[first] > 1 or codes[second] > 1:
            return notes
        if self._hill[first] and self._hill[first] == self._hill[second]:
            notes.append(
                f"{self._names[first]} and {self._names[second]} are isomers ({self._hill[first]}): "
                "no molar-mass measurement separates them; another method (for example infrared "
                "spectroscopy or gas chromatography) is needed"
            )
            return notes
        measured = block["measured"][k]
        # Where the second candidate's z would sit if the first were true (its measured value
        # scaled by the ratio of the two compressibility factors).
        Z = block["Z"][k]
        gap = abs(self._molar_mass[first] * Z[second] / Z[first] - self._molar_mass[second])
        u_now = block["u_total"][k, first]
        needed = gap / SEPARATION_FACTOR
        dominant = ""
        if budget:
            name, share = budget
            dominant = (f"; the largest share of the uncertainty is the "
                        f"{INPUT_LABELS.get(name, name)} ({share:.0f} %)")
        if needed <= 0:
            return notes
        relative = needed / measured[first]
        if u_now > needed:
            notes.append(
                f"{self._names[first]} and {self._names[second]} differ by {gap * _G:.4f} g/mol "
                f"here; separating them needs u(M) below {needed * _G:.2g} g/mol "
                f"({relative * 1e6:.0f} ppm), now {u_now * _G:.2g} g/mol{dominant}"
                + (" — beyond what gas weighing achieves" if relative < 5e-5 else "")
            )
        return notes

    def run_extras(self, index):
        """Extra JSON keys of a run: ``distinguish`` notes and the ``label`` check."""
        k = self._run_position.get(int(index))
        if k is None:
            return {}
        extras = {"distinguish": self._distinguish(self.runs, k, self.run_budget.get(int(index)))}
        label = self.labels.get(int(index))
        if label is not None:
            extras["label"] = self._label(self.runs, k, label)
        return extras

    def sample_extras(self, name):
        """Extra JSON keys of a sample."""
        k = self._sample_position.get(name)
        if k is None:
            return {}
        extras = {"distinguish": self._distinguish(self.samples, k, self.sample_budget.get(name))}
        label = self.sample_labels.get(name)
        if label is not None:
            extras["label"] = self._label(self.samples, k, label)
        return extras

    def _label(self, block, k, label):
        text, j = label
        if j is None:
            return {"expected": text, "name": None, "verdict": "not-in-library",
                    "consistent": None,
                    "note": "the label matches no library entry (or several isomers); add it "
                            "with --candidate FORMULA=NAME or --library"}
        z = block["z"][k]
        condenses = block["condenses"][k]
        order = list(_order(z, condenses))
        verdict = VERDICTS[verdicts(z[j:j + 1], condenses[j:j + 1])[0]]
        return {
            "expected": text,
            "name": self._names[j],
            "rank": order.index(j) + 1,
            "z": float(z[j]) if np.isfinite(z[j]) else None,
            "verdict": verdict,
            "consistent": verdict == "consistent",
        }


#: Runs evaluated at once: blocks whose (runs × candidates) arrays fit in the CPU's
#: cache run about twice as fast as one large block.
_BLOCK_ROWS = 2048


def _evaluate_in_blocks(molar_mass, sensitivities, uncertainties, temperature, pressure, library):
    n = len(molar_mass)
    if n <= _BLOCK_ROWS:
        return evaluate_candidates(molar_mass, sensitivities, uncertainties, temperature,
                                   pressure, library)
    out = None
    for start in range(0, n, _BLOCK_ROWS):
        part = slice(start, start + _BLOCK_ROWS)
        block = evaluate_candidates(
            molar_mass[part], {name: item[part] for name, item in sensitivities.items()},
            {name: item[part] for name, item in uncertainties.items()}, temperature[part],
            pressure[part], library)
        if out is None:  # filled in place: no second copy of the (runs × candidates) arrays
            out = {key: np.empty((n,) + item.shape[1:], dtype=item.dtype)
                   for key, item in block.items()}
        for key, item in block.items():
            out[key][part] = item
    return out


class _LazyBudget:
    """Run → (largest budget input, its share); built on demand, not for every run."""

    def __init__(self, index, best, share, names):
        self._position = None
        self._index, self._best, self._share, self._names = index, best, share, names

    def get(self, run):
        if self._position is None:
            self._position = {int(i): k for k, i in enumerate(self._index)}
        k = self._position.get(int(run))
        if k is None or self._share[k] < 0:
            return None
        return self._names[self._best[k]], float(self._share[k])


def _finite(value):
    """Return a float, or None where it is not finite (JSON has no NaN)."""
    value = float(value)
    return value if np.isfinite(value) else None


def _group_matrix(codes, groups, size):
    from scipy.sparse import csr_matrix

    return csr_matrix((np.ones(len(codes)), (codes, np.arange(len(codes)))), shape=(groups, size))


def rank_identification(result, library=None):
    """Evaluate and rank the candidates for every run and sample of an identification.

    Fills ``result.ranking`` in place and returns it.
    """
    from molid.candidates.library import find_candidate, load_library

    if library is None:
        library = load_library()
    library = library.reset_index(drop=True)
    table = result.table
    ok = result.ok
    index = np.flatnonzero(ok)
    prop = result.propagation
    sensitivities = {name: prop.sensitivities[name][index] for name in prop.sensitivities}
    uncertainties = {name: prop.uncertainties[name][index] for name in prop.uncertainties}
    temperature = table.values["temperature"][index]
    pressure = prop.extras["dry_pressure"][index]
    runs = _evaluate_in_blocks(prop.value[index], sensitivities, uncertainties, temperature,
                               pressure, library)

    # Samples: the runs' per-candidate values combined with the weights of the ideal-gas
    # combination; shared inputs and the candidate's model term do not average out.
    sample_ids = table.text["sample"].to_numpy(dtype=object)[index]
    frame = result.samples
    names = [name for name in frame["sample"]] if len(frame) else []
    sample_block = {key: np.zeros((0, len(library))) for key in runs}
    if names:
        position = pd.Series(np.arange(len(names)), index=pd.Index(names, dtype=object))
        mapped = pd.Series(sample_ids, dtype=object).map(position)
        in_sample = mapped.notna().to_numpy()
        codes = mapped[in_sample].to_numpy(dtype=int)
        matrix = _group_matrix(codes, len(names), int(in_sample.sum()))
        u_run = prop.standard_uncertainty[index][in_sample]
        shared = {name: part[index][in_sample] for name, part in result.shared.items()}
        shared_square = np.zeros_like(u_run)
        for part in shared.values():
            shared_square += part**2
        independent = np.sqrt(np.maximum(u_run**2 - shared_square, 0.0))
        independent = np.maximum(independent, 1e-9 * np.abs(prop.value[index][in_sample]) + 1e-300)
        weight = 1.0 / independent**2
        total_weight = matrix @ weight
        Z = runs["Z"][in_sample]

        def mean(values):
            return (matrix @ (weight[:, None] * values)) / total_weight[:, None]

        measured = mean(runs["measured"][in_sample])
        birge = frame["birge_ratio"].to_numpy(dtype=float)
        widen = np.where(frame["widened"].to_numpy(dtype=bool), birge, 1.0)
        u_ind_run = Z * independent[:, None]
        u_independent = np.sqrt(matrix @ ((weight[:, None] * u_ind_run) ** 2)) / total_weight[:, None]
        shared_total = np.zeros_like(measured)
        for part in shared.values():
            shared_total += mean(Z * part[:, None]) ** 2
        shared_total += mean(runs["u_model"][in_sample]) ** 2
        u_measured = np.sqrt((u_independent * widen[:, None]) ** 2 + shared_total)
        u_candidate = library["u_molar_mass"].to_numpy(dtype=float)
        u_total = np.sqrt(u_measured**2 + u_candidate**2)
        z = (measured - library["molar_mass"].to_numpy(dtype=float)) / u_total
        # A sample condenses for a candidate if any of its runs does.
        condenses = (matrix @ runs["condenses"][in_sample].astype(float)) > 0
        near = (matrix @ runs["near_saturation"][in_sample].astype(float)) > 0
        saturation = mean(runs["saturation_pressure"][in_sample])
        sample_block = {
            "Z": mean(Z), "measured": measured, "u_measured": u_measured,
            "u_model": mean(runs["u_model"][in_sample]), "u_total": u_total, "z": z,
            "saturation_pressure": saturation, "condenses": condenses, "near_saturation": near,
        }

    input_names = list(result.budget)
    shares = np.vstack([result.budget[name] for name in input_names]) if input_names else None
    run_budget = {}
    if shares is not None and len(index):
        filled = np.where(np.isfinite(shares[:, index]), shares[:, index], -1.0)
        best = filled.argmax(axis=0)
        best_share = filled[best, np.arange(len(index))]
        run_budget = _LazyBudget(index, best, best_share, input_names)
    sample_budget = {}
    if names and shares is not None:
        grouped = pd.DataFrame(shares[:, index].T, columns=input_names)
        grouped["sample"] = sample_ids
        means = grouped.groupby("sample", sort=False).mean()
        for name in names:
            if name in means.index:
                row = means.loc[name].to_numpy(dtype=float)
                if np.isfinite(row).any():
                    j = int(np.nanargmax(row))
                    sample_budget[name] = (input_names[j], float(row[j]))

    expected = pd.Series(table.text["expected"].to_numpy(dtype=object)[index], dtype=object)
    matches = {text: find_candidate(library, text) for text in expected.dropna().unique()}
    labels = {int(i): (text, matches[text])
              for i, text in zip(index, expected, strict=True) if text is not None}
    sample_labels = {}
    if names:
        label_frame = pd.DataFrame({"sample": sample_ids, "expected": expected})
        label_sets = label_frame.dropna().groupby("sample")["expected"].unique()
        for name, texts in label_sets.items():
            if len(texts) == 1:
                sample_labels[name] = (texts[0], matches[texts[0]])

    result.ranking = Ranking(library, runs, sample_block, index, names, run_budget, labels,
                             sample_labels, sample_budget)
    return result.ranking
