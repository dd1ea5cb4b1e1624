"""The JSON document written as it goes: the same bytes as in memory, for a file in chunks too."""

import io
import json
import sys

import pytest

from molid.cli import main
from molid.io.json_document import DocumentWriter, to_document, to_json, write_json
from molid.io.run_csv import to_csv
from molid.pipeline.identify import identify
from molid.pipeline.json_stream import identify_to_json

sys.path.insert(0, "benchmarks")
from make_big_file import make_frame  # noqa: E402


@pytest.fixture(scope="module")
def run_file(tmp_path_factory):
    """900 invented runs: samples spread over the whole file, bad rows, a duplicate id, a long id."""
    frame = make_frame(900, seed=7).astype(str)
    spread = frame.index % 9 == 4
    frame.loc[spread, "sample"] = [f"T{number % 25}" for number in range(int(spread.sum()))]
    frame.loc[7, "mass_filled"] = "n/a"
    frame.loc[700, "run"] = frame.loc[2, "run"]
    frame.loc[701, "sample"] = "T3"
    frame.loc[701, "volume"] = "-1"  # a run of a sample left out with an error
    frame.loc[450, "run"] = "\x1b[2J" + "R" * 3000
    path = tmp_path_factory.mktemp("json") / "runs.csv"
    frame.to_csv(path, index=False)
    return path


def test_writer_gives_the_bytes_of_json_dumps():
    """Checks behaviour: a document written key by key and item by item equals json.dumps(indent=2)."""
    items = [{"a": [1, 2.5, None], "b": {"c": "x\ny\x1b", "d": []}}, {}, {"e": "測 ✓"}]
    for document in ({"molid": "1", "results": items, "samples": [], "notes": ["n"]},
                     {"molid": "1", "results": [], "samples": items[:1], "notes": []}):
        buffer = io.StringIO()
        writer = DocumentWriter(buffer)
        for key, value in document.items():
            if key in ("results", "samples"):
                writer.open_list(key)
                for item in value:
                    writer.item(item)
                writer.close_list()
            else:
                writer.value(key, value)
        writer.close()
        assert buffer.getvalue() == json.dumps(document, indent=2, ensure_ascii=False) + "\n"


def test_streamed_document_equals_the_whole_one(run_file):
    """Checks behaviour: write_json, run by run, gives json.dumps of to_document, every candidate listed."""
    result = identify(run_file)
    expected = json.dumps(to_document(result), indent=2, ensure_ascii=False) + "\n"
    assert to_json(result) == expected
    cut = json.dumps(to_document(result, 2), indent=2, ensure_ascii=False) + "\n"
    buffer = io.StringIO()
    write_json(result, buffer, 2)
    assert buffer.getvalue() == cut


@pytest.mark.parametrize("workers", [1, 2])
def test_chunked_document_equals_in_memory_document(run_file, tmp_path, workers):
    """Checks behaviour: chunks of 200 rows (samples batched across them) give the in-memory bytes.

    The per-run CSV written in the same pass is the in-memory CSV too.
    """
    result = identify(run_file)
    buffer = io.StringIO()
    output = tmp_path / "runs_out.csv"
    summary = identify_to_json(run_file, buffer, csv_output=output, chunk_rows=200, progress=False,
                               workers=workers)
    assert buffer.getvalue() == to_json(result)
    assert output.read_bytes().decode("utf-8") == to_csv(result)
    assert summary.runs == 900 and summary.rows_with_errors == 3


def test_large_file_json_from_the_command_line(run_file, tmp_path, capsys, monkeypatch):
    """Checks behaviour: identify --json on a file beyond one chunk takes the chunked path; same document."""
    monkeypatch.setattr("molid.pipeline.streaming.DEFAULT_CHUNK_ROWS", 500)
    assert main(["identify", str(run_file), "--json"]) == 1
    captured = capsys.readouterr()
    document = json.loads(captured.out)
    document.pop("provenance", None)  # which files and options: the command line's own record
    assert document == json.loads(to_json(identify(run_file)))
    assert "900 runs analysed" in captured.err


def test_candidates_of_every_shape_are_written_as_json_dumps_writes_them():
    """Checks behaviour: the fast candidate writer gives json.dumps's bytes on the QA demo.

    Its candidates come in several shapes: the usual keys, and consistent ones with
    densities at reference conditions (written by the general encoder).
    """
    result = identify("sample_runs/qa_cylinders.csv", profile="sample_runs/qa_lab_profile.toml")
    shapes = {tuple(candidate) for entry in to_document(result)["samples"]
              for candidate in entry["candidates"]}
    assert len(shapes) >= 2
    assert to_json(result) == json.dumps(to_document(result), indent=2, ensure_ascii=False) + "\n"
