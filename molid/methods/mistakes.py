"""The classic mistakes of a gas-density calculation: codes and plain words.

The vocabulary is shared by the methods (each declares which mistakes its
students can make) and by the diagnosis in :mod:`molid.teaching.diagnosis`
(which recomputes each run with each mistake). The codes are a contract of the
grades CSV and JSON; docs/grading.md explains them.
"""

from __future__ import annotations

__all__ = ["MISTAKE_CODES", "UNEXPLAINED", "DESCRIPTIONS"]

#: The mistake codes, in the order a student sheet lists them.
MISTAKE_CODES = (
    "celsius-as-kelvin",
    "volume-unit",
    "pressure-unit",
    "no-buoyancy",
    "masses-swapped",
    "gas-constant-units",
    "room-temperature-for-vapour",
    "water-vapour-not-subtracted",
    "water-column-ignored",
)
UNEXPLAINED = "unexplained"

#: Plain words for a student sheet, one per code.
DESCRIPTIONS = {
    "celsius-as-kelvin": "the temperature is used in °C instead of K",
    "volume-unit": "the volume is used in the wrong unit (mL taken as L, or L as mL)",
    "pressure-unit": "the pressure is used in the wrong unit (mmHg, torr, atm, kPa and bar "
                     "mixed up)",
    "no-buoyancy": "the mass of the air the bulb or syringe displaces is left out",
    "masses-swapped": "the two balance readings are exchanged (tare and filled, or before and after)",
    "gas-constant-units": "R is taken in units that do not match the pressure and volume",
    "room-temperature-for-vapour": "the room temperature is used for the vapour instead of the "
                                   "bath temperature at which it filled the flask",
    "water-vapour-not-subtracted": "the water's vapour pressure is not subtracted: the gas "
                                   "collected over water is taken at the whole pressure",
    "water-column-ignored": "the water column in the tube is ignored: the gas is taken at the "
                            "barometric pressure, not that less the raised water",
    UNEXPLAINED: "no single classic mistake explains the difference between your result and "
                 "your readings; check the arithmetic step by step",
}
