"""The rules every request to `molid serve` passes, over plain HTTP on loopback.

Checks behaviour: the access token with a --host other than loopback, the Host header on
loopback, the Content-Security-Policy (W3C Content Security Policy Level 3: no inline script
or style, no other origin), the upload limit, cancelling, and errors shown as messages.
"""

import re
import sys
import time
import uuid
from pathlib import Path

import pytest

from tests.web.serving import ROOT, SAMPLES, Server

pytest.importorskip("flask")


def _multipart(files: dict, fields: dict) -> tuple:
    """Encode a form with files as multipart/form-data (RFC 7578); return (body, content type)."""
    boundary = uuid.uuid4().hex
    parts = []
    for name, value in fields.items():
        head = f'--{boundary}\r\nContent-Disposition: form-data; name="{name}"\r\n\r\n'
        parts.append(f"{head}{value}\r\n".encode())
    for name, (filename, data) in files.items():
        head = (f'--{boundary}\r\nContent-Disposition: form-data; name="{name}"; filename="{filename}"\r\n'
                "Content-Type: application/octet-stream\r\n\r\n")
        parts.append(head.encode() + data + b"\r\n")
    parts.append(f"--{boundary}--\r\n".encode())
    return b"".join(parts), f"multipart/form-data; boundary={boundary}"


def _post(server, path, files=None, fields=None, headers=None):
    import urllib.error
    import urllib.request

    body, kind = _multipart(files or {}, fields or {})
    request = urllib.request.Request(server.base + path, data=body, method="POST",
                                     headers={"Content-Type": kind, **(headers or {})})

    class _Stay(urllib.request.HTTPRedirectHandler):
        def redirect_request(self, *arguments):
            return None

    opener = urllib.request.build_opener(_Stay)
    try:
        with opener.open(request, timeout=60) as response:
            return response.status, dict(response.headers), response.read()
    except urllib.error.HTTPError as error:
        return error.code, dict(error.headers), error.read()


def _status(server, page, name, until=("done", "failed", "cancelled"), seconds=90):
    import json

    deadline = time.monotonic() + seconds
    while time.monotonic() < deadline:
        state = json.loads(server.get(f"{page}/status/{name}")[2])
        if state["state"] in until:
            return state
        time.sleep(0.2)
    raise AssertionError(f"{name} still {state}")


def _start(server, runs: Path, **fields):
    status, headers, _ = _post(server, "/analyses", {"runs": (runs.name, runs.read_bytes())}, fields)
    assert status == 303, status
    page = headers["Location"].removeprefix(server.base)
    assert _status(server, page, "columns")["state"] == "done"
    return page


def test_token_needed_off_loopback():
    """Checks behaviour: with --host 0.0.0.0 a token is made and printed; a request without it is refused."""
    server = Server("--host", "0.0.0.0", "--workers", "1")
    try:
        token = server.address.split("?token=", 1)[1]
        assert len(token) >= 24
        base = server.base.replace("0.0.0.0", "127.0.0.1")  # requests stay on loopback
        server.base = base
        assert server.get("/")[0] == 403
        wrong = token[:-1] + ("y" if token.endswith("x") else "x")  # one character off, never the token
        assert server.get("/?token=" + wrong)[0] == 403
        status, headers, _ = server.get("/?token=" + token)
        cookie = headers["Set-Cookie"]
        assert status == 200 and "molid_token=" in cookie and "HttpOnly" in cookie
        assert server.get("/", {"Cookie": f"molid_token={token}"})[0] == 200
        assert server.get("/", {"X-Molid-Token": token})[0] == 200
        assert server.get("/static/molid.css")[0] == 403  # every request, assets too
        runs = SAMPLES / "qa_cylinders.csv"
        assert _post(server, "/analyses", {"runs": (runs.name, runs.read_bytes())})[0] == 403
    finally:
        server.stop()


def test_page_headers_and_no_inline_code(server):
    """Checks behaviour: a strict Content-Security-Policy; pages with no inline script, style or handler."""
    status, headers, body = server.get("/")
    policy = headers["Content-Security-Policy"]
    assert status == 200 and "script-src 'self'" in policy and "default-src 'none'" in policy
    assert "unsafe-inline" not in policy and "http" not in policy and "frame-ancestors 'none'" in policy
    assert headers["X-Content-Type-Options"] == "nosniff"
    html = body.decode("utf-8")
    assert not re.search(r"<script(?![^>]*\ssrc=)", html)
    assert not re.search(r"\sstyle=|\son[a-z]+=|<style", html)
    assert server.get("/", {"Host": f"attacker.example:{server.base.rsplit(':', 1)[1]}"})[0] == 400


