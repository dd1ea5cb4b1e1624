"""Helpers of the web-page tests: a real `molid serve` process on loopback, and the command line beside it."""

import os
import signal
import subprocess
import sys
import tempfile
import threading
import urllib.request
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = ROOT / "sample_runs"
#: A fixed creation time for the JSON provenance of both the page and the command line.
EPOCH = "1767225600"


def _environment() -> dict:
    """Return the environment of the server and of the command line beside it: this tree, a fixed time."""
    path = os.pathsep.join(part for part in (str(ROOT), os.environ.get("PYTHONPATH", "")) if part)
    return {**os.environ, "SOURCE_DATE_EPOCH": EPOCH, "PYTHONIOENCODING": "utf-8", "PYTHONPATH": path}


class Server:
    """A `molid serve` process: its address, its printed lines, and how to stop it."""

    def __init__(self, *arguments):
        self.log = tempfile.TemporaryFile(mode="w+")
        environment = _environment()
        self.process = subprocess.Popen([sys.executable, "-m", "molid", "serve", *arguments],
                                        stdout=subprocess.PIPE, stderr=self.log, text=True, env=environment,
                                        cwd=ROOT)
        self.lines = []
        found = threading.Event()

        def read():
            for line in self.process.stdout:
                self.lines.append(line.rstrip("\n"))
                if "press Ctrl-C" in line:
                    found.set()
            found.set()

        threading.Thread(target=read, daemon=True).start()
        if not found.wait(90) or self.process.poll() is not None:
            self.stop()
            self.log.seek(0)
            raise RuntimeError("molid serve did not start: " + "\n".join(self.lines) + self.log.read())
        self.address = next(line.split("open ", 1)[1] for line in self.lines if " open http" in line)
        self.base = self.address.split("?", 1)[0].rstrip("/")

    def get(self, path, headers=None):
        """GET a path of the server; return (status, headers, body)."""
        request = urllib.request.Request(self.base + path, headers=headers or {})
        try:
            with urllib.request.urlopen(request, timeout=60) as response:
                return response.status, dict(response.headers), response.read()
        except urllib.error.HTTPError as error:
            return error.code, dict(error.headers), error.read()

    def stop(self):
        """Stop the server as Ctrl-C or SIGTERM does (its workers end, its files are removed)."""
        if self.process.poll() is None:
            self.process.send_signal(signal.SIGTERM)
            try:
                self.process.wait(30)
            except subprocess.TimeoutExpired:
                self.process.kill()
                self.process.wait(10)


def command_line(folder, *arguments):
    """Start the molid command line in a folder with the same SOURCE_DATE_EPOCH; ``.result()`` waits for it.

    It runs beside the page's own analysis (the machine has two cores), so the test waits once.
    """
    environment = _environment()
    process = subprocess.Popen([sys.executable, "-m", "molid", *arguments], cwd=folder, env=environment,
                               stdout=subprocess.PIPE, stderr=subprocess.PIPE)

    class _Running:
        def result(self):
            stdout, stderr = process.communicate(timeout=300)
            return subprocess.CompletedProcess(process.args, process.returncode, stdout, stderr)

    return _Running()
