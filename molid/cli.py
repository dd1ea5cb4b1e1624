"""Command line: the molid commands identify, library, grade, report, calibrate, columns and template.

A thin layer over the library. Exit status: 0 when every row was analysed, 1 when
some rows had errors (reported; every other row still analysed), 2 for a usage
error or a file that cannot be read or written, 3 for an internal error (a bug:
please report it with the input that caused it), 130 after SIGINT (Ctrl-C) and 143
after SIGTERM (partial output files removed, worker processes ended).
"""

from __future__ import annotations

import argparse
import sys

from molid import __version__

__all__ = ["main", "build_parser"]

EXIT_OK, EXIT_ROW_ERRORS, EXIT_USAGE, EXIT_INTERNAL = 0, 1, 2, 3


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # argparse prints usage and exits 2; keep that, no traceback
        self.print_usage(sys.stderr)
        self.exit(EXIT_USAGE, f"molid: error: {message}\n")


def _add_common(parser):
    parser.add_argument("file", help="run file: .csv (comma, semicolon or tab separated) or .xlsx; "
                        "'-' reads stdin")
    _add_sheet(parser)
    parser.add_argument("--profile", metavar="TOML",
                        help="instrument profile giving default uncertainties (see README)")
    parser.add_argument("--library", metavar="CSV",
                        help="candidate library file, merged with the built-in one")
    parser.add_argument("--replace-library", action="store_true",
                        help="use only the --library file, not the built-in library")
    parser.add_argument("--candidate", action="append", default=[], metavar="FORMULA[=NAME]",
                        help="add a candidate (repeatable), e.g. --candidate 'C3H6O=acetone'")
    parser.add_argument("--top", type=_positive_int, default=5, metavar="N",
                        help="candidates shown per run or sample (default 5)")
    parser.add_argument("--cell-limit", type=_positive_int, default=10_000, metavar="N",
                        help="characters of one cell shown on the terminal, in reports and plots "
                        "(default 10000); longer cells are cut there, with a note, and kept whole "
                        "in the CSV and JSON outputs")
    parser.add_argument("--force", action="store_true", help="replace an existing output file")
    parser.add_argument("--vessels", metavar="CSV",
                        help="vessel register (from molid calibrate): runs may give 'vessel' "
                        "instead of 'volume'")


def _add_sheet(parser):
    parser.add_argument("--sheet", metavar="NAME|N",
                        help="workbook sheet to read, by name or position from 1 (default: the first "
                        "sheet, or the only one with a header row)")


def _run_source(args):
    """Return the run file; with --sheet, that sheet's cells (carrying their header row, notes, name)."""
    if args.sheet is None:
        return args.file
    from molid.io.reading import read_raw

    return read_raw(args.file, sheet=args.sheet, keep_bad_lines=True)[0]  # bad lines: row problems


def _positive_int(text):
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"'{text}' is not a whole number") from None
    if value < 1:
        raise argparse.ArgumentTypeError("must be 1 or more")
    return value


def _seed(text):
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"'{text}' is not a whole number") from None
    if value < 0:
        raise argparse.ArgumentTypeError("must be 0 or more")
    return value


def _reference_conditions(text):
    from molid.io.reference_conditions import parse_reference_conditions

    try:
        return parse_reference_conditions(text)
    except ValueError as problem:
        raise argparse.ArgumentTypeError(str(problem)) from None


def _add_monte_carlo(parser):
    parser.add_argument("--monte-carlo", type=_positive_int, metavar="N",
                        help="also propagate each run by Monte Carlo (GUM Supplement 1) with N draws "
                        "and flag runs whose 95 %% interval differs from the linear one (N at least "
                        "1000; N times the runs at most 20,000,000)")
    parser.add_argument("--seed", type=_seed, metavar="S",
                        help="random seed for --monte-carlo (default 0): the same seed gives the same "
                        "numbers")


