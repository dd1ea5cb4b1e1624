"""molid verify: a result re-run from its recorded inputs and options, every number compared.

Checks behaviour: these tests check molid's own re-running and comparing (what is
caught, what is named, which exit status); the digests themselves are checked against
hashlib and the FIPS 180-4 examples in tests/io/test_provenance.py.
"""

import io
import json
import shutil
import sys
from pathlib import Path

import pytest

from molid import __version__
from molid.cli import main
from molid.pipeline.verify import ABSOLUTE_TOLERANCE, RELATIVE_TOLERANCE, compare_documents

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "sample_runs"


def _run(arguments, capsys):
    code = main([str(argument) for argument in arguments])
    captured = capsys.readouterr()
    return code, captured.out, captured.err


def _record(arguments, capsys, path):
    """Run a command with --json and keep its document in ``path``."""
    code, out, err = _run([*arguments, "--json"], capsys)
    assert code in (0, 1), err
    path.write_text(out, encoding="utf-8")
    return json.loads(out)


@pytest.fixture()
def demo_copy(tmp_path):
    """Copy the QA demo's run sheet and profile to a folder of their own."""
    folder = tmp_path / "inputs"
    folder.mkdir()
    for name in ("qa_cylinders.csv", "qa_lab_profile.toml"):
        shutil.copy(DEMO / name, folder / name)
    return folder / "qa_cylinders.csv", folder / "qa_lab_profile.toml"


def test_the_demo_result_verifies(tmp_path, capsys, monkeypatch):
    """Checks behaviour: the README's demo result, verified where it was made: exit 0, reproduced."""
    monkeypatch.chdir(ROOT)
    result = tmp_path / "result.json"
    document = _record(["identify", "sample_runs/qa_cylinders.csv", "--profile",
                        "sample_runs/qa_lab_profile.toml"], capsys, result)
    assert [entry["path"] for entry in document["provenance"]["inputs"]] == [
        "sample_runs/qa_cylinders.csv", "sample_runs/qa_lab_profile.toml"]
    code, out, _ = _run(["verify", result], capsys)
    assert code == 0, out
    assert out.splitlines()[-1].startswith("reproduced: ")
    assert "CHANGED" not in out


def test_one_changed_digit_in_the_run_sheet_is_caught_and_the_file_named(demo_copy, tmp_path, capsys):
    """Checks behaviour: one digit of one reading changed after the result: exit 1, the file named."""
    runs, profile = demo_copy
    result = tmp_path / "result.json"
    recorded = _record(["identify", runs, "--profile", profile], capsys, result)
    text = runs.read_text(encoding="utf-8")
    first = recorded["results"][0]
    assert "147.3839" in text  # a tare reading of the demo's first run, in grams
    runs.write_text(text.replace("147.3839", "147.3834", 1), encoding="utf-8")
    code, out, _ = _run(["verify", result], capsys)
    assert code == 1
    changed = [line for line in out.splitlines() if "CHANGED" in line]
    assert len(changed) == 1 and changed[0].strip().startswith(f"run sheet: {runs}")
    assert f"results[0].molar_mass.value: recorded {first['molar_mass']['value']!r}, new " in out
    assert out.splitlines()[-1] == "NOT reproduced"


def test_a_changed_extra_library_is_caught(demo_copy, tmp_path, capsys):
    """Checks behaviour: the --library file changed: its digest, the merged library's digest, the numbers."""
    runs, profile = demo_copy
    extra = runs.parent / "site_gases.csv"
    extra.write_text("name,formula\nsite blend A,C2HF5\n", encoding="utf-8")
    result = tmp_path / "result.json"
    _record(["identify", runs, "--profile", profile, "--library", extra], capsys, result)
    assert _run(["verify", result], capsys)[0] == 0
    extra.write_text("name,formula\nsite blend A,C2H2F4\n", encoding="utf-8")
    code, out, _ = _run(["verify", result], capsys)
    assert code == 1
    assert any(line.strip().startswith(f"extra library: {extra}") and "CHANGED" in line
               for line in out.splitlines())
    assert "candidate library: CHANGED" in out
    assert "values differ" in out


