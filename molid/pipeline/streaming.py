"""Large run files: analyse in chunks, write the per-run CSV as it goes, in bounded memory.

A file of any length is read ``chunk_rows`` rows at a time; each chunk is
validated, evaluated and ranked against the full library, and its rows are
appended to a temporary file that replaces the output only when the whole file
is done. Memory holds one chunk plus 24 bytes per run id seen (for duplicate
ids across chunks). Replicates are not combined in this mode, since the
per-run CSV has no place for samples; the JSON and terminal outputs of
:func:`molid.pipeline.identify.identify` combine them for files that fit in memory.
"""

from __future__ import annotations

import os
import sys
import time
from collections import deque
from dataclasses import dataclass, field
from pathlib import Path

from molid.guards import check_interrupted, held_signals, release_signals
from molid.io.delimited import HEAD_CHARACTERS, Layout, count_rows, find_layout, frames, text_head
from molid.io.encodings import blocks_of_file, detect_encoding, text_stream
from molid.io.headers import resolve_headers
from molid.io.problems import InputError
from molid.io.profiles import InstrumentProfile, load_profile
from molid.io.reading import RunIds, first_uses, parse_runs
from molid.io.safe_files import atomic_output
from molid.pipeline.identify import identify

__all__ = ["DEFAULT_CHUNK_ROWS", "StreamSummary", "count_data_lines", "identify_to_csv", "is_large_csv",
           "stop_pool"]

#: Rows per chunk: large enough that numpy's per-call overhead is small, small
#: enough that a chunk's candidate arrays (rows × about 100 candidates) stay in
#: tens of megabytes.
DEFAULT_CHUNK_ROWS = 10_000
_MAX_LISTED = 20


@dataclass
class StreamSummary:
    """What a streamed run produced."""

    runs: int = 0
    rows_with_errors: int = 0
    rows_with_warnings: int = 0
    errors: list = field(default_factory=list)
    notes: list = field(default_factory=list)
    seconds: float = 0.0


def count_data_lines(path) -> int:
    """Lines after the header (an upper bound on the runs: blank lines count too)."""
    lines = 0
    last = b"\n"
    with open(path, "rb") as stream:
        while block := stream.read(1 << 24):
            lines += block.count(b"\n")
            last = block[-1:]
    return max(lines - 1 + (last != b"\n"), 0)


def is_large_csv(name) -> bool:
    """Tell whether a run file is a CSV longer than one chunk (then analysed in chunks).

    Standard input (``-``), a workbook (by its name or its first bytes) and a path that is
    not a file are not.
    """
    path = Path(name)
    if str(name) == "-" or not path.is_file() or path.suffix.lower() in (".xlsx", ".xlsm"):
        return False
    with open(path, "rb") as stream:
        if stream.read(4) == b"PK\x03\x04":
            return False
    return count_data_lines(path) > DEFAULT_CHUNK_ROWS


def _merge_notes(collected: dict) -> list:
    """Merge the notes of all chunks: once each, "some rows" where chunks differ."""
    merged = []
    for note in collected:
        some = note.replace(" for every row", " for some rows")
        if some != note and some in collected:
            continue
        merged.append(note)
    return merged


class _Progress:
    """A one-line progress report on stderr, only when stderr is a terminal; or a callable's.

    ``enabled`` may be a callable ``(done, total)``, which then gets the counts instead of
    the line (a web page's progress bar).
    """

    def __init__(self, total: int, enabled=None):
        self.total = max(total, 1)
        self.report = enabled if callable(enabled) else None
        self.enabled = sys.stderr.isatty() if enabled is None else bool(enabled)
        self.last = 0.0

    def update(self, done: int, final: bool = False) -> None:
        if not self.enabled:
            return
        now = time.monotonic()
        if not final and now - self.last < 0.2:
            return
        self.last = now
        if self.report is not None:
            self.report(done, self.total)
            return
        share = min(done / self.total, 1.0)
        bar = "#" * int(share * 30)
        sys.stderr.write(f"\rmolid: [{bar:<30}] {done:,} of about {self.total:,} runs "
                         f"({share * 100:3.0f} %)")
        if final:
            sys.stderr.write("\n")
        sys.stderr.flush()