def _add_quality(parser):
    parser.add_argument("--contaminant", default="air", metavar="NAME",
                        help="contaminant whose mole fraction each result is solved for (default air; "
                        "a library name, formula or CAS number; a 'contaminant' column wins)")
    parser.add_argument("--spec", metavar="FILE",
                        help="purity specifications by label (TOML or CSV; see docs/purity.md)")
    parser.add_argument("--rule", choices=("guarded", "simple"), default="guarded",
                        help="decision rule for conformity (JCGM 106:2012): guarded acceptance with "
                        "the guard band U (default), or simple acceptance")
    _add_reference_conditions(parser)


def _add_reference_conditions(parser):
    parser.add_argument("--reference-conditions", type=_reference_conditions, metavar="'T, p'",
                        help="temperature and pressure at which each consistent candidate's density is "
                        "given, with units, e.g. '15 degC, 101.325 kPa' (default 0 degC, 101.325 kPa)")


def _add_page_limit(parser):
    """Add the paper size and the page limit of a report."""
    parser.add_argument("--paper", choices=("a4", "letter"), default="a4", help="paper size")
    parser.add_argument("--max-pages", type=_positive_int, default=500, metavar="N",
                        help="samples, runs or students' sheets drawn (default 500); one page "
                        "counts the rest and names every unidentified gas among them")


def _add_report(commands):
    """Add the report command."""
    report = commands.add_parser(
        "report", help="printable report: a page per sample, a sheet per student",
        description="Write a PDF (or self-contained HTML) report of an identify-style or graded file.",
    )
    _add_common(report)
    report.add_argument("-o", "--output", metavar="FILE", required=True,
                        help="report file to write (.pdf or .html)")
    report.add_argument("--format", choices=("pdf", "html"),
                        help="report format (default: from the file name, else pdf)")
    report.add_argument("--key", metavar="CSV", help="answer key, for graded reports")
    report.add_argument("--rubric", metavar="TOML", help="rubric file, for graded reports")
    _add_reference_conditions(report)
    _add_page_limit(report)


def _add_verify(commands):
    """Add the verify command; return the sub-command collection."""
    verify = commands.add_parser(
        "verify", help="re-run a result from its recorded inputs and compare every number",
        description="Re-run the analysis a JSON result records (molid identify or grade --json) from "
        "its input files and options, and compare every number: 'reproduced' (exit 0), or each "
        "changed input and differing number (exit 1). See docs/provenance.md.",
    )
    verify.add_argument("result", help="a JSON document written by molid identify --json or "
                        "molid grade --json")
    verify.add_argument("--inputs", metavar="DIR",
                        help="look for the input files in DIR, by file name, before their recorded paths")
    return commands


def _add_template(commands, parser):
    """Add the template command; return the whole parser (build_parser ends with it)."""
    template = commands.add_parser(
        "template", help="write a blank run sheet for a method",
        description="Write a blank run sheet for a method: its columns with units and one example "
        "row (not a run: replace it). A workbook also has a drop-down list of methods and a comment "
        "on each header giving its meaning and unit.",
    )
    template.add_argument("method", help="the method, e.g. evacuated-bulb (an unknown name lists them)")
    template.add_argument("-o", "--output", metavar="FILE",
                          help="write a .xlsx or .csv file (default: CSV to stdout)")
    template.add_argument("--force", action="store_true", help="replace an existing file")
    return parser


