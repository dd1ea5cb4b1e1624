"""Uncertainty propagation by the GUM's law of propagation, vectorised over runs.

Sensitivity coefficients are computed by complex-step differentiation of the
measurement model, which gives derivatives to machine precision without the
step-size trade-off of finite differences, for all runs in one evaluation.
The inputs are treated as uncorrelated within a run.

References
----------
JCGM 100:2008, Evaluation of measurement data -- Guide to the expression of
uncertainty in measurement (GUM), 5.1.2 (law of propagation of uncertainty) and
6.2 (expanded uncertainty).

JCGM 101:2008, Evaluation of measurement data -- Supplement 1 to the GUM:
Propagation of distributions using a Monte Carlo method.

W. Squire and G. Trapp, "Using complex variables to estimate derivatives of
real functions", SIAM Review 40 (1998) 110-112, doi:10.1137/S003614459631241X.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = [
    "COVERAGE_FACTOR",
    "Propagation",
    "complex_step_jacobian",
    "propagate",
    "budget_percent",
    "monte_carlo",
    "monte_carlo_draws",
]

#: Coverage factor for an interval of about 95 % (GUM 6.2.2, 6.3.3).
COVERAGE_FACTOR = 2.0

_STEP = 1e-30  # relative complex step; any tiny step is exact to rounding


@dataclass
class Propagation:
    """Result of propagating input uncertainties through a model.

    Attributes
    ----------
    value : numpy.ndarray
        Model output at the input values, shape (n,).
    sensitivities : dict of numpy.ndarray
        ∂output/∂input for each input, shape (n,).
    uncertainties : dict of numpy.ndarray
        The inputs' standard uncertainties, shape (n,).
    extras : dict of numpy.ndarray
        Other outputs of the model at the input values.
    """

    value: np.ndarray
    sensitivities: dict
    uncertainties: dict
    extras: dict

    @property
    def contributions(self) -> dict:
        """Uncertainty contributions c_i·u_i, in the output's unit."""
        return {
            name: self.sensitivities[name] * self.uncertainties[name] for name in self.sensitivities
        }

    @property
    def standard_uncertainty(self) -> np.ndarray:
        """Combined standard uncertainty u_c (GUM eq. 10)."""
        total = np.zeros_like(self.value)
        for contribution in self.contributions.values():
            total = total + contribution * contribution
        return np.sqrt(total)


def complex_step_jacobian(model, values: dict, static: dict | None = None, output: str | None = None):
    r"""Evaluate a model and its derivatives with respect to every input by complex step.

    Parameters
    ----------
    model : callable
        ``model(**values, **static)`` returning an array, or a dict of arrays
        (then ``output`` names the one to differentiate). It must be analytic in
        each input: arithmetic, powers, exp/log, ``np.where`` on masks that do not
        depend on the inputs.
    values : dict of array_like
        Input values, each of shape (n,).
    static : dict, optional
        Further keyword arguments passed unchanged (flags, codes).
    output : str, optional
        Key of the output to differentiate when the model returns a dict.

    Returns
    -------
    value : numpy.ndarray
        The output, shape (n,).
    jacobian : dict of numpy.ndarray
        ∂output/∂input for each input, shape (n,).
    extras : dict of numpy.ndarray
        All outputs (real parts) when the model returns a dict.

    Notes
    -----
    .. math:: \frac{\partial f}{\partial x_j} = \frac{\operatorname{Im} f(x + i h e_j)}{h} + O(h^2)

    All inputs are perturbed at once along a leading axis of length m (one row
    per input), so the model is called a single time on arrays of shape (m, n).

    References
    ----------
    W. Squire and G. Trapp, SIAM Review 40 (1998) 110-112.

    Examples
    --------
    The derivative of x·y² is (y², 2xy):

    >>> value, jac, _ = complex_step_jacobian(lambda x, y: x * y**2, {"x": [3.0], "y": [2.0]})
    >>> float(value[0]), float(jac["x"][0]), float(jac["y"][0])
    (12.0, 4.0, 12.0)
    """
    static = static or {}
    names = list(values)
    base = {name: np.asarray(values[name], dtype=float) for name in names}
    shape = np.broadcast(*base.values()).shape
    steps = {}
    batched = {}
    for row, name in enumerate(names):
        # the step is relative to the value, but never so small that it underflows
        scale = np.where(np.abs(base[name]) < 1e-100, 1.0, np.abs(base[name]))
        steps[name] = _STEP * scale
        perturbation = np.zeros((len(names),) + shape, dtype=complex)
        perturbation[row] = 1j * steps[name]
        batched[name] = np.broadcast_to(base[name], shape) + perturbation
    with np.errstate(all="ignore"):
        result = model(**batched, **static)
    extras = {}
    if isinstance(result, dict):
        extras = {key: np.real(item[0]) if np.ndim(item) > len(shape) else np.real(item)
                  for key, item in result.items()}
        result = result[output]
    result = np.asarray(result)
    value = np.real(result[0])
    jacobian = {name: np.imag(result[row]) / steps[name] for row, name in enumerate(names)}
    return value, jacobian, extras


