r"""Correlated molar masses: each run's uncertainty split into shared and independent parts.

Each input's contribution c·u to a run's molar mass is split, by the rules the
replicate combination uses (:func:`molid.pipeline.identify.shared_contributions`),
into three parts that are independent of one another:

* the instrument's calibration part, c·s, where s is the part of u the profile
  declares common to every run read with the instrument (``shared = true``, or a
  certificate's ``expanded`` part; :mod:`molid.io.profiles`). One instrument
  serves the whole file, so this part is common to **every analysed run that
  takes the profile's uncertainty**, whatever its sample; a row with its own
  ``u_<name>`` cell has s = 0;
* the sample's part, √((c·u_shared)² − (c·s)²): for the vessel's volume, the
  assumed humidity and CO2 and the model's own corrections, the whole
  contribution when every run of the sample has the same value and u (the same
  bulb, the same assumption); common to the runs of **that sample only**;
* the rest, √((c·u)² − (c·u_shared)²), independent from run to run (balance
  readings, temperatures and pressures read afresh).

Two runs i and j then have the covariance (the law of propagation for two
outputs of common inputs)

.. math:: u(M_i, M_j) = \sum_k c_{ik} s_{ik}\, c_{jk} s_{jk}
          + [\text{same sample}] \sum_k r_{ik} r_{jk}

and a combination of runs has the variance of JCGM 100:2008, 5.2.2, eq. (16).
Each part is built as an ``uncertainties`` variable of standard deviation 1 times
its coefficient in g/mol, tagged with what it stands for, so that
``error_components()`` of any derived number names its sources.

References
----------
JCGM 100:2008 (GUM), 5.2.2 (eqs. 13, 14 and 16: correlated inputs and the correlation
coefficient), 5.2.4 (correlation through a common instrument or reference) and F.1.2.3
(covariance of two estimates that depend on the same input quantities) (clause numbers
from memory).

E. O. Lebigot, Uncertainties: a Python package for calculations with uncertainties,
https://pythonhosted.org/uncertainties/ (linear error propagation with correlations).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["error_parts", "covariance_matrix", "run_ufloats", "sample_ufloats"]

_G = 1e3  # kg/mol → g/mol


def error_parts(result) -> dict:
    """Split every analysed run's contributions into instrument, sample and independent parts [g/mol].

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify`.

    Returns
    -------
    dict
        ``index`` (table positions of the analysed runs), ``inputs`` (names),
        ``instrument``, ``sample_part`` and ``independent`` (arrays of shape
        (runs, inputs), signed like the sensitivity) and ``sample`` (each run's
        sample id, None without one).
    """
    index = np.flatnonzero(result.ok)
    propagation = result.propagation
    names = list(propagation.sensitivities)
    table = result.table
    sample = table.text["sample"].to_numpy(dtype=object)[index]
    in_sample = pd.notna(pd.Series(sample, dtype=object)).to_numpy()
    shape = (len(index), len(names))
    instrument, sample_part, independent = np.zeros(shape), np.zeros(shape), np.zeros(shape)
    for column, name in enumerate(names):
        slope = propagation.sensitivities[name][index]
        whole = propagation.contributions[name][index]
        stated = np.broadcast_to(np.asarray(table.shared_uncertainties.get(name, 0.0), dtype=float),
                                 (len(table),))
        declared = slope * stated[index]
        common = result.shared[name][index] if name in result.shared else declared
        common = np.where(in_sample, common, declared)
        sign = np.where(slope < 0, -1.0, 1.0)
        instrument[:, column] = declared
        sample_part[:, column] = sign * np.sqrt(np.maximum(common**2 - declared**2, 0.0))
        independent[:, column] = sign * np.sqrt(np.maximum(whole**2 - common**2, 0.0))
    return {"index": index, "inputs": names, "sample": sample, "instrument": instrument * _G,
            "sample_part": sample_part * _G, "independent": independent * _G}


def covariance_matrix(result) -> pd.DataFrame:
    """Covariance matrix of the analysed runs' molar masses [(g/mol)²], from their shared parts.

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify`.

    Returns
    -------
    pandas.DataFrame
        Square, indexed and labelled by run id; the diagonal is u² of each run.

    Notes
    -----
    See the module docstring for the equation (GUM F.1.2.3 and 5.2.2).
    """
    parts = error_parts(result)
    instrument, sample_part = parts["instrument"], parts["sample_part"]
    covariance = instrument @ instrument.T
    sample = pd.Series(parts["sample"], dtype=object)
    same = (sample.to_numpy()[:, None] == sample.to_numpy()[None, :]) & sample.notna().to_numpy()[:, None]
    covariance += (sample_part @ sample_part.T) * same
    covariance[np.diag_indices_from(covariance)] = (result.u[parts["index"]] * _G) ** 2
    runs = result.table.text["run"].to_numpy(dtype=object)[parts["index"]]
    return pd.DataFrame(covariance, index=pd.Index(runs, name="run"), columns=pd.Index(runs, name="run"))


def _variables(parts, runs):
    """One standard variable (u = 1) per common part and per run's own input; tags say which."""
    from uncertainties import ufloat

    names = parts["inputs"]
    instrument = {name: ufloat(0.0, 1.0, f"{name}: instrument calibration, common to all runs")
                  for column, name in enumerate(names) if parts["instrument"][:, column].any()}
    samples = {}
    for column, name in enumerate(names):
        for sample in pd.unique(pd.Series(parts["sample"][parts["sample_part"][:, column] != 0],
                                          dtype=object)):
            samples[sample, name] = ufloat(0.0, 1.0, f"{name}: common to the runs of sample {sample}")
    own = {(run, name): ufloat(0.0, 1.0, f"{name}: run {run}")
           for row, run in enumerate(runs) for column, name in enumerate(names)
           if parts["independent"][row, column] != 0}
    return instrument, samples, own