def build_parser() -> argparse.ArgumentParser:
    """Build the argument parser (exposed for documentation and tests)."""
    parser = _Parser(
        prog="molid",
        description="Molar mass of a weighed gas with a GUM uncertainty budget, and which "
        "substances it can be.",
    )
    parser.add_argument("--version", action="version", version=f"molid {__version__}")
    commands = _add_plan(parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser))

    identify = commands.add_parser(
        "identify", help="molar mass, uncertainty and ranked candidates for each run and sample",
        description="Analyse a run file: molar mass with expanded uncertainty (k = 2), its "
        "budget, replicates combined per sample, and the candidates ranked.",
    )
    _add_common(identify)
    identify.add_argument("--json", action="store_true", help="print the JSON document to stdout")
    identify.add_argument("-o", "--output", metavar="CSV", help="write one row per run to CSV")
    _add_monte_carlo(identify)
    _add_quality(identify)

    library = commands.add_parser(
        "library", help="list or search the candidate library",
        description="List the candidates molid considers; filter by text or molar-mass window.",
    )
    library.add_argument("query", nargs="?", help="part of a name, alias, formula or CAS number")
    library.add_argument("--mass", nargs=2, type=float, metavar=("LOW", "HIGH"),
                         help="molar-mass window in g/mol")
    library.add_argument("--library", metavar="CSV", help="candidate library file to merge")
    library.add_argument("--replace-library", action="store_true",
                         help="use only the --library file")
    library.add_argument("--candidate", action="append", default=[], metavar="FORMULA[=NAME]")
    library.add_argument("--json", action="store_true", help="print JSON")
    grade = commands.add_parser(
        "grade", help="recompute, grade and diagnose a lab section's runs",
        description="Grade each student's run against the unknown's true identity: percent "
        "error, interval check, rubric points, diagnosis of classic mistakes, class summary.",
    )
    _add_common(grade)
    grade.add_argument("--key", metavar="CSV",
                       help="answer key mapping sample (the unknown's id) to a formula or name")
    grade.add_argument("--rubric", metavar="TOML", help="rubric file (defaults shipped; see README)")
    grade.add_argument("--json", action="store_true", help="print the JSON document to stdout")
    grade.add_argument("-o", "--output", metavar="CSV", help="write the grades CSV")
    grade.add_argument("--plots", metavar="DIR", help="write class plots (PNG and SVG) to DIR")

    _add_report(commands)

    calibrate = _add_verify(commands).add_parser(
        "calibrate", help="volume of each vessel from water-fill weighings (ISO 4787)",
        description="Calibrate vessels by water fill: each fill's volume at 20 °C with its GUM "
        "uncertainty, replicate fills combined per vessel, written as a vessel register.",
    )
    calibrate.add_argument("file", help="water-fill file: .csv or .xlsx; '-' reads stdin")
    calibrate.add_argument("-o", "--output", metavar="CSV", help="write the vessel register to CSV")
    calibrate.add_argument("--profile", metavar="TOML",
                           help="instrument profile giving default uncertainties (see README)")
    calibrate.add_argument("--force", action="store_true", help="replace an existing register file")

    columns = commands.add_parser(
        "columns", help="how each header of a run file is understood",
        description="Show how molid reads each header: the column it means, its unit and the "
        "conversion to SI, where a default uncertainty comes from, and the columns it does not use.",
    )
    columns.add_argument("file", help="run file: .csv or .xlsx; '-' reads stdin")
    _add_sheet(columns)
    columns.add_argument("--profile", metavar="TOML",
                         help="instrument profile giving default uncertainties (see README)")
    return _add_template(_add_serve(commands), parser)


def _port(text):
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"'{text}' is not a whole number") from None
    if not 0 <= value <= 65535:
        raise argparse.ArgumentTypeError("must be 0 (a free port) to 65535")
    return value


def _add_serve(commands):
    serve = commands.add_parser(
        "serve", help="a web page on this computer: upload, results, the same downloads",
        description="Start a web page on this computer: upload a run sheet (and a profile, answer key, "
        "rubric, vessel register or specification), see how its headers were understood and the "
        "results, and download the files the command line writes. Listens on 127.0.0.1 on a free "
        "port and prints the address; see docs/web.md.",
    )
    serve.add_argument("--host", default="127.0.0.1",
                       help="address to listen on (default 127.0.0.1: this computer only); any other "
                       "address needs an access token")
    serve.add_argument("--port", type=_port, default=0, help="port (default: a free one)")
    serve.add_argument("--token", help="access token every request must carry (with a --host other "
                       "than loopback a random one is generated and printed when none is given)")
    serve.add_argument("--open", action="store_true", help="open the page in the default web browser")
    serve.add_argument("--max-upload", type=_positive_int, default=50, metavar="MB",
                       help="upload limit of one analysis, all its files together (default 50 MB)")
    serve.add_argument("--workers", type=_positive_int, metavar="N",
                       help="analyses run at once, each in its own process (default: up to 2)")
    return commands


