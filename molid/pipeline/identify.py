"""The identify pipeline: validated runs → molar mass with uncertainty → samples → candidates.

Each stage is a plain function over arrays; :func:`identify` chains them and is
what the ``molid identify`` command and a notebook call.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from molid.candidates.gas_states import DEFAULT_REFERENCE_CONDITIONS
from molid.candidates.ranking import rank_identification
from molid.io.profiles import InstrumentProfile, load_profile
from molid.io.reading import RunTable, read_runs
from molid.methods.inputs import INPUT_LABELS, MEASURED_INPUTS
from molid.methods.model import measurement_model
from molid.methods.registry import METHODS, method_codes
from molid.physics.constants import GAS_CONSTANT
from molid.pipeline.quality import assess_quality
from molid.uncertainty.propagation import COVERAGE_FACTOR, budget_percent, complex_step_jacobian, propagate
from molid.uncertainty.replicates import combine_replicates, shared_inputs

__all__ = ["MOLAR_MASS_FLOOR", "MOLAR_MASS_CEILING", "Identification", "evaluate_runs", "identify"]

#: Below hydrogen's molar mass (2.016 g/mol) no gas exists; allow for noise.
MOLAR_MASS_FLOOR = 1.9e-3
#: Above this no common gas or vapour lies (UF6 is 352 g/mol).
MOLAR_MASS_CEILING = 500e-3

#: The air-density formula's relative standard uncertainty (Picard et al. 2008).
from molid.physics.air import CIPM_2007_RELATIVE_UNCERTAINTY  # noqa: E402


@dataclass
class Identification:
    """Everything :func:`identify` found, as arrays over runs and a table of samples.

    Attributes
    ----------
    table : RunTable
        The validated input.
    molar_mass, u : numpy.ndarray
        Ideal-gas molar mass of each run and its standard uncertainty [kg/mol]; NaN
        where the row has an error.
    errors, warnings : list of list of str
        Per-run problems (input and model).
    budget : dict of numpy.ndarray
        Each input's share of the variance [%].
    propagation : Propagation
        Sensitivities and contributions, for reports.
    samples : pandas.DataFrame
        One row per sample with replicate statistics (``value``/``u`` in kg/mol).
    sample_runs : dict
        Sample id → list of run ids combined.
    sample_warnings : dict
        Sample id → list of warnings.
    shared : dict of numpy.ndarray
        Per input, each run's contribution common to all runs of its sample
        [kg/mol] (see :func:`shared_contributions`); empty when samples are not
        combined.
    residual : dict
        For methods with a residual-vapour correction (see
        :func:`residual_vapour`): ``rows``, ``factor`` and its ``sensitivities``;
        empty when no run needs it.
    ranking : object or None
        Per-candidate evaluation (see :mod:`molid.candidates.ranking`).
    quality : object or None
        Purity and conformity of every run and sample (see :mod:`molid.pipeline.quality`).
    notes : list of str
        File-level remarks.
    density, u_density : numpy.ndarray or None
        Each run's measured gas density (the dry gas's: its mass over the gas volume)
        at its stated temperature and partial pressure, and its standard uncertainty
        [kg/m³] (see :func:`run_densities`); NaN where the row has an error.
    sample_density : pandas.DataFrame or None
        One row per sample: ``sample``, ``value`` and ``u`` [kg/m³] at the mean
        ``temperature`` [K] and dry-gas ``pressure`` [Pa] of its runs (see
        :func:`sample_densities`).
    reference_conditions : tuple of float
        Temperature [K] and pressure [Pa] at which candidates' reference densities are given.
    """

    table: RunTable
    molar_mass: np.ndarray
    u: np.ndarray
    errors: list
    warnings: list
    budget: dict
    propagation: object
    samples: pd.DataFrame
    sample_runs: dict
    sample_warnings: dict
    shared: dict = field(default_factory=dict)
    residual: dict = field(default_factory=dict)
    ranking: object = None
    sample_ranking: object = None
    quality: object = None
    notes: list = field(default_factory=list)
    density: np.ndarray = None
    u_density: np.ndarray = None
    sample_density: pd.DataFrame = None
    reference_conditions: tuple = DEFAULT_REFERENCE_CONDITIONS

    @property
    def ok(self) -> np.ndarray:
        """True for runs with a result."""
        return np.fromiter((not problems for problems in self.errors), dtype=bool,
                           count=len(self.errors))

    @property
    def U(self) -> np.ndarray:  # noqa: N802 - the GUM's symbol
        """Expanded uncertainty, k = 2 [kg/mol]."""
        return COVERAGE_FACTOR * self.u

    # -- notebook views (see molid.pipeline.frames, .correlations, .monte_carlo) ------------
    def to_frame(self) -> pd.DataFrame:
        """One row per run, molar masses in g/mol (see :func:`molid.pipeline.frames.run_frame`)."""
        from molid.pipeline.frames import run_frame

        return run_frame(self)

    def inputs_frame(self) -> pd.DataFrame:
        """Give the user's cells as written, indexed like :meth:`to_frame`."""
        from molid.pipeline.frames import inputs_frame

        return inputs_frame(self)

    def samples_frame(self) -> pd.DataFrame:
        """One row per sample (see :func:`molid.pipeline.frames.samples_frame`)."""
        from molid.pipeline.frames import samples_frame

        return samples_frame(self)

    def candidates_frame(self, sample=None, top: int | None = None) -> pd.DataFrame:
        """Ranked candidates of a sample, or of all samples and runs (see :mod:`molid.pipeline.frames`)."""
        from molid.pipeline.frames import candidates_frame

        return candidates_frame(self, sample, top)

    def as_ufloats(self, level: str = "runs"):
        """Molar masses [g/mol] as correlated ``uncertainties`` numbers (JCGM 100:2008, 5.2.2).

        Parameters
        ----------
        level : {"runs", "samples", "both"}
            The analysed runs (by run id), the samples (by sample id), or both as a
            pair built on the same variables; see :mod:`molid.pipeline.correlations`.
        """
        from molid.pipeline.correlations import run_ufloats, sample_ufloats

        if level not in ("runs", "samples", "both"):
            raise ValueError(f"level must be 'runs', 'samples' or 'both', not {level!r}")
        runs = run_ufloats(self)
        if level == "runs":
            return runs
        samples = sample_ufloats(self, runs)
        return samples if level == "samples" else (runs, samples)

    def monte_carlo(self, draws: int = 200_000, seed: int = 0):
        """Check each run's linear 95 % interval by Monte Carlo (JCGM 101:2008; see :mod:`.monte_carlo`)."""
        from molid.pipeline.monte_carlo import check_runs

        # The profile only sets uncertainties; check_runs takes the propagation's instead.
        values, _, static = model_inputs(self.table, load_profile())
        return check_runs(self, values, static, draws, seed)

    def _repr_html_(self) -> str:
        from molid.pipeline.frames import html_summary

        return html_summary(self)


