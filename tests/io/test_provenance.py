"""Provenance records: SHA-256 digests of the inputs and the library, options, time, the JSON key."""

import csv
import hashlib
import io
import json
import sys
from pathlib import Path

import numpy as np
import pytest

from molid.candidates.library import load_library
from molid.cli import main
from molid.io.provenance import (
    LIBRARY_FORM,
    created_time,
    file_sha256,
    library_sha256,
    provenance_appended,
    read_standard_input,
    sha256_hex,
)

ROOT = Path(__file__).resolve().parents[2]
RUNS = ROOT / "sample_runs" / "qa_cylinders.csv"
PROFILE = ROOT / "sample_runs" / "qa_lab_profile.toml"


def test_sha256_of_the_published_examples():
    """SHA-256 of the FIPS 180-4 examples (NIST CSRC example values; common practice).

    "abc" (one block) → ba7816bf…; the 448-bit two-block message → 248d6a61…; the empty
    message → e3b0c442… (the last two from memory). hashlib gives the same on the same bytes.
    """
    examples = {
        b"abc": "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad",
        b"abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq":
            "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1",
        b"": "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855",
    }
    for message, digest in examples.items():
        assert sha256_hex(message) == digest == hashlib.sha256(message).hexdigest()


def test_a_file_read_in_blocks_has_the_digest_of_its_bytes(tmp_path):
    """A file longer than the 1 MiB read block, and an empty one: hashlib's digest of the same bytes."""
    data = np.random.default_rng(5).integers(0, 256, (5 << 19) + 17, dtype=np.uint8).tobytes()
    path = tmp_path / "long.bin"
    path.write_bytes(data)
    assert file_sha256(path) == hashlib.sha256(data).hexdigest()
    empty = tmp_path / "empty.csv"
    empty.write_bytes(b"")
    assert file_sha256(empty) == hashlib.sha256(b"").hexdigest()


def test_the_json_document_records_inputs_library_options_and_time(capsys, monkeypatch):
    """The ``provenance`` key of ``molid identify --json``: hashlib digests of the files, options, time.

    Checks behaviour apart from the digests (hashlib on the same bytes): the keys of the
    contract, the options as given, SOURCE_DATE_EPOCH's time in UTC ISO 8601.
    """
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")  # 2026-01-01T00:00:00Z
    assert main(["identify", str(RUNS), "--profile", str(PROFILE), "--json", "--candidate", "C3H6O=acetone",
                 "--contaminant", "nitrogen"]) == 0
    out = capsys.readouterr().out
    document = json.loads(out)
    provenance = document["provenance"]
    assert list(document)[-1] == "provenance"
    assert {"command", "molid", "inputs", "library_sha256", "library_form", "options", "created"} \
        <= set(provenance)
    assert provenance["command"] == "identify" and provenance["molid"] == document["molid"]
    assert provenance["inputs"] == [
        {"role": "run sheet", "path": str(RUNS), "sha256": hashlib.sha256(RUNS.read_bytes()).hexdigest()},
        {"role": "profile", "path": str(PROFILE),
         "sha256": hashlib.sha256(PROFILE.read_bytes()).hexdigest()}]
    options = provenance["options"]
    assert options["candidate"] == ["C3H6O=acetone"] and options["contaminant"] == "nitrogen"
    assert options["monte_carlo"] is None and options["top"] == 5 and options["sheet"] is None
    assert provenance["created"] == "2026-01-01T00:00:00Z"
    assert provenance["library_form"] == LIBRARY_FORM
    # the key is added as json.dumps would write the whole document
    assert out == json.dumps(document, indent=2, ensure_ascii=False) + "\n"


