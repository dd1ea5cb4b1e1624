"""Large run files as a JSON document: analysed in chunks, written as it goes, in bounded memory.

``molid identify big.csv --json`` on a file longer than one chunk reads it as
:mod:`molid.pipeline.streaming` does (chunks analysed in worker processes, in
file order) and writes each chunk's ``results`` entries at once, so neither the
file's analysis nor the document's text is ever whole in memory: a worker writes
its chunk's entries to a spool file as it renders them, and the writer copies
that file to the document in blocks (a chunk's text, about 50 MB, is never
passed between processes). The per-run CSV (``-o``) is written in the same pass
when asked for.

Unlike the CSV, the document has a place for samples, so replicates are combined
as in memory: the first pass keeps the cells of the runs that name a sample (text,
a few hundred bytes a run); a second pass analyses those runs in batches of whole
samples, in order of each sample's first row, and writes the ``samples`` entries.
A run's duplicate-id check is the one of the first pass, so a batch reports the
same errors as the whole file. The document is the same as the one
:func:`molid.io.json_document.write_json` writes for the whole file in memory.
"""

from __future__ import annotations

import dataclasses
import os
import shutil
import tempfile
import time
from contextlib import nullcontext
from pathlib import Path

import numpy as np
import pandas as pd

from molid import __version__
from molid.io.json_document import ITEM_SEPARATOR, DocumentWriter, render_item, run_entries, sample_entries
from molid.io.problems import InputError
from molid.io.profiles import InstrumentProfile, load_profile
from molid.io.reading import parse_runs
from molid.io.safe_files import atomic_output
from molid.pipeline import streaming
from molid.pipeline.identify import identify
from molid.pipeline.streaming import StreamSummary

__all__ = ["JSON_CHUNK_ROWS", "identify_to_json"]

#: Rows per chunk: a run's entry is about 50 kB of text with every candidate listed, so a
#: chunk's text (held by a worker, passed to the writer) stays near 50 MB.
JSON_CHUNK_ROWS = 1_000


def identify_to_json(source, stream, *, csv_output=None,
                     profile: InstrumentProfile | str | Path | None = None, library=None,
                     top: int | None = None, chunk_rows: int = JSON_CHUNK_ROWS,
                     progress: bool | None = None, workers: int | None = None) -> StreamSummary:
    """Analyse a CSV run file chunk by chunk and write its JSON document to a text stream.

    Parameters
    ----------
    source : str or pathlib.Path
        A CSV run file.
    stream : text file
        Where the document goes (standard output for ``molid identify --json``).
    csv_output : str or pathlib.Path, optional
        Also write the per-run CSV there (replaced only when the whole file is done).
    profile : InstrumentProfile or path, optional
        Default uncertainties.
    library : pandas.DataFrame, optional
        Candidate library; the default library when None.
    top : int, optional
        Candidates per run and sample (all when None).
    chunk_rows : int
        Rows per chunk, and the most runs of a batch of samples (a larger sample is
        analysed on its own).
    progress : bool, optional
        Show a progress line on stderr; by default only when stderr is a terminal.
    workers : int, optional
        Processes that analyse chunks in parallel (as :func:`~molid.pipeline.streaming.identify_to_csv`).

    Returns
    -------
    StreamSummary
        Counts, the first error messages, and the file's notes.

    Raises
    ------
    InputError
        When the file cannot be read or has no data rows.
    """
    from molid.candidates.library import load_library

    started = time.monotonic()
    if profile is None or isinstance(profile, (str, Path)):
        profile = load_profile(profile)
    library = load_library() if library is None else library
    plan = streaming._plan_chunks(Path(source), chunk_rows)
    progress_line = streaming._Progress(streaming.count_data_lines(plan.path), progress)
    summary = StreamSummary()
    count = streaming._worker_count(workers)
    pool = None
    spool = tempfile.mkdtemp(prefix="molid-json-")
    try:
        with atomic_output(csv_output, "w") if csv_output is not None else nullcontext() as sink:
            if count > 1:
                pool = streaming._start_pool(count, profile, library)
            collect = _RunCollector(summary, plan.notes, progress_line, DocumentWriter(stream), sink)
            _write_document(plan, collect, (top, spool), (pool, count, profile, library))
    except BaseException:
        streaming.stop_pool(pool, now=True)  # interrupted or failed: end the workers at once
        pool = None
        raise
    finally:
        streaming.stop_pool(pool)
        shutil.rmtree(spool, ignore_errors=True)
    summary.seconds = time.monotonic() - started
    return summary


def _write_document(plan, collect, rendering, workers) -> None:
    """Write the document: the runs chunk by chunk, then the samples batch by batch, then the notes.

    ``rendering`` is (candidates per run or sample, the spool folder); ``workers`` is
    (pool, its size, profile, library).
    """
    writer, summary = collect.writer, collect.summary
    writer.value("molid", __version__)
    writer.open_list("results")
    jobs = ((job, collect.sink is not None, rendering)
            for job in streaming._chunk_jobs(plan, plan.reader()))
    streaming._analyse_in_order(jobs, *workers[:2], collect, *workers[2:], function=_run_chunk)
    if summary.runs == 0:
        raise InputError(f"{plan.path}: the file has a header but no data rows")
    writer.close_list()
    collect.progress_line.update(summary.runs, final=True)
    writer.open_list("samples")
    batches = ((batch, plan.decimal_comma, str(plan.path), rendering)
               for batch in collect.members.batches(plan.chunk_rows))
    streaming._analyse_in_order(batches, *workers[:2], lambda outcome: _copy_spool(writer, *outcome),
                                *workers[2:], function=_sample_batch)
    writer.close_list()
    summary.notes = streaming._merge_notes(plan.notes)
    writer.value("notes", summary.notes)
    writer.close()