def test_oversized_upload_is_refused_with_a_message(server):
    """Checks behaviour: the server itself refuses an upload over the limit, with a message (HTTP 413)."""
    status, _, body = _post(server, "/analyses", {"runs": ("big.csv", b"x" * (1024 * 1024 + 100))})
    assert status == 413
    assert "larger than the upload limit of 1 MB" in body.decode("utf-8")


def test_bad_file_gets_a_message_not_a_traceback(server):
    """Checks behaviour: a run sheet without its required columns gets the reader's message on the page."""
    body, _ = b"run,colour\nA1,blue\n", None
    status, headers, _ = _post(server, "/analyses", {"runs": ("colours.csv", body)})
    page = headers["Location"].removeprefix(server.base)
    state = _status(server, page, "columns")
    assert state["state"] == "failed" and "colours.csv" in state["message"]
    html = server.get(page)[2].decode("utf-8")
    assert "The file cannot be used" in html and "Traceback" not in html and "/tmp/" not in html


def test_option_refused_as_the_command_line_refuses_it(server):
    """Checks behaviour: an option the command line's parser refuses is refused with its words."""
    runs = SAMPLES / "qa_cylinders.csv"
    status, headers, _ = _post(server, "/analyses", {"runs": (runs.name, runs.read_bytes())},
                               {"reference_conditions": "warm and humid"})
    state = _status(server, headers["Location"].removeprefix(server.base), "columns")
    assert state["state"] == "failed" and "reference-conditions" in state["message"]


def test_cancel_stops_a_long_analysis(server, tmp_path):
    """Checks behaviour: cancelling ends the running analysis at once, and the next analysis still runs."""
    sys.path.insert(0, str(ROOT / "benchmarks"))
    from make_big_file import make_frame

    long_file = tmp_path / "long.csv"
    make_frame(8000).to_csv(long_file, index=False)
    page = _start(server, long_file)
    _post(server, page + "/run")
    _status(server, page, "analyse", until=("running",))
    started = time.monotonic()
    assert _post(server, page + "/cancel/analyse")[0] == 303
    assert _status(server, page, "analyse", seconds=20)["state"] == "cancelled"
    assert time.monotonic() - started < 10
    other = _start(server, SAMPLES / "qa_cylinders.csv")
    _post(server, other + "/run")
    assert _status(server, other, "analyse")["state"] == "done"


def test_report_and_blank_sheet_are_the_command_lines(server, tmp_path):
    """Checks behaviour: the HTML report and a blank CSV sheet from the page are the command line's bytes."""
    import shutil

    from tests.web.serving import command_line

    for name in ("qa_cylinders.csv", "qa_lab_profile.toml"):
        shutil.copy(SAMPLES / name, tmp_path / name)
    report = command_line(tmp_path, "report", "qa_cylinders.csv", "--profile", "qa_lab_profile.toml",
                          "-o", "report.html")
    sheet = command_line(tmp_path, "template", "syringe", "-o", "syringe.csv")
    runs, profile = SAMPLES / "qa_cylinders.csv", SAMPLES / "qa_lab_profile.toml"
    status, headers, _ = _post(server, "/analyses", {"runs": (runs.name, runs.read_bytes()),
                                                     "profile": (profile.name, profile.read_bytes())})
    page = headers["Location"].removeprefix(server.base)
    _status(server, page, "columns")
    _post(server, page + "/run")
    assert _status(server, page, "analyse")["state"] == "done"
    _post(server, page + "/report", fields={"format": "html", "paper": "a4"})
    assert _status(server, page, "report-html")["state"] == "done"
    assert report.result().returncode == 0 and sheet.result().returncode == 0
    assert server.get(page + "/files/report.html")[2] == (tmp_path / "report.html").read_bytes()
    assert server.get("/templates/syringe.csv")[2] == (tmp_path / "syringe.csv").read_bytes()
