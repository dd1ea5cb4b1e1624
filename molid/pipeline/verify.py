"""Re-verify a result: run the analysis again from its recorded inputs and options, compare every number.

A JSON document of ``molid identify --json`` or ``molid grade --json`` carries a
``provenance`` record (:mod:`molid.io.provenance`): the input files with their
SHA-256 digests, the digest of the candidate library, the options. Verifying it
finds each input (at its recorded path, or by file name in a folder), runs the
same command with the same options, and walks both documents side by side:

- numbers agree when |a − b| ≤ max(1e-9·max(|a|, |b|), 1e-12): on one machine a
  re-run gives the very same bits, since every float is written in the shortest
  form that reads back exactly; the tolerance only admits the last-place
  differences another processor, maths library or numpy build can make, and is
  many orders of magnitude below any printed digit or any change of an input;
- texts, yes/no values and nulls agree when they are equal (an input found at
  another path is written back as recorded first, since notes name the files);
- ``provenance`` itself is compared apart: each input's digest, the library's
  digest; its ``created`` time is never compared. A different molid version is
  stated, and the comparison is made all the same.
"""

from __future__ import annotations

import contextlib
import io
import json
import math
import re
import sys
from dataclasses import dataclass, field
from pathlib import Path

from molid import __version__
from molid.io.problems import InputError, read_file_bytes
from molid.io.provenance import INPUT_OPTIONS

__all__ = ["ABSOLUTE_TOLERANCE", "CannotVerify", "RELATIVE_TOLERANCE", "Verification", "compare_documents",
           "replay_arguments", "verify_result"]

#: Relative and absolute tolerance of a number's comparison (see the module's docstring).
RELATIVE_TOLERANCE = 1e-9
ABSOLUTE_TOLERANCE = 1e-12

#: The commands whose documents can be verified.
VERIFIABLE = ("identify", "grade")

_SHOWN = 200  # differences listed; the count of the rest follows
_WIDEST = 120  # characters of a value shown in a difference's line
_FLAGS = {role: flag for role, _, flag in INPUT_OPTIONS}
_ABSENT = object()
_APART = ("molid", "provenance")  # the version and the record: stated and compared on their own
_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")


class CannotVerify(InputError):
    """The verification cannot be run: the file is not a molid result, or an input is missing."""


@dataclass
class Verification:
    """What a verification found.

    Attributes
    ----------
    reproduced : bool
        Every input as recorded, the same library, every number and text the same.
    lines : list of str
        The account, line by line.
    changed_inputs : list of dict
        The recorded inputs whose digest changed, each with ``found`` (where it was read) and ``now``.
    differences : list of tuple
        ``(path, recorded, new)`` of each value that differs (JSON path as text).
    """

    reproduced: bool
    lines: list = field(default_factory=list)
    changed_inputs: list = field(default_factory=list)
    differences: list = field(default_factory=list)

    @property
    def text(self) -> str:
        """The account as text, one line each."""
        return "".join(line + "\n" for line in self.lines)


def _load(path) -> dict:
    """Read a result file and check it carries a provenance record of a command that can be re-run."""
    name = str(path)
    try:
        document = json.loads(read_file_bytes(path, CannotVerify).decode("utf-8-sig"))
    except (UnicodeDecodeError, json.JSONDecodeError) as error:
        raise CannotVerify(f"{name}: not a molid result: not JSON ({error})") from None
    provenance = document.get("provenance") if isinstance(document, dict) else None
    if not isinstance(provenance, dict) or "molid" not in document:
        raise CannotVerify(f"{name}: not a molid result: no 'provenance' record (written by "
                           "molid identify --json or molid grade --json)")
    missing = [key for key in ("command", "molid", "inputs", "library_sha256", "options")
               if key not in provenance]
    if missing:
        raise CannotVerify(f"{name}: not a molid result: its provenance has no {', '.join(missing)}")
    if provenance["command"] not in VERIFIABLE:
        raise CannotVerify(f"{name}: a result of 'molid {provenance['command']}' cannot be re-run; "
                           f"verify re-runs {' and '.join(VERIFIABLE)}")
    return document


def _locate(entry: dict, folder) -> str:
    """Find a recorded input: by its file name in ``folder`` first, then at its recorded path."""
    role, path = entry.get("role"), str(entry.get("path"))
    if role not in _FLAGS:
        raise CannotVerify(f"the result names an input '{role}' this molid does not know")
    if path == "-":
        return path
    places = [] if folder is None else [Path(folder) / re.split(r"[\\/]", path)[-1]]
    places.append(Path(path))
    for place in places:
        if place.is_file():
            return str(place)
    raise CannotVerify(f"the {role} '{path}' is missing (looked for "
                       f"{' and '.join(repr(str(place)) for place in places)}); give the folder that "
                       "holds it with --inputs DIR")