def test_standard_input_is_hashed_as_read_and_handed_on(monkeypatch, capsys):
    """Standard input: the digest is hashlib's of its bytes, and the reader still reads every row."""
    data = RUNS.read_bytes()
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(data), encoding="utf-8"))
    assert main(["identify", "-", "--json"]) == 0
    document = json.loads(capsys.readouterr().out)
    assert document["provenance"]["inputs"] == [
        {"role": "run sheet", "path": "-", "sha256": hashlib.sha256(data).hexdigest()}]
    with RUNS.open(encoding="utf-8") as stream:
        assert len(document["results"]) == len(list(csv.reader(stream))) - 1
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(b"abc"), encoding="utf-8"))
    assert read_standard_input() == b"abc" and sys.stdin.buffer.read() == b"abc"


def test_the_library_digest_is_of_its_documented_canonical_form():
    """The digest is hashlib's of the canonical CSV the form describes; it names the table, not its layout.

    Checks behaviour: a two-row table written by hand in that form; column order and list or
    tuple cells do not change the digest; one unit in the last place of one constant does.
    """
    library = load_library().iloc[:2].reset_index(drop=True)
    columns = sorted(library.columns)

    def cell(value):
        if isinstance(value, (bool, np.bool_)):
            return "true" if value else "false"
        if isinstance(value, list):
            return json.dumps(value, ensure_ascii=False)
        if isinstance(value, float):
            return "nan" if np.isnan(value) else repr(value)
        return str(value)

    text = io.StringIO()
    writer = csv.writer(text, lineterminator="\n")
    writer.writerow(columns)
    for _, row in library.iterrows():
        writer.writerow([cell(row[column]) for column in columns])
    assert library_sha256(library) == hashlib.sha256(text.getvalue().encode("utf-8")).hexdigest()
    reordered = library[list(reversed(library.columns))].copy()
    reordered["aliases"] = [tuple(value) for value in reordered["aliases"]]
    assert library_sha256(reordered) == library_sha256(library)
    nudged = library.copy()
    nudged.loc[0, "critical_temperature"] = np.nextafter(nudged.loc[0, "critical_temperature"], np.inf)
    assert library_sha256(nudged) != library_sha256(library)


def test_the_library_actually_used_is_hashed(tmp_path, capsys):
    """Checks behaviour: --candidate and --replace-library change the recorded library digest."""
    digests = []
    extra = tmp_path / "site.csv"
    extra.write_text("name,formula\nsite blend A,C2HF5\nsite nitrogen,N2\n", encoding="utf-8")
    for options in ([], ["--candidate", "C2HF5=site refrigerant"], ["--library", str(extra)],
                    ["--library", str(extra), "--replace-library", "--contaminant", "site nitrogen"]):
        assert main(["identify", str(RUNS), "--json", *options]) in (0, 1)
        digests.append(json.loads(capsys.readouterr().out)["provenance"]["library_sha256"])
    assert digests[0] == library_sha256(load_library())
    assert len(set(digests)) == 4


def test_created_is_utc_iso_8601():
    """Checks behaviour: a time in another zone is written in UTC with a Z, to the second."""
    import datetime

    zone = datetime.timezone(datetime.timedelta(hours=2))
    moment = datetime.datetime(2026, 3, 1, 9, 30, 15, 999, tzinfo=zone)
    assert created_time(moment) == "2026-03-01T07:30:15Z"


@pytest.mark.parametrize("document", [{"molid": "0", "results": [{"a": 1.5}], "notes": []}, {}])
def test_the_key_is_added_as_json_dumps_writes_it(document):
    """Checks behaviour: written through the stream in pieces, the document is the one json.dumps gives."""
    provenance = {"command": "identify", "inputs": [{"role": "run sheet", "path": "-", "sha256": None}]}
    text = json.dumps(document, indent=2) + "\n"
    out = io.StringIO()
    with provenance_appended(out, provenance) as stream:
        for start in range(0, len(text), 2):  # pieces shorter than what is held back
            stream.write(text[start:start + 2])
    assert out.getvalue() == json.dumps({**document, "provenance": provenance}, indent=2) + "\n"