def _model_values(table: RunTable) -> dict:
    """Values of every model input; the two relative corrections have value 0."""
    n = len(table)
    values = {name: table.values[name] for name in MEASURED_INPUTS}
    values["air_density_formula"] = np.zeros(n)
    values["water_vapour"] = np.zeros(n)
    return values


def model_inputs(table: RunTable, profile: InstrumentProfile):
    """Values, uncertainties and flags of the measurement model for every run."""
    n = len(table)
    values = _model_values(table)
    uncertainties = {name: table.uncertainties[name] for name in MEASURED_INPUTS}
    uncertainties["air_density_formula"] = np.full(n, CIPM_2007_RELATIVE_UNCERTAINTY)
    uncertainties["water_vapour"] = np.where(table.wet, profile.wet_relative, 0.0)
    static = {
        "method_code": method_codes(table.text["method"].to_numpy(dtype=object)),
        "wet": table.wet,
        "air_temperature_given": table.given["air_temperature"],
        "air_pressure_given": table.given["air_pressure"],
    }
    return values, uncertainties, static


#: Inputs whose sensitivities the candidate evaluation always needs (Z depends on T and p).
_ALWAYS_DIFFERENTIATED = ("temperature", "pressure")


def evaluate_runs(table: RunTable, profile: InstrumentProfile | None = None):
    """Molar mass and its uncertainty budget for every run of a validated table.

    Parameters
    ----------
    table : RunTable
        From :func:`molid.io.reading.read_runs`.
    profile : InstrumentProfile, optional
        Supplies the wet-gas term; the default profile when None.

    Returns
    -------
    propagation : Propagation
        Value [kg/mol], sensitivities and contributions per input.
    errors, warnings : list of list of str
        The table's problems plus those the model finds (a gas mass or dry-gas
        pressure that cannot be, a molar mass no gas has).
    """
    profile = profile or load_profile()
    values, uncertainties, static = model_inputs(table, profile)
    order = list(values)
    # An input with no uncertainty in any run adds nothing to a budget: it is passed through
    # undifferentiated (sensitivity reported as 0), so inputs no run's method uses cost nothing.
    idle = [name for name in order if name not in _ALWAYS_DIFFERENTIATED
            and not np.any(uncertainties[name])]
    for name in idle:
        static[name] = values.pop(name)
        uncertainties.pop(name)
    propagation = propagate(measurement_model, values, uncertainties, static, output="molar_mass")
    zeros = np.zeros(len(table))
    propagation.sensitivities = {name: propagation.sensitivities.get(name, zeros) for name in order}
    propagation.uncertainties = {name: propagation.uncertainties.get(name, zeros) for name in order}
    # Shallow copies: a row that gets a new problem gets a new list, the table's stay as read.
    errors = list(table.errors)
    warnings = list(table.warnings)
    ok = table.ok
    extras = propagation.extras
    molar_mass = propagation.value
    rows = table.row_numbers
    u = propagation.standard_uncertainty

    def add(mask, message):
        for index in np.flatnonzero(mask):
            errors[index] = errors[index] + [message(index)]
        ok[mask] = False

    add(ok & (extras["dry_pressure"] <= 0), lambda index: (
        f"row {rows[index]}: the water vapour pressure at this temperature "
        f"({(table.values['pressure'][index] - extras['dry_pressure'][index]) / 1000:.3g} kPa) "
        "is not below the total pressure; a wet gas cannot be at these conditions"))
    add(ok & (extras["gas_mass"] <= 0), lambda index: (
        f"row {rows[index]}: the gas mass comes out "
        f"{extras['gas_mass'][index] * 1e3:.4g} g, which cannot be; check the method "
        f"({', '.join(METHODS)}), the readings and the volume"))
    add(ok & ~(np.isfinite(molar_mass) & np.isfinite(u)), lambda index: (
        f"row {rows[index]}: the result is not a finite number (a value too large or too "
        "small for the arithmetic); check the numbers and their units"))
    light = ok & (molar_mass < MOLAR_MASS_FLOOR)
    heavy = ok & (molar_mass > MOLAR_MASS_CEILING)
    for index in np.flatnonzero(light | heavy):
        density = extras["gas_mass"][index] / table.values["volume"][index]
        side = "lighter than hydrogen" if light[index] else "heavier than any common gas or vapour"
        warnings[index] = warnings[index] + [
            f"the gas density {density:.4g} kg/m³ implies {molar_mass[index] * 1e3:.4g} g/mol, "
            f"{side}; check the mass and volume units and the method"
        ]
    return propagation, errors, warnings