def test_a_number_altered_by_hand_is_caught_and_named(demo_copy, tmp_path, capsys):
    """Checks behaviour: one number of a result edited by hand: exit 1, its JSON path and both values."""
    runs, profile = demo_copy
    result = tmp_path / "result.json"
    document = _record(["identify", runs, "--profile", profile], capsys, result)
    candidate = document["samples"][1]["candidates"][0]
    true_z = candidate["z"]
    candidate["z"] = round(true_z + 0.01, 6)
    result.write_text(json.dumps(document, indent=2), encoding="utf-8")
    code, out, _ = _run(["verify", result], capsys)
    assert code == 1
    differing = [line.strip() for line in out.splitlines() if line.startswith("  ") and ": recorded " in line]
    assert differing == [f"samples[1].candidates[0].z: recorded {candidate['z']!r}, new {true_z!r}"]
    assert "1 of " in out and "CHANGED" not in out


def test_a_missing_input_stops_with_exit_2_naming_it(demo_copy, tmp_path, capsys):
    """Checks behaviour: an input no longer where it was recorded: exit 2, the input and its path named."""
    runs, profile = demo_copy
    result = tmp_path / "result.json"
    _record(["identify", runs, "--profile", profile], capsys, result)
    profile.unlink()
    code, out, err = _run(["verify", result], capsys)
    assert code == 2 and out == ""
    assert f"the profile '{profile}' is missing" in err and "--inputs" in err


@pytest.mark.parametrize("content, words", [
    ("run,sample\nA,1\n", "not JSON"),
    ('{"results": []}', "no 'provenance' record"),
    ('[1, 2, 3]', "no 'provenance' record"),
    ('{"molid": "0.1.0", "provenance": {"command": "identify"}}', "its provenance has no"),
])
def test_a_file_that_is_not_a_molid_result_stops_with_exit_2(tmp_path, capsys, content, words):
    """Checks behaviour: text that is not JSON, JSON without a provenance record: exit 2, saying which."""
    path = tmp_path / "other.json"
    path.write_text(content, encoding="utf-8")
    code, out, err = _run(["verify", path], capsys)
    assert code == 2 and out == "" and "not a molid result" in err and words in err
    code, _, err = _run(["verify", tmp_path / "absent.json"], capsys)
    assert code == 2 and "no such file" in err


def test_a_grade_document_verifies(tmp_path, capsys, monkeypatch):
    """Checks behaviour: molid grade --json of the teaching demo verifies; its answer key is recorded."""
    monkeypatch.chdir(ROOT)
    result = tmp_path / "grades.json"
    document = _record(["grade", "sample_runs/teaching_section.csv", "--key",
                        "sample_runs/teaching_key.csv"], capsys, result)
    assert document["provenance"]["command"] == "grade"
    assert [entry["role"] for entry in document["provenance"]["inputs"]] == ["run sheet", "answer key"]
    code, out, _ = _run(["verify", result], capsys)
    assert code == 0, out
    assert out.splitlines()[-1].startswith("reproduced: ")
    key = tmp_path / "teaching_key.csv"
    key.write_text((DEMO / "teaching_key.csv").read_text(encoding="utf-8") + "\n", encoding="utf-8")
    code, out, _ = _run(["verify", result, "--inputs", tmp_path], capsys)
    assert code == 1 and f"answer key: sample_runs/teaching_key.csv (read from {key}): CHANGED" in out


def test_inputs_found_in_another_folder_by_name(demo_copy, tmp_path, capsys):
    """Checks behaviour: inputs moved to another folder are found with --inputs; notes naming them agree."""
    runs, profile = demo_copy
    result = tmp_path / "result.json"
    recorded = _record(["identify", runs, "--profile", profile], capsys, result)
    assert any(str(profile) in note for note in recorded["notes"])  # a note names the profile file
    moved = tmp_path / "archive"
    shutil.move(runs.parent, moved)
    assert _run(["verify", result], capsys)[0] == 2
    code, out, _ = _run(["verify", result, "--inputs", moved], capsys)
    assert code == 0, out
    assert f"(read from {moved / profile.name})" in out


def test_standard_input_is_recorded_and_read_again(demo_copy, tmp_path, capsys, monkeypatch):
    """Checks behaviour: a run sheet read from stdin is hashed as read and verified from stdin again."""
    runs, profile = demo_copy
    data = runs.read_bytes()

    def feed(content):
        monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(content), encoding="utf-8"))

    feed(data)
    result = tmp_path / "result.json"
    document = _record(["identify", "-", "--profile", profile], capsys, result)
    assert document["provenance"]["inputs"][0]["path"] == "-"
    assert len(document["results"]) == data.decode("utf-8").strip().count("\n")
    feed(data)
    assert _run(["verify", result], capsys)[0] == 0
    feed(data.replace(b"147.3839", b"147.3834", 1))
    code, out, _ = _run(["verify", result], capsys)
    assert code == 1 and "run sheet: standard input: CHANGED" in out


