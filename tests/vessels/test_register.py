"""The vessel register: round trip, its contract of columns, and the files it refuses."""

import numpy as np
import pytest

from molid.io.problems import InputError
from molid.io.vessel_register import REGISTER_COLUMNS, read_register, register_csv
from molid.pipeline.calibration import calibrate, register_text


def test_round_trip(tmp_path):
    """Checks behaviour: what register_csv writes, read_register reads back to the written precision."""
    volume = np.array([501.8436321e-6, 251.065075e-6])
    u_volume = np.array([0.020812e-6, 0.01431e-6])
    text = register_csv(["B-500-1", "=B2"], volume, u_volume, [9.9e-6, 25e-6],
                        ["2024-06-12", "2024-06-13"], ["2;3;4", "5"])
    path = tmp_path / "register.csv"
    path.write_text(text, encoding="utf-8")
    register = read_register(path)
    assert register.ids.tolist() == ["B-500-1", "=B2"]  # a formula guard is written and read back
    np.testing.assert_allclose(register.volume, volume, rtol=0, atol=1e-12)  # 1e-6 mL
    np.testing.assert_allclose(register.u_volume, u_volume, rtol=5e-3)  # three digits
    assert register.expansion.tolist() == [9.9e-6, 25e-6]
    assert register.positions(["=B2", "B-500-1", "nope", None]).tolist() == [1, 0, -1, -1]
    assert text.splitlines()[0].split(",") == list(REGISTER_COLUMNS)
    assert text.splitlines()[2].startswith("'=B2,")


def test_demo_register_matches_its_fills(tmp_path):
    """Checks behaviour: sample_runs/qa_vessels.csv is the register of sample_runs/qa_vessel_fills.csv."""
    calibration = calibrate("sample_runs/qa_vessel_fills.csv")
    with open("sample_runs/qa_vessels.csv", encoding="utf-8") as stream:
        assert register_text(calibration) == stream.read()


@pytest.mark.parametrize("text, words", [
    ("vessel,volume [mL],expansion [1/K],calibrated,source_rows\nB,1,1e-5,2024-01-01,2\n", "u_volume"),
    ("vessel,volume [mL],u_volume [mL],expansion [1/K],calibrated,source_rows\n"
     "B,500,0.02,9.9e-6,2024-01-01,2\nB,250,0.02,9.9e-6,2024-01-01,3\n", "row 3, column 'vessel'"),
    ("vessel,volume [mL],u_volume [mL],expansion [1/K],calibrated,source_rows\n"
     "B,abc,0.02,9.9e-6,2024-01-01,2\n", "row 2, column 'volume'"),
    ("vessel,volume [parsec],u_volume [mL],expansion [1/K],calibrated,source_rows\n"
     "B,1,0.02,9.9e-6,2024-01-01,2\n", "not a volume unit"),
])
def test_bad_registers_are_refused(tmp_path, text, words):
    """Checks behaviour: a register with a missing column, a repeated vessel, a bad number or unit stops."""
    path = tmp_path / "register.csv"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError, match=words.replace("[", r"\[")):
        read_register(path)


def test_missing_register_file(tmp_path):
    """Checks behaviour: a register that does not exist is a file-level error naming it."""
    with pytest.raises(InputError, match="no such vessel register"):
        read_register(tmp_path / "absent.csv")
