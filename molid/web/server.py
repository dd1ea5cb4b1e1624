"""``molid serve``: the web page on this computer (werkzeug's threaded server), its address and token.

The server listens on 127.0.0.1 by default, on a free port unless one is given,
and prints its address. Listening on any other address lets other computers reach
it, so it then requires an access token: the one given with ``--token``, else a
random one printed with the address; a request without it is refused.
"""

from __future__ import annotations

import ipaddress
import secrets
import signal
import sys

__all__ = ["is_loopback", "serve"]


def is_loopback(host: str) -> bool:
    """Tell whether a listening address is this computer's own (127.0.0.0/8, ::1 or ``localhost``).

    Examples
    --------
    >>> is_loopback("127.0.0.1"), is_loopback("localhost"), is_loopback("0.0.0.0")
    (True, True, False)
    """
    if host.strip().lower() == "localhost":
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False  # a host name: it may resolve to an outside address


def _hosts(host: str, port: int) -> set:
    """Host headers a loopback server answers: its own names for itself."""
    names = {host, "127.0.0.1", "localhost", "[::1]"}
    return {f"{name}:{port}" for name in names}


def _stop(number, frame):
    raise KeyboardInterrupt  # SIGTERM stops the server as Ctrl-C does: workers ended, files removed


def serve(host: str = "127.0.0.1", port: int = 0, *, token: str | None = None, open_browser: bool = False,
          upload_limit: int | None = None, workers: int | None = None, stream=None, parse=None) -> int:
    """Run the web page until interrupted; return the exit status.

    Parameters
    ----------
    host : str
        Address to listen on; loopback by default.
    port : int
        Port; 0 picks a free one.
    token : str, optional
        Access token; required, and generated when not given, for a host other than loopback.
    open_browser : bool
        Open the address in the default browser.
    upload_limit : int, optional
        Bytes one analysis may upload (default 50 MB).
    workers : int, optional
        Analyses running at once (worker processes).
    stream : text file, optional
        Where the address is printed (standard output by default).
    parse : callable
        Returns the command line's argument parser (see :func:`molid.web.app.create_app`).

    Returns
    -------
    int
        0 after Ctrl-C or SIGTERM.
    """
    from werkzeug.serving import make_server

    from molid.web.app import DEFAULT_UPLOAD_LIMIT, close_app, create_app

    stream = stream or sys.stdout
    loopback = is_loopback(host)
    if not loopback and not token:
        token = secrets.token_urlsafe(24)
    server = make_server(host, port, None, threaded=True)
    port = server.server_port
    app = create_app(token=token, upload_limit=upload_limit or DEFAULT_UPLOAD_LIMIT, workers=workers,
                     allowed_hosts=_hosts(host, port) if loopback and not token else None, parse=parse)
    server.app = app
    shown = f"[{host}]" if ":" in host else host
    address = f"http://{shown}:{port}/" + (f"?token={token}" if token else "")
    print(f"molid serve: open {address}", file=stream)
    if not loopback:
        print(f"molid serve: listening on {host}, reachable from other computers; every request needs the "
              "token in that address", file=stream)
    print("molid serve: press Ctrl-C to stop (uploaded files are removed)", file=stream, flush=True)
    if open_browser:
        import webbrowser

        webbrowser.open(address)
    previous = signal.signal(signal.SIGTERM, _stop)
    try:
        server.serve_forever()
    except KeyboardInterrupt:
        pass
    finally:
        signal.signal(signal.SIGTERM, previous)
        server.server_close()
        close_app(app)
        print("molid serve: stopped", file=stream, flush=True)
    return 0