def identify_to_csv(source, output, *, profile: InstrumentProfile | str | Path | None = None,
                    library=None, chunk_rows: int = DEFAULT_CHUNK_ROWS,
                    progress: bool | None = None, workers: int | None = None) -> StreamSummary:
    """Analyse a CSV run file chunk by chunk and write the per-run CSV.

    Parameters
    ----------
    source : str or pathlib.Path
        A CSV file (comma or semicolon separated).
    output : str or pathlib.Path
        The CSV to write; replaced only when the whole file is done.
    profile : InstrumentProfile or path, optional
        Default uncertainties.
    library : pandas.DataFrame, optional
        Candidate library; the default library when None.
    chunk_rows : int
        Rows per chunk.
    progress : bool or callable, optional
        Show a progress line on stderr; by default only when stderr is a terminal. A
        callable gets ``(runs done, runs in the file)`` instead, at most five times a second.
    workers : int, optional
        Processes that analyse chunks in parallel (default: up to 2, the cores this
        process may use). The output is the same for any number.

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
    plan = _plan_chunks(Path(source), chunk_rows)
    progress_line = _Progress(count_data_lines(plan.path), progress)
    summary = StreamSummary()
    appender = _OrderedAppender(summary, plan.notes, progress_line)
    _write_chunks(plan, Path(output), appender, _worker_count(workers), profile, library)
    progress_line.update(summary.runs, final=True)
    summary.notes = _merge_notes(plan.notes)
    summary.notes.append("replicates were not combined: a large file written straight to CSV "
                         "gives one row per run")
    summary.seconds = time.monotonic() - started
    return summary


@dataclass
class _ChunkPlan:
    """How to read a run file in chunks: its encoding, layout (separator, header row) and chunk size.

    ``notes`` collects the file's notes in the order they are first met (a dict
    used as an ordered set): the encoding's and the layout's first, then each chunk's.
    """

    path: Path
    encoding: str
    layout: Layout
    chunk_rows: int
    notes: dict

    @property
    def decimal_comma(self) -> bool:
        """Whether numbers use a decimal comma (the file is semicolon- or tab-separated)."""
        return self.layout.separator in (";", "\t")

    def reader(self):
        """Iterate over the file's data rows as frames of text cells, ``chunk_rows`` at a time.

        The rows are split by :func:`molid.io.delimited.frames`, as the in-memory reader
        splits them, so a malformed line is the same row problem in both.
        """
        with text_stream(self.path, self.encoding) as stream:
            yield from frames(stream, self.layout, self.chunk_rows)


def _plan_chunks(path, chunk_rows) -> _ChunkPlan:
    """Check the file can be read and find its encoding and layout from its start."""
    try:
        with open(path, "rb") as stream:
            head = stream.read(1 << 16)
    except FileNotFoundError:
        raise InputError(f"{path}: no such file") from None
    except OSError as error:
        raise InputError(f"{path}: cannot read it ({error.strerror})") from None
    if not head.strip():
        raise InputError(f"{path}: the file is empty; expected a header row and data rows")
    encoding = detect_encoding(blocks_of_file(path), str(path), count_rows)
    with text_stream(path, encoding.codec) as stream:
        text = stream.read(HEAD_CHARACTERS + 1)
    if not text.strip():
        raise InputError(f"{path}: the file is empty; expected a header row and data rows")
    layout = find_layout(text_head(text, complete=len(text) <= HEAD_CHARACTERS))
    resolve_headers(layout.labels, str(path))  # as the in-memory reader: a header problem first
    notes = dict.fromkeys([*encoding.notes, *layout.notes])
    return _ChunkPlan(path, encoding.codec, layout, chunk_rows, notes)


def _chunk_jobs(plan, reader):
    """Yield one job per chunk, with its first spreadsheet row and the run ids it reuses.

    Duplicate run ids are found across chunks here, in the parent process and in file
    order, so a chunk analysed by a worker still names the row where an id was first
    used; :class:`~molid.io.reading.RunIds` keeps about 24 bytes per id seen.
    """
    seen = RunIds()
    for raw in reader:
        first_row = raw.attrs["first_row"]  # rows keep their spreadsheet numbers below any titles
        first_use = first_uses(raw, seen, first_row)
        yield (raw, plan.decimal_comma, first_row, first_use, str(plan.path))


class _OrderedAppender:
    """Append each chunk's CSV to the output, in file order, and add its counts to the summary."""

    def __init__(self, summary: StreamSummary, notes: dict, progress_line: _Progress):
        self.summary = summary
        self.notes = notes
        self.progress_line = progress_line
        self.sink = None

    def __call__(self, outcome) -> None:
        text, runs, errors, n_errors, n_warnings, chunk_notes = outcome
        if runs == 0:
            return
        summary = self.summary
        if summary.runs and text:
            text = text.split("\n", 1)[1]  # every chunk's CSV starts with the header
        self.sink.write(text)
        summary.runs += runs
        summary.rows_with_errors += n_errors
        summary.rows_with_warnings += n_warnings
        summary.errors.extend(errors[: _MAX_LISTED - len(summary.errors)])
        for note in chunk_notes:
            self.notes.setdefault(note, None)
        self.progress_line.update(summary.runs)