def propagate(model, values: dict, uncertainties: dict, static: dict | None = None,
              output: str | None = None) -> Propagation:
    r"""Propagate standard uncertainties through a model (GUM law of propagation).

    Parameters
    ----------
    model : callable
        See :func:`complex_step_jacobian`.
    values, uncertainties : dict of array_like
        Input values and standard uncertainties, same keys, shape (n,).
    static : dict, optional
        Further keyword arguments for the model.
    output : str, optional
        Output to propagate when the model returns a dict.

    Returns
    -------
    Propagation
        Value, sensitivities and uncertainties; ``standard_uncertainty`` is u_c.

    Notes
    -----
    .. math:: u_c^2(y) = \sum_i \left(\frac{\partial f}{\partial x_i}\right)^2 u^2(x_i)

    (GUM eq. 10, uncorrelated inputs).

    References
    ----------
    JCGM 100:2008 (GUM), 5.1.2.
    """
    value, jacobian, extras = complex_step_jacobian(model, values, static, output)
    shape = value.shape
    u = {name: np.broadcast_to(np.asarray(uncertainties[name], dtype=float), shape)
         for name in values}
    return Propagation(value=value, sensitivities=jacobian, uncertainties=u, extras=extras)


def budget_percent(contributions: dict) -> dict:
    """Each input's share of the combined variance, in percent (summing to 100).

    Parameters
    ----------
    contributions : dict of numpy.ndarray
        c_i·u_i per input.

    Returns
    -------
    dict of numpy.ndarray
        100·(c_i u_i)²/u_c²; NaN where u_c = 0.
    """
    squares = {name: np.asarray(c, dtype=float) ** 2 for name, c in contributions.items()}
    total = sum(squares.values())
    with np.errstate(invalid="ignore", divide="ignore"):
        return {name: np.where(total > 0, 100.0 * s / total, np.nan) for name, s in squares.items()}


def monte_carlo_draws(model, values: dict, uncertainties: dict, static: dict | None = None,
                      output: str | None = None, draws: int = 20000, seed=0) -> np.ndarray:
    """Draw Gaussian inputs and evaluate the model on them, for every run at once (GUM Supplement 1).

    Parameters
    ----------
    model : callable
        Vectorised model; see :func:`complex_step_jacobian`.
    values, uncertainties : dict of float or array_like
        Input values and standard uncertainties, each a scalar or of shape (n,) for n runs.
    static : dict, optional
        Further keyword arguments (flags, codes), each a scalar or of shape (n,).
    output : str, optional
        Output key when the model returns a dict.
    draws : int
        Number of Monte Carlo trials M per run.
    seed : int or numpy.random.Generator
        Random seed, for reproducible output, or a generator to continue from.

    Returns
    -------
    numpy.ndarray
        The model's output for each trial, shape (draws,) or (draws, n).

    Notes
    -----
    Each input is assigned a Gaussian PDF with its estimate and standard
    uncertainty (JCGM 101:2008, 6.4.7); the inputs are independent. The draws of
    one input come from one call of the generator, in the order of ``values``.

    References
    ----------
    JCGM 101:2008 (GUM Supplement 1), 6.4.7 and 7.3-7.5.
    """
    rng = np.random.default_rng(seed)
    base = {name: np.asarray(values[name], dtype=float) for name in values}
    shape = (draws,) + np.broadcast(*base.values()).shape
    samples = {
        name: base[name] + np.asarray(uncertainties[name], dtype=float) * rng.standard_normal(shape)
        for name in values
    }
    static = {key: np.broadcast_to(np.asarray(item), shape) for key, item in (static or {}).items()}
    with np.errstate(all="ignore"):
        result = model(**samples, **static)
    if isinstance(result, dict):
        result = result[output]
    return np.asarray(result, dtype=float)


def monte_carlo(model, values: dict, uncertainties: dict, static: dict | None = None,
                output: str | None = None, draws: int = 20000, seed=0):
    """Propagate by Monte Carlo with Gaussian inputs (GUM Supplement 1), for one run or many.

    Parameters
    ----------
    model : callable
        Vectorised model; see :func:`complex_step_jacobian`.
    values, uncertainties : dict of float or array_like
        Input values and standard uncertainties: scalars for one run, or arrays of
        shape (n,) for n runs drawn at once.
    static : dict, optional
        Further keyword arguments (scalars, or arrays of shape (n,)).
    output : str, optional
        Output key when the model returns a dict.
    draws : int
        Number of Monte Carlo trials (JCGM 101:2008, 7.2.2: large compared with
        1/(1 − p), for example 10⁴/(1 − p) = 2·10⁵ for a 95 % interval; fewer
        suffice for a check).
    seed : int or numpy.random.Generator
        Random seed, for reproducible output.

    Returns
    -------
    mean, standard_deviation, low, high : float or numpy.ndarray
        The output's mean, standard deviation and the probabilistically symmetric
        95 % coverage interval (2.5 and 97.5 percentiles, JCGM 101:2008, 7.7.1):
        floats for scalar inputs, arrays of shape (n,) otherwise.

    References
    ----------
    JCGM 101:2008 (GUM Supplement 1), 7.
    """
    result = monte_carlo_draws(model, values, uncertainties, static, output, draws, seed)
    low, high = np.percentile(result, [2.5, 97.5], axis=0)
    mean, deviation = result.mean(axis=0), result.std(axis=0, ddof=1)
    if result.ndim == 1:
        return float(mean), float(deviation), float(low), float(high)
    return mean, deviation, low, high
