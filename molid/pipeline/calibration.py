"""The calibrate pipeline: water-fill weighings → each fill's volume → one volume per vessel.

:func:`calibrate` reads a fill file, computes each fill's volume at 20 °C with
its GUM uncertainty (ISO 4787, `molid.vessels.calibration`), and combines the
fills of each vessel; :func:`register_text` writes the vessel register.
"""

from __future__ import annotations

import datetime
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from molid.io.fills import FillTable, read_fills
from molid.io.vessel_register import register_csv
from molid.vessels.calibration import calibrate_fills, combine_fills

__all__ = ["Calibration", "calibrate", "register_text", "summary_text"]


@dataclass
class Calibration:
    """Every fill's volume and every vessel's combined volume.

    Attributes
    ----------
    fills : FillTable
        The validated fill file.
    volume, u : numpy.ndarray
        Each fill's volume at 20 °C and its standard uncertainty [m³]; NaN where
        the row has an error.
    propagation : Propagation
        Sensitivities and contributions per fill.
    vessels : pandas.DataFrame
        One row per vessel: ``vessel``, ``n``, ``volume``, ``u_volume`` [m³],
        ``expansion`` [1/K], ``calibrated``, ``source_rows``, ``birge_ratio``,
        ``widened``, ``p_value``.
    errors, warnings : list of list of str
        Per-fill problems.
    notes : list of str
        Remarks on the file and on the vessels.
    """

    fills: FillTable
    volume: np.ndarray
    u: np.ndarray
    propagation: object
    vessels: pd.DataFrame
    errors: list
    warnings: list
    notes: list = field(default_factory=list)

    @property
    def ok(self) -> np.ndarray:
        """True for fills without errors."""
        return np.array([not problems for problems in self.errors], dtype=bool)


def _vessel_table(fills: FillTable, propagation, ok, today: str) -> pd.DataFrame:
    """Combine the usable fills of each vessel, with its expansion, date and source rows."""
    combined = combine_fills(fills.vessel, propagation, fills.shared, ok)
    frame = pd.DataFrame({"vessel": fills.vessel[ok], "expansion": fills.values["expansion"][ok],
                          "date": fills.dates[ok], "row": fills.row_numbers[ok].astype(str)})
    grouped = frame.groupby("vessel", sort=False)
    dates = grouped["date"].max().reindex(combined["sample"])
    return pd.DataFrame({
        "vessel": combined["sample"].to_numpy(dtype=object),
        "n": combined["n"].to_numpy(),
        "volume": combined["value"].to_numpy(),
        "u_volume": combined["u"].to_numpy(),
        "expansion": grouped["expansion"].first().reindex(combined["sample"]).to_numpy(),
        "calibrated": np.where(dates.isna(), today, dates.to_numpy(dtype=object)),
        "source_rows": grouped["row"].agg(";".join).reindex(combined["sample"]).to_numpy(),
        "birge_ratio": combined["birge_ratio"].to_numpy(),
        "widened": combined["widened"].to_numpy(dtype=bool),
        "p_value": combined["p_value"].to_numpy(),
    })


def calibrate(source, *, profile=None, today: str | None = None) -> Calibration:
    """Calibrate vessels from a water-fill file: the volume at 20 °C of each, with its uncertainty.

    Parameters
    ----------
    source : str, pathlib.Path, file-like or pandas.DataFrame
        The fills (see :mod:`molid.io.fills`).
    profile : InstrumentProfile or path, optional
        Default uncertainties of the balance, thermometers, barometer and hygrometer.
    today : str, optional
        The date (YYYY-MM-DD) given to vessels whose fills have none; today's by default.

    Returns
    -------
    Calibration
        Per-fill volumes and the per-vessel register entries.
    """
    fills = read_fills(source, profile=profile)
    propagation = calibrate_fills(fills.values, fills.uncertainties)
    errors = list(fills.errors)
    u = propagation.standard_uncertainty
    ok = fills.ok
    for index in np.flatnonzero(ok & ~(np.isfinite(propagation.value) & np.isfinite(u))):
        errors[index] = errors[index] + [
            f"row {fills.row_numbers[index]}: the volume is not a finite number; check the "
            "readings, temperatures and pressure and their units"]
        ok[index] = False
    today = today or datetime.date.today().isoformat()
    vessels = _vessel_table(fills, propagation, ok, today)
    notes = list(fills.notes)
    for row in vessels.itertuples(index=False):
        if row.n > 1 and row.widened:
            notes.append(f"vessel {row.vessel}: the {row.n} fills scatter more than their stated "
                         f"uncertainties explain (Birge ratio {row.birge_ratio:.2f}, p = "
                         f"{row.p_value:.2g}); the fill-to-fill part was widened to match")
        if row.n == 1:
            notes.append(f"vessel {row.vessel}: one fill only; its uncertainty rests on the stated "
                         "filling repeatability, not on observed scatter (fill it again to check)")
    return Calibration(fills=fills, volume=np.where(ok, propagation.value, np.nan),
                       u=np.where(ok, u, np.nan), propagation=propagation, vessels=vessels,
                       errors=errors, warnings=list(fills.warnings), notes=notes)


def register_text(calibration: Calibration) -> str:
    """Return the vessel register CSV of a calibration (see :mod:`molid.io.vessel_register`).

    Parameters
    ----------
    calibration : Calibration
        From :func:`calibrate`.

    Returns
    -------
    str
        The register's CSV text, one row per vessel with at least one usable fill.
    """
    table = calibration.vessels
    return register_csv(table["vessel"], table["volume"], table["u_volume"], table["expansion"],
                        table["calibrated"], table["source_rows"])


def summary_text(calibration: Calibration) -> str:
    """Return the terminal summary of a calibration: a line per vessel, then problems and notes.

    Parameters
    ----------
    calibration : Calibration
        From :func:`calibrate`.

    Returns
    -------
    str
        Volumes at 20 °C with U (k = 2), the fills used, the Birge ratio, and
        every row's errors and warnings.
    """
    lines = [f"{'vessel':<14} {'V20/mL':>12} {'u/mL':>8} {'U/mL (k=2)':>11} {'fills':>5} "
             f"{'Birge':>6} {'γ/(1/K)':>9}  calibrated  rows"]
    for row in calibration.vessels.itertuples(index=False):
        birge = f"{row.birge_ratio:6.2f}" if np.isfinite(row.birge_ratio) else "     -"
        lines.append(f"{str(row.vessel)[:14]:<14} {row.volume * 1e6:12.4f} {row.u_volume * 1e6:8.4f} "
                     f"{2 * row.u_volume * 1e6:11.4f} {row.n:5d} {birge} {row.expansion:9.3g}  "
                     f"{row.calibrated:<10}  {row.source_rows}")
    if calibration.vessels.empty:
        lines.append("(no vessel could be calibrated)")
    errors = [message for problems in calibration.errors for message in problems]
    if errors:
        lines += ["", "Errors (these fills were not used)"] + errors
    warnings = [f"row {row}: {message}" for row, problems in
                zip(calibration.fills.row_numbers, calibration.warnings, strict=True)
                for message in problems]
    if warnings:
        lines += ["", "Warnings"] + warnings
    if calibration.notes:
        lines += ["", "Notes"] + [f"- {note}" for note in calibration.notes]
    return "\n".join(lines) + "\n"