def replay_arguments(provenance: dict, located: list) -> list:
    """Build the command line that makes the recorded document again.

    Parameters
    ----------
    provenance : dict
        The document's ``provenance``.
    located : list of str
        Where each recorded input was found, in the order of ``provenance["inputs"]``.

    Returns
    -------
    list of str
        The arguments of :func:`molid.cli.main`, ending in ``--json``.
    """
    arguments, run_file = [provenance["command"]], None
    for entry, path in zip(provenance["inputs"], located, strict=True):
        flag = _FLAGS[entry["role"]]
        if flag is None:
            run_file = path
        else:
            arguments.append(f"{flag}={path}")
    for name, value in provenance["options"].items():
        flag = "--" + name.replace("_", "-")
        values = value if isinstance(value, list) else [value]
        for item in values:
            if item is True:
                arguments.append(flag)
            elif item is not None and item is not False:
                arguments.append(f"{flag}={item}")
    arguments.append("--json")
    if run_file is not None:
        arguments += ["--", run_file]
    return arguments


def _rerun(run, arguments: list, standard_input: bytes | None) -> dict:
    """Run the command in this process with its output captured; its JSON document."""
    output, errors = io.StringIO(), io.StringIO()
    saved = sys.stdin
    if standard_input is not None:
        sys.stdin = io.TextIOWrapper(io.BytesIO(standard_input), encoding="utf-8")
    try:
        with contextlib.redirect_stdout(output), contextlib.redirect_stderr(errors):
            status = run(arguments)
    except SystemExit as stop:  # the parser refused an argument (an option of another molid)
        status = stop.code if isinstance(stop.code, int) else 2
    finally:
        sys.stdin = saved
    # its messages in one line, without the usage line and the program's name before each
    said = "; ".join(line.removeprefix("molid: ") for line in errors.getvalue().splitlines()
                     if line.strip() and not line.startswith("usage:"))
    if status not in (0, 1):
        raise CannotVerify(f"the analysis could not be re-run (molid {' '.join(arguments)}): "
                           f"{said or f'exit status {status}'}")
    try:
        return json.loads(output.getvalue())
    except json.JSONDecodeError:
        raise CannotVerify(f"the re-run gave no JSON document: {said}") from None


def _path_text(path) -> str:
    text = ""
    for part in path:
        if isinstance(part, int):
            text += f"[{part}]"
        elif _NAME.match(part):
            text += f".{part}" if text else part
        else:
            text += f"[{json.dumps(part, ensure_ascii=False)}]"
    return text


def _is_number(value) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


class _Walk:
    """Both documents side by side: counts of values compared, the ones that differ."""

    def __init__(self, renamed: dict):
        # longest first, so a path inside another is written back whole
        self.renamed = sorted(renamed.items(), key=lambda item: -len(item[0]))
        self.numbers = self.texts = 0
        self.differences = []
        self.added = []

    def _restore(self, text: str) -> str:
        for found, recorded in self.renamed:
            text = text.replace(found, recorded)
        return text

    def walk(self, recorded, new, path: tuple) -> None:
        if isinstance(recorded, dict) and isinstance(new, dict):
            for key, value in recorded.items():
                if key in new:
                    self.walk(value, new[key], path + (key,))
                else:
                    self.differences.append((_path_text(path + (key,)), value, _ABSENT))
            self.added += [_path_text(path + (key,)) for key in new if key not in recorded]
        elif isinstance(recorded, list) and isinstance(new, list):
            for index, (one, other) in enumerate(zip(recorded, new, strict=False)):
                self.walk(one, other, path + (index,))
            self.differences += [(_path_text(path + (index,)), recorded[index], _ABSENT)
                                 for index in range(len(new), len(recorded))]
            self.differences += [(_path_text(path + (index,)), _ABSENT, new[index])
                                 for index in range(len(recorded), len(new))]
        elif _is_number(recorded) and _is_number(new):
            self.numbers += 1
            if not math.isclose(recorded, new, rel_tol=RELATIVE_TOLERANCE, abs_tol=ABSOLUTE_TOLERANCE):
                self.differences.append((_path_text(path), recorded, new))
        else:
            self.texts += 1
            if isinstance(new, str) and self.renamed:
                new = self._restore(new)
            if type(recorded) is not type(new) or recorded != new:
                self.differences.append((_path_text(path), recorded, new))