def _add_plan(commands):
    """Add the plan command; return the sub-command collection (build_parser starts with it)."""
    from molid.planning.command import add_plan_arguments

    plan = commands.add_parser("plan", help="before measuring: what this equipment can tell apart and decide")
    add_plan_arguments(plan, _positive_int, _seed)
    return commands


def _plan(args) -> int:
    from molid.planning.command import run_plan

    return run_plan(args, _load_library(args))


def _load_library(args):
    from molid.candidates.library import load_library

    return load_library(args.library, mode="replace" if args.replace_library else "merge",
                        extra_candidates=tuple(args.candidate))


def _identify(args) -> int:
    from molid.io.safe_files import check_output_path

    output = check_output_path(args.output, [args.file, args.profile, args.library, args.vessels,
                                             args.spec], args.force) if args.output else None
    if args.seed is not None and args.monte_carlo is None:
        print("molid: error: --seed needs --monte-carlo N", file=sys.stderr)
        return EXIT_USAGE
    if args.json and output is not None and str(output) == "-":
        print("molid: error: --json and -o - would both write to standard output", file=sys.stderr)
        return EXIT_USAGE
    from molid.io.provenance import ProvenanceRecord, provenance_appended

    record = ProvenanceRecord("identify", args) if args.json else None  # before stdin is read
    source = _run_source(args)
    library = _load_library(args)
    # A register lookup happens in the reader of the in-memory path only; a Monte Carlo
    # check needs the whole result (its draws are bounded, so the file is too).
    if (output is not None or args.json) and not args.vessels and args.monte_carlo is None \
            and not args.spec and args.contaminant == "air" and args.reference_conditions is None \
            and _is_large_csv(args.file):
        if args.json:
            return _identify_json_streaming(args, output, library, record.finish(library))
        return _identify_streaming(args, output, library)
    from molid.io.json_document import write_json
    from molid.io.run_csv import to_csv
    from molid.io.safe_files import write_atomic
    from molid.io.terminal import to_table
    from molid.pipeline.identify import identify

    result = identify(source, profile=args.profile, library=library, vessels=args.vessels,
                      contaminant=args.contaminant, specifications=args.spec, rule=args.rule,
                      reference_conditions=args.reference_conditions)
    check = None
    if args.monte_carlo is not None:
        from molid.pipeline.monte_carlo import DrawsRefused

        try:
            check = result.monte_carlo(args.monte_carlo, args.seed or 0)
        except DrawsRefused as problem:
            print(f"molid: error: {problem}", file=sys.stderr)
            return EXIT_USAGE
    if args.json:
        with provenance_appended(sys.stdout, record.finish(library)) as stream:
            write_json(result, stream, None, check)  # written run by run, never whole in memory
    elif output is None or str(output) != "-":  # with -o -, the CSV takes standard output
        sys.stdout.write(to_table(result, args.top, check, args.cell_limit))
    if output is not None:
        write_atomic(output, to_csv(result, monte_carlo=check))
        _wrote(output)
    return EXIT_ROW_ERRORS if not result.ok.all() else EXIT_OK


def _wrote(output):
    if str(output) != "-":
        print(f"wrote {output}", file=sys.stderr)


def _is_large_csv(name) -> bool:
    """Tell whether a file is a CSV longer than one chunk (then analysed in chunks)."""
    from molid.pipeline.streaming import is_large_csv  # the web page decides by the same test

    return is_large_csv(name)


def _identify_streaming(args, output, library) -> int:
    from molid.pipeline.streaming import identify_to_csv

    summary = identify_to_csv(args.file, output, profile=args.profile, library=library)
    # the summary goes where the per-run table would, unless the CSV itself takes stdout
    _summary_lines(summary, output, sys.stderr if str(output) == "-" else sys.stdout, args.cell_limit)
    _wrote(output)
    return EXIT_ROW_ERRORS if summary.rows_with_errors else EXIT_OK


