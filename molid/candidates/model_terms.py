"""Model uncertainties of the real-gas correlations, per polar class.

Each correlation carries a standard uncertainty per polar class, read from
``molid/data/virial_model.csv``, whose ``basis`` columns record the comparison
against reference equations of state that sized it: :func:`virial_uncertainty`
for B, :func:`virial_truncation_uncertainty` for the neglected higher virial
terms, :func:`vapour_pressure_relative_uncertainty` for the vapour pressure.

The terms are written by ``benchmarks/size_model_terms.py``: sized on one set of
fluids and states, their coverage reported on another (the ``basis`` columns
give both figures; ``docs/model_terms.md`` names the split and the known
shortfalls).
"""

from __future__ import annotations

import csv
from functools import lru_cache
from importlib import resources

import numpy as np

from molid.physics.constants import GAS_CONSTANT
from molid.physics.virial import POLAR_CLASSES, polar_class_array

__all__ = [
    "load_virial_model",
    "virial_relative_uncertainty",
    "virial_uncertainty",
    "virial_truncation_uncertainty",
    "vapour_pressure_relative_uncertainty",
]


@lru_cache(maxsize=1)
def load_virial_model():
    """Model-uncertainty terms per polar class, from ``molid/data/virial_model.csv``.

    Returns
    -------
    dict
        ``{polar_class: row}``; each row is a dict of the file's columns, with
        the ``u_`` and ``k_`` columns converted to float.

    Raises
    ------
    ValueError
        If a polar class of :data:`POLAR_CLASSES` is missing from the file.

    Examples
    --------
    >>> sorted(load_virial_model()) == sorted(POLAR_CLASSES)
    True
    """
    text = resources.files("molid").joinpath("data/virial_model.csv").read_text(encoding="utf-8")
    rows = csv.DictReader(line for line in text.splitlines() if not line.startswith("#"))
    table = {}
    for row in rows:
        for key in row:
            if key.startswith(("u_", "k_")):
                row[key] = float(row[key])
        table[row["polar_class"]] = row
    missing = set(POLAR_CLASSES) - set(table)
    if missing:
        raise ValueError(f"virial_model.csv lacks polar classes {sorted(missing)}")
    return table


def _lookup(polar_class, column):
    classes = polar_class_array(polar_class)
    table = load_virial_model()
    names = np.array(sorted(table))
    values = np.array([table[name][column] for name in names])
    return values[np.searchsorted(names, classes)]


def virial_relative_uncertainty(polar_class):
    """Return the standard relative uncertainty of the Tsonopoulos B for each polar class.

    Parameters
    ----------
    polar_class : array_like of str
        Polar class, one of :data:`POLAR_CLASSES`.

    Returns
    -------
    numpy.ndarray
        u(B)/|B| [-], shaped like ``polar_class``.

    Notes
    -----
    Sized so that about 95 % of the deviations of :func:`second_virial` from
    the reference equations of state in CoolProp fall within twice the
    combined term of :func:`virial_uncertainty`, at the temperatures where
    each substance is weighed as a vapour; the ``basis_B`` column of the data
    file gives the statistics. A Type B standard uncertainty in the sense of
    JCGM 100:2008, 4.3.

    References
    ----------
    .. [1] JCGM 100:2008, *Evaluation of measurement data — Guide to the
       expression of uncertainty in measurement*, BIPM (2008).

    Examples
    --------
    >>> u = virial_relative_uncertainty(["nonpolar", "alcohol"])
    >>> bool(u[0] < u[1])
    True
    """
    return _lookup(polar_class, "u_relative_B")


