"""Printable reports: a PDF or self-contained HTML file with a page per sample or run.

``molid report FILE -o report.pdf`` writes, for an identify-style file, a page per
sample (replicates together) or per run without a sample: header, inputs with
units and standard uncertainties, the molar mass with its expanded uncertainty,
the uncertainty budget as a table and a chart, the ranked candidates, the
molar-mass axis, what the run cannot tell apart, the label check, warnings,
safety cautions and signature lines. For a graded file (``--key``, or ``student``
and ``expected``/``reported_molar_mass`` columns) it writes a sheet per student
and the class summary.

The page model is built once (:mod:`molid.reports.content`) and drawn by either
writer (:mod:`molid.reports.pdf`, :mod:`molid.reports.html`). matplotlib and fpdf2
are imported only when a report is drawn.
"""

from __future__ import annotations

import datetime
import io
import os
import sys
from pathlib import Path

from molid.io.problems import InputError, read_file_bytes

__all__ = [
    "format_for",
    "ReportError",
    "FORMATS",
    "build_report",
    "render_report",
    "write_report",
    "is_graded",
]

FORMATS = ("pdf", "html")


class ReportError(InputError):
    """A report that cannot be made as asked (format, missing module); no traceback."""


def _normalise(header) -> str:
    from molid.reports.content import _normalise_header

    return _normalise_header(header)


def is_graded(columns, key=None) -> bool:
    """Tell whether a file is to be reported as graded work.

    A file is graded when an answer key is given, or when it has a ``student``
    column and an ``expected`` or ``reported_molar_mass`` column.

    Examples
    --------
    >>> is_graded(["run", "student", "expected", "mass_tare [g]"])
    True
    >>> is_graded(["run", "operator", "expected"])
    False
    """
    if key is not None:
        return True
    names = {_normalise(column) for column in columns}
    return "student" in names and bool(names & {"expected", "reported_molar_mass"})


def _generated():
    """Return the report's date: SOURCE_DATE_EPOCH when set (reproducible builds), else now."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH")
    if epoch and epoch.strip().isdigit():
        moment = datetime.datetime.fromtimestamp(int(epoch), tz=datetime.timezone.utc)
    else:
        moment = datetime.datetime.now(datetime.timezone.utc)
    return moment


def _stream(data: bytes, name: str):
    stream = io.BytesIO(data)
    stream.name = name
    return stream


def _read_source(source):
    """Read a path, '-' or file-like into bytes and a display name (a DataFrame passes as is)."""
    import pandas as pd

    if isinstance(source, pd.DataFrame):
        return None, source, "data frame"
    if str(source) == "-":
        return sys.stdin.buffer.read(), None, "standard input"
    if hasattr(source, "read"):
        data = source.read()
        return (data.encode("utf-8") if isinstance(data, str) else data), None, getattr(
            source, "name", "stream")
    return read_file_bytes(source), None, str(source)


def build_report(source, *, profile=None, library=None, top=5, key=None, rubric=None,
                 graded=None, vessels=None, page_limit=None, cell_limit=None, reference_conditions=None):
    """Analyse a run file and build the report's page model.

    Parameters
    ----------
    source : str, pathlib.Path, file-like or pandas.DataFrame
        The run file ('-' reads standard input).
    profile : InstrumentProfile or path, optional
        Default uncertainties.
    library : pandas.DataFrame, optional
        Candidate library; the built-in one when None.
    top : int
        Ranked candidates per page.
    key, rubric : path, optional
        Answer key and rubric, for graded files.
    graded : bool, optional
        Force (True) or forbid (False) the graded report; detected when None.
    vessels : VesselRegister or path, optional
        Vessel register, for runs that name a ``vessel`` instead of a ``volume``.
    page_limit : int, optional
        Draw at most this many samples, runs or students' sheets (default
        :data:`~molid.reports.limits.DEFAULT_PAGE_LIMIT`); one page summarises the rest.
    cell_limit : int, optional
        Cut each text at this many characters (default
        :data:`~molid.io.display.DEFAULT_CELL_LIMIT`), its control characters escaped.
    reference_conditions : tuple of float, optional
        Temperature [K] and pressure [Pa] at which each page's leading candidate's density is
        given; 0 °C and 101.325 kPa when None. Graded reports do not show it.

    Returns
    -------
    report : Report
        The page model.
    ok : bool
        False when some rows had errors.
    """
    from molid.io.display import DEFAULT_CELL_LIMIT
    from molid.io.reading import read_raw, read_runs
    from molid.pipeline.identify import identify
    from molid.reports.limits import DEFAULT_PAGE_LIMIT, bound_text

    page_limit = DEFAULT_PAGE_LIMIT if page_limit is None else page_limit

    data, frame, name = _read_source(source)

    def fresh():
        return frame if frame is not None else _stream(data, name)

    def runs():  # the register is read by the reader; a read table passes through grading as is
        return fresh() if vessels is None else read_runs(fresh(), profile=profile, vessels=vessels)

    if graded is None:
        raw, _, _, _ = read_raw(fresh(), keep_bad_lines=True)  # only its columns are looked at
        graded = is_graded(raw.columns, key)
    moment = _generated()
    if graded:
        from molid.reports.graded import graded_report

        report, ok = graded_report(runs(), key=key, rubric=rubric, profile=profile,
                                   library=library, top=top, page_limit=page_limit)
    else:
        from molid.reports.content import identify_report

        result = identify(fresh(), profile=profile, library=library, vessels=vessels,
                          reference_conditions=reference_conditions)
        report = identify_report(result, top=top, page_limit=page_limit)
        ok = bool(result.ok.all())
    bound_text(report, DEFAULT_CELL_LIMIT if cell_limit is None else cell_limit)
    from molid import __version__

    report.version = __version__
    report.generated = moment.strftime("%Y-%m-%d %H:%M UTC")
    report.generated_datetime = moment
    return report, ok


def render_report(report, format="pdf", paper="a4") -> bytes:
    """Draw a page model as PDF or HTML bytes."""
    if format == "pdf":
        from molid.reports.pdf import render_pdf

        return render_pdf(report, paper=paper)
    if format == "html":
        from molid.reports.html import render_html

        return render_html(report, paper=paper)
    raise ReportError(f"report format '{format}' is not one of {', '.join(FORMATS)}")


def format_for(output, format):
    """Return the report format asked for, or the one the output's name implies (PDF by default)."""
    if format:
        return format
    suffix = Path(str(output)).suffix.lower()
    return "html" if suffix in (".html", ".htm") else "pdf"