_NO_RESIDUAL_CORRECTION = (
    "the ideal-gas value has no residual-vapour correction: each candidate's value includes its "
    "own (the air its vapour kept out of the cooled flask)")


def residual_vapour(table: RunTable, profile: InstrumentProfile) -> dict:
    """Compute the residual-vapour factor of the runs whose method needs it, with its sensitivities.

    A candidate's residual-vapour correction to the ideal-gas molar mass is this
    factor, ρa·V·R·T/(p²·V_T) [kg/(mol·Pa)], times the candidate's vapour pressure
    at room temperature (see :mod:`molid.methods.vapour_flask`); its sensitivities
    to every input come by complex step from the same measurement model.

    Parameters
    ----------
    table : RunTable
        The validated runs.
    profile : InstrumentProfile
        As for :func:`evaluate_runs`.

    Returns
    -------
    dict
        ``rows`` (bool per run), ``factor`` [kg/(mol·Pa)], ``sensitivities`` (per
        input, per run) and ``room_temperature`` [K]; empty when no run needs it.
    """
    codes = method_codes(table.text["method"].to_numpy(dtype=object))
    needs = np.array([("residual-vapour" in method.candidate_corrections) for method in METHODS.values()])
    rows = np.where(codes >= 0, needs[np.where(codes >= 0, codes, 0)], False) & table.ok
    if not rows.any():
        return {}
    values, _, static = model_inputs(table, profile)
    chosen = {name: item[rows] for name, item in values.items()}
    flags = {name: np.asarray(item)[rows] for name, item in static.items()}
    factor, slopes, _ = complex_step_jacobian(measurement_model, chosen, flags,
                                              output="residual_vapour_factor")
    count = len(table)
    expanded = {name: np.zeros(count) for name in slopes}
    for name, slope in slopes.items():
        expanded[name][rows] = slope
    full = np.zeros(count)
    full[rows] = factor
    return {"rows": rows, "factor": full, "sensitivities": expanded,
            "room_temperature": table.values["air_temperature"]}