def _build_runs(result, parts):
    """Build the runs' molar masses as ``uncertainties`` numbers over the standard variables [g/mol]."""
    runs = result.table.text["run"].to_numpy(dtype=object)[parts["index"]]
    instrument, samples, own = _variables(parts, runs)
    values = result.molar_mass[parts["index"]] * _G
    numbers = []
    for row, run in enumerate(runs):
        number = float(values[row])
        for column, name in enumerate(parts["inputs"]):
            if parts["instrument"][row, column]:
                number = number + parts["instrument"][row, column] * instrument[name]
            if parts["sample_part"][row, column]:
                number = number + parts["sample_part"][row, column] * samples[parts["sample"][row], name]
            if parts["independent"][row, column]:
                number = number + parts["independent"][row, column] * own[run, name]
        numbers.append(number)
    return pd.Series(numbers, index=pd.Index(runs, name="run"), dtype=object, name="molar_mass_g_per_mol")


def run_ufloats(result) -> pd.Series:
    """Each analysed run's molar mass as an ``uncertainties`` number, correlated through shared inputs.

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify`.

    Returns
    -------
    pandas.Series of uncertainties.core.AffineScalarFunc
        Indexed by run id [g/mol]; runs with an error are left out. Their standard
        deviations are the runs' u, their covariances those of :func:`covariance_matrix`.

    References
    ----------
    JCGM 100:2008 (GUM), 5.2.2 and F.1.2.3.
    """
    return _build_runs(result, error_parts(result))


def sample_ufloats(result, runs: pd.Series | None = None) -> pd.Series:
    """Each sample's combined molar mass as an ``uncertainties`` number, built from its runs' numbers.

    Parameters
    ----------
    result : Identification
        From :func:`molid.pipeline.identify.identify`.
    runs : pandas.Series, optional
        The numbers of :func:`run_ufloats`, to make the samples correlated with
        them; built afresh when None.

    Returns
    -------
    pandas.Series of uncertainties.core.AffineScalarFunc
        Indexed by sample id [g/mol]; equal in value and u to ``result.samples``.

    Notes
    -----
    The weighted mean Σ w_i M_i / Σ w_i with the weights of
    :func:`molid.uncertainty.replicates.combine_replicates` (1/u² of each run's
    independent part) carries the shared parts through exactly; where the runs
    scatter more than their uncertainties allow (Birge ratio R_B > 1) one more
    independent variable of standard deviation √(R_B² − 1)/√Σw adds the widening.
    """
    from uncertainties import ufloat

    if runs is None:
        runs = run_ufloats(result)
    if not len(result.samples):
        return pd.Series([], dtype=object, name="molar_mass_g_per_mol")
    parts = error_parts(result)
    shared_square = (parts["instrument"] ** 2 + parts["sample_part"] ** 2).sum(axis=1)
    value = result.molar_mass[parts["index"]] * _G
    u = result.u[parts["index"]] * _G
    # The weight floor of combine_replicates, so that a run with no independent part stays finite.
    independent = np.maximum(np.sqrt(np.maximum(u**2 - shared_square, 0.0)), 1e-9 * np.abs(value) + 1e-300)
    weight = pd.Series(1.0 / independent**2, index=runs.index)
    numbers = {}
    for row in result.samples.itertuples(index=False):
        members = [run for run in result.sample_runs.get(row.sample, []) if run in weight.index]
        if not members:
            continue
        total = float(weight[members].sum())
        number = sum(float(weight[run]) / total * runs[run] for run in members)
        if bool(row.widened):
            scatter = np.sqrt(float(row.birge_ratio) ** 2 - 1.0) / np.sqrt(total)
            number = number + scatter * ufloat(
                0.0, 1.0, f"sample {row.sample}: scatter beyond the stated uncertainties (Birge ratio)")
        numbers[row.sample] = number
    return pd.Series(numbers, dtype=object, name="molar_mass_g_per_mol").rename_axis("sample")
