"""Command line run in-process: exit codes and the content written."""

import csv
import json

import pytest

from molid.cli import main

HEADER = "run,sample,method,mass_tare,mass_filled,volume,temperature,pressure,operator"
GOOD = [
    "a1,S,evacuated-bulb,150.0000,150.9050,500,21.0,100.8,=HYPERLINK(\"http://x\")",
    "a2,S,evacuated-bulb,150.0000,150.9048,500,21.1,100.8,K. Ames",
]
BAD = "a3,S,evacuated-bulb,150.0000,oops,500,21.0,100.8,K. Ames"


@pytest.fixture()
def good_file(tmp_path):
    path = tmp_path / "runs.csv"
    path.write_text("\n".join([HEADER, *GOOD]) + "\n", encoding="utf-8")
    return path


@pytest.fixture()
def mixed_file(tmp_path):
    path = tmp_path / "mixed.csv"
    path.write_text("\n".join([HEADER, *GOOD, BAD]) + "\n", encoding="utf-8")
    return path


def test_identify_all_good_exits_0(good_file, capsys):
    """Checks behaviour: every row analysed → exit 0 and a table naming each run."""
    assert main(["identify", str(good_file)]) == 0
    out = capsys.readouterr().out
    assert "a1" in out and "a2" in out and "carbon dioxide" in out


def test_identify_json_contract(mixed_file, capsys):
    """Checks behaviour: --json has the documented keys; a bad row has error set, molar_mass null; exit 1."""
    assert main(["identify", str(mixed_file), "--json"]) == 1
    document = json.loads(capsys.readouterr().out)
    first, _, bad = document["results"]
    assert set(first) >= {"run", "sample", "method", "error", "warnings", "molar_mass", "budget",
                          "candidates"}
    block = first["molar_mass"]
    assert block["unit"] == "g/mol" and block["k"] == 2 and block["model"] == "ideal gas"
    assert block["low"] == pytest.approx(block["value"] - block["U"])
    assert block["U"] == pytest.approx(2 * block["u"])
    assert sum(item["percent"] for item in first["budget"]) == pytest.approx(100.0)
    candidate = first["candidates"][0]
    assert set(candidate) >= {"rank", "name", "formula", "molar_mass", "measured", "z", "verdict"}
    assert bad["error"] and "row 4" in bad["error"] and bad["molar_mass"] is None
    sample = document["samples"][0]
    assert sample["sample"] == "S" and sample["runs"] == ["a1", "a2"]
    assert set(sample) >= {"sample", "runs", "molar_mass", "warnings", "candidates"}


def test_json_is_deterministic(good_file, capsys, monkeypatch):
    """Checks behaviour: the same input gives byte-identical JSON (SOURCE_DATE_EPOCH sets the time)."""
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")
    main(["identify", str(good_file), "--json"])
    first = capsys.readouterr().out
    main(["identify", str(good_file), "--json"])
    assert capsys.readouterr().out == first


def test_csv_is_deterministic(good_file, tmp_path):
    """Checks behaviour: the same input gives byte-identical CSV."""
    first, second = tmp_path / "one.csv", tmp_path / "two.csv"
    assert main(["identify", str(good_file), "-o", str(first)]) == 0
    assert main(["identify", str(good_file), "-o", str(second)]) == 0
    assert first.read_bytes() == second.read_bytes()


def test_csv_output_neutralises_formulas_and_keeps_columns(good_file, tmp_path):
    """Checks behaviour: -o writes one row per run with the user's columns; formula cells arrive as text."""
    output = tmp_path / "out.csv"
    assert main(["identify", str(good_file), "-o", str(output)]) == 0
    rows = list(csv.DictReader(output.open(encoding="utf-8")))
    assert [row["run"] for row in rows] == ["a1", "a2"]
    assert rows[0]["operator"].startswith("'=")
    assert float(rows[0]["molar_mass_g_mol"]) > 40
    assert rows[0]["candidate_1"] == "carbon dioxide"


def test_output_is_not_overwritten_without_force(good_file, tmp_path, capsys):
    """Checks behaviour: an existing output needs --force; an input is never an output (exit 2)."""
    output = tmp_path / "out.csv"
    output.write_text("keep me", encoding="utf-8")
    assert main(["identify", str(good_file), "-o", str(output)]) == 2
    assert output.read_text(encoding="utf-8") == "keep me"
    assert "--force" in capsys.readouterr().err
    assert main(["identify", str(good_file), "-o", str(output), "--force"]) == 0
    assert main(["identify", str(good_file), "-o", str(good_file), "--force"]) == 2
    assert good_file.read_text(encoding="utf-8").startswith(HEADER)


def test_unreadable_file_exits_2_without_traceback(tmp_path, capsys):
    """Checks behaviour: a missing file or a missing column is a usage error (exit 2) with a plain message."""
    assert main(["identify", str(tmp_path / "nope.csv")]) == 2
    assert "no such file" in capsys.readouterr().err
    broken = tmp_path / "broken.csv"
    broken.write_text("run,method\nx,syringe\n", encoding="utf-8")
    assert main(["identify", str(broken)]) == 2
    err = capsys.readouterr().err
    assert "required column(s) missing" in err and "Traceback" not in err


def test_usage_errors_exit_2(capsys):
    """Checks behaviour: unknown options and no command are usage errors."""
    with pytest.raises(SystemExit) as stop:
        main(["identify"])
    assert stop.value.code == 2
    assert main([]) == 2


def test_version(capsys):
    """Checks behaviour: --version prints the package version."""
    with pytest.raises(SystemExit) as stop:
        main(["--version"])
    assert stop.value.code == 0
    assert "molid" in capsys.readouterr().out


def test_library_search(capsys):
    """Checks behaviour: `molid library` filters by text and molar-mass window."""
    assert main(["library", "butane"]) == 0
    out = capsys.readouterr().out
    assert "n-butane" in out and "isobutane" in out
    assert main(["library", "--mass", "43.9", "44.2", "--json"]) == 0
    names = {item["name"] for item in json.loads(capsys.readouterr().out)}
    assert {"carbon dioxide", "propane", "nitrous oxide"} <= names
