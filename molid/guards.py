"""What the command line puts around every command: warnings in our words, clean interruptions.

Warnings: a Python, numpy, pandas or matplotlib warning names a source file and a
line of code, which tells a user nothing. While a command runs, every warning is
caught; the causes that come from data are handled where they arise (a row
problem or a note), and whatever still arrives is reported once per kind, after
the command's own output, in a line of our own (:func:`warning_note`).

Interruptions: SIGINT (Ctrl-C) and SIGTERM end a command the same way. The
signal raises :class:`Interrupted` in the main thread, so every ``finally`` and
``except BaseException`` on the way out runs: partial output files are removed
(:func:`molid.io.safe_files.atomic_output`) and worker processes are ended
(:func:`molid.pipeline.streaming.stop_pool`). The exit status is 128 plus the
signal's number, as POSIX shells report a process ended by a signal (130 for
SIGINT, 143 for SIGTERM; IEEE Std 1003.1-2017, Shell Command Language, 2.8.2).
"""

from __future__ import annotations

import contextlib
import os
import signal
import sys
import warnings

__all__ = ["Interrupted", "caught_warnings", "check_interrupted", "held_signals", "interruptible",
           "received", "release_signals", "warning_note"]

#: The most kinds of warning listed after a command.
_MOST_KINDS = 10


class Interrupted(BaseException):
    """The command was interrupted by a signal (not an error of the input or of molid).

    A BaseException, like KeyboardInterrupt, so that no ``except Exception`` on the
    way out mistakes it for a problem with the file.
    """

    def __init__(self, number: int):
        super().__init__(number)
        self.number = number

    @property
    def exit_status(self) -> int:
        """128 plus the signal's number (130 for SIGINT, 143 for SIGTERM)."""
        return 128 + self.number

    @property
    def name(self) -> str:
        """The signal's name, e.g. ``SIGTERM``."""
        return signal.Signals(self.number).name


_OWNER: list = []  # the process that installed the handlers
_RECEIVED: list = []  # the signal received, kept in case its exception was swallowed


def _raise_interrupted(number, frame):
    if _OWNER and os.getpid() != _OWNER[-1]:
        # A worker forked from this process, not yet given its own handlers: it has no file
        # of its own to clean up, and its parent ends the pool.
        os._exit(128 + number)
    # Once is enough: further signals wait until the clean-up is done.
    for handled in (signal.SIGINT, signal.SIGTERM):
        signal.signal(handled, signal.SIG_IGN)
    _RECEIVED.append(number)
    raise Interrupted(number)


def check_interrupted() -> None:
    """Raise :class:`Interrupted` again if a signal came and the work goes on.

    Python drops an exception raised where it cannot propagate (a callback run at a
    fork, a finaliser): the signal's exception can be lost there. The places that
    finish an output or start the next chunk call this, so a lost interruption
    still stops the command before anything more is written.
    """
    if _RECEIVED and _OWNER and os.getpid() == _OWNER[-1]:
        raise Interrupted(_RECEIVED[0])


def received():
    """Give the signal received while the command ran (its number), None when there was none."""
    return _RECEIVED[0] if _RECEIVED else None


_SIGNALS = (signal.SIGINT, signal.SIGTERM)


@contextlib.contextmanager
def held_signals():
    """Hold SIGINT and SIGTERM back while the block runs; one that came is handled at its end.

    For a block that forks a worker or starts a thread: an exception raised inside the
    library's at-fork callbacks would leave one of its locks taken (and the command
    hanging on it later). Threads and processes started in the block inherit the held
    signals; a worker lets them through again with :func:`release_signals`.
    """
    if not hasattr(signal, "pthread_sigmask"):  # not POSIX: nothing to hold
        yield
        return
    previous = signal.pthread_sigmask(signal.SIG_BLOCK, _SIGNALS)
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, previous)


def release_signals() -> None:
    """Let SIGINT and SIGTERM through again (in a worker started while they were held)."""
    if hasattr(signal, "pthread_sigmask"):
        signal.pthread_sigmask(signal.SIG_UNBLOCK, _SIGNALS)


def _quiet_unraisable(previous):
    """Give a hook that drops an interruption Python could not raise (it is kept in _RECEIVED)."""
    def hook(unraisable):
        if not isinstance(unraisable.exc_value, Interrupted):
            previous(unraisable)
    return hook


@contextlib.contextmanager
def interruptible():
    """Turn SIGINT and SIGTERM into :class:`Interrupted` while the block runs (main thread only)."""
    previous = {}
    try:
        for number in (signal.SIGINT, signal.SIGTERM):
            previous[number] = signal.signal(number, _raise_interrupted)
    except ValueError:  # not the main thread: leave the handlers as they are
        pass
    _OWNER.append(os.getpid())
    _RECEIVED.clear()
    unraisable, sys.unraisablehook = sys.unraisablehook, _quiet_unraisable(sys.unraisablehook)
    try:
        yield
    finally:
        sys.unraisablehook = unraisable
        _OWNER.pop()
        _RECEIVED.clear()
        for number, handler in previous.items():
            signal.signal(number, handler)


#: Warnings whose message starts with these words, said in our words.
_OUR_WORDS = (
    ("overflow", "a calculation overflowed: some input is far too large or too small for it"),
    ("divide by zero", "a calculation divided by zero"),
    ("invalid value", "a calculation met a value it cannot use (a root of a negative number, or "
                      "infinity minus infinity)"),
    ("underflow", "a calculation underflowed"),
    ("glyph", "a figure lacks a character of the text it shows"),
    ("Mean of empty slice", "a statistic was asked of no values"),
    ("Degrees of freedom", "a statistic was asked of too few values"),
)


def warning_note(category: str, message: str) -> str:
    """Say in our words what a caught warning means (without its source file or code).

    Examples
    --------
    >>> warning_note("RuntimeWarning", "overflow encountered in multiply")[:40]
    'a calculation overflowed: some input is '
    """
    for start, words in _OUR_WORDS:
        if start.lower() in message.lower():
            return words
    return f"a step of the analysis reported an unexpected condition ({category})"


@contextlib.contextmanager
def caught_warnings():
    """Catch every warning while the block runs; yield the set of their notes, in our words.

    Each kind is kept once, so a warning raised for every row costs nothing more.
    """
    notes: dict = {}

    def keep(message, category, filename, lineno, file=None, line=None):
        if len(notes) < _MOST_KINDS:
            notes.setdefault(warning_note(category.__name__, str(message)), None)

    with warnings.catch_warnings():
        warnings.simplefilter("always")
        warnings.showwarning = keep
        yield notes
