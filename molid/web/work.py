"""What the web page computes, run in a worker process: the same calls as the command line.

Every function here takes the analysis's ``arguments`` (its private folder, its
uploads and options; see :mod:`molid.web.uploads`) and a ``progress(stage, done,
total)`` callable, and returns a picklable dict for the page. Downloads are written
into the analysis's folder by the same functions, with the same arguments, as
``molid identify``, ``molid grade`` and ``molid report`` (:mod:`molid.cli`), so
their bytes are the command line's for the same files and options.

Uploaded files are stored under fixed names in the private folder (never a name
the user chose); the run file and the messages carry the name the user's file had
(its "display" name), as the command line's carry the path typed.
"""

from __future__ import annotations

import dataclasses
import io
import json
from pathlib import Path

from molid.web import view
from molid.web.view import texts

__all__ = ["FUNCTIONS", "PAGE_LIMIT", "user_text"]

#: Samples and runs drawn in full on the results page (the downloads hold every one).
PAGE_LIMIT = 25

#: The command-line option of each optional upload, per command.
_UPLOAD_OPTIONS = {
    "identify": (("profile", "--profile"), ("library", "--library"), ("vessels", "--vessels"),
                 ("spec", "--spec")),
    "grade": (("profile", "--profile"), ("library", "--library"), ("vessels", "--vessels"),
              ("key", "--key"), ("rubric", "--rubric")),
}
_UPLOAD_OPTIONS["report"] = _UPLOAD_OPTIONS["grade"]


def user_text(text: str, arguments: dict) -> str:
    """Put each upload's own name where a message names its stored copy.

    Examples
    --------
    >>> user_text("/tmp/x/profile.toml: not valid TOML",
    ...           {"folder": "/tmp/x", "uploads": {"profile": {"path": "/tmp/x/profile.toml",
    ...                                                        "display": "lab.toml"}}})
    'lab.toml: not valid TOML'
    """
    text = str(text)
    for upload in (arguments.get("uploads") or {}).values():
        text = text.replace(upload["path"], upload["display"])
    folder = arguments.get("folder")
    return text.replace(folder, "(upload)") if folder else text


# -- inputs, loaded as the command line loads them ---------------------------------------------
def _path(arguments: dict, role: str):
    upload = arguments["uploads"].get(role)
    return upload["path"] if upload else None


def _display(arguments: dict, role: str):
    upload = arguments["uploads"].get(role)
    return upload["display"] if upload else None


def _run_source(arguments: dict):
    """Return the run file as a named stream (with a sheet: that sheet's cells), as the CLI reads it."""
    from molid.io.reading import read_raw

    stream = io.BytesIO(Path(_path(arguments, "runs")).read_bytes())
    stream.name = _display(arguments, "runs")
    sheet = arguments["options"].get("sheet")
    return stream if sheet is None else read_raw(stream, sheet=sheet)[0]


def _library(args, arguments: dict):
    """Load the library as the command line does (``_load_library``); the file's rows keep its own name."""
    from molid.candidates.library import load_library

    library = load_library(args.library, mode="replace" if args.replace_library else "merge",
                           extra_candidates=tuple(args.candidate))
    if args.library is not None:  # the rows from the file say where they came from: the user's file name
        library.loc[library["origin"] == Path(args.library).name, "origin"] = _display(arguments, "library")
    return library


def _profile(arguments: dict):
    from molid.io.profiles import load_profile

    path = _path(arguments, "profile")
    profile = load_profile(path)
    return profile if path is None else dataclasses.replace(profile, source=_display(arguments, "profile"))


def _vessels(arguments: dict):
    from molid.io.vessel_register import read_register

    path = _path(arguments, "vessels")
    if path is None:
        return None
    return dataclasses.replace(read_register(path), source=_display(arguments, "vessels"))


def _rubric(arguments: dict):
    from molid.teaching.rubric import load_rubric

    path = _path(arguments, "rubric")
    return None if path is None else dataclasses.replace(load_rubric(path),
                                                         source=_display(arguments, "rubric"))