def _identify_json_streaming(args, output, library, provenance) -> int:
    """Identify a large CSV file in chunks, its JSON document to stdout (and the CSV to -o)."""
    from molid.io.provenance import provenance_appended
    from molid.pipeline.json_stream import identify_to_json

    with provenance_appended(sys.stdout, provenance) as stream:
        summary = identify_to_json(args.file, stream, csv_output=output, profile=args.profile,
                                   library=library)
    _summary_lines(summary, output, sys.stderr, args.cell_limit)
    if output is not None:
        _wrote(output)
    return EXIT_ROW_ERRORS if summary.rows_with_errors else EXIT_OK


def _summary_lines(summary, output, stream, cell_limit) -> None:
    """Print what a file analysed in chunks gave: counts, the first errors, the notes."""
    from molid.io.terminal import screen_text

    lines = [f"{summary.runs:,} runs analysed in {summary.seconds:.1f} s; "
             f"{summary.rows_with_errors:,} with errors, {summary.rows_with_warnings:,} with warnings"]
    if summary.errors:
        lines += ["", "Errors (these rows were not analysed)", *summary.errors]
        if summary.rows_with_errors > len(summary.errors):
            lines.append(f"... and {summary.rows_with_errors - len(summary.errors):,} more: see "
                         + (f"the 'error' column of {output}" if output is not None else
                            "the 'error' key of each run"))
    if summary.notes:
        lines += ["", "Notes", *(f"- {note}" for note in summary.notes)]
    stream.write(screen_text(lines, cell_limit))


def _library(args) -> int:
    import json

    from molid.candidates.search import search_library

    if args.mass and not (0 <= args.mass[0] <= args.mass[1]):
        print(f"molid: error: --mass needs LOW <= HIGH, both >= 0 (got {args.mass[0]:g} "
              f"{args.mass[1]:g})", file=sys.stderr)
        return EXIT_USAGE
    library = _load_library(args)
    found = search_library(library, args.query, tuple(args.mass) if args.mass else None)
    if args.json:
        records = [
            {"name": row.name, "formula": row.formula, "cas": row.cas,
             "molar_mass": round(row.molar_mass * 1e3, 4), "polar_class": row.polar_class,
             "ghs_hazards": list(row.ghs_hazards)}
            for row in found.itertuples()
        ]
        sys.stdout.write(json.dumps(records, indent=2, ensure_ascii=False) + "\n")
        return EXIT_OK
    from molid.io.display import escape_controls

    print(f"{'name':<26} {'formula':<12} {'M g/mol':>9} {'CAS':<12} {'Tc K':>7} {'Pc MPa':>7}"
          f" {'omega':>6}  hazards")
    for row in found.itertuples():
        tc = f"{row.critical_temperature:7.1f}" if row.has_critical_data else "      -"
        pc = f"{row.critical_pressure / 1e6:7.3f}" if row.has_critical_data else "      -"
        omega = f"{row.acentric_factor:6.3f}" if row.has_critical_data else "     -"
        print(f"{escape_controls(row.name)[:26]:<26} {(row.formula or '-')[:12]:<12} "
              f"{row.molar_mass * 1e3:9.3f} {escape_controls(row.cas or '-'):<12} {tc} {pc} {omega}  "
              f"{escape_controls('; '.join(row.ghs_hazards))}")
    print(f"{len(found)} of {len(library)} candidates", file=sys.stderr)
    return EXIT_OK


def _plots_folder(args):
    """Check the ``--plots`` folder of ``molid grade`` before any work: None without the option."""
    if not args.plots:
        return None
    from molid.io.safe_files import check_output_folder
    from molid.teaching.class_plots import PLOT_FILES

    # no plot may replace an input, nor the -o file, even with --force
    inputs = [args.file, args.profile, args.library, args.key, args.rubric, args.vessels, args.output]
    return check_output_folder(args.plots, PLOT_FILES, inputs, args.force)


