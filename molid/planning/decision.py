r"""What a purity decision will need: detection limit, operating characteristic, what would let it decide.

The labelled gas with a mole fraction x of the contaminant is "measured" without
noise at the nominal conditions (:mod:`molid.planning.simulation`, a binary
virial mixture) and analysed by :func:`molid.pipeline.identify.identify` with
the label and the specification, so the contaminant's fraction x̂, its standard
uncertainty u(x) and the detection limit are those the QA step
(:mod:`molid.quality.purity`) will report for a real cylinder.

Operating characteristic. The estimate x̂ is taken as normal about the true
fraction x with standard uncertainty u(x) (JCGM 106:2012, 7.2). With the upper
limit T_U and the guard band w (w = U = 2u under guarded acceptance, 0 under
simple acceptance; :mod:`molid.quality.conformity`):

.. math::

   P_{accept}(x) = \Phi\left(\frac{T_U - w - x}{u}\right), \qquad
   P_{reject}(x) = 1 - \Phi\left(\frac{T_U + w - x}{u}\right),

and the rest is undecided. At x = T_U simple acceptance accepts half the
cylinders, Φ(0) = 0.5, and guarded acceptance Φ(−2) = 0.0228 of them.

What would make it decide. The guard band is U at the limit; a sample of N runs
has :math:`u_N^2 = A/N + F` (independent and shared parts, from samples of one
and two runs as in :mod:`molid.planning.separability`), and a vessel of volume V
has :math:`u^2 = a/V^2 + b` (the balance's part scales with the gas's mass, the
rest does not; from V and 2V). Each is solved for the guard band reaching the
stated fraction of the limit.

References
----------
JCGM 106:2012, Evaluation of measurement data -- The role of measurement
uncertainty in conformity assessment, 7.2, 7.3, 8.2, 8.3. ISO 11843-1:1997
(detection).
"""

from __future__ import annotations

import math

import numpy as np

from molid.methods.registry import METHODS
from molid.pipeline.identify import identify
from molid.planning.conditions import PLAUSIBLE, PlanError
from molid.planning.separability import MOST_REPLICATES, replicate_parts
from molid.planning.simulation import mixture_properties, run_frame
from molid.quality.conformity import RULES, conformity_probability

__all__ = ["GRID_POINTS", "operating_characteristic", "plan_decision"]

#: Fractions of the operating characteristic: 0 to twice the limit, the limit in the middle.
GRID_POINTS = 21


def operating_characteristic(x, u, limit, rule="guarded") -> dict:
    """Probabilities that a cylinder with true fraction x is accepted, rejected or left undecided.

    Parameters
    ----------
    x : array_like
        True contaminant fractions [1].
    u : array_like
        Standard uncertainty of the estimate at each x [1].
    limit : float
        Upper limit T_U [1].
    rule : {"guarded", "simple"}
        Guarded acceptance with w = U = 2u, or simple acceptance (w = 0).

    Returns
    -------
    dict of numpy.ndarray
        ``accept``, ``reject``, ``undecided``.

    Examples
    --------
    At the limit (the normal distribution: Φ(0) = 0.5, Φ(−2) = 0.02275):

    >>> round(float(operating_characteristic(0.01, 0.001, 0.01, "simple")["accept"]), 4)
    0.5
    >>> round(float(operating_characteristic(0.01, 0.001, 0.01, "guarded")["accept"]), 5)
    0.02275
    """
    x, u = np.asarray(x, dtype=float), np.asarray(u, dtype=float)
    guard = 2.0 * u if rule == "guarded" else np.zeros_like(u)
    accept = conformity_probability(x, u, limit - guard)
    reject = 1.0 - conformity_probability(x, u, limit + guard)
    return {"accept": accept, "reject": reject, "undecided": np.clip(1.0 - accept - reject, 0.0, 1.0)}


def _decision_frame(conditions, library, main, contaminant, fractions, replicates, limit):
    """Noise-free runs of the mixtures: a sample of N runs per fraction, and the probes at the limit."""
    method = METHODS[conditions.method]
    at_limit = limit if limit is not None else 0.0
    plan = [(f"x{i}", x, replicates, 1.0) for i, x in enumerate(fractions)]
    plan += [("one", at_limit, 1, 1.0), ("two", at_limit, 2, 1.0), ("large", at_limit, replicates, 2.0)]
    fraction = np.concatenate([np.full(size, x) for _, x, size, _ in plan])
    volume = conditions.volume * np.concatenate([np.full(size, scale) for _, _, size, scale in plan])
    samples = [name for name, _, size, _ in plan for _ in range(size)]
    gas = mixture_properties(library, main, contaminant, fraction, conditions.temperature)
    nominal = {**conditions.as_dict(), "volume": volume}
    extra = {"expected": [library.at[main, "name"]] * len(samples)}
    if limit is not None:
        extra["max_contaminant [1]"] = [repr(limit)] * len(samples)
    return run_frame(method, nominal, gas, runs=[f"q{i}" for i in range(len(samples))], samples=samples,
                     extra=extra)


