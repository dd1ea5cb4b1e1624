"""The columns of a run file: which every file needs, which are measured, which are text.

One vocabulary for the header resolution, the cell parsing and the checks of
the reader, drawn from the method registry and the model's inputs so that a new
method or input reaches the reader without editing it.
"""

from __future__ import annotations

from molid.methods.inputs import COLUMN_KINDS, MEASURED_INPUTS
from molid.methods.registry import METHODS as REGISTERED_METHODS
from molid.methods.registry import REQUIRED_EVERYWHERE

__all__ = [
    "METHODS",
    "REQUIRED_COLUMNS",
    "MEASURED_COLUMNS",
    "UNCERTAIN_INPUTS",
    "VESSEL_COLUMN",
]

#: Measurement methods (from the registry) and the one-line meaning of their tare reading.
METHODS = {name: method.summary for name, method in REGISTERED_METHODS.items()}

#: Columns every file needs: the run id, the method and what every method requires.
REQUIRED_COLUMNS = ("run", "method") + REQUIRED_EVERYWHERE
#: Columns read as numbers in a unit, converted to SI.
MEASURED_COLUMNS = tuple(COLUMN_KINDS)
#: Inputs that may have a u_<name> column; u_mass applies to both readings.
UNCERTAIN_INPUTS = MEASURED_INPUTS
#: A column naming a calibrated vessel of the register (``--vessels``): it stands in for ``volume``.
VESSEL_COLUMN = "vessel"
