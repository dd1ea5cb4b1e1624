"""The provenance block at the end of a report: molid, input files and their SHA-256, library, options.

The record is the one a JSON document carries (:mod:`molid.io.provenance`): a
filed report names the files it was made from, so anyone can check them later
with any SHA-256 tool (``sha256sum FILE``). It is kept to a few lines, so that it
fits under the last page's signature lines; when that page is full it runs onto
one more.
"""

from __future__ import annotations

from pathlib import Path

from molid.io.provenance import ProvenanceRecord, provenance_lines
from molid.reports.content import Bullets

__all__ = ["add_provenance", "report_provenance"]


class _Arguments:
    """The inputs and options of an API call, shaped as the command line's parsed arguments."""

    def __init__(self, **values):
        self.__dict__.update(values)


def _path(value):
    """Return a file named by path, else None (a read profile, a frame, an open file are not files)."""
    return str(value) if isinstance(value, (str, Path)) else None


def report_provenance(source, *, profile=None, library=None, key=None, rubric=None, vessels=None,
                      top=None, reference_conditions=None) -> dict:
    """Record a report's provenance from the arguments of :func:`molid.reports.write_report`.

    Parameters
    ----------
    source : str, pathlib.Path, file-like or pandas.DataFrame
        The run file; only a path is hashed ('-' was read by the analysis already: no digest).
    profile, key, rubric, vessels : path or object, optional
        Hashed when given as paths.
    library : pandas.DataFrame, optional
        The library used; the built-in one when None.
    top : int, optional
        Candidates per page.
    reference_conditions : tuple of float, optional
        Temperature [K] and pressure [Pa] of the reference densities; recorded when given.

    Returns
    -------
    dict
        The ``provenance`` record (:func:`molid.io.provenance.provenance_document`).
    """
    from molid.candidates.library import load_library

    run_file = _path(source)
    arguments = _Arguments(file=None if run_file == "-" else run_file, profile=_path(profile),
                           key=_path(key), rubric=_path(rubric), vessels=_path(vessels), top=top,
                           reference_conditions=reference_conditions)
    record = ProvenanceRecord("report", arguments)
    if run_file == "-":
        record.inputs.insert(0, {"role": "run sheet", "path": "-", "sha256": None})
    return record.finish(load_library() if library is None else library)


def add_provenance(report, provenance=None, **arguments) -> None:
    """Print a report's provenance in a small block at the end of its last page.

    Parameters
    ----------
    report : Report
        The page model (changed in place).
    provenance : dict, optional
        The record; made by :func:`report_provenance` from ``arguments`` when None.
    **arguments
        ``source`` and the keywords of :func:`report_provenance`.
    """
    if not report.pages:
        return
    if provenance is None:
        provenance = report_provenance(arguments.pop("source", None), **arguments)
    report.pages[-1].blocks.append(Bullets("Provenance", provenance_lines(provenance), "note"))
