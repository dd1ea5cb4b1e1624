"""Type B evaluation: standard uncertainties from what is known of an instrument.

References
----------
JCGM 100:2008, Evaluation of measurement data -- Guide to the expression of
uncertainty in measurement (GUM), sections 4.3.3 (expanded uncertainty from a
certificate), 4.3.7 (rectangular distribution) and F.2.2.1 (resolution of a
digital indication).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["type_b_standard_uncertainty", "UncertaintyRule"]


def type_b_standard_uncertainty(
    standard=0.0, half_width=0.0, readability=0.0, expanded=0.0, coverage_factor=2.0
):
    r"""Combine Type B information about one instrument into a standard uncertainty.

    Parameters
    ----------
    standard : float
        A standard uncertainty as stated [any unit].
    half_width : float
        Half-width a of a rectangular distribution [same unit].
    readability : float
        Resolution d of a digital indication [same unit].
    expanded : float
        An expanded uncertainty U from a calibration certificate [same unit].
    coverage_factor : float
        The certificate's coverage factor k.

    Returns
    -------
    float
        The standard uncertainty [same unit].

    Notes
    -----
    .. math:: u^2 = u_s^2 + (a/\sqrt{3})^2 + (d/\sqrt{12})^2 + (U/k)^2

    References
    ----------
    JCGM 100:2008 (GUM), 4.3.3, 4.3.7 and F.2.2.1.

    Examples
    --------
    A 0.1 mg readability alone (GUM F.2.2.1: u = d/√12):

    >>> round(type_b_standard_uncertainty(readability=0.1), 6)
    0.028868
    """
    parts = (
        standard,
        half_width / math.sqrt(3.0),
        readability / math.sqrt(12.0),
        expanded / coverage_factor,
    )
    return math.sqrt(sum(part * part for part in parts))


@dataclass(frozen=True)
class UncertaintyRule:
    """Standard uncertainty of one input: an absolute SI part and a relative part.

    ``shared_absolute`` and ``shared_relative`` are the parts (included in the
    totals) that are common to every run made with the instrument, such as a
    calibration certificate's: averaging replicate runs does not reduce them.
    """

    absolute: float = 0.0
    relative: float = 0.0
    description: str = ""
    shared_absolute: float = 0.0
    shared_relative: float = 0.0

    def apply(self, values_si) -> np.ndarray:
        """Return the standard uncertainty [SI] for the given values [SI]."""
        values_si = np.asarray(values_si, dtype=float)
        return np.hypot(self.absolute, self.relative * np.abs(values_si))

    def apply_shared(self, values_si) -> np.ndarray:
        """Return the part of the standard uncertainty [SI] common to all runs."""
        values_si = np.asarray(values_si, dtype=float)
        return np.hypot(self.shared_absolute, self.shared_relative * np.abs(values_si))