def command_line(command: str, arguments: dict, output=None) -> list:
    """Return the command line that asks for this analysis: the stored files, the options as typed.

    Examples
    --------
    >>> command_line("identify", {"uploads": {"runs": {"path": "/p/runs.csv", "display": "a.csv"}},
    ...                           "options": {"top": 5, "candidates": ["C3H6O=acetone"]}})
    ['identify', '/p/runs.csv', '--candidate=C3H6O=acetone', '--top=5']
    """
    options = arguments["options"]
    words = [command, _path(arguments, "runs")]

    def add(option, value):
        if value is not None and value != "":
            words.append(f"{option}={value}")  # '=': a value that starts with '-' is still a value

    add("--sheet", options.get("sheet"))
    for role, option in _UPLOAD_OPTIONS[command]:
        add(option, _path(arguments, role))
    if options.get("replace_library"):
        words.append("--replace-library")
    for candidate in options.get("candidates") or ():
        add("--candidate", candidate)
    add("--top", options.get("top"))
    if command == "identify":
        for name in ("monte_carlo", "seed", "contaminant", "rule", "reference_conditions"):
            add("--" + name.replace("_", "-"), options.get(name))
    if command == "report":
        add("--reference-conditions", options.get("reference_conditions"))
        add("--output", output)
        add("--format", options.get("format"))
        add("--paper", options.get("paper"))
    return words


def parsed(parse, words: list):
    """Parse a command line with the command line's own parser; its complaint becomes an InputError.

    Parameters
    ----------
    parse : callable
        Returns the command line's :class:`argparse.ArgumentParser` (:func:`molid.cli.build_parser`),
        handed to the page by ``molid serve`` so that options mean what they mean there.
    words : list of str
        From :func:`command_line`.
    """
    import contextlib

    from molid.io.problems import InputError

    said = io.StringIO()
    try:
        with contextlib.redirect_stderr(said):
            return parse().parse_args(words)
    except SystemExit:
        lines = [line for line in said.getvalue().splitlines() if line.startswith("molid")]
        text = lines[-1] if lines else "an option cannot be used"
        raise InputError(text.replace("molid: error: ", "").replace("molid ", "", 1)) from None


def _command(command: str, arguments: dict, output=None):
    return parsed(arguments["parse"], command_line(command, arguments, output))


def provenance(command: str, args, arguments: dict, library) -> dict:
    """Record provenance as the command line does for the same files and options, files by their own names.

    The digests are of the stored bytes, which are the uploaded bytes.
    """
    from molid.io.provenance import ProvenanceRecord

    document = ProvenanceRecord(command, args).finish(library)
    for entry in document["inputs"]:
        entry["path"] = user_text(entry["path"], arguments)
    return document


# -- the tasks --------------------------------------------------------------------------------
def columns(arguments: dict, progress) -> dict:
    """How the run file's headers are understood (``molid columns``), and how it will be analysed."""
    from molid.io.header_report import describe_columns
    from molid.pipeline.streaming import count_data_lines, is_large_csv
    from molid.reports import is_graded

    progress("reading the headers")
    _command("identify", arguments)  # an option the command line refuses is said now
    report = describe_columns(_run_source(arguments), profile=_profile(arguments))
    graded = is_graded([row["header"] for row in report.rows], _path(arguments, "key"))
    path = _path(arguments, "runs")
    large = is_large_csv(path)
    return {"kind": "columns", "source": report.source, "sheet": report.sheet,
            "header_row": report.header_row, "rows": [texts(row) for row in report.rows],
            "unused": texts(report.unused), "notes": texts(report.notes),
            "graded": graded, "large": large, "lines": count_data_lines(path) if large else None}


def _mode(arguments: dict) -> str:
    mode = arguments["options"].get("mode", "auto")
    if mode != "auto":
        return mode
    from molid.io.reading import read_raw
    from molid.reports import is_graded

    raw = read_raw(_run_source(arguments), keep_bad_lines=True)[0]  # only its columns are looked at
    return "grade" if is_graded(raw.columns, _path(arguments, "key")) else "identify"


