"""Vessels calibrated by water fill: the gravimetric volume model and the vessels' materials.

:mod:`molid.vessels.calibration` holds the model of ISO 4787 (the volume at 20 °C
from the weighings of a vessel empty and full of water), its GUM uncertainty and
the combination of replicate fills of one vessel. The register file that records
each vessel's volume is read and written by :mod:`molid.io.vessel_register`.
"""
