"""Work for the web page done in worker processes: queued, run a few at a time, cancellable.

Each analysis a page asks for (how the headers are read, the analysis itself, a
report) is a :class:`Task` that waits in one queue and runs in one of a fixed number
of worker processes (:func:`molid.web.worker.worker_main`). The number of workers bounds
the memory and the processor time the page can take, whatever the number of people
who upload at once; a long analysis holds one worker and never the server, which only
hands out tasks and answers the browser's polling.

Cancelling a task that waits takes it out of the queue. Cancelling a running one
sends its worker SIGTERM: the worker ends the way ``molid`` ends on SIGTERM (partial
files removed, chunk workers stopped), and a fresh worker takes its
place. A worker that does not end within a few seconds is killed.
"""

from __future__ import annotations

import collections
import dataclasses
import multiprocessing
import os
import threading
import time

__all__ = ["Task", "WorkerPool", "default_worker_count"]

#: Seconds a cancelled worker gets to clean up before it is killed.
_GRACE = 5.0


def default_worker_count() -> int:
    """Return the default number of worker processes: up to 2, the cores this process may use."""
    cores = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else (os.cpu_count() or 1)
    return max(1, min(2, cores))


@dataclasses.dataclass
class Task:
    """One piece of work for a worker, and what the page shows of it.

    Attributes
    ----------
    function : str
        The name of the worker function (see :data:`molid.web.worker.FUNCTIONS`).
    arguments : dict
        Its picklable arguments.
    state : str
        ``queued``, ``running``, ``done``, ``failed`` or ``cancelled``.
    stage : str
        What it is doing, in words.
    done, total : int
        Progress counts (runs), 0 when not known.
    result : object
        What the function returned, once ``done``.
    message : str
        Why it failed, once ``failed``.
    """

    function: str
    arguments: dict
    state: str = "queued"
    stage: str = "waiting for a free worker"
    done: int = 0
    total: int = 0
    result: object = None
    message: str = ""
    queued_at: float = dataclasses.field(default_factory=time.monotonic)
    started_at: float | None = None
    finished_at: float | None = None
    position: int = 0

    @property
    def finished(self) -> bool:
        """True once the task is done, failed or cancelled."""
        return self.state in ("done", "failed", "cancelled")

    def status(self) -> dict:
        """Return the task's state as the page's progress display reads it (JSON-ready)."""
        now = time.monotonic()
        elapsed = (self.finished_at or now) - (self.started_at or now)
        percent = round(100.0 * self.done / self.total, 1) if self.total else None
        return {"state": self.state, "stage": self.stage, "done": self.done, "total": self.total,
                "percent": percent, "seconds": round(elapsed, 1), "position": self.position,
                "message": self.message}


class _Slot:
    """One worker process and the pipe to it."""

    def __init__(self, context, number: int):
        self.context = context
        self.number = number
        self.process = None
        self.connection = None
        self.task: Task | None = None

    def ensure_started(self) -> None:
        if self.process is not None and self.process.is_alive():
            return
        from molid.web.worker import worker_main

        parent, child = self.context.Pipe()
        # Not a daemon: a worker analysing a large file starts its own chunk workers.
        self.process = self.context.Process(target=worker_main, args=(child,), daemon=False,
                                            name=f"molid-web-worker-{self.number}")
        self.process.start()
        child.close()
        self.connection = parent

    def stop(self) -> None:
        """End the worker: SIGTERM, then SIGKILL after the grace period."""
        process = self.process
        if process is None:
            return
        if process.is_alive():
            process.terminate()
            process.join(_GRACE)
            if process.is_alive():
                process.kill()
                process.join(_GRACE)
        if self.connection is not None:
            self.connection.close()
        self.process = self.connection = None