def analyse(arguments: dict, progress) -> dict:
    """Analyse the run file as ``molid identify`` (CSV and JSON) or ``molid grade`` (grades, plots)."""
    progress("reading the files")
    command = _mode(arguments)
    args = _command(command, arguments)
    library = _library(args, arguments)
    if command == "grade":
        return _grade(args, arguments, library, progress)
    return _identify(args, arguments, library, progress)


def _chunked(args) -> bool:
    """Whether ``molid identify -o``/``--json`` analyses this file in chunks (the command line's test)."""
    from molid.pipeline.streaming import is_large_csv

    return (not args.vessels and args.monte_carlo is None and not args.spec and args.contaminant == "air"
            and getattr(args, "reference_conditions", None) is None and args.sheet is None
            and is_large_csv(args.file))


def _identify_run(args, arguments: dict, library, progress):
    """Identify in memory as ``molid identify`` does, with its Monte Carlo check when asked for."""
    from molid.pipeline.identify import identify

    progress("analysing the runs")
    conditions = {"reference_conditions": args.reference_conditions} \
        if hasattr(args, "reference_conditions") else {}
    result = identify(_run_source(arguments), profile=_profile(arguments), library=library,
                      vessels=_vessels(arguments), contaminant=args.contaminant, specifications=args.spec,
                      rule=args.rule, **conditions)
    return result, _monte_carlo(result, args, progress)


def _identify(args, arguments: dict, library, progress) -> dict:
    """Identify as ``molid identify FILE -o runs.csv``: the CSV, and the page's sections."""
    from molid.io.run_csv import to_csv
    from molid.io.safe_files import write_atomic

    if _chunked(args):
        return _identify_in_chunks(args, arguments, library, progress)
    folder = Path(arguments["folder"], "out")
    result, check = _identify_run(args, arguments, library, progress)
    progress("writing the CSV file")
    write_atomic(folder / "runs.csv", to_csv(result, monte_carlo=check))
    progress("drawing the results")
    page = view.identification_page(result, folder, args.top, PAGE_LIMIT)
    page["files"] = ["runs.csv"]
    page["document"] = "result.json"  # made on request: a large file's document takes minutes
    return page


def _monte_carlo(result, args, progress):
    if args.monte_carlo is None:
        return None
    from molid.io.problems import InputError
    from molid.pipeline.monte_carlo import DrawsRefused

    progress(f"checking each run by Monte Carlo ({args.monte_carlo:,} draws)")
    try:
        return result.monte_carlo(args.monte_carlo, args.seed or 0)
    except DrawsRefused as problem:
        raise InputError(f"error: {problem}") from None


def _identify_in_chunks(args, arguments: dict, library, progress) -> dict:
    """Analyse a large CSV in chunks, as ``molid identify big.csv -o runs.csv`` does."""
    from molid.pipeline.streaming import identify_to_csv

    stage = "analysing the runs in chunks"
    progress(stage)
    summary = identify_to_csv(args.file, Path(arguments["folder"], "out", "runs.csv"),
                              profile=_profile(arguments), library=library,
                              progress=lambda done, total: progress(stage, done, total))
    return {"kind": "chunks", "runs": summary.runs, "rows_with_errors": summary.rows_with_errors,
            "rows_with_warnings": summary.rows_with_warnings, "seconds": round(summary.seconds, 1),
            "errors": texts([user_text(text, arguments) for text in summary.errors]),
            "notes": texts([user_text(text, arguments) for text in summary.notes]),
            "files": ["runs.csv"], "document": "result.json"}


def _write_document(result, check, stream) -> None:
    """Write an identification's JSON document as the command line writes it: run by run where it can."""
    from molid.io import json_document

    if hasattr(json_document, "write_json"):  # the streaming writer, where this version has it
        json_document.write_json(result, stream, None, check)
    else:
        stream.write(json_document.to_json(result, None, check))


