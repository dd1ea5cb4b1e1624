"""The ``vessel`` column of a run file: a calibrated vessel's volume from the register.

A run may name its vessel (``vessel``) instead of typing its ``volume``. With a
register (``--vessels``), the reader puts in the vessel's volume at the gas
temperature and the calibration's standard uncertainty, which every run on that
vessel shares (so averaging replicate runs does not reduce it). A run that gives
both is checked: the typed volume is used, with a warning where the two disagree
beyond their combined expanded uncertainty.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from molid.io.cells import column_text
from molid.io.columns import VESSEL_COLUMN
from molid.io.headers import Header
from molid.io.problems import InputError, RowProblems
from molid.io.vessel_register import VesselRegister, read_register
from molid.vessels.calibration import volume_at_temperature

__all__ = ["VesselVolumes", "load_vessels", "vessel_rows", "look_up_vessels", "share_vessel_volumes"]


@dataclass
class VesselVolumes:
    """Where the register gives a run's volume, and that volume with its uncertainty.

    Attributes
    ----------
    from_register : numpy.ndarray of bool
        Rows whose volume comes from the register.
    volume, u : numpy.ndarray
        The vessel's volume at the gas temperature and its standard uncertainty
        [m³]; NaN where no vessel of the register is named.
    """

    from_register: np.ndarray
    volume: np.ndarray
    u: np.ndarray


def load_vessels(vessels) -> VesselRegister | None:
    """Return a register from a path (read), a register (as is) or None."""
    if vessels is None or isinstance(vessels, VesselRegister):
        return vessels
    return read_register(Path(vessels))


def vessel_rows(raw, by_name: dict[str, Header], register: VesselRegister | None,
                source: str) -> np.ndarray | None:
    """Return each row's vessel id (None where blank), or None when the file has no vessel column.

    Raises
    ------
    InputError
        When the file names vessels but no register was given.
    """
    if VESSEL_COLUMN not in by_name:
        return None
    if register is None:
        raise InputError(f"{source}: column '{by_name[VESSEL_COLUMN].original}' names vessels, but "
                         "no vessel register was given; pass one with --vessels REGISTER.csv "
                         "(written by molid calibrate), or give a 'volume' column instead")
    cells = column_text(raw, by_name[VESSEL_COLUMN]).str.strip().to_numpy(dtype=object)
    return np.where(cells == "", None, cells)


def look_up_vessels(ids, register: VesselRegister, values: dict, blanks: dict, stated: dict,
                    by_name: dict[str, Header], problems: RowProblems) -> VesselVolumes:
    """Fill blank volumes from the register (in place in ``values``, ``blanks``, ``stated``).

    Parameters
    ----------
    ids : numpy.ndarray of object
        Vessel id of each row, None where blank.
    register : VesselRegister
        The calibrated vessels.
    values, blanks, stated : dict of numpy.ndarray
        The reader's SI values, blank masks and stated uncertainties; the volume
        and its stated uncertainty are set where the register gives them.
    by_name : dict of Header
        The file's headers, to name columns in messages.
    problems : RowProblems
        Errors for unknown vessels and rows with neither volume nor vessel;
        warnings where a typed volume disagrees with the register.

    Returns
    -------
    VesselVolumes
        Which rows use the register, and the register's volume of each named vessel.
    """
    named = np.array([item is not None for item in ids], dtype=bool)
    position = np.where(named, register.positions(ids), -1)
    unknown = named & (position < 0)
    column = by_name[VESSEL_COLUMN].original
    listed = ", ".join(str(item) for item in register.ids[:12]) + (", ..." if len(register.ids) > 12
                                                                    else "")
    problems.error(unknown, lambda i: (f"column '{column}': no vessel '{ids[i]}' in the vessel "
                                       f"register {register.source}; it lists: {listed}"))
    known = named & ~unknown
    safe = np.where(known, position, 0)
    volume, u = volume_at_temperature(register.volume[safe], register.u_volume[safe],
                                      register.expansion[safe], values["temperature"])
    volume, u = np.where(known, volume, np.nan), np.where(known, u, np.nan)
    typed = ~blanks["volume"]
    if "volume" not in by_name:  # with a volume column, a blank cell is reported as such
        problems.error(~named, lambda i: (f"column '{column}': the vessel is empty and the file has "
                                          "no volume column; name a vessel of the register"))
    from_register = known & ~typed
    values["volume"] = np.where(from_register, volume, values["volume"])
    blanks["volume"] = blanks["volume"] & ~from_register
    stated["volume"] = np.where(from_register, u, stated.get("volume", np.full(len(ids), np.nan)))
    return VesselVolumes(from_register=from_register, volume=volume, u=u)


def share_vessel_volumes(found: VesselVolumes, values: dict, uncertainties: dict, shared: dict,
                         register: VesselRegister, problems: RowProblems, notes: list) -> None:
    """Mark register volumes as common to all runs on the vessel; warn where a typed volume disagrees.

    Parameters
    ----------
    found : VesselVolumes
        From :func:`look_up_vessels`.
    values, uncertainties, shared : dict of numpy.ndarray
        The reader's SI values, uncertainties and shared parts (``shared`` updated in place).
    register : VesselRegister
        For the note naming it.
    problems : RowProblems
        Where the warnings go.
    notes : list of str
        File-level remarks.
    """
    shared["volume"] = np.where(found.from_register, uncertainties["volume"], shared["volume"])
    typed = np.isfinite(found.volume) & ~found.from_register
    difference = values["volume"] - found.volume
    # Expanded (k = 2) uncertainty of the difference between the typed and the calibrated volume.
    limit = 2.0 * np.hypot(uncertainties["volume"], found.u)
    problems.warn(typed & (np.abs(difference) > limit), lambda i: (
        f"the volume typed ({values['volume'][i] * 1e6:.4f} mL) differs from the register's volume "
        f"of this vessel at the gas temperature ({found.volume[i] * 1e6:.4f} mL) by "
        f"{difference[i] * 1e6:+.4f} mL, more than their combined expanded uncertainty "
        f"({limit[i] * 1e6:.4f} mL); the typed volume was used"))
    if found.from_register.any():
        notes.append(f"volume of {int(found.from_register.sum())} run(s) from the vessel register "
                     f"{register.source}: the volume at 20 °C brought to the gas temperature with the "
                     "vessel's expansion coefficient; its uncertainty is common to all runs on a "
                     "vessel, so it is not reduced by averaging")