def virial_uncertainty(polar_class, second_virial):
    r"""Return the standard uncertainty of a correlated B: a relative term and an absolute floor.

    Parameters
    ----------
    polar_class : array_like of str
        Polar class, one of :data:`POLAR_CLASSES`.
    second_virial : array_like
        Second virial coefficient B [m³/mol], broadcast against ``polar_class``.

    Returns
    -------
    numpy.ndarray
        u(B) [m³/mol].

    Notes
    -----
    .. math::

        u(B) = \sqrt{(u_\mathrm{rel}\,B)^2 + u_\mathrm{abs}^2}

    The absolute term matters near the Boyle temperature, where B passes
    through zero and a purely relative term would vanish (nitrogen and carbon
    monoxide at room temperature). Both terms come from ``virial_model.csv``.

    Examples
    --------
    >>> u = virial_uncertainty("nonpolar", 0.0)
    >>> bool(u > 0)
    True
    """
    relative = _lookup(polar_class, "u_relative_B")
    absolute = _lookup(polar_class, "u_absolute_B_m3_per_mol")
    B = np.asarray(second_virial)
    return np.sqrt((relative * B) ** 2 + absolute**2)


def virial_truncation_uncertainty(
    polar_class, temperature, pressure, second_virial, form="pressure"
):
    r"""Return the standard uncertainty of Z from truncating the virial series after B.

    Parameters
    ----------
    polar_class : array_like of str
        Polar class, one of :data:`POLAR_CLASSES`.
    temperature : array_like
        Gas temperature [K].
    pressure : array_like
        Gas pressure [Pa].
    second_virial : array_like
        Second virial coefficient B [m³/mol].
    form : {"pressure", "density"}, optional
        The form of :func:`compressibility_factor` in use.

    Returns
    -------
    numpy.ndarray
        u(Z) [-] from the neglected third and higher virial terms.

    Notes
    -----
    .. math::

        u(Z) = k \left(\frac{B p}{R T}\right)^2

    with :math:`k` per class and form from ``virial_model.csv``, sized
    against CoolProp (``basis_truncation``). For the pressure form the
    neglected term is one-signed (the full equation of state gives a lower Z
    than :math:`1 + Bp/RT` by about :math:`(Bp/RT)^2`); carried here as an
    uncorrected systematic effect in the sense of JCGM 100:2008, F.2.4.5.

    Examples
    --------
    n-Butane at 20 °C and 1 atm, B ≈ −730 cm³/mol:

    >>> u = virial_truncation_uncertainty("nonpolar", 293.15, 101325.0, -730e-6)
    >>> bool(5e-4 < float(u) < 6e-4)
    True
    """
    columns = {"pressure": "k_truncation_pressure_form", "density": "k_truncation_density_form"}
    if form not in columns:
        raise ValueError(f"unknown form {form!r}; expected 'pressure' or 'density'")
    factor = _lookup(polar_class, columns[form])
    beta = (
        np.asarray(second_virial) * np.asarray(pressure) / (GAS_CONSTANT * np.asarray(temperature))
    )
    return factor * beta**2


def vapour_pressure_relative_uncertainty(polar_class, method="ambrose-walton"):
    """Return the standard relative uncertainty of a vapour-pressure estimate per polar class.

    Parameters
    ----------
    polar_class : array_like of str
        Polar class, one of :data:`POLAR_CLASSES`.
    method : {"ambrose-walton", "lee-kesler"}, optional
        The estimate the term belongs to.

    Returns
    -------
    numpy.ndarray
        u(p_sat)/p_sat [-], shaped like ``polar_class``.

    Notes
    -----
    Sized like :func:`virial_relative_uncertainty`, against CoolProp's
    saturation pressures; see the ``basis_vapour_pressure`` column.

    Examples
    --------
    >>> float(vapour_pressure_relative_uncertainty("nonpolar")) > 0
    True
    """
    columns = {
        "ambrose-walton": "u_relative_vapour_pressure_ambrose_walton",
        "lee-kesler": "u_relative_vapour_pressure_lee_kesler",
    }
    if method not in columns:
        raise ValueError(f"unknown method {method!r}; expected one of {sorted(columns)}")
    return _lookup(polar_class, columns[method])