def shared_contributions(table: RunTable, propagation, ok) -> dict:
    """Each input's contribution c·u that is common to all runs of a run's sample [kg/mol].

    Two sources: the part of an instrument's uncertainty its profile declares
    common to every run (a calibration), and, for the vessel's volume and the
    assumed or model inputs, the whole uncertainty when all runs of the sample
    have the same value and u (the same bulb, the same assumption).

    Parameters
    ----------
    table : RunTable
        The validated runs.
    propagation : Propagation
        The ideal-gas propagation of those runs.
    ok : numpy.ndarray of bool
        Runs with a result.

    Returns
    -------
    dict of numpy.ndarray
        Per input, per run; 0 for runs without a sample.
    """
    sample = table.text["sample"].to_numpy(dtype=object)
    has_sample = pd.notna(pd.Series(sample, dtype=object)).to_numpy()
    flags = shared_inputs(sample, _model_values(table), propagation.uncertainties, ok & has_sample)
    out = {}
    for name in propagation.sensitivities:
        declared = propagation.sensitivities[name] * table.shared_uncertainties.get(name, 0.0)
        whole = propagation.contributions[name]
        part = np.where(flags[name], whole, declared) if name in flags else declared
        out[name] = np.where(has_sample, np.nan_to_num(part), 0.0)
    return out


def _sample_results(table: RunTable, propagation, errors, shared):
    ok = np.array([not row for row in errors], dtype=bool)
    sample = table.text["sample"].to_numpy(dtype=object)
    has_sample = np.array([item is not None for item in sample], dtype=bool)
    runs = table.text["run"].to_numpy(dtype=object)
    u = propagation.standard_uncertainty
    samples = combine_replicates(sample, propagation.value, u, shared, ok & has_sample)
    # Group once; everything per sample below is a lookup, not a scan of all runs.
    codes, names = pd.factorize(pd.Series(sample[has_sample], dtype=object))
    sample_runs = {name: [] for name in names}
    sample_warnings: dict = {name: [] for name in names}
    good = ok[has_sample]
    good_codes = codes[good]
    order = np.argsort(good_codes, kind="stable")
    boundaries = np.flatnonzero(np.diff(good_codes[order])) + 1
    run_groups = np.split(runs[has_sample][good][order], boundaries)
    code_groups = np.split(good_codes[order], boundaries)
    for members, member_codes in zip(run_groups, code_groups, strict=True):
        if len(members):
            sample_runs[names[member_codes[0]]] = members.tolist()
    for index in np.flatnonzero(has_sample & ~ok):
        sample_warnings[sample[index]].append(
            f"run {runs[index]} (row {table.row_numbers[index]}) left out: it has an error"
        )
    # Which shared effects matter (over 1 % of a run's variance) in each sample of several runs.
    in_sample = ok & has_sample & bool((samples["n"] > 1).any())
    matters = pd.DataFrame({"sample": sample[in_sample]})
    variance = u[in_sample] ** 2
    for name in shared:
        matters[f"all_{name}"] = shared[name][in_sample] != 0
        matters[f"big_{name}"] = shared[name][in_sample] ** 2 > 0.01 * variance
    summary = matters.groupby("sample", sort=False).agg(
        {column: ("all" if column.startswith("all_") else "any")
         for column in matters.columns if column != "sample"}
    ).to_dict("index") if len(matters) else None
    for row in samples.itertuples(index=False):
        notes = sample_warnings[row.sample]
        if row.n > 1 and row.widened:
            notes.append(
                f"the {row.n} runs scatter more than their stated uncertainties explain "
                f"(Birge ratio {row.birge_ratio:.2f}, chi-squared {row.chi_square:.3g} on "
                f"{row.n - 1} degrees of freedom, p = {row.p_value:.2g}); the run-to-run part "
                f"of the uncertainty was widened by the Birge ratio"
                if row.p_value < 0.05 else
                f"the runs scatter a little more than their stated uncertainties (Birge ratio "
                f"{row.birge_ratio:.2f}, p = {row.p_value:.2g}); the run-to-run part of the "
                "uncertainty was widened to match"
            )
            if row.p_value < 0.01:
                notes.append(
                    "the runs disagree strongly: look for a run with a mistake before trusting "
                    "the combined value"
                )
        if row.n > 1 and summary is not None:
            flags_here = summary[row.sample]
            shared_names = [INPUT_LABELS[name] for name in shared
                            if flags_here[f"all_{name}"] and flags_here[f"big_{name}"]]
            if shared_names:
                notes.append(
                    "common to all runs, so not reduced by averaging: " + ", ".join(shared_names)
                )
    empty = [name for name, members in sample_runs.items() if not members]
    for name in empty:
        sample_warnings[name].append("no run of this sample could be analysed")
    return samples, sample_runs, sample_warnings