def _grade(args) -> int:
    import json

    from molid.io.safe_files import check_output_path, write_atomic
    from molid.teaching.grades_output import grades_csv, grades_table, grading_document
    from molid.teaching.grading import grade

    inputs = [args.file, args.profile, args.library, args.key, args.rubric, args.vessels]
    output = check_output_path(args.output, inputs, args.force) if args.output else None
    plots = _plots_folder(args)
    from molid.io.provenance import ProvenanceRecord

    record = ProvenanceRecord("grade", args) if args.json else None  # before stdin is read
    library = _load_library(args)
    grading = grade(_run_source(args), key=args.key, rubric=args.rubric, profile=args.profile,
                    library=library, vessels=args.vessels)
    if args.json and output is not None and str(output) == "-":
        print("molid: error: --json and -o - would both write to standard output", file=sys.stderr)
        return EXIT_USAGE
    if args.json:
        document = {**grading_document(grading, args.top), "provenance": record.finish(library)}
        sys.stdout.write(json.dumps(document, indent=2, ensure_ascii=False, allow_nan=False) + "\n")
    elif output is None or str(output) != "-":  # with -o -, the CSV takes standard output
        sys.stdout.write(grades_table(grading, args.cell_limit))
    if output is not None:
        write_atomic(output, grades_csv(grading))
        _wrote(output)
    if plots is not None:
        from molid.teaching.class_plots import write_class_plots

        plots.mkdir(exist_ok=True)
        for path in write_class_plots(grading, plots):
            print(f"wrote {path}", file=sys.stderr)
    return EXIT_ROW_ERRORS if not grading.ok.all() else EXIT_OK


def _report(args) -> int:
    from pathlib import Path

    from molid.io.provenance import ProvenanceRecord
    from molid.reports import format_for, write_report

    record = ProvenanceRecord("report", args)  # before standard input is read
    library = _load_library(args)
    path, ok = write_report(
        _run_source(args), args.output, format=args.format, paper=args.paper, profile=args.profile,
        library=library, top=args.top, key=args.key, rubric=args.rubric, provenance=record.finish(library),
        force=args.force, inputs=[args.file, args.library, args.vessels], vessels=args.vessels,
        page_limit=args.max_pages, cell_limit=args.cell_limit, reference_conditions=args.reference_conditions,
    )
    _wrote(path)
    suffix = Path(str(path)).suffix.lower()
    written = format_for(path, args.format)
    if suffix in (".pdf", ".html", ".htm") and written != format_for(path, None):
        print(f"molid: note: {path} holds a {written.upper()} report although its name ends in "
              f"{suffix}", file=sys.stderr)
    return EXIT_OK if ok else EXIT_ROW_ERRORS


def _calibrate(args) -> int:
    from molid.io.safe_files import check_output_path, write_atomic
    from molid.pipeline.calibration import calibrate, register_text, summary_text

    output = check_output_path(args.output, [args.file, args.profile], args.force) \
        if args.output else None
    calibration = calibrate(args.file, profile=args.profile)
    from molid.io.terminal import screen_text

    # with -o -, the register takes standard output and the summary goes to stderr
    summary = screen_text(summary_text(calibration).rstrip("\n").split("\n"))
    (sys.stderr if output is not None and str(output) == "-" else sys.stdout).write(summary)
    if output is not None:
        if calibration.vessels.empty:
            print(f"molid: {output} not written: no vessel could be calibrated", file=sys.stderr)
        else:
            write_atomic(output, register_text(calibration))
            _wrote(output)
    return EXIT_ROW_ERRORS if not calibration.ok.all() else EXIT_OK


def _verify(args) -> int:
    from molid.pipeline.verify import verify_result

    verification = verify_result(args.result, inputs=args.inputs, run=main)
    sys.stdout.write(verification.text)
    return EXIT_OK if verification.reproduced else EXIT_ROW_ERRORS


def _columns(args) -> int:
    from molid.io.header_report import columns_text, describe_columns
    from molid.io.terminal import screen_text

    text = columns_text(describe_columns(args.file, profile=args.profile, sheet=args.sheet))
    sys.stdout.write(screen_text(text.rstrip("\n").split("\n")))  # headers shown escaped
    return EXIT_OK


