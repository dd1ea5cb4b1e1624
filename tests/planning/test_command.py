"""``molid plan`` on the command line: the JSON contract, the page, and bad input (exit 2, nothing written).

Checks behaviour only: what the command prints and writes, never a number it computed (those are
checked against outside sources in test_separability.py, test_decision.py and test_simulation.py).
"""

import json

import pytest

from molid.cli import main


def _plan(capsys, *arguments):
    code = main(["plan", *arguments])
    captured = capsys.readouterr()
    return code, captured.out, captured.err


def test_json_keys_of_the_contract(capsys):
    """Checks behaviour: the JSON document carries every key the contract names, with its type."""
    code, out, _ = _plan(capsys, "--method", "syringe", "--unknowns", "argon, CO2, nitrous oxide",
                         "--simulate", "40", "--seed", "4", "--label", "SF6", "--limit", "1", "--json")
    assert code == 0
    document = json.loads(out)
    for item in document["unknowns"]:
        assert {"name", "molar_mass", "u", "U", "dominant_input", "replicates"} <= set(item)
        assert isinstance(item["dominant_input"], str) and item["replicates"]["n"] == 1
    for pair in document["pairs"]:
        assert {"a", "b", "separation", "separable", "replicates_needed"} <= set(pair)
        assert isinstance(pair["separable"], bool)
        assert pair["replicates_needed"] is None or isinstance(pair["replicates_needed"], int)
    assert {pair["a"] for pair in document["pairs"]} <= {"argon", "carbon dioxide"}
    for row in document["confusion"]:
        assert {"true", "runs", "consistent", "first", "taken_for"} <= set(row)
        assert row["runs"] == 40 and isinstance(row["taken_for"], dict)
    assert isinstance(document["detection_limit"], float)
    for point in document["operating_characteristic"]:
        assert set(point) == {"x", "accept", "reject", "undecided"}
        assert point["accept"] + point["reject"] + point["undecided"] == pytest.approx(1.0, abs=1e-5)
    assert document["summary"][0].startswith("carbon dioxide and nitrous oxide cannot be told apart")


def test_same_options_give_the_same_bytes(capsys):
    """Checks behaviour: a plan with a seeded simulation prints the same JSON twice."""
    options = ("--method", "evacuated-bulb", "--unknowns", "helium, neon", "--simulate", "20", "--json")
    assert _plan(capsys, *options)[1] == _plan(capsys, *options)[1]


def test_terminal_report_and_both_pages(capsys, tmp_path):
    """Checks behaviour: the report starts with the summary; .pdf and .html pages are written whole."""
    pypdf = pytest.importorskip("pypdf")
    options = ("--method", "syringe", "--unknowns", "nitrogen, carbon monoxide, argon", "--simulate", "30",
               "--label", "argon", "--contaminant", "nitrogen", "--limit", "2")
    code, out, _ = _plan(capsys, *options, "-o", str(tmp_path / "plan.pdf"))
    assert code == 0 and out.splitlines()[2].startswith("- nitrogen and carbon monoxide cannot be told apart")
    assert "Safety" in out
    text = "".join(page.extract_text() for page in pypdf.PdfReader(tmp_path / "plan.pdf").pages)
    assert "Measurement plan" in text and "carbon monoxide" in text and "Safety" in text
    code, _, _ = _plan(capsys, *options, "-o", str(tmp_path / "plan.html"))
    page = (tmp_path / "plan.html").read_text(encoding="utf-8")
    assert code == 0 and page.count("<svg") == 3 and "</html>" in page
    code, _, err = _plan(capsys, *options, "-o", str(tmp_path / "plan.html"))
    assert code == 2 and "already exists" in err


@pytest.mark.parametrize(("options", "words"), [
    (("--unknowns", "argonn, carbon dioxide, nitrous oxyde"),
     ["'argonn' is not in the library", "closest library names: argon", "'nitrous oxyde'", "nitrous oxide"]),
    (("--unknowns", "argon, acetone"), ["acetone is not a gas at 21 degC and 101 kPa", "above 5"]),
    (("--unknowns", "argon, n-butane", "--temperature", "-20 degC"),
     ["n-butane is not a gas at -20 degC and 101 kPa", "it would be a gas above -0."]),
    (("--method", "over-water", "--unknowns", "propane, ammonia"),
     ["ammonia cannot be collected over water"]),
    (("--unknowns", "argon", "--volume", "-100 mL"), ["--volume '-100 mL'", "above 0"]),
    (("--unknowns", "argon", "--temperature", "-280 degC"), ["--temperature '-280 degC'", "absolute zero"]),
    (("--unknowns", "argon", "--pressure", "5000 kPa"), ["--pressure '5000 kPa'", "10 kPa to 250 kPa"]),
    (("--method", "vapour-flask", "--unknowns", "acetone, propane"), ["propane is a gas at the room"]),
    (("--unknowns", "argon", "--simulate", "5", "--mistakes", "water-column-ignored=0.1"),
     ["cannot be made with the syringe method"]),
    (("--label", "argon", "--limit", "150"), ["--limit '150'"]),
    (("--unknowns", "argon", "-o", "plan.txt"), [".pdf or .html"]),
])
def test_bad_input_exits_2_and_writes_nothing(capsys, tmp_path, monkeypatch, options, words):
    """Checks behaviour: each bad input is named with what is accepted; exit 2; the page is not written."""
    monkeypatch.chdir(tmp_path)
    arguments = list(options)
    if "--method" not in arguments:
        arguments = ["--method", "syringe", *arguments]
    if "-o" not in arguments:
        arguments += ["-o", "plan.pdf"]
    code, out, err = _plan(capsys, *arguments)
    assert code == 2, err
    for word in words:
        assert word in err
    assert out == "" and list(tmp_path.iterdir()) == []


def test_page_holds_grades_and_library_columns(capsys, tmp_path):
    """Checks behaviour: a graded section's page lists the grades; the heat map shows library substances.

    The confusion table's columns are the unknowns, then the library substances their runs
    were ranked first as (here nitrous oxide for carbon dioxide); each row adds up to 1.
    """
    from molid.planning.page import _confusion_matrix

    options = ("--method", "syringe", "--unknowns", "argon, carbon dioxide", "--simulate", "40",
               "--mistakes", "celsius-as-kelvin=0.2")
    code, out, _ = _plan(capsys, *options, "--json")
    document = json.loads(out)
    names, columns, matrix = _confusion_matrix(document)
    assert code == 0 and names == ["argon", "carbon dioxide"] and "nitrous oxide" in columns
    assert all(sum(row) == pytest.approx(1.0, abs=1e-6) for row in matrix)
    code, _, _ = _plan(capsys, *options, "-o", str(tmp_path / "plan.html"))
    page = (tmp_path / "plan.html").read_text(encoding="utf-8")
    assert code == 0 and "Expected grades" in page and "celsius-as-kelvin: made in" in page