def checked_conditions(conditions) -> tuple:
    """Check reference conditions ``(T_K, p_Pa)``; the default (0 °C, 101.325 kPa) for None.

    Raises
    ------
    ValueError
        When they are not two finite positive numbers.
    """
    if conditions is None:
        return DEFAULT_REFERENCE_CONDITIONS
    try:
        temperature, pressure = (float(item) for item in conditions)
    except (TypeError, ValueError):
        raise ValueError(f"reference_conditions must be (temperature in K, pressure in Pa), not "
                         f"{conditions!r}") from None
    if not (np.isfinite(temperature) and np.isfinite(pressure) and temperature > 0 and pressure > 0):
        raise ValueError(f"reference_conditions must be a positive temperature in K and pressure in Pa, "
                         f"not {conditions!r}")
    return temperature, pressure


def run_densities(molar_mass, u, temperature, pressure):
    r"""Each run's gas density at its stated temperature and (dry-gas) pressure, and its u [kg/m³].

    Parameters
    ----------
    molar_mass, u : numpy.ndarray
        Ideal-gas molar mass and its standard uncertainty [kg/mol].
    temperature, pressure : numpy.ndarray
        The gas's temperature [K] and its own (dry, partial) pressure [Pa].

    Returns
    -------
    density, u_density : numpy.ndarray
        ρ = M·p/(R·T), which is the dry gas's mass over its volume m/V, and its standard
        uncertainty [kg/m³].

    Notes
    -----
    A density is quoted at the stated temperature and pressure, the measured ones, so
    their uncertainties count: the gas's true state differs from the stated one by
    their errors, which change the density at the stated state as they change M. With
    :math:`M = mRT/(pV)` the two have the same relative uncertainty,
    :math:`u(\rho)/\rho = u(M)/M` (GUM 5.1.6, a product of powers).

    References
    ----------
    JCGM 100:2008 (GUM), 5.1.6.
    """
    with np.errstate(all="ignore"):
        density = molar_mass * pressure / (GAS_CONSTANT * temperature)
        return density, density * (u / molar_mass)


def sample_densities(table: RunTable, samples: pd.DataFrame, ok, dry_pressure) -> pd.DataFrame:
    """Each sample's gas density at the mean temperature and dry-gas pressure of its runs [kg/m³].

    The combined molar mass (with its shared effects and any Birge widening) at the
    mean state of the sample's runs: ρ = M·p̄/(R·T̄), u(ρ)/ρ = u(M)/M as in
    :func:`run_densities`. Runs a little apart in T and p are brought to the mean state
    as ideal gases; the real-gas difference, (1 − Z) times the relative spread, stays
    below 10⁻⁴ for gases within a few kPa and kelvins.

    Parameters
    ----------
    table : RunTable
        The validated runs.
    samples : pandas.DataFrame
        The combined samples (``sample``, ``value``, ``u`` in kg/mol).
    ok : numpy.ndarray of bool
        Runs with a result.
    dry_pressure : numpy.ndarray
        Each run's dry-gas pressure [Pa].

    Returns
    -------
    pandas.DataFrame
        ``sample``, ``value``, ``u`` [kg/m³], ``temperature`` [K], ``pressure`` [Pa].
    """
    sample = table.text["sample"].to_numpy(dtype=object)
    chosen = ok & pd.notna(pd.Series(sample, dtype=object)).to_numpy()
    conditions = pd.DataFrame({"sample": sample[chosen], "temperature": table.values["temperature"][chosen],
                               "pressure": np.asarray(dry_pressure)[chosen]})
    means = conditions.groupby("sample", sort=False).mean()
    frame = pd.DataFrame({"sample": samples["sample"].to_numpy(dtype=object)})
    frame["temperature"] = means["temperature"].reindex(frame["sample"]).to_numpy(dtype=float)
    frame["pressure"] = means["pressure"].reindex(frame["sample"]).to_numpy(dtype=float)
    density, u_density = run_densities(samples["value"].to_numpy(dtype=float),
                                       samples["u"].to_numpy(dtype=float), frame["temperature"].to_numpy(),
                                       frame["pressure"].to_numpy())
    frame.insert(1, "value", density)
    frame.insert(2, "u", u_density)
    return frame


