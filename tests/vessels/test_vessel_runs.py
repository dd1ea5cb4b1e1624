"""Runs that name a calibrated vessel instead of typing its volume (``--vessels``)."""

import io

import numpy as np
import pytest

from molid.io.problems import InputError
from molid.io.reading import read_runs
from molid.io.vessel_register import register_csv
from molid.pipeline.identify import identify

HEADER = "run,sample,method,mass_tare [g],mass_filled [g],temperature [degC],pressure [kPa],humidity [%]"
READINGS = [
    ("R1", "S1", "evacuated-bulb", "147.3839", "148.2021", "21.90", "100.36", "41"),
    ("R2", "S1", "evacuated-bulb", "147.3783", "148.2035", "20.73", "100.77", "39"),
    ("R3", "S1", "evacuated-bulb", "147.3811", "148.2026", "24.82", "100.39", "39"),
]
VOLUME, U_VOLUME, GAMMA = 500.1234e-6, 0.021e-6, 9.9e-6


@pytest.fixture()
def register(tmp_path):
    """Write a register of two invented bulbs; return its path."""
    path = tmp_path / "vessels.csv"
    path.write_text(register_csv(["BULB-A", "BULB-B"], [VOLUME, 250.0e-6], [U_VOLUME, 0.015e-6],
                                 [GAMMA, 25e-6], ["2024-06-12", "2024-06-12"], ["2;3;4", "5"]),
                    encoding="utf-8")
    return path


def _file(extra_header, cells):
    lines = [HEADER + extra_header] + [",".join(row) + cell for row, cell in zip(READINGS, cells,
                                                                                  strict=True)]
    return io.BytesIO(("\n".join(lines) + "\n").encode())


def _typed_volumes():
    """V(T) = V20·(1 + γ(T − 20 °C)) and its u, written out (ISO 4787 expansion law), in mL."""
    celsius = np.array([float(row[5]) for row in READINGS])
    volume = VOLUME * (1 + GAMMA * (celsius - 20.0)) * 1e6
    u = np.hypot(U_VOLUME * (1 + GAMMA * (celsius - 20.0)), VOLUME * (celsius - 20.0) * 0.1 * GAMMA) * 1e6
    return volume, u


def test_vessel_gives_the_same_runs_as_typed_volume_and_u(register):
    """Per run, naming the vessel equals typing V(T) and its u (values written out by the expansion law).

    The sample differs on purpose: the register's uncertainty is common to all runs on the
    vessel (a calibration), while a typed u_volume counts as run-to-run when the volumes differ.
    """
    by_vessel = identify(_file(",vessel", [",BULB-A"] * 3), vessels=register, rank=False)
    volume, u = _typed_volumes()
    cells = [f",{float(v)!r},{float(w)!r}" for v, w in zip(volume, u, strict=True)]
    typed = identify(_file(",volume [mL],u_volume [mL]", cells), rank=False)
    assert by_vessel.ok.all() and typed.ok.all()
    np.testing.assert_allclose(by_vessel.table.values["volume"], volume * 1e-6, rtol=1e-14)
    np.testing.assert_allclose(by_vessel.molar_mass, typed.molar_mass, rtol=1e-12)
    np.testing.assert_allclose(by_vessel.u, typed.u, rtol=1e-12)
    shared = by_vessel.shared["volume"]
    np.testing.assert_allclose(shared, by_vessel.propagation.contributions["volume"], rtol=1e-12)
    assert (typed.shared["volume"] == 0).all()
    assert by_vessel.samples["u"].iloc[0] > typed.samples["u"].iloc[0]
    assert any("vessel register" in note for note in by_vessel.notes)


def test_disagreeing_typed_volume_warns_and_is_used(register):
    """Checks behaviour: a typed volume beyond 2·√(u_typed² + u_register²) of V(T) warns; it is used.

    The typed volume's u is the default profile's 0.1 % (0.5 mL), so 2 mL off is beyond 1.0 mL.
    """
    volume, _ = _typed_volumes()
    cells = [f",BULB-A,{volume[0]:.4f}", f",BULB-A,{volume[1] + 2.0:.4f}", ",BULB-A,"]
    table = read_runs(_file(",vessel,volume [mL]", cells), vessels=register)
    assert table.ok.all()
    assert table.warnings[0] == [] and table.warnings[2] == []
    assert "differs from the register's volume" in table.warnings[1][0]
    assert table.values["volume"][1] == pytest.approx((volume[1] + 2.0) * 1e-6, abs=1e-10)
    assert table.shared_uncertainties["volume"][2] == table.uncertainties["volume"][2] > 0


def test_unknown_vessel_and_missing_volume_are_row_errors(register):
    """Checks behaviour: an unknown id is a row error naming it and the register; so is neither given."""
    table = read_runs(_file(",vessel,volume [mL]", [",BULB-Z,", ",,", ",BULB-B,"]), vessels=register)
    assert table.errors[0][0].startswith("row 2, column 'vessel': no vessel 'BULB-Z'")
    assert str(register) in table.errors[0][0]
    assert table.errors[1][0].startswith("row 3, column 'volume [mL]': the cell is empty")
    assert table.errors[2] == []


def test_vessel_column_without_register_stops_the_file():
    """Checks behaviour: a vessel column without --vessels is a file-level error that says so."""
    with pytest.raises(InputError, match="no vessel register was given; pass one with --vessels"):
        read_runs(_file(",vessel", [",BULB-A"] * 3))