def compare_documents(recorded: dict, new: dict, renamed: dict | None = None):
    """Compare two JSON documents value by value, their ``molid`` version and ``provenance`` left out.

    Parameters
    ----------
    recorded, new : dict
        The documents.
    renamed : dict, optional
        Input paths of the new run → the paths recorded, written back in the new texts.

    Returns
    -------
    differences : list of tuple
        ``(path, recorded, new)``, absent values as the object ``ABSENT``-like sentinel.
    counts : tuple of int
        Numbers and other values compared.
    added : list of str
        Paths only the new document has (a later molid's additions; not counted as differences).
    """
    walk = _Walk(renamed or {})
    walk.walk({key: value for key, value in recorded.items() if key not in _APART},
              {key: value for key, value in new.items() if key not in _APART}, ())
    return walk.differences, (walk.numbers, walk.texts), walk.added


def _shown(value) -> str:
    """Show a value in a line: absent, or its JSON (an object or list cut at 120 characters)."""
    if value is _ABSENT:
        return "absent"
    text = json.dumps(value, ensure_ascii=False)
    return text if len(text) <= _WIDEST else text[:_WIDEST - 1] + "…"


def _input_lines(recorded: list, located: list, new: list) -> tuple[list, list]:
    """Each input's line, and the inputs whose digest changed."""
    lines, changed = ["inputs:"], []
    now = {entry["role"]: entry.get("sha256") for entry in new}
    for entry, found in zip(recorded, located, strict=True):
        digest = now.get(entry["role"])
        where = "" if found == entry["path"] else f" (read from {found})"
        name = "standard input" if entry["path"] == "-" else entry["path"]
        if digest == entry["sha256"]:
            lines.append(f"  {entry['role']}: {name}{where}: SHA-256 as recorded")
        else:
            changed.append({**entry, "found": found, "now": digest})
            lines.append(f"  {entry['role']}: {name}{where}: CHANGED, SHA-256 recorded "
                         f"{entry['sha256']}, now {digest}")
    return lines, changed


def _difference_lines(differences: list, compared: int, tolerance: str) -> list:
    """List the values that differ: the first few hundred, then how many more."""
    if not differences:
        return []
    lines = [f"{len(differences)} of {compared} values differ ({tolerance}):"]
    lines += [f"  {where}: recorded {_shown(old)}, new {_shown(now)}"
              for where, old, now in differences[:_SHOWN]]
    if len(differences) > _SHOWN:
        lines.append(f"  ... and {len(differences) - _SHOWN} more")
    return lines


def verify_result(path, inputs=None, run=None) -> Verification:
    """Re-run the analysis a result records and compare the new document with it.

    Parameters
    ----------
    path : str or pathlib.Path
        A JSON document of ``molid identify --json`` or ``molid grade --json``.
    inputs : str or pathlib.Path, optional
        A folder to look for the inputs in, by file name, before their recorded paths.
    run : callable
        The command line's entry point (:func:`molid.cli.main`): takes the arguments, returns
        the exit status. An input recorded as standard input ('-') is read from this
        process's standard input.

    Returns
    -------
    Verification
        ``reproduced`` and the account.

    Raises
    ------
    CannotVerify
        When the file is not a molid result, an input is missing or the analysis cannot run.
    """
    if inputs is not None and not Path(inputs).is_dir():
        raise CannotVerify(f"{inputs}: --inputs needs a folder")
    recorded = _load(path)
    provenance = recorded["provenance"]
    located = [_locate(entry, inputs) for entry in provenance["inputs"]]
    standard_input = sys.stdin.buffer.read() if "-" in located else None
    new = _rerun(run, replay_arguments(provenance, located), standard_input)
    lines = [f"{path}: molid {provenance['command']} result, molid {provenance['molid']}, "
             f"created {provenance.get('created', 'at an unrecorded time')}"]
    if provenance["molid"] != __version__:
        lines.append(f"recorded with molid {provenance['molid']}; this is molid {__version__}: "
                     "compared all the same")
    input_lines, changed = _input_lines(provenance["inputs"], located, new["provenance"]["inputs"])
    lines += input_lines
    library = new["provenance"]["library_sha256"]
    same_library = library == provenance["library_sha256"]
    lines.append("candidate library: SHA-256 as recorded" if same_library else
                 f"candidate library: CHANGED, SHA-256 recorded {provenance['library_sha256']}, "
                 f"now {library}")
    renamed = {found: entry["path"] for entry, found in zip(provenance["inputs"], located, strict=True)
               if found != entry["path"]}
    differences, (numbers, texts), added = compare_documents(recorded, new, renamed)
    if added:
        lines.append(f"{len(added)} value(s) only in this molid's document, not compared "
                     f"(first: {added[0]})")
    tolerance = f"relative tolerance {RELATIVE_TOLERANCE:g}, absolute {ABSOLUTE_TOLERANCE:g}"
    lines += _difference_lines(differences, numbers + texts, tolerance)
    reproduced = not changed and same_library and not differences
    lines.append(f"reproduced: {numbers} numbers and {texts} other values agree ({tolerance})"
                 if reproduced else "NOT reproduced")
    return Verification(reproduced, lines, changed, differences)