def test_options_are_replayed(demo_copy, tmp_path, capsys):
    """Checks behaviour: a result made with library, quality and Monte Carlo options verifies."""
    runs, profile = demo_copy
    result = tmp_path / "result.json"
    document = _record(["identify", runs, "--profile", profile, "--candidate", "C3H6O=acetone",
                        "--contaminant", "nitrogen", "--rule", "simple", "--monte-carlo", "2000",
                        "--seed", "11"], capsys, result)
    options = document["provenance"]["options"]
    assert options["candidate"] == ["C3H6O=acetone"] and options["monte_carlo"] == 2000
    assert options["seed"] == 11 and options["contaminant"] == "nitrogen" and options["rule"] == "simple"
    code, out, _ = _run(["verify", result], capsys)
    assert code == 0, out
    document["provenance"]["options"]["seed"] = 12  # other draws: the Monte Carlo ends move
    result.write_text(json.dumps(document, indent=2), encoding="utf-8")
    code, out, _ = _run(["verify", result], capsys)
    assert code == 1 and ".monte_carlo.low: recorded" in out


def test_reference_conditions_are_recorded_as_text_and_replayed(demo_copy, tmp_path, capsys):
    """Checks behaviour: --reference-conditions is recorded in SI as text it reads back, and verifies."""
    with pytest.raises(SystemExit):
        main(["identify", "--help"])
    if "--reference-conditions" not in capsys.readouterr().out:
        pytest.skip("this molid has no --reference-conditions")
    runs, profile = demo_copy
    result = tmp_path / "result.json"
    document = _record(["identify", runs, "--profile", profile, "--reference-conditions",
                        "15 degC, 1 atm"], capsys, result)
    assert document["provenance"]["options"]["reference_conditions"] == "288.15 K, 101325.0 Pa"
    code, out, _ = _run(["verify", result], capsys)
    assert code == 0, out


def test_a_different_molid_version_is_stated_and_compared(demo_copy, tmp_path, capsys):
    """Checks behaviour: a result of another molid version: said so, and the comparison is still made."""
    runs, profile = demo_copy
    result = tmp_path / "result.json"
    document = _record(["identify", runs, "--profile", profile], capsys, result)
    document["molid"] = document["provenance"]["molid"] = "0.0.1"
    result.write_text(json.dumps(document, indent=2), encoding="utf-8")
    code, out, _ = _run(["verify", result], capsys)
    assert code == 0
    assert f"recorded with molid 0.0.1; this is molid {__version__}: compared all the same" in out


def test_an_option_this_molid_does_not_know_stops_with_exit_2(demo_copy, tmp_path, capsys):
    """Checks behaviour: a recorded option the command line refuses: exit 2, the parser's words passed on."""
    runs, profile = demo_copy
    result = tmp_path / "result.json"
    document = _record(["identify", runs, "--profile", profile], capsys, result)
    document["provenance"]["options"]["colour_of_the_bulb"] = "amber"
    result.write_text(json.dumps(document, indent=2), encoding="utf-8")
    code, out, err = _run(["verify", result], capsys)
    assert code == 2 and out == ""
    assert "could not be re-run" in err and "--colour-of-the-bulb=amber" in err and "unrecognized" in err


def test_tolerances_of_the_comparison():
    """Checks behaviour: numbers within 1e-9 relative or 1e-12 absolute agree; texts and types must match."""
    assert (RELATIVE_TOLERANCE, ABSOLUTE_TOLERANCE) == (1e-9, 1e-12)
    recorded = {"a": 44.0, "b": 0.0, "c": [1, "x", None, True], "d": {"e": 2.0}}
    within = {"a": 44.0 * (1 + 5e-10), "b": 5e-13, "c": [1.0, "x", None, True], "d": {"e": 2.0}}
    differences, counts, added = compare_documents(recorded, within)
    assert differences == [] and counts == (4, 3) and added == []
    beyond = {"a": 44.0 * (1 + 2e-9), "b": 2e-12, "c": [1, "y", 0, 1], "d": {}, "f": 1}
    differences, _, added = compare_documents(recorded, beyond)
    assert [path for path, _, _ in differences] == ["a", "b", "c[1]", "c[2]", "c[3]", "d.e"]
    assert added == ["f"]
    renamed = compare_documents({"note": "profile lab/p.toml"}, {"note": "profile /x/p.toml"},
                                {"/x/p.toml": "lab/p.toml"})[0]
    assert renamed == []