def _write_chunks(plan, output, appender, workers, profile, library) -> None:
    """Analyse every chunk and write the output atomically; a failure leaves no file behind."""
    pool = None
    try:
        with atomic_output(output, "w") as sink:
            appender.sink = sink
            reader = plan.reader()
            if workers > 1:
                pool = _start_pool(workers, profile, library)
            _analyse_in_order(_chunk_jobs(plan, reader), pool, workers, appender, profile, library)
            if appender.summary.runs == 0:
                raise InputError(f"{plan.path}: the file has a header but no data rows")
    except BaseException:
        stop_pool(pool, now=True)  # interrupted or failed: end the workers at once
        pool = None
        raise
    finally:
        stop_pool(pool)


def stop_pool(pool, now: bool = False) -> None:
    """Stop a worker pool: after its running chunks, or with ``now`` at once (an interruption).

    Ending the worker processes at once leaves none behind a SIGINT or SIGTERM; the
    pool is then shut down so its manager thread and pipes are gone too.
    """
    if pool is None:
        return
    if now:
        # ProcessPoolExecutor has no public way to end a running task; its processes are
        # in ``_processes`` (pid → multiprocessing.Process) since Python 3.2.
        processes = list((getattr(pool, "_processes", None) or {}).values())
        for process in processes:
            if process.is_alive():
                process.terminate()
        for process in processes:
            process.join(5)
            if process.is_alive():  # a worker that ignored SIGTERM
                process.kill()
        # Not waiting: the manager thread may hold a lock the interruption left taken.
        pool.shutdown(wait=False, cancel_futures=True)
        return
    pool.shutdown(wait=True, cancel_futures=True)


def _analyse_in_order(jobs, pool, workers, collect, profile, library, function=None) -> None:
    """Analyse the chunks, here or in the pool, and hand their outcomes to ``collect`` in order.

    With a pool, at most ``workers`` chunks wait beyond the one being collected, which
    bounds memory whatever the file's length; collecting the oldest first keeps the
    output in file order. ``function(job, profile, library)`` does one job (default:
    a chunk of the per-run CSV); in the pool it is given the job alone.
    """
    function = _chunk_job if function is None else function
    if pool is None:
        for job in jobs:
            check_interrupted()
            collect(function(job, profile, library))
        return
    pending: deque = deque()
    for job in jobs:
        check_interrupted()  # a signal met while a worker was forked is not lost
        with held_signals():  # a submit may fork a worker or start the pool's threads
            pending.append(pool.submit(function, job))
        while len(pending) > workers:
            collect(pending.popleft().result())
    while pending:
        collect(pending.popleft().result())


def _worker_count(requested) -> int:
    if requested is not None:
        return max(1, int(requested))
    return max(1, min(2, len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity")
                      else (os.cpu_count() or 1)))


_WORKER_STATE: dict = {}


def _initialise_worker(profile, library):
    import gc
    import signal
    import warnings

    # A Ctrl-C reaches every process of the terminal's group: the parent alone handles it
    # (and ends the workers); SIGTERM from the parent ends a worker at once, whatever
    # handler it inherited from the command line.
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    release_signals()  # forked while the parent held them back
    # A worker's stderr is the user's terminal: no library's warning text goes there (the
    # command line says in its own words what the main process met; see molid.guards).
    warnings.simplefilter("ignore")
    _WORKER_STATE["profile"] = profile
    _WORKER_STATE["library"] = library
    # The loaded modules and library live as long as the worker: keep them out of the
    # collector's way so each chunk's garbage collection only looks at the chunk.
    gc.freeze()


def _start_pool(workers, profile, library):
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    methods = multiprocessing.get_all_start_methods()
    context = multiprocessing.get_context("fork" if "fork" in methods else "spawn")
    return ProcessPoolExecutor(max_workers=workers, mp_context=context,
                               initializer=_initialise_worker, initargs=(profile, library))


def _chunk_job(job, profile=None, library=None):
    """Validate, evaluate and rank one chunk; return its CSV text and what the summary needs."""
    from molid.io.run_csv import to_csv

    profile = profile if profile is not None else _WORKER_STATE["profile"]
    library = library if library is not None else _WORKER_STATE["library"]
    raw, decimal_comma, first_row, first_use, source = job
    table = parse_runs(raw, decimal_comma=decimal_comma, profile=profile, first_row=first_row,
                       source=source, require_rows=False, first_use_of_rows=first_use)
    if len(table) == 0:
        return "", 0, [], 0, 0, []
    result = identify(table, profile=profile, library=library, combine=False)
    bad = [row for row in result.errors if row]
    return (to_csv(result, header=True), len(table), ["; ".join(row) for row in bad[:_MAX_LISTED]],
            len(bad), sum(1 for row in result.warnings if row), list(table.notes))