def _combined(table, propagation, errors, ok, combine):
    """Shared contributions, combined samples, their runs and warnings; empty when not combining."""
    if not combine:
        samples = pd.DataFrame({"sample": pd.Series([], dtype=object), "n": [], "value": [],
                                "u": [], "birge_ratio": [], "widened": []})
        return {}, samples, {}, {}
    shared = shared_contributions(table, propagation, ok)
    return (shared, *_sample_results(table, propagation, errors, shared))


def identify(
    source,
    *,
    profile: InstrumentProfile | str | Path | None = None,
    library=None,
    rank: bool = True,
    combine: bool = True,
    vessels=None,
    contaminant: str = "air",
    specifications=None,
    rule: str = "guarded",
    reference_conditions=None,
) -> Identification:
    """Analyse a run file or DataFrame: molar mass, uncertainty, samples and candidates.

    Parameters
    ----------
    source : str, pathlib.Path, file-like, pandas.DataFrame or RunTable
        The runs (see :func:`molid.io.reading.read_runs`).
    profile : InstrumentProfile or path, optional
        Default uncertainties.
    library : pandas.DataFrame, optional
        Candidate library (see :func:`molid.candidates.library.load_library`); the default
        library when None.
    rank : bool
        Evaluate and rank the candidates.
    combine : bool
        Combine the runs of each sample (off for chunks of a large file, whose
        per-run output has no place for samples).
    vessels : VesselRegister or path, optional
        Vessel register: runs may name a ``vessel`` instead of a ``volume`` (see
        :mod:`molid.io.vessel_column`).
    contaminant, specifications, rule : optional
        Default contaminant, purity specifications and decision rule of the QA step
        (see :func:`molid.pipeline.quality.assess_quality`).
    reference_conditions : tuple of float, optional
        ``(T_K, p_Pa)`` at which each consistent or marginal candidate's density and relative
        density are given; 0 °C and 101.325 kPa when None.

    Returns
    -------
    Identification
        Per-run and per-sample results.
    """
    reference_conditions = checked_conditions(reference_conditions)
    if profile is None or isinstance(profile, (str, Path)):
        profile = load_profile(profile)
    table = source if isinstance(source, RunTable) else read_runs(source, profile=profile,
                                                                  vessels=vessels)
    propagation, errors, warnings = evaluate_runs(table, profile)
    ok = np.array([not row for row in errors], dtype=bool)
    residual = residual_vapour(table, profile) if rank else {}
    for index in np.flatnonzero(residual["rows"] & ok) if residual else ():
        warnings[index] = warnings[index] + [_NO_RESIDUAL_CORRECTION]
    molar_mass = np.where(ok, propagation.value, np.nan)
    u = np.where(ok, propagation.standard_uncertainty, np.nan)
    budget = budget_percent(propagation.contributions)
    shared, samples, sample_runs, sample_warnings = _combined(table, propagation, errors, ok, combine)
    result = Identification(
        table=table, molar_mass=molar_mass, u=u, errors=errors, warnings=warnings, budget=budget,
        propagation=propagation, samples=samples, sample_runs=sample_runs,
        sample_warnings=sample_warnings, shared=shared, residual=residual, notes=list(table.notes),
        reference_conditions=reference_conditions,
    )
    result.density, result.u_density = run_densities(molar_mass, u, table.values["temperature"],
                                                     propagation.extras["dry_pressure"])
    if combine:
        result.sample_density = sample_densities(table, samples, ok, propagation.extras["dry_pressure"])
    if rank:
        rank_identification(result, library=library)
        assess_quality(result, contaminant=contaminant, specifications=specifications, rule=rule)
    return result
