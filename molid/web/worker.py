"""The worker process of the web page: runs one task at a time, reports progress, ends on SIGTERM.

A worker is started by :class:`molid.web.jobs.WorkerPool` and reads ``(function,
arguments)`` from its pipe. It answers ``("progress", (stage, done, total))`` while
it works and then ``("done", result)`` or ``("failed", message)``. A problem with the
user's files is a message in the command line's words; anything else is an internal
error whose message says so, never a traceback (that goes to the server's own log).

SIGTERM raises :class:`Stopped` in the worker, so the clean-ups the command line relies
on for an interruption run (partial files removed by :func:`molid.io.safe_files.atomic_output`,
chunk workers ended by :mod:`molid.pipeline.streaming`), and then the worker exits.
SIGINT is ignored: Ctrl-C in the server's terminal reaches the whole
process group, and the server ends its workers itself.
"""

from __future__ import annotations

import signal
import sys
import traceback

__all__ = ["Stopped", "worker_main"]


class Stopped(BaseException):
    """The worker was told to stop (SIGTERM): a BaseException, so no ``except Exception`` takes it."""


def _interrupted(number, frame):
    signal.signal(signal.SIGTERM, signal.SIG_IGN)  # once is enough while cleaning up
    raise Stopped(number)


def _warm_up() -> None:
    """Import what every analysis needs, so the first task does not wait for it."""
    import matplotlib

    matplotlib.use("Agg")
    import molid.pipeline.identify  # noqa: F401
    import molid.reports.content  # noqa: F401
    import molid.teaching.grading  # noqa: F401
    from molid.candidates.library import load_library

    load_library()


def worker_main(connection) -> None:
    """Serve tasks from a pipe until it closes or SIGTERM arrives.

    Parameters
    ----------
    connection : multiprocessing.connection.Connection
        The worker's end of the pipe from :class:`molid.web.jobs.WorkerPool`.
    """
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, _interrupted)
    try:
        _warm_up()
        while True:
            try:
                function, arguments = connection.recv()
            except (EOFError, OSError):
                return
            connection.send(_run(function, arguments, connection))
    except (Stopped, KeyboardInterrupt):
        return


def _run(function: str, arguments: dict, connection):
    """Run one task; return the message that ends it."""
    import warnings

    from molid.errors import USER_ERRORS
    from molid.web.view import shown
    from molid.web.work import FUNCTIONS, user_text

    def progress(stage: str, done: int = 0, total: int = 0) -> None:
        connection.send(("progress", (stage, int(done), int(total))))

    try:
        with warnings.catch_warnings():  # a library's warning names its source line: not for the page
            warnings.simplefilter("ignore")
            return ("done", FUNCTIONS[function](arguments, progress))
    except USER_ERRORS as problem:
        return ("failed", user_text(shown(problem), arguments))
    except MemoryError:
        return ("failed", "the analysis needed more memory than the machine has; try a smaller file")
    except Exception as problem:  # never a traceback on the page; the server's log keeps it
        traceback.print_exc(file=sys.stderr)
        return ("failed", f"internal error ({type(problem).__name__}: "
                          f"{user_text(shown(problem, 2000), arguments)}). This is a bug in molid; "
                          "please report it with the input file.")
