"""Provenance of a result: which molid, which input files, which candidate library and options, when.

Every JSON document (``molid identify --json``, ``molid grade --json``) and every
report records it, so that a result can be shown later to come from the files it
names (``molid verify``, :mod:`molid.pipeline.verify`). Each input file is named by
its SHA-256 digest (FIPS 180-4), computed on the bytes as read; standard input is
read once, hashed, and handed on to the reader unchanged.

The candidate library is hashed in a canonical text form (:data:`LIBRARY_FORM`)
of the merged table the analysis used, so the digest names the candidates, their
constants and where they came from, whatever files and options built it.
"""

from __future__ import annotations

import contextlib
import csv
import datetime
import hashlib
import io
import json
import math
import os
import sys

import numpy as np

from molid import __version__

__all__ = ["INPUT_OPTIONS", "LIBRARY_FORM", "NUMBER_OPTIONS", "ProvenanceRecord", "created_time",
           "file_sha256", "library_sha256", "provenance_document", "provenance_lines",
           "provenance_appended", "read_standard_input", "sha256_hex"]

#: Input files a command can name: role recorded, argument name, command-line option (None: the
#: positional run file).
INPUT_OPTIONS = (
    ("run sheet", "file", None),
    ("profile", "profile", "--profile"),
    ("vessel register", "vessels", "--vessels"),
    ("specification", "spec", "--spec"),
    ("extra library", "library", "--library"),
    ("answer key", "key", "--key"),
    ("rubric", "rubric", "--rubric"),
)

#: Options that can change a number of the result, recorded where the command has them (their
#: command-line spelling is ``--`` and the name with ``-`` for ``_``).
NUMBER_OPTIONS = ("sheet", "candidate", "replace_library", "contaminant", "rule", "top", "monte_carlo",
                  "seed", "reference_conditions")

#: Options whose parsed value is recorded as text the command line reads back exactly (SI units).
_AS_TEXT = {"reference_conditions": lambda value: f"{float(value[0])!r} K, {float(value[1])!r} Pa"}

#: How the candidate library is written before it is hashed (recorded beside the digest).
LIBRARY_FORM = ("CSV (RFC 4180 quoting, LF line ends, UTF-8) of the merged library: columns sorted by "
                "name, rows in library order, floats as Python's shortest round-trip repr, NaN as "
                "'nan', booleans as true/false, lists as JSON arrays")

_encode_text = json.encoder.encode_basestring  # a JSON string, non-ASCII kept (json.dumps's encoder)
_BLOCK = 1 << 20  # read files in 1 MiB blocks: a large run file is never whole in memory


def sha256_hex(data: bytes) -> str:
    """Return the SHA-256 digest (FIPS 180-4) of bytes as 64 lower-case hexadecimal digits.

    Examples
    --------
    >>> sha256_hex(b"abc")[:16]
    'ba7816bf8f01cfea'
    """
    return hashlib.sha256(data).hexdigest()


def file_sha256(path) -> str:
    """Return the SHA-256 digest of a file's bytes, read in blocks."""
    digest = hashlib.sha256()
    with open(path, "rb") as stream:
        for block in iter(lambda: stream.read(_BLOCK), b""):
            digest.update(block)
    return digest.hexdigest()


def read_standard_input() -> bytes:
    """Read standard input whole and put the same bytes back, so the reader still finds them.

    Standard input can be read once; the digest must be of the bytes the analysis reads.
    """
    data = sys.stdin.buffer.read()
    sys.stdin = io.TextIOWrapper(io.BytesIO(data), encoding=sys.stdin.encoding or "utf-8")
    return data


def _input_entry(role: str, source) -> dict:
    """Name one input file by its digest; null when it cannot be read (the reader then says why)."""
    path = str(source)
    try:
        digest = sha256_hex(read_standard_input()) if path == "-" else file_sha256(source)
    except OSError:
        digest = None
    return {"role": role, "path": path, "sha256": digest}


def _cell(value) -> str:
    """Write one library cell in the canonical form of :data:`LIBRARY_FORM`."""
    if value is None:
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "true" if value else "false"
    if isinstance(value, (list, tuple, np.ndarray)):
        return "[" + ", ".join(_encode_text(str(item)) for item in value) + "]"  # json.dumps's form
    if isinstance(value, (float, np.floating)):
        value = float(value)
        return "nan" if math.isnan(value) else repr(value)
    if isinstance(value, (int, np.integer)):
        return str(int(value))
    return str(value)


def library_sha256(library) -> str:
    """Return the SHA-256 digest of a candidate library in the canonical form of :data:`LIBRARY_FORM`.

    Parameters
    ----------
    library : pandas.DataFrame
        The library the analysis used (:func:`molid.candidates.library.load_library`).

    Returns
    -------
    str
        64 hexadecimal digits; the same table gives the same digest whatever the order of its
        columns or the type (list or tuple) of its list cells.
    """
    columns = sorted(str(column) for column in library.columns)
    text = io.StringIO()
    writer = csv.writer(text, lineterminator="\n")
    writer.writerow(columns)
    values = [library[column].tolist() for column in columns]
    for row in zip(*values, strict=True):
        writer.writerow([_cell(value) for value in row])
    return sha256_hex(text.getvalue().encode("utf-8"))


