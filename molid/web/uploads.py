"""The analyses of the web page: uploaded files in a private folder each, the options, the tasks.

An upload is written under a fixed name of ours (``runs.csv``, ``profile.toml``, ...)
into a folder only the server's user can read (:func:`tempfile.mkdtemp` makes it mode
0700), inside one such folder per server; the name the user's file had is kept as
text, to show and to record, and never reaches the file system. An analysis is
removed with its folder when its owner asks, when it has not been looked at for a
while, when more than a fixed number are kept, and when the server stops.
"""

from __future__ import annotations

import dataclasses
import secrets
import shutil
import tempfile
import threading
import time
from pathlib import Path

__all__ = ["Analysis", "OptionProblem", "ROLES", "Store", "display_name", "read_options"]

#: The files an analysis can have: role → (stored name, stored name of a workbook or None, label).
ROLES = {
    "runs": ("runs.csv", "runs.xlsx", "run sheet"),
    "profile": ("profile.toml", None, "instrument profile"),
    "key": ("key.csv", "key.xlsx", "answer key"),
    "rubric": ("rubric.toml", None, "rubric"),
    "vessels": ("vessels.csv", None, "vessel register"),
    "spec": ("spec.csv", None, "specification"),
    "library": ("library.csv", None, "extra candidates (library file)"),
}

_WORKBOOK_START = b"PK\x03\x04"


class OptionProblem(ValueError):
    """A form value that cannot be used; the message says which and what is accepted."""


def display_name(filename, fallback: str) -> str:
    r"""Return the name to show for an uploaded file: its last path part, printable, at most 120 characters.

    Examples
    --------
    >>> display_name("C:\\lab\\runs 1.csv", "runs.csv")
    'runs 1.csv'
    >>> display_name("../../\x1b.csv", "runs.csv")
    '.csv'
    >>> display_name("", "runs.csv")
    'runs.csv'
    """
    name = str(filename or "").replace("\\", "/").rsplit("/", 1)[-1]
    name = "".join(character for character in name if character.isprintable()).strip()
    return name[:120] or fallback


def _whole(form, name: str, low: int, high: int, default):
    text = (form.get(name) or "").strip()
    if not text:
        return default
    try:
        value = int(text)
    except ValueError:
        raise OptionProblem(f"{name.replace('_', ' ')}: '{text[:40]}' is not a whole number") from None
    if not low <= value <= high:
        raise OptionProblem(f"{name.replace('_', ' ')}: {value} is outside {low:,} to {high:,}")
    return value


def _choice(form, name: str, choices: tuple) -> str:
    value = (form.get(name) or choices[0]).strip()
    if value not in choices:
        raise OptionProblem(f"{name}: '{value[:40]}' is not one of {', '.join(choices)}")
    return value


def read_options(form) -> dict:
    """Read the analysis options of the upload form, as the command line's options.

    Parameters
    ----------
    form : mapping
        The form fields (text).

    Returns
    -------
    dict
        ``mode``, ``sheet``, ``contaminant``, ``rule``, ``top``, ``monte_carlo``, ``seed``,
        ``candidates``, ``replace_library``, ``reference_conditions`` (as typed: the command line's
        parser reads them).

    Raises
    ------
    OptionProblem
        For a value that cannot be used.
    """
    contaminant = (form.get("contaminant") or "").strip() or "air"
    sheet = (form.get("sheet") or "").strip() or None
    options = {
        "mode": _choice(form, "mode", ("auto", "identify", "grade")),
        "sheet": sheet[:200] if sheet else None,
        "contaminant": contaminant[:200],
        "rule": _choice(form, "rule", ("guarded", "simple")),
        "top": _whole(form, "top", 1, 100, 5),
        "monte_carlo": _whole(form, "monte_carlo", 1, 20_000_000, None),
        "seed": _whole(form, "seed", 0, 2**32 - 1, None),
        "candidates": [line.strip() for line in (form.get("candidates") or "").splitlines()
                       if line.strip()][:50],
        "replace_library": form.get("replace_library") == "yes",
        "reference_conditions": (form.get("reference_conditions") or "").strip()[:200] or None,
    }
    if options["seed"] is not None and options["monte_carlo"] is None:
        raise OptionProblem("seed: a seed needs a number of Monte Carlo draws")
    return options