def _streamed_json(args):
    """Return the chunked JSON writer if ``molid identify --json`` would use it here, else None."""
    from importlib.util import find_spec

    if not _chunked(args) or find_spec("molid.pipeline.json_stream") is None:
        return None
    from molid.pipeline.json_stream import identify_to_json

    return identify_to_json


def document(arguments: dict, progress) -> dict:
    """Write the JSON document as ``molid identify FILE --json`` does (in chunks where it does)."""
    from molid.io.provenance import provenance_appended
    from molid.io.safe_files import atomic_output

    progress("reading the files")
    args = _command("identify", arguments)
    library = _library(args, arguments)
    record = provenance("identify", args, arguments, library)
    output = Path(arguments["folder"], "out") / "result.json"
    streamed = _streamed_json(args)
    if streamed is not None:
        stage = "writing the JSON document, in chunks"
        progress(stage)
        with atomic_output(output, "w") as sink, provenance_appended(sink, record) as stream:
            streamed(args.file, stream, profile=_profile(arguments), library=library,
                     progress=lambda done, total: progress(stage, done, total))
        return {"kind": "document", "file": output.name}
    result, check = _identify_run(args, arguments, library, progress)
    progress(f"writing the JSON document ({len(result.errors):,} runs)")
    with atomic_output(output, "w") as sink, provenance_appended(sink, record) as stream:
        _write_document(result, check, stream)
    return {"kind": "document", "file": output.name}


def _grade(args, arguments: dict, library, progress) -> dict:
    from molid.io.safe_files import write_atomic
    from molid.teaching.class_plots import write_class_plots
    from molid.teaching.grades_output import grades_csv, grading_document
    from molid.teaching.grading import grade

    folder = Path(arguments["folder"], "out")
    record = provenance("grade", args, arguments, library)
    progress("recomputing and grading the runs")
    grading = grade(_run_source(arguments), key=args.key, rubric=_rubric(arguments),
                    profile=_profile(arguments), library=library, vessels=_vessels(arguments))
    progress("writing the grades")
    write_atomic(folder / "grades.csv", grades_csv(grading))
    document = {**grading_document(grading, args.top), "provenance": record}
    write_atomic(folder / "grades.json",
                 json.dumps(document, indent=2, ensure_ascii=False, allow_nan=False) + "\n")
    progress("drawing the class plots")
    plots = folder / "plots"
    plots.mkdir(exist_ok=True)
    write_class_plots(grading, plots)
    page = view.grading_page(grading)
    page["files"] = ["grades.csv", "grades.json"]
    return page


def report(arguments: dict, progress) -> dict:
    """Write the printable report as ``molid report FILE -o report.pdf`` (or ``.html``) does."""
    from molid.reports import write_report

    folder = Path(arguments["folder"], "out")
    report_format = arguments["options"].get("format", "pdf")
    output = folder / f"report.{report_format}"
    args = _command("report", arguments, output)
    progress(f"making the {report_format.upper()} report")
    library = _library(args, arguments)
    # the limits the command line has options for, it passes on; so does the page
    limits = {name: getattr(args, option) for name, option in (("page_limit", "max_pages"),
                                                                 ("cell_limit", "cell_limit"))
              if hasattr(args, option)}
    conditions = {"reference_conditions": args.reference_conditions} \
        if hasattr(args, "reference_conditions") else {}  # where the command line has the option
    write_report(_run_source(arguments), output, format=args.format, paper=args.paper,
                 profile=_profile(arguments), library=library, top=args.top, key=args.key,
                 rubric=args.rubric, provenance=provenance("report", args, arguments, library), force=True,
                 inputs=[], vessels=_vessels(arguments), **limits, **conditions)
    return {"kind": "report", "file": output.name}


#: The tasks a worker runs, by name.
FUNCTIONS = {"columns": columns, "analyse": analyse, "document": document, "report": report}
