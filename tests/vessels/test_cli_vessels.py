"""``molid calibrate`` and ``--vessels`` on the command line: exit codes, messages, files written."""

import shutil
from pathlib import Path

from molid.cli import main

DEMO = Path(__file__).resolve().parents[2] / "sample_runs"
FILL_HEADER = ("vessel,date,material,mass_empty [g],mass_water [g],water_temperature [degC],"
               "air_temperature [degC],pressure [kPa],humidity [%]")


def test_calibrate_writes_register_and_refuses_to_overwrite(tmp_path, capsys):
    """Checks behaviour: exit 0 and a register; an existing one needs --force; never over the input."""
    fills = tmp_path / "fills.csv"
    shutil.copy(DEMO / "qa_vessel_fills.csv", fills)
    register = tmp_path / "vessels.csv"
    assert main(["calibrate", str(fills), "-o", str(register)]) == 0
    out = capsys.readouterr().out
    assert "B-500-1" in out and "B-250-3" in out
    assert register.read_text(encoding="utf-8") == (DEMO / "qa_vessels.csv").read_text(encoding="utf-8")
    assert main(["calibrate", str(fills), "-o", str(register)]) == 2
    assert "use --force" in capsys.readouterr().err
    assert main(["calibrate", str(fills), "-o", str(register), "--force"]) == 0
    assert main(["calibrate", str(fills), "-o", str(fills), "--force"]) == 2
    assert "is an input" in capsys.readouterr().err


def test_calibrate_bad_rows_exit_1_and_name_row_and_column(tmp_path, capsys):
    """Checks behaviour: bad fills are row errors naming row and column; the good fills still count."""
    fills = tmp_path / "fills.csv"
    fills.write_text("\n".join([
        FILL_HEADER,
        "B-1,2024-06-11,borosilicate-3.3,120.0001,369.2001,21.0,21.2,100.8,45",
        "B-1,2024-06-12,borosilicate-3.3,120.0002,abc,21.0,21.2,100.8,45",
        "B-1,2024-06-12,borosilicate-3.3,120.0002,119.0000,21.0,21.2,100.8,45",
        "B-1,2024-06-12,borosilicate-3.3,120.0002,369.2003,45.0,21.2,100.8,45",
        "B-2,2024-06-12,unobtainium,90.0002,340.2003,21.0,21.2,100.8,45",
    ]) + "\n", encoding="utf-8")
    register = tmp_path / "vessels.csv"
    assert main(["calibrate", str(fills), "-o", str(register)]) == 1
    out = capsys.readouterr().out
    assert "row 3, column 'mass_water [g]': 'abc' is not a number" in out
    assert "row 4, columns 'mass_water [g]'/'mass_empty [g]': the reading with water is not above" in out
    assert "row 5, column 'water_temperature [degC]': water at 45 °C is outside 0-40 °C" in out
    assert "row 6, column 'material': 'unobtainium' is not a known material" in out
    lines = register.read_text(encoding="utf-8").splitlines()
    assert len(lines) == 2 and lines[1].startswith("B-1,") and lines[1].endswith(",2024-06-11,2")


def test_calibrate_unusable_file_exits_2(tmp_path, capsys):
    """Checks behaviour: a fill file without a required column stops with exit 2 and no traceback."""
    fills = tmp_path / "fills.csv"
    fills.write_text("vessel,mass_empty [g]\nB-1,120.0\n", encoding="utf-8")
    assert main(["calibrate", str(fills)]) == 2
    assert "required column(s) missing: mass_water" in capsys.readouterr().err


def test_identify_with_vessels(tmp_path, capsys):
    """Checks behaviour: --vessels lets runs name a vessel (exit 0); without it exit 2; unknown id exit 1."""
    runs = tmp_path / "runs.csv"
    runs.write_text("\n".join([
        "run,sample,method,mass_tare [g],mass_filled [g],vessel,temperature [degC],pressure [kPa]",
        "R1,S1,evacuated-bulb,147.3839,148.2021,B-500-1,21.90,100.36",
        "R2,S1,evacuated-bulb,147.3783,148.2035,B-500-1,20.73,100.77",
    ]) + "\n", encoding="utf-8")
    register = str(DEMO / "qa_vessels.csv")
    assert main(["identify", str(runs), "--vessels", register]) == 0
    assert "argon" in capsys.readouterr().out
    assert main(["identify", str(runs)]) == 2
    assert "no vessel register was given" in capsys.readouterr().err
    runs.write_text(runs.read_text(encoding="utf-8").replace("R2,S1,evacuated-bulb,147.3783,148.2035,B-500-1",
                                                             "R2,S1,evacuated-bulb,147.3783,148.2035,B-9"),
                    encoding="utf-8")
    assert main(["identify", str(runs), "--vessels", register]) == 1
    assert "no vessel 'B-9' in the vessel register" in capsys.readouterr().out
