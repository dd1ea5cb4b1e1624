"""The web application: pages, downloads and the rules every request passes (Flask).

Pages are rendered on the server from Jinja templates, which escape every text
(autoescape); the page's one script and style sheet are files of the package, so the
Content-Security-Policy allows nothing inline and no other origin. Every request
passes :func:`_guard`: the access token when the server has one, the Host header
when it listens on loopback without one (a web page elsewhere cannot reach it by a
name that resolves to 127.0.0.1), and the Origin of a form posted from elsewhere.
"""

from __future__ import annotations

import hmac
import re
import threading
from pathlib import Path

from flask import Flask, abort, jsonify, redirect, render_template, request, send_file, url_for
from werkzeug.exceptions import HTTPException, RequestEntityTooLarge

from molid.web.jobs import Task, WorkerPool, default_worker_count
from molid.web.uploads import ROLES, OptionProblem, Store, read_options

__all__ = ["CONTENT_SECURITY_POLICY", "DEFAULT_UPLOAD_LIMIT", "DOWNLOADS", "VERDICT_SYMBOLS", "close_app",
           "create_app"]

#: Upload limit of one analysis, all its files together [bytes].
DEFAULT_UPLOAD_LIMIT = 50 * 1024 * 1024

#: Scripts, styles, images and requests from this server only; nothing inline; no frames, no plugins.
CONTENT_SECURITY_POLICY = ("default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self'; "
                           "connect-src 'self'; form-action 'self'; base-uri 'none'; "
                           "frame-ancestors 'none'")

_TOKEN_COOKIE = "molid_token"

#: Files an analysis offers for download: name → (where in its ``out/`` folder, type).
DOWNLOADS = {
    "runs.csv": ("runs.csv", "text/csv"),
    "result.json": ("result.json", "application/json"),
    "grades.csv": ("grades.csv", "text/csv"),
    "grades.json": ("grades.json", "application/json"),
    "report.pdf": ("report.pdf", "application/pdf"),
    "report.html": ("report.html", "text/html"),
    "percent_error.svg": ("plots/percent_error.svg", "image/svg+xml"),
    "percent_error.png": ("plots/percent_error.png", "image/png"),
    "intervals.svg": ("plots/intervals.svg", "image/svg+xml"),
    "intervals.png": ("plots/intervals.png", "image/png"),
}
_FIGURE = re.compile(r"(figure-[0-9]{1,6}|percent_error|intervals)\.svg")


def _megabytes(size: int) -> str:
    return f"{size / 1024 / 1024:.0f} MB" if size >= 1024 * 1024 else f"{size / 1024:.0f} kB"


def create_app(*, token: str | None = None, upload_limit: int = DEFAULT_UPLOAD_LIMIT,
               workers: int | None = None, allowed_hosts=None, keep_seconds: float = 7200.0,
               parse=None) -> Flask:
    """Make the web application.

    Parameters
    ----------
    token : str, optional
        When given, every request must carry it (``?token=``, which sets a cookie, or the
        ``X-Molid-Token`` header); others are refused with 403.
    upload_limit : int
        Bytes one analysis may upload, all files together; more is refused with a message.
    workers : int, optional
        Worker processes (analyses running at once); see :func:`molid.web.jobs.default_worker_count`.
    allowed_hosts : iterable of str, optional
        Host headers accepted (``host:port``); any when None.
    keep_seconds : float
        An analysis not looked at for this long is removed with its files.
    parse : callable
        Returns the command line's argument parser (:func:`molid.cli.build_parser`): the page's
        options are parsed by it, so they mean what the same options mean on the command line
        and the provenance of a download is the command line's.

    Returns
    -------
    flask.Flask
        The application; ``app.extensions["molid"]`` holds its store and worker pool
        (close with :func:`close_app`).
    """
    if parse is None:
        raise ValueError("create_app needs parse=molid.cli.build_parser (the command line's parser)")
    app = Flask("molid.web", template_folder=str(Path(__file__).parent / "templates"),
                static_folder=str(Path(__file__).parent / "static"))
    app.config.update(MAX_CONTENT_LENGTH=upload_limit, SEND_FILE_MAX_AGE_DEFAULT=0,
                      MOLID_TOKEN=token, MOLID_HOSTS=set(allowed_hosts) if allowed_hosts else None,
                      MOLID_UPLOAD_LIMIT=upload_limit, MOLID_PARSE=parse)
    pool = WorkerPool(workers or default_worker_count())
    app.extensions["molid"] = Store(pool, keep_seconds=keep_seconds)
    app.context_processor(_context)
    app.before_request(_guard)
    app.after_request(_headers)
    app.register_error_handler(HTTPException, _http_error)
    app.register_error_handler(Exception, _internal_error)
    _routes(app)
    return app


#: A symbol beside each verdict word, so a verdict never rests on colour alone.
VERDICT_SYMBOLS = {"consistent": "✔", "marginal": "≈", "excluded": "✘", "condenses": "⊘",
                   "not-a-liquid": "⊘", "dissolves": "⊘", "error": "⚠", "yes": "✔", "no": "✘"}