def created_time(moment: datetime.datetime | None = None) -> str:
    """Return a moment as UTC ISO 8601 to the second: ``SOURCE_DATE_EPOCH`` when set, else now.

    ``SOURCE_DATE_EPOCH`` (reproducible-builds.org) fixes the time, so a document made twice from
    the same files is byte-identical.
    """
    if moment is None:
        epoch = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
        moment = datetime.datetime.fromtimestamp(int(epoch), tz=datetime.timezone.utc) \
            if epoch.isdigit() else datetime.datetime.now(datetime.timezone.utc)
    return moment.astimezone(datetime.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")


def provenance_document(command: str, inputs: list, library, options: dict,
                        created: datetime.datetime | None = None) -> dict:
    """Build the ``provenance`` object of a document.

    Parameters
    ----------
    command : str
        The molid command that made the result (``identify``, ``grade``, ``report``).
    inputs : list of dict
        ``{"role", "path", "sha256"}`` of each input file, in the order of :data:`INPUT_OPTIONS`.
    library : pandas.DataFrame
        The candidate library the analysis used.
    options : dict
        The options that can change a number, by name (see :data:`NUMBER_OPTIONS`).
    created : datetime.datetime, optional
        When; now (or ``SOURCE_DATE_EPOCH``) when None.

    Returns
    -------
    dict
        ``{"command", "molid", "inputs", "library_sha256", "library_form", "options", "created"}``.
    """
    return {"command": command, "molid": __version__, "inputs": list(inputs),
            "library_sha256": library_sha256(library), "library_form": LIBRARY_FORM,
            "options": dict(options), "created": created_time(created)}


class ProvenanceRecord:
    """The inputs and options of one command, hashed when the record is made.

    Make it before anything reads the run file: standard input ('-') is read here
    and handed on (:func:`read_standard_input`).

    Parameters
    ----------
    command : str
        The molid command.
    arguments : argparse.Namespace or object
        The parsed command line: the attributes named in :data:`INPUT_OPTIONS` and
        :data:`NUMBER_OPTIONS` that it has are recorded.
    """

    def __init__(self, command: str, arguments):
        self.command = command
        self.inputs = [_input_entry(role, getattr(arguments, name))
                       for role, name, _ in INPUT_OPTIONS if getattr(arguments, name, None) is not None]
        self.options = {}
        for name in NUMBER_OPTIONS:
            if hasattr(arguments, name):
                value = getattr(arguments, name)
                if value is not None and name in _AS_TEXT:
                    value = _AS_TEXT[name](value)
                self.options[name] = list(value) if isinstance(value, (list, tuple)) else value

    def finish(self, library, created: datetime.datetime | None = None) -> dict:
        """Return the ``provenance`` object, with the digest of the library the analysis used."""
        return provenance_document(self.command, self.inputs, library, self.options, created)


class _Appending:
    """A text stream that passes a JSON document on and adds the ``provenance`` key before its end.

    It holds back the last three characters written: a document written with ``indent=2``
    ends in a line holding only its closing brace (or is ``{}`` when empty), and no other line
    of it starts with a brace, so the key goes in where ``json.dumps`` of the document with the
    key would put it.
    """

    def __init__(self, stream, provenance: dict):
        self.stream = stream
        self.provenance = provenance
        self._held = ""

    def write(self, text: str) -> int:
        held = self._held + text
        self._held = held[-3:]
        if len(held) > 3:
            self.stream.write(held[:-3])
        return len(text)

    def flush(self) -> None:
        self.stream.flush()

    def __getattr__(self, name):  # isatty, encoding, ...: those of the stream
        return getattr(self.stream, name)

    def finish(self) -> None:
        value = json.dumps(self.provenance, indent=2, ensure_ascii=False, allow_nan=False)
        key = '"provenance": ' + value.replace("\n", "\n  ")
        if self._held == "\n}\n":
            self.stream.write(",\n  " + key + "\n}\n")
        elif self._held == "{}\n":
            self.stream.write("{\n  " + key + "\n}\n")
        else:  # not a document of that layout: passed on unchanged
            self.stream.write(self._held)
        self._held = ""


@contextlib.contextmanager
def provenance_appended(stream, provenance: dict):
    r"""Give a stream to write a JSON document to; the ``provenance`` key is added last, as dumped.

    Parameters
    ----------
    stream : text file
        Where the document goes.
    provenance : dict
        From :meth:`ProvenanceRecord.finish`.

    Examples
    --------
    >>> import io
    >>> out = io.StringIO()
    >>> with provenance_appended(out, {"molid": "0"}) as stream:
    ...     _ = stream.write('{\n  "results": []\n}\n')
    >>> out.getvalue() == json.dumps({"results": [], "provenance": {"molid": "0"}}, indent=2) + "\n"
    True
    """
    appending = _Appending(stream, provenance)
    yield appending
    appending.finish()


def _printable(text) -> str:
    """Escape control characters, so a file name cannot break a printed line."""
    return "".join(character if character.isprintable() else f"\\x{ord(character):02x}"
                   for character in str(text))


def provenance_lines(provenance: dict) -> list:
    """Give the few lines a report prints for its provenance: molid, time and options; each input; library.

    Options left at nothing (no value, off, an empty list) are not printed.
    """
    options = ", ".join(f"{name}={_printable(json.dumps(value, ensure_ascii=False))}"
                        for name, value in provenance["options"].items()
                        if value is not None and value is not False and value != [])
    lines = [f"molid {provenance['molid']} {provenance['command']}, created {provenance['created']}; "
             f"options: {options or 'none'}"]
    for entry in provenance["inputs"]:
        path = "standard input" if entry["path"] == "-" else _printable(entry["path"])
        lines.append(f"{entry['role']} {path}: SHA-256 {entry['sha256'] or 'not recorded'}")
    lines.append(f"candidate library (canonical CSV): SHA-256 {provenance['library_sha256']}")
    return lines