@dataclasses.dataclass
class Analysis:
    """One person's uploaded files, options and tasks.

    Attributes
    ----------
    id : str
        Random, unguessable (128 bits): the analysis's address.
    folder : pathlib.Path
        Its private folder: ``uploads/`` holds the uploaded files, ``out/`` what the analysis writes.
    uploads : dict
        Role → ``{"path", "display", "size"}``.
    options : dict
        From :func:`read_options`.
    tasks : dict
        Name (``columns``, ``analyse``, ``report-pdf``, ``report-html``) → Task.
    """

    id: str
    folder: Path
    uploads: dict
    options: dict
    tasks: dict = dataclasses.field(default_factory=dict)
    touched: float = dataclasses.field(default_factory=time.monotonic)

    def arguments(self, **options) -> dict:
        """Return the picklable arguments of a task: folder, uploads and options (with any given here)."""
        return {"folder": str(self.folder), "uploads": {role: dict(upload) for role, upload in
                                                         self.uploads.items()},
                "options": {**self.options, **options}}

    @property
    def running(self) -> bool:
        """True while a task of the analysis waits or runs."""
        return any(not task.finished for task in self.tasks.values())


class Store:
    """The analyses of one server, each in its own folder under a private folder.

    Parameters
    ----------
    pool : WorkerPool
        Where tasks run.
    keep_seconds : float
        An analysis not looked at for this long is removed.
    most : int
        At most this many analyses are kept; the least recently looked-at idle ones go first.
    """

    def __init__(self, pool, keep_seconds: float = 7200.0, most: int = 200):
        self.pool = pool
        self.keep_seconds = keep_seconds
        self.most = most
        self.root = Path(tempfile.mkdtemp(prefix="molid-web-"))
        self._analyses: dict = {}
        self._lock = threading.Lock()

    def create(self, files: dict, options: dict) -> Analysis:
        """Store the uploaded files of a new analysis.

        Parameters
        ----------
        files : dict
            Role → an uploaded file (``filename`` and ``save``/``stream``), only those chosen.
        options : dict
            From :func:`read_options`.
        """
        self.expire()
        folder = Path(tempfile.mkdtemp(prefix="analysis-", dir=self.root))
        uploads = {}
        try:
            (folder / "uploads").mkdir()
            (folder / "out").mkdir()  # what the analysis writes: never beside, never over, an upload
            for role, upload in files.items():
                uploads[role] = self._save(folder / "uploads", role, upload)
        except BaseException:
            shutil.rmtree(folder, ignore_errors=True)
            raise
        analysis = Analysis(secrets.token_urlsafe(16), folder, uploads, options)
        with self._lock:
            self._analyses[analysis.id] = analysis
        return analysis

    @staticmethod
    def _save(folder: Path, role: str, upload) -> dict:
        text_name, workbook_name, _ = ROLES[role]
        display = display_name(upload.filename, text_name)
        start = upload.stream.read(4)
        upload.stream.seek(0)
        name = workbook_name if workbook_name and start == _WORKBOOK_START else text_name
        if role == "spec" and display.lower().endswith(".toml"):
            name = "spec.toml"  # the specification reader tells TOML from CSV by the suffix
        path = folder / name
        upload.save(str(path))
        return {"path": str(path), "display": display, "size": path.stat().st_size}

    def get(self, identifier: str) -> Analysis | None:
        """Return an analysis by its id (marking it as looked at), or None."""
        with self._lock:
            analysis = self._analyses.get(str(identifier))
            if analysis is not None:
                analysis.touched = time.monotonic()
            return analysis

    def remove(self, analysis: Analysis) -> None:
        """Cancel an analysis's tasks and delete its folder."""
        with self._lock:
            self._analyses.pop(analysis.id, None)
        for task in analysis.tasks.values():
            self.pool.cancel(task)
        shutil.rmtree(analysis.folder, ignore_errors=True)

    def expire(self) -> None:
        """Remove the analyses not looked at for ``keep_seconds``, and the oldest idle ones over ``most``."""
        now = time.monotonic()
        with self._lock:
            idle = sorted((analysis for analysis in self._analyses.values() if not analysis.running),
                          key=lambda analysis: analysis.touched)
            over = max(0, len(self._analyses) + 1 - self.most)
            old = [analysis for analysis in idle if now - analysis.touched > self.keep_seconds]
            doomed = {analysis.id: analysis for analysis in old + idle[:over]}
        for analysis in doomed.values():
            self.remove(analysis)

    def close(self) -> None:
        """Remove every analysis and the server's folder."""
        with self._lock:
            analyses = list(self._analyses.values())
        for analysis in analyses:
            self.remove(analysis)
        shutil.rmtree(self.root, ignore_errors=True)