_FILE_LABELS = {"runs.csv": "Per-run CSV", "result.json": "JSON document", "grades.csv": "Grades CSV",
                "grades.json": "Grades JSON", "percent_error.svg": "Percent-error plot (SVG)",
                "percent_error.png": "Percent-error plot (PNG)", "intervals.svg": "Interval plot (SVG)",
                "intervals.png": "Interval plot (PNG)", "report.pdf": "PDF report",
                "report.html": "HTML report"}


def _context() -> dict:
    from molid import __version__

    return {"version": __version__, "symbols": VERDICT_SYMBOLS, "roles": ROLES, "file_labels": _FILE_LABELS}


def close_app(app: Flask) -> None:
    """End the application's workers and remove every uploaded file."""
    store = app.extensions["molid"]
    store.pool.close()
    store.close()


# -- the rules of every request --------------------------------------------------------------
def _carried_token() -> str:
    return (request.args.get("token") or request.headers.get("X-Molid-Token")
            or request.cookies.get(_TOKEN_COOKIE) or "")


def _guard():
    """Refuse a request without the token, to an unexpected Host, or posted from another origin."""
    from flask import current_app

    hosts = current_app.config["MOLID_HOSTS"]
    if hosts is not None and request.host not in hosts:
        abort(400, description="this server answers only to its own address; open the address "
                               "molid serve printed")
    token = current_app.config["MOLID_TOKEN"]
    if token and not hmac.compare_digest(_carried_token().encode(), token.encode()):
        abort(403, description="this page needs its access token: open the full address molid serve "
                               "printed (it ends in ?token=...)")
    origin = request.headers.get("Origin")
    if request.method == "POST" and origin and origin != request.host_url.rstrip("/"):
        abort(403, description="a form from another web site was refused")


def _headers(response):
    from flask import current_app

    response.headers["Content-Security-Policy"] = CONTENT_SECURITY_POLICY
    response.headers["X-Content-Type-Options"] = "nosniff"
    # the address (and a token in it) is never sent to another site; the form posts keep their Origin
    response.headers["Referrer-Policy"] = "same-origin"
    response.headers["X-Frame-Options"] = "DENY"
    response.headers["Cross-Origin-Opener-Policy"] = "same-origin"
    response.headers["Cross-Origin-Resource-Policy"] = "same-origin"
    if request.endpoint != "static":
        response.headers["Cache-Control"] = "no-store"
    token = current_app.config["MOLID_TOKEN"]
    if token and request.args.get("token") == token and request.cookies.get(_TOKEN_COOKIE) != token:
        response.set_cookie(_TOKEN_COOKIE, token, httponly=True, samesite="Strict")
    return response


def _http_error(error: HTTPException):
    from flask import current_app

    if isinstance(error, RequestEntityTooLarge):
        limit = current_app.config["MOLID_UPLOAD_LIMIT"]
        return _index(f"The files are larger than the upload limit of {_megabytes(limit)} (all files of "
                      "one analysis together). Split the run sheet into smaller files, or ask whoever "
                      "started molid serve to raise the limit with --max-upload.", 413)
    return render_template("message.html", title=error.name, message=error.description,
                           status=error.code), error.code


def _internal_error(error: Exception):
    import sys
    import traceback

    traceback.print_exception(error, file=sys.stderr)  # for the server's log, never the page
    return render_template("message.html", title="Internal error", status=500,
                           message=f"Internal error ({type(error).__name__}). This is a bug in molid; "
                                   "please report it with the input file."), 500


# -- pages ---------------------------------------------------------------------------------------
def _index(problem: str = "", status: int = 200):
    from flask import current_app

    from molid.methods.registry import METHODS

    return render_template("index.html", problem=problem, methods=list(METHODS),
                           limit=current_app.config["MOLID_UPLOAD_LIMIT"],
                           limit_text=_megabytes(current_app.config["MOLID_UPLOAD_LIMIT"])), status


def _store() -> Store:
    from flask import current_app

    return current_app.extensions["molid"]


def _analysis(identifier: str):
    analysis = _store().get(identifier)
    if analysis is None:
        abort(404, description="no such analysis: it was removed (after two hours unused, or when the "
                               "server stopped) or the address is wrong. Upload the files again.")
    return analysis


def _start(analysis, name: str, function: str, **options) -> Task:
    from flask import current_app

    task = Task(function, {**analysis.arguments(**options), "parse": current_app.config["MOLID_PARSE"]})
    analysis.tasks[name] = task
    return _store().pool.submit(task)


def _upload():
    """Store the uploaded files and start reading the headers."""
    files = {role: request.files[role] for role in ROLES
             if role in request.files and request.files[role].filename}
    if "runs" not in files:
        return _index("Choose a run sheet (a .csv or .xlsx file) to upload.", 400)
    try:
        options = read_options(request.form)
    except OptionProblem as problem:
        return _index(f"Option {problem}", 400)
    analysis = _store().create(files, options)
    _start(analysis, "columns", "columns")
    return redirect(url_for("analysis_page", identifier=analysis.id), 303)