class _Members:
    """The cells of every run that names a sample, kept in file order for the second pass."""

    def __init__(self):
        self.frames: list = []

    def add(self, members) -> None:
        if members is not None:
            self.frames.append(members)

    def batches(self, batch_runs: int):
        """Yield (cells, spreadsheet rows, first use of each run id) per batch of whole samples.

        Samples come in order of their first row, as the in-memory document lists them.
        """
        if not self.frames:
            return
        cells = pd.concat([frame[0] for frame in self.frames], ignore_index=True)
        rows = np.concatenate([frame[1] for frame in self.frames])
        first_use = np.concatenate([frame[2] for frame in self.frames])
        codes, _ = pd.factorize(pd.Series(np.concatenate([frame[3] for frame in self.frames]),
                                          dtype=object))
        self.frames = []
        order = np.argsort(codes, kind="stable")  # by sample, each sample's runs in file order
        sizes = np.bincount(codes)
        start = 0
        while start < len(sizes):
            end, runs = start, 0
            while end < len(sizes) and (runs == 0 or runs + sizes[end] <= batch_runs):
                runs += sizes[end]
                end += 1
            first = int(sizes[:start].sum())
            chosen = np.sort(order[first:first + runs])  # back to file order within the batch
            yield cells.iloc[chosen].reset_index(drop=True), rows[chosen], first_use[chosen]
            start = end


class _RunCollector:
    """Write each chunk's ``results`` entries and CSV rows, in file order; keep its sample members."""

    def __init__(self, summary, notes, progress_line, writer, sink):
        self.summary, self.notes, self.progress_line = summary, notes, progress_line
        self.writer, self.sink = writer, sink
        self.members = _Members()

    def __call__(self, outcome) -> None:
        items, csv_text, runs, errors, n_errors, n_warnings, chunk_notes, members = outcome
        if runs == 0:
            return
        summary = self.summary
        if self.sink is not None:
            if summary.runs and csv_text:
                csv_text = csv_text.split("\n", 1)[1]  # every chunk's CSV starts with the header
            self.sink.write(csv_text)
        _copy_spool(self.writer, items, runs)
        self.members.add(members)
        summary.runs += runs
        summary.rows_with_errors += n_errors
        summary.rows_with_warnings += n_warnings
        summary.errors.extend(errors[: streaming._MAX_LISTED - len(summary.errors)])
        for note in chunk_notes:
            self.notes.setdefault(note, None)
        self.progress_line.update(summary.runs)


def _state(profile, library):
    state = streaming._WORKER_STATE
    return (profile if profile is not None else state["profile"],
            library if library is not None else state["library"])


def _spooled(entries, folder) -> tuple:
    """Render entries into a new spool file, one at a time; give its path and how many."""
    handle, path = tempfile.mkstemp(suffix=".json", dir=folder)
    count = 0
    with os.fdopen(handle, "w", encoding="utf-8") as spool:
        for entry in entries:
            spool.write((ITEM_SEPARATOR if count else "") + render_item(entry))
            count += 1
    return path, count


def _copy_spool(writer, path, count) -> None:
    """Copy a spool file's entries into the document, in blocks, and remove it."""
    try:
        with open(path, encoding="utf-8") as spool:
            writer.copied(spool, count)
    finally:
        os.unlink(path)


def _run_chunk(job, profile=None, library=None):
    """Analyse one chunk: its ``results`` entries spooled, its CSV, counts, and its sample members."""
    from molid.io.run_csv import to_csv

    profile, library = _state(profile, library)
    (raw, decimal_comma, first_row, first_use, source), want_csv, (top, folder) = job
    table = parse_runs(raw, decimal_comma=decimal_comma, profile=profile, first_row=first_row,
                       source=source, require_rows=False, first_use_of_rows=first_use)
    if len(table) == 0:
        return "", "", 0, [], 0, 0, [], None
    result = identify(table, profile=profile, library=library, combine=False)
    items, _ = _spooled(run_entries(result, top), folder)
    bad = [row for row in result.errors if row]
    sample = table.text["sample"].to_numpy(dtype=object)
    chosen = np.flatnonzero(pd.notna(pd.Series(sample, dtype=object)).to_numpy())
    members = None
    if len(chosen):
        rows = table.row_numbers[chosen]
        members = (table.raw.iloc[chosen].reset_index(drop=True), rows,
                   np.asarray(first_use)[rows - first_row], sample[chosen])
    return (items, to_csv(result) if want_csv else "", len(table),
            ["; ".join(row) for row in bad[:streaming._MAX_LISTED]], len(bad),
            sum(1 for row in result.warnings if row), list(table.notes), members)


def _sample_batch(job, profile=None, library=None):
    """Combine the runs of a batch of whole samples; give their ``samples`` entries rendered."""
    profile, library = _state(profile, library)
    (cells, rows, first_use), decimal_comma, source, (top, folder) = job
    table = parse_runs(cells, decimal_comma=decimal_comma, profile=profile, first_row=2,
                       source=source, require_rows=False, first_use_of_rows=first_use)
    # The rows are gathered from the whole file: give them back their spreadsheet numbers.
    table = dataclasses.replace(table, row_numbers=np.asarray(rows))
    result = identify(table, profile=profile, library=library)
    return _spooled(sample_entries(result, top), folder)
