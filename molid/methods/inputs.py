"""The inputs of the measurement models: names, physical kinds and words for readers.

Every method draws its inputs from this one vocabulary, so the reader, the
instrument profiles, the uncertainty budget and the reports agree on names.
"""

from __future__ import annotations

__all__ = ["COLUMN_DEFAULT_UNITS", "COLUMN_KINDS", "MEASURED_INPUTS", "MODEL_INPUTS", "INPUT_LABELS"]

#: The measured inputs of a run, in budget order: each may have a u_<name> column.
MEASURED_INPUTS = (
    "mass_tare",
    "mass_filled",
    "volume",
    "temperature",
    "pressure",
    "humidity",
    "air_temperature",
    "air_pressure",
    "co2",
    "source_before",
    "source_after",
    "water_column",
)

#: Physical kind of each measured column (and of the student's reported result).
COLUMN_KINDS = {
    "mass_tare": "mass",
    "mass_filled": "mass",
    "volume": "volume",
    "temperature": "temperature",
    "pressure": "pressure",
    "humidity": "fraction",
    "air_temperature": "temperature",
    "air_pressure": "pressure",
    "co2": "fraction",
    "source_before": "mass",
    "source_after": "mass",
    "water_column": "length",
    "reported_molar_mass": "molar_mass",
}

#: Columns whose unit, when the header names none, is not their kind's default: CO2 is
#: given as a plain mole fraction (0.0004), as the CIPM-2007 formula writes it.
COLUMN_DEFAULT_UNITS = {"co2": "1"}

#: The model's uncertain inputs, in budget order. The last two are relative
#: corrections with value 0: the CIPM-2007 formula's own uncertainty and, for
#: wet gas, the water partial pressure's.
MODEL_INPUTS = MEASURED_INPUTS + ("air_density_formula", "water_vapour")

#: Words for each input, for people reading a report.
INPUT_LABELS = {
    "mass_tare": "tare reading",
    "mass_filled": "filled reading",
    "volume": "volume",
    "temperature": "gas temperature",
    "pressure": "gas pressure",
    "humidity": "humidity",
    "air_temperature": "balance-room temperature",
    "air_pressure": "balance-room pressure",
    "co2": "air CO2 fraction",
    "source_before": "source reading before release",
    "source_after": "source reading after release",
    "water_column": "water column in the tube",
    "air_density_formula": "air-density formula (CIPM-2007)",
    "water_vapour": "water vapour in the wet gas",
}