def _page(identifier: str):
    analysis = _analysis(identifier)
    section = request.args.get("section", "")
    return render_template("analysis.html", analysis=analysis, tasks=analysis.tasks,
                           section=section, downloads=_available(analysis))


def _available(analysis) -> list:
    return [name for name, (where, _) in DOWNLOADS.items()
            if (analysis.folder / "out" / where).is_file()]


def _run(identifier: str):
    analysis = _analysis(identifier)
    columns = analysis.tasks.get("columns")
    current = analysis.tasks.get("analyse")
    if columns is not None and columns.state == "done" and (current is None or current.finished):
        _start(analysis, "analyse", "analyse")
    return redirect(url_for("analysis_page", identifier=identifier), 303)


def _report(identifier: str):
    analysis = _analysis(identifier)
    report_format = request.form.get("format", "pdf")
    paper = request.form.get("paper", "a4")
    if report_format not in ("pdf", "html") or paper not in ("a4", "letter"):
        abort(400, description="a report is PDF or HTML, on A4 or letter paper")
    name = f"report-{report_format}"
    current = analysis.tasks.get(name)
    if current is None or current.finished:
        _start(analysis, name, "report", format=report_format, paper=paper)
    return redirect(url_for("analysis_page", identifier=identifier) + "#reports", 303)


def _document(identifier: str):
    analysis = _analysis(identifier)
    current = analysis.tasks.get("document")
    if current is None or current.state in ("failed", "cancelled"):
        _start(analysis, "document", "document")
    return redirect(url_for("analysis_page", identifier=identifier) + "#downloads-heading", 303)


def _cancel(identifier: str, name: str):
    analysis = _analysis(identifier)
    task = analysis.tasks.get(name)
    if task is not None:
        _store().pool.cancel(task)
    return redirect(url_for("analysis_page", identifier=identifier), 303)


def _remove(identifier: str):
    _store().remove(_analysis(identifier))
    return _index("The analysis and its files were removed.")


def _status(identifier: str, name: str):
    task = _analysis(identifier).tasks.get(name)
    if task is None:
        abort(404, description="no such task")
    return jsonify(task.status())


def _download(identifier: str, name: str):
    analysis = _analysis(identifier)
    if name not in DOWNLOADS:
        abort(404, description="no such file")
    where, kind = DOWNLOADS[name]
    path = analysis.folder / "out" / where
    if not path.is_file():
        abort(404, description="this file has not been made")
    stem = re.sub(r"[^A-Za-z0-9._-]+", "_", Path(analysis.uploads["runs"]["display"]).stem)[:60] or "runs"
    return send_file(path, mimetype=kind, as_attachment=True, download_name=f"{stem}-{name}",
                     max_age=0)


_DRAWING = threading.Lock()  # matplotlib draws one figure at a time


def _figure(identifier: str, name: str):
    from molid.web.view import draw_figure

    analysis = _analysis(identifier)
    if not _FIGURE.fullmatch(name):
        abort(404, description="no such figure")
    path = analysis.folder / "out" / "plots" / name
    with _DRAWING:
        if not draw_figure(path):
            abort(404, description="no such figure")
    return send_file(path, mimetype="image/svg+xml", max_age=0)


def _template(method: str, suffix: str):
    import tempfile

    from molid.io.problems import InputError
    from molid.io.templates import method_name, write_template

    if suffix not in ("csv", "xlsx"):
        abort(404, description="a blank sheet is .csv or .xlsx")
    try:
        name = method_name(method)
    except InputError as problem:
        abort(404, description=str(problem))
    with tempfile.TemporaryDirectory(prefix="molid-template-") as folder:
        path = write_template(name, Path(folder) / f"template.{suffix}")
        data = path.read_bytes()
    import io

    kind = "text/csv" if suffix == "csv" else \
        "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"
    return send_file(io.BytesIO(data), mimetype=kind, as_attachment=True,
                     download_name=f"{name}-template.{suffix}", max_age=0)


def _routes(app: Flask) -> None:
    app.add_url_rule("/", "index", lambda: _index())
    app.add_url_rule("/analyses", "upload", _upload, methods=["POST"])
    app.add_url_rule("/analyses/<identifier>", "analysis_page", _page)
    app.add_url_rule("/analyses/<identifier>/run", "run", _run, methods=["POST"])
    app.add_url_rule("/analyses/<identifier>/report", "report", _report, methods=["POST"])
    app.add_url_rule("/analyses/<identifier>/document", "document", _document, methods=["POST"])
    app.add_url_rule("/analyses/<identifier>/cancel/<name>", "cancel", _cancel, methods=["POST"])
    app.add_url_rule("/analyses/<identifier>/remove", "remove", _remove, methods=["POST"])
    app.add_url_rule("/analyses/<identifier>/status/<name>", "status", _status)
    app.add_url_rule("/analyses/<identifier>/files/<name>", "download", _download)
    app.add_url_rule("/analyses/<identifier>/figures/<name>", "figure", _figure)
    app.add_url_rule("/templates/<method>.<suffix>", "template", _template)