def _needed(target_u, parts, current, most, too_many):
    """Smallest whole N (or a volume) with u at most the target, from u² = A/N + F; None and why not.

    ``too_many`` says in words what exceeding ``most`` means.
    """
    independent, shared = parts
    room = target_u**2 - shared
    if room <= 0:
        return None, "the part that neither replicates nor a larger vessel reduce is already too large"
    value = independent / room
    if value > most:
        return None, too_many
    return max(value, current), None


def plan_decision(conditions, library, main, contaminant, profile, *, limit=None, rule="guarded",
                  replicates=1, guard_fraction=0.5) -> dict:
    """Plan a purity screening: detection limit, operating characteristic, what would let it decide.

    Parameters
    ----------
    conditions : molid.planning.conditions.Conditions
        Method and nominal conditions.
    library : pandas.DataFrame
        The candidate library (index 0..c-1).
    main, contaminant : int
        Library rows of the labelled gas and of the contaminant.
    profile : molid.io.profiles.InstrumentProfile
        The instrument profile.
    limit : float, optional
        Upper limit of the contaminant's fraction [1].
    rule : {"guarded", "simple"}
        The decision rule.
    replicates : int
        Runs per cylinder.
    guard_fraction : float
        The largest guard band wanted, as a fraction of the limit.

    Returns
    -------
    dict
        ``detection_limit`` and ``u_at_zero`` [1]; with a limit also ``x``, ``u`` (arrays
        over the grid), ``accept``, ``reject``, ``undecided``, ``u_at_limit``,
        ``guard_band`` [1] and ``replicates_needed``, ``volume_needed`` [m³] (None with
        ``*_reason`` when none would do).
    """
    if "residual-vapour" in METHODS[conditions.method].candidate_corrections:
        raise PlanError(f"--label: a {conditions.method} run measures a liquid's vapour, which the "
                        "purity step does not assess; plan a gas method (evacuated-bulb, air-tare-bulb, "
                        "syringe, over-water)")
    if main == contaminant:
        raise PlanError("--contaminant: the contaminant must differ from the labelled gas")
    if rule not in RULES:
        raise PlanError(f"--rule '{rule}': accepted: {', '.join(RULES)}")
    fractions = np.linspace(0.0, 2.0 * limit, GRID_POINTS) if limit is not None else np.zeros(1)
    frame = _decision_frame(conditions, library, main, contaminant, fractions, replicates, limit)
    with np.errstate(all="ignore"):
        result = identify(frame, profile=profile, library=library,
                          contaminant=library.at[contaminant, "name"], rule=rule)
    table = result.quality.samples
    missing = [name for name in ("x0", "one", "two", "large") if name not in table.index]
    if missing:
        raise PlanError(f"--label {library.at[main, 'name']}: its runs at these conditions cannot be "
                        "analysed for purity; " + _first_error(result))
    out = {"detection_limit": float(table.at["x0", "detection_limit"]),
           "u_at_zero": float(table.at["x0", "detection_limit"]) / 2.0,
           "limited_by": str(table.at["x0", "limited_by"])}
    if limit is None:
        return out
    u = np.array([float(table.at[f"x{i}", "u"]) if f"x{i}" in table.index else np.nan
                  for i in range(len(fractions))])
    out.update({"x": fractions, "u": u, **operating_characteristic(fractions, u, limit, rule)})
    at_limit = float(u[len(fractions) // 2])
    out.update({"u_at_limit": at_limit, "guard_band": 2.0 * at_limit if rule == "guarded" else 0.0})
    target = guard_fraction * limit / 2.0
    parts = replicate_parts(float(table.at["one", "u"]), float(table.at["two", "u"]))
    needed, why = _needed(target, parts, 1, MOST_REPLICATES,
                          f"it would take more than {MOST_REPLICATES} runs per cylinder")
    out["replicates_needed"] = None if needed is None else int(math.ceil(needed * (1 - 1e-12)))
    out["replicates_reason"] = why
    u_large = float(table.at["large", "u"])
    scale = 4.0 / 3.0 * (at_limit**2 - u_large**2)  # a/V² at the planned volume
    # the smallest volume may be below the planned one: the planned vessel then has room to spare
    largest = PLAUSIBLE["volume"][1]
    needed, why = _needed(target, (max(scale, 0.0), max(at_limit**2 - scale, 0.0)), 1e-6,
                          (largest / conditions.volume) ** 2,
                          f"it would take a vessel of more than {largest * 1e3:g} L")
    out["volume_needed"] = None if needed is None else conditions.volume * math.sqrt(needed)
    out["volume_reason"] = why
    return out


def _first_error(result) -> str:
    """Return the first problem of the probe runs, in words."""
    for problems in result.errors:
        if problems:
            return problems[0].split(", ", 1)[-1]
    return "no result could be read as the labelled gas"