def write_report(source, output, *, format=None, paper="a4", profile=None, library=None, provenance=None,
                 top=5, key=None, rubric=None, force=False, inputs=(), vessels=None,
                 page_limit=None, cell_limit=None, reference_conditions=None):
    """Analyse ``source`` and write its report to ``output`` (atomically).

    Parameters
    ----------
    source : str, pathlib.Path, file-like or pandas.DataFrame
        The run file.
    output : str or pathlib.Path
        The report file; an existing file is replaced only with ``force``.
    format : {'pdf', 'html'}, optional
        From the output's suffix when None (``.html``/``.htm`` → HTML, else PDF).
    paper : {'a4', 'letter'}
        Paper size.
    provenance : dict, optional
        The record printed in a block at the end (:mod:`molid.io.provenance`); made from the
        arguments when None.
    profile, library, top, key, rubric
        As for :func:`build_report`.
    force : bool
        Replace an existing output file.
    inputs : iterable of path
        Other files the command reads; the output may not be one of them.
    vessels : VesselRegister or path, optional
        Vessel register, for runs that name a ``vessel`` instead of a ``volume``.
    page_limit, cell_limit : int, optional
        As for :func:`build_report`.
    reference_conditions : tuple of float, optional
        As for :func:`build_report`: temperature [K] and pressure [Pa].

    Returns
    -------
    path : pathlib.Path
        The file written.
    ok : bool
        False when some rows had errors (the report shows them).
    """
    from molid.io.safe_files import check_output_path, write_atomic

    source_path = None if hasattr(source, "read") or not isinstance(source, (str, Path)) \
        else source
    path = check_output_path(output, [source_path, profile if isinstance(profile, (str, Path))
                                      else None, key, rubric, *inputs], force)
    report, ok = build_report(source, profile=profile, library=library, top=top, key=key,
                              rubric=rubric, vessels=vessels, page_limit=page_limit,
                              cell_limit=cell_limit, reference_conditions=reference_conditions)
    from molid.reports.provenance_block import add_provenance

    add_provenance(report, provenance, source=source, profile=profile, library=library, key=key,
                   rubric=rubric, vessels=vessels, top=top, reference_conditions=reference_conditions)
    write_atomic(path, render_report(report, format_for(path, format), paper))
    return path, ok
