"""The ``molid plan`` command: its options, and the handler that checks, plans and writes.

Imported when the command line is built, so it imports nothing heavy at the top:
the planning modules are imported inside :func:`run_plan`.
"""

from __future__ import annotations

import sys

__all__ = ["add_plan_arguments", "run_plan"]

_DESCRIPTION = (
    "Before anyone weighs anything: the predicted uncertainty of each unknown with this method and "
    "these instruments, which pairs of unknowns one run (or N replicates) can tell apart and what to "
    "hand out instead, a simulated section (--simulate), and what a purity decision needs (--label, "
    "--contaminant, --limit). See docs/planning.md."
)


def add_plan_arguments(parser, positive_int, non_negative_int) -> None:
    """Add the options of ``molid plan`` to its parser.

    Parameters
    ----------
    parser : argparse.ArgumentParser
        The sub-command's parser.
    positive_int, non_negative_int : callable
        Argument types of the command line (whole numbers ≥ 1 and ≥ 0).
    """
    parser.description = _DESCRIPTION
    add = parser.add_argument
    add("--method", required=True, metavar="NAME", help="the measurement method (as a run sheet names it)")
    add("--unknowns", metavar="LIST", help="unknowns separated by commas: names, formulas or CAS numbers")
    add("--unknowns-file", metavar="FILE", help="unknowns, one per line ('#' starts a comment)")
    add("--profile", metavar="TOML", help="instrument profile giving the uncertainties (see README)")
    add("--library", metavar="CSV", help="candidate library file, merged with the built-in one")
    add("--replace-library", action="store_true", help="use only the --library file")
    add("--candidate", action="append", default=[], metavar="FORMULA[=NAME]", help="add a candidate")
    add("--volume", metavar="Q", help="vessel volume, e.g. '250 mL' (default: typical of the method)")
    add("--temperature", metavar="Q", help="gas temperature (a flask's bath), e.g. '21 degC'")
    add("--pressure", metavar="Q", help="barometric pressure, e.g. '101 kPa' (default 101 kPa)")
    add("--room-temperature", metavar="Q",
        help="balance-room temperature, for a condensed-vapour flask (default 21 degC)")
    add("--humidity", metavar="Q",
        help="the room's relative humidity as the runs will measure it, e.g. '45 %%' (default: not "
        "measured; the profile's assumed value and range)")
    add("--replicates", type=positive_int, default=1, metavar="N", help="runs per unknown (default 1)")
    add("--against-library", action="store_true",
        help="also list, for each unknown, the library substances it could be taken for")
    add("--simulate", type=non_negative_int, default=0, metavar="N",
        help="simulate N runs (or samples of --replicates runs) per unknown through identify")
    add("--seed", type=non_negative_int, metavar="S", help="random seed for --simulate (default 0)")
    add("--mistakes", metavar="RATES",
        help="with --simulate: rates of classic mistakes, e.g. 'celsius-as-kelvin=0.05, volume-unit=2%%'; "
        "the section is then graded")
    add("--rubric", metavar="TOML", help="rubric for grading the simulated section (defaults shipped)")
    add("--label", metavar="NAME", help="purity plan: the gas the cylinders are labelled as")
    add("--contaminant", metavar="NAME", help="purity plan: the contaminant (default air)")
    add("--limit", metavar="PERCENT", help="purity plan: the largest contaminant fraction allowed, in %%")
    add("--rule", choices=("guarded", "simple"), default="guarded",
        help="decision rule (JCGM 106:2012): guarded acceptance, guard band U (default), or simple")
    add("--guard-fraction", metavar="PERCENT",
        help="purity plan: the guard band wanted, in %% of the limit (default 50)")
    add("--json", action="store_true", help="print the plan as JSON")
    add("-o", "--output", metavar="FILE", help="write the planning page (.pdf or .html)")
    add("--paper", choices=("a4", "letter"), default="a4", help="paper size of a PDF page")
    add("--force", action="store_true", help="replace an existing page file")


def run_plan(args, library) -> int:
    """Make the plan the options ask for, print it, and write the page; returns the exit status.

    Every check (the page's name, the options, the names, the conditions) happens
    before the page is written, and the page is written whole or not at all.
    """
    from molid.io.safe_files import check_output_path, write_atomic
    from molid.planning.conditions import PlanError

    if args.seed is not None and not args.simulate:
        raise PlanError("--seed needs --simulate N")
    output = check_output_path(args.output, [args.unknowns_file, args.profile, args.library, args.rubric],
                               args.force) if args.output else None
    from molid.planning.page import page_format

    page = page_format(output) if output is not None else None
    from molid.planning.output import plan_json, plan_text
    from molid.planning.plan import make_plan

    document = make_plan(
        method=args.method, unknowns=args.unknowns, unknowns_file=args.unknowns_file, profile=args.profile,
        library=library, volume=args.volume, temperature=args.temperature, pressure=args.pressure,
        room_temperature=args.room_temperature, humidity=args.humidity, replicates=args.replicates,
        simulate=args.simulate, seed=args.seed or 0, against_library=args.against_library,
        mistakes=args.mistakes, rubric=args.rubric, label=args.label, contaminant=args.contaminant,
        limit=args.limit, rule=args.rule, guard_fraction=args.guard_fraction)
    sys.stdout.write(plan_json(document) if args.json else plan_text(document))
    if output is not None:
        from molid.planning.page import render_html, render_pdf

        data = render_pdf(document, args.paper) if page == "pdf" else render_html(document)
        write_atomic(output, data)
        print(f"wrote {output}", file=sys.stderr)
    return 0
