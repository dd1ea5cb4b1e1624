"""The registry of measurement methods: the one list that every stage consults.

The reader accepts exactly the names registered here, the measurement model
dispatches on their codes, the diagnosis tries each method's declared mistakes
and the simulator draws each method's readings. Adding a method is writing one
module with a :class:`~molid.methods.base.Method` and adding it to
:data:`METHODS`; ``tests/methods/test_registry.py`` then says what it lacks.
"""

from __future__ import annotations

import numpy as np

from molid.methods import air_tare_bulb, evacuated_bulb, over_water, syringe, vapour_flask
from molid.methods.base import Method, missing_parts

__all__ = [
    "METHODS",
    "METHOD_CODES",
    "REQUIRED_EVERYWHERE",
    "required_by_all",
    "method_codes",
    "select_by_method",
    "mistake_applies",
    "headline_models",
    "needs_correction",
]


def _register(*methods: Method) -> dict:
    registered = {}
    for method in methods:
        problems = missing_parts(method)
        if problems:  # a programming error, found by the registry test before any user meets it
            raise TypeError(f"method {method.name!r} is incomplete: " + "; ".join(problems))
        registered[method.name] = method
    return registered


#: Every method, by the name a run sheet gives it.
METHODS = _register(evacuated_bulb.METHOD, air_tare_bulb.METHOD, syringe.METHOD, vapour_flask.METHOD,
                    over_water.METHOD)

#: Integer code of each method, used inside the vectorised model.
METHOD_CODES = {name: code for code, name in enumerate(METHODS)}



def required_by_all(names) -> tuple:
    """Return the inputs every one of the named methods requires (unknown names are skipped).

    Parameters
    ----------
    names : iterable of str
        Method names, e.g. the distinct methods of a file.

    Returns
    -------
    tuple of str
        The inputs, in the order of the first method's list; empty when no name is known.

    Examples
    --------
    >>> required_by_all(["evacuated-bulb", "over-water"])
    ('volume', 'temperature', 'pressure')
    """
    known = [METHODS[name] for name in dict.fromkeys(names) if name in METHODS]
    if not known:
        return ()
    return tuple(name for name in known[0].required_inputs
                 if all(name in method.required_inputs for method in known))


def method_codes(methods) -> np.ndarray:
    """Integer codes for method names (-1 where unknown).

    Parameters
    ----------
    methods : array_like of str
        Method names, one per run.

    Returns
    -------
    numpy.ndarray of int
        Codes of :data:`METHOD_CODES`.
    """
    import pandas as pd

    codes = pd.Series(np.asarray(methods, dtype=object), dtype=object).map(METHOD_CODES)
    return codes.fillna(-1).to_numpy(dtype=int)


def select_by_method(method_code, compute):
    """Evaluate ``compute(method)`` for every method and keep each run's own method's value.

    Parameters
    ----------
    method_code : array_like of int
        Each run's method code.
    compute : callable
        ``compute(method)`` → an array over all runs (may be complex).

    Returns
    -------
    numpy.ndarray
        Per run, the value computed with its method; 0 where the code is unknown.

    Notes
    -----
    The selection masks depend on the codes only, never on an uncertain input, so
    the result stays complex-step safe.
    """
    method_code = np.asarray(method_code)
    result = 0.0
    for code, method in enumerate(METHODS.values()):
        if np.any(method_code == code):
            result = np.where(method_code == code, compute(method), result)
    return result


def mistake_applies(codes, method_code) -> np.ndarray:
    """Whether each mistake code can be made with each run's method.

    Parameters
    ----------
    codes : sequence of str
        Mistake codes (one per variant).
    method_code : array_like of int
        Each run's method code.

    Returns
    -------
    numpy.ndarray of bool
        Shape (len(codes), runs).
    """
    table = np.array([[code in method.mistakes for method in METHODS.values()] for code in codes],
                     dtype=bool).reshape(len(codes), len(METHODS))
    method_code = np.asarray(method_code)
    known = (method_code >= 0) & (method_code < len(METHODS))
    return np.where(known[None, :], table[:, np.where(known, method_code, 0)], False)


def headline_models(methods) -> np.ndarray:
    """Name what each run's own molar mass is, by its method ("ideal gas" where unknown).

    Parameters
    ----------
    methods : array_like of str
        Method names, one per run (or per sample).

    Returns
    -------
    numpy.ndarray of str
        Each method's ``headline_model``.
    """
    import pandas as pd

    words = {name: method.headline_model for name, method in METHODS.items()}
    mapped = pd.Series(np.asarray(methods, dtype=object), dtype=object).map(words)
    return mapped.fillna("ideal gas").to_numpy(dtype=object)


#: Inputs every registered method needs (a file without one of these columns is refused).
REQUIRED_EVERYWHERE = required_by_all(METHODS)


def needs_correction(methods, correction: str) -> np.ndarray:
    """Whether each run's method declares a per-candidate correction or check.

    Parameters
    ----------
    methods : array_like of str
        Method names, one per run.
    correction : str
        A name of :data:`molid.methods.base.CANDIDATE_CORRECTIONS`.

    Returns
    -------
    numpy.ndarray of bool
        False where the method is unknown.
    """
    names = [name for name, method in METHODS.items() if correction in method.candidate_corrections]
    return np.isin(np.asarray(methods, dtype=object), names)