class WorkerPool:
    """A queue of tasks served by a fixed number of worker processes.

    Parameters
    ----------
    size : int
        Worker processes (tasks running at once); the rest wait in order.
    """

    def __init__(self, size: int):
        self.size = max(1, int(size))
        self._context = multiprocessing.get_context("spawn")  # safe beside the server's threads
        self._queue: collections.deque = collections.deque()
        self._lock = threading.Condition()
        self._closing = False
        self._slots = [_Slot(self._context, number) for number in range(self.size)]
        self._threads = [threading.Thread(target=self._serve, args=(slot,), daemon=True,
                                          name=f"molid-web-slot-{slot.number}")
                         for slot in self._slots]
        for slot in self._slots:
            slot.ensure_started()  # warm: the first analysis does not wait for imports
        for thread in self._threads:
            thread.start()

    def submit(self, task: Task) -> Task:
        """Queue a task; it runs when a worker is free."""
        with self._lock:
            if self._closing:
                raise RuntimeError("the worker pool is closed")
            self._queue.append(task)
            self._renumber()
            self._lock.notify_all()
        return task

    def cancel(self, task: Task) -> None:
        """Cancel a task: out of the queue if it waits, its worker ended if it runs."""
        with self._lock:
            if task.finished:
                return
            if task in self._queue:
                self._queue.remove(task)
                self._renumber()
                self._finish(task, "cancelled", stage="cancelled before it started")
                return
            task.state = "cancelling"
            task.stage = "stopping"
            slot = next((slot for slot in self._slots if slot.task is task), None)
        process = slot.process if slot is not None else None
        if process is not None and process.is_alive():
            process.terminate()  # the serving thread sees the pipe close and restarts it
            # a worker stuck in a long call that does not return to Python is killed
            timer = threading.Timer(_GRACE, lambda: process.is_alive() and process.kill())
            timer.daemon = True
            timer.start()

    def busy(self) -> int:
        """Return the number of tasks waiting or running."""
        with self._lock:
            return len(self._queue) + sum(slot.task is not None for slot in self._slots)

    def close(self) -> None:
        """Cancel what waits, end every worker."""
        with self._lock:
            self._closing = True
            for task in list(self._queue):
                self._finish(task, "cancelled", stage="the server stopped")
            self._queue.clear()
            self._lock.notify_all()
        for slot in self._slots:
            slot.stop()

    # -- inside the pool ------------------------------------------------------------------
    def _renumber(self) -> None:
        for position, waiting in enumerate(self._queue, start=1):
            waiting.position = position

    def _finish(self, task: Task, state: str, *, stage: str = "", result=None, message: str = "") -> None:
        task.state = state
        task.stage = stage or state
        task.result = result
        task.message = message
        task.position = 0
        task.finished_at = time.monotonic()

    def _next(self, slot) -> Task | None:
        with self._lock:
            while not self._queue and not self._closing:
                self._lock.wait()
            if self._closing:
                return None
            task = self._queue.popleft()
            self._renumber()
            task.state, task.stage, task.position = "running", "starting", 0
            task.started_at = time.monotonic()
            slot.task = task
            return task

    def _serve(self, slot) -> None:
        """Hand tasks to one worker, one at a time, and record what it reports."""
        while True:
            task = self._next(slot)
            if task is None:
                return
            outcome = None
            try:
                slot.ensure_started()
                slot.connection.send((task.function, task.arguments))
                outcome = self._follow(slot, task)
            except (OSError, EOFError, ValueError):
                outcome = None
            with self._lock:
                slot.task = None
                if outcome is None:  # the worker ended: cancelled, or it died
                    cancelled = task.state == "cancelling"
                    self._finish(task, "cancelled" if cancelled else "failed",
                                 stage="cancelled" if cancelled else "failed",
                                 message="" if cancelled else
                                 "the analysis stopped unexpectedly (its worker process ended); "
                                 "this is a bug in molid or the machine ran out of memory")
                else:
                    kind, payload = outcome
                    if kind == "done":
                        self._finish(task, "done", stage="done", result=payload)
                    else:
                        self._finish(task, "failed", stage="failed", message=str(payload))
            if outcome is None and not self._closing:
                slot.stop()
                try:
                    slot.ensure_started()
                except OSError:
                    pass

    @staticmethod
    def _follow(slot, task: Task):
        """Read the worker's messages until the task ends; None when the worker ended first."""
        while True:
            try:
                kind, payload = slot.connection.recv()
            except (EOFError, OSError):
                return None
            if kind == "progress":
                stage, done, total = payload
                if task.state == "running":
                    task.stage, task.done, task.total = stage, done, total
                continue
            return kind, payload