def _serve(args) -> int:
    from importlib.util import find_spec

    if find_spec("flask") is None:
        print("molid: error: molid serve needs Flask; install it with: pip install flask", file=sys.stderr)
        return EXIT_USAGE
    from molid.web.server import serve

    # the page parses its options with this command line's parser: they mean the same
    return serve(args.host, args.port, token=args.token, open_browser=args.open,
                 upload_limit=args.max_upload * 1024 * 1024, workers=args.workers, parse=build_parser)


def _template(args) -> int:
    from molid.io.templates import write_template

    path = write_template(args.method, args.output, force=args.force, stream=sys.stdout)
    if path is not None:
        print(f"wrote {path}", file=sys.stderr)
    return EXIT_OK


_HANDLERS = {"identify": _identify, "library": _library, "grade": _grade, "report": _report,
             "verify": _verify,
             "calibrate": _calibrate, "columns": _columns, "template": _template}
_HANDLERS["plan"] = _plan
_HANDLERS["serve"] = _serve


def main(argv=None) -> int:
    """Run the command line; returns the exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    if not args.command:
        parser.print_help()
        return EXIT_USAGE
    from molid.guards import Interrupted, caught_warnings, check_interrupted, interruptible

    with interruptible():
        try:
            with caught_warnings() as notes:  # no library's warning text reaches the user
                code = _run(args)
            check_interrupted()  # a signal whose exception a library swallowed
        except (Interrupted, KeyboardInterrupt) as stop:
            number = getattr(stop, "number", 2)  # a KeyboardInterrupt is a SIGINT
            print(f"molid: interrupted by {'SIGINT' if number == 2 else 'SIGTERM'}; any output "
                  "file not yet complete was removed", file=sys.stderr)
            if argv is None:  # the command itself, not a call from Python: end the process now
                _exit_now(128 + number)
            return 128 + number  # as a shell reports a process ended by the signal
        for note in notes:
            print(f"molid: note: {note}", file=sys.stderr)
        return _leave(code) if argv is None else code


def _leave(status: int) -> int:
    """End the command's process without the interpreter's clean-up of its modules, or return the status.

    Freeing the modules of pandas, pyarrow, scipy and fpdf2 at exit takes 0.05 to 0.15 s
    after molid is done, as long as a short command's own work. Everything molid writes
    is complete and closed by now, so the process ends at once: the exit handlers run
    (temporary folders, logging), standard output and error are flushed. Threads or
    child processes still alive, or an output that cannot be flushed (a closed pipe),
    leave the ending to the interpreter as usual.
    """
    import atexit
    import threading

    processes = sys.modules.get("multiprocessing")
    if threading.active_count() > 1 or (processes is not None and processes.active_children()):
        return status
    try:
        sys.stdout.flush()
        sys.stderr.flush()
    except (OSError, ValueError):
        return status
    atexit._run_exitfuncs()
    _exit_now(status)


def _exit_now(status: int) -> None:
    """End the process at once, its standard streams flushed and no exit handler run.

    After an interruption (partial outputs already removed) the exit handlers are skipped on
    purpose: a worker pool's manager thread, cut off by the signal, could keep the
    interpreter from ending.
    """
    import os

    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except (OSError, ValueError):
            pass
    os._exit(status)


def _run(args) -> int:
    """Run a command's handler and turn what it raises into a message and an exit status."""
    from molid.errors import USER_ERRORS
    from molid.io.display import shown

    try:
        return _HANDLERS[args.command](args)
    except USER_ERRORS as problem:
        print(f"molid: {shown(problem)}", file=sys.stderr)  # it may quote a cell: shown safely
        return EXIT_USAGE
    except BrokenPipeError:
        return EXIT_OK
    except Exception as problem:  # never a traceback for a user; say it is ours
        print(f"molid: internal error ({type(problem).__name__}: {shown(problem, 2000)}). This is "
              "a bug in molid; please report it with the input file.", file=sys.stderr)
        return EXIT_INTERNAL


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
