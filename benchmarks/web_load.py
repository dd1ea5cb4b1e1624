"""Load benchmark of the web page: many uploads of a 10,000-run file at once, on loopback only.

Not part of the test suite. Run from the repository root:

    python benchmarks/web_load.py            # 20 uploads at once of a 10,000-run file
    python benchmarks/web_load.py 5 2000     # a quicker check: 5 uploads of 2,000 runs

It starts ``molid serve`` on 127.0.0.1 (a free port), writes the run file with
benchmarks/make_big_file.py, and sends a fixed number of uploads at once, each in its
own thread: upload, wait for the headers, analyse, wait for the result, download the
per-run CSV. Meanwhile it asks for the upload page every half second and times the
answer (does the page stay responsive?), and samples the resident memory of the
server and all its worker processes together every 0.2 s (from /proc, Linux). Every
request goes to 127.0.0.1; the number of requests is bounded, and the run ends by
itself (at the latest after 20 minutes), stopping the server.

The CSVs are checked to be byte-identical to each other and to what
``molid identify FILE -o OUT.csv`` writes for the same file.
"""

import json
import os
import platform
import shutil
import signal
import statistics
import subprocess
import sys
import tempfile
import threading
import time
import urllib.error
import urllib.request
import uuid
from pathlib import Path

HERE = Path(__file__).resolve().parent
DEADLINE = 20 * 60.0  # seconds: the whole run ends by then, finished or not


def _tree_rss(pid: int) -> int:
    """Resident memory [bytes] of a process and all its descendants (Linux /proc)."""
    children: dict = {}
    for entry in Path("/proc").iterdir():
        if not entry.name.isdigit():
            continue
        try:
            fields = (entry / "stat").read_text().rsplit(")", 1)[1].split()
            children.setdefault(int(fields[1]), []).append(int(entry.name))
        except (OSError, IndexError, ValueError):
            continue
    total, stack = 0, [pid]
    while stack:
        current = stack.pop()
        try:
            for line in (Path("/proc") / str(current) / "status").read_text().splitlines():
                if line.startswith("VmRSS:"):
                    total += int(line.split()[1]) * 1024
        except OSError:
            pass
        stack += children.get(current, [])
    return total


def _multipart(name: str, filename: str, data: bytes) -> tuple:
    boundary = uuid.uuid4().hex
    body = (f'--{boundary}\r\nContent-Disposition: form-data; name="{name}"; filename="{filename}"\r\n'
            "Content-Type: text/csv\r\n\r\n").encode() + data + f"\r\n--{boundary}--\r\n".encode()
    return body, f"multipart/form-data; boundary={boundary}"


class _NoRedirect(urllib.request.HTTPRedirectHandler):
    def redirect_request(self, *arguments):
        return None


def _request(url: str, data: bytes | None = None, kind: str | None = None):
    request = urllib.request.Request(url, data=data, method="POST" if data is not None else "GET",
                                     headers={"Content-Type": kind} if kind else {})
    try:
        with urllib.request.build_opener(_NoRedirect).open(request, timeout=600) as response:
            return response.status, dict(response.headers), response.read()
    except urllib.error.HTTPError as error:
        return error.code, dict(error.headers), error.read()


def _wait(base: str, page: str, name: str, stop: float) -> dict:
    while time.monotonic() < stop:
        state = json.loads(_request(f"{base}{page}/status/{name}")[2])
        if state["state"] in ("done", "failed", "cancelled"):
            return state
        time.sleep(0.5)
    raise TimeoutError(f"{name} of {page} did not finish in time")


def _one_upload(base: str, data: bytes, stop: float, record: dict) -> None:
    started = time.monotonic()
    body, kind = _multipart("runs", "big.csv", data)
    status, headers, _ = _request(base + "/analyses", body, kind)
    if status != 303:
        raise RuntimeError(f"upload refused: {status}")
    page = headers["Location"].removeprefix(base)
    _wait(base, page, "columns", stop)
    _request(f"{base}{page}/run", b"", "application/x-www-form-urlencoded")
    state = _wait(base, page, "analyse", stop)
    record.update(seconds=time.monotonic() - started, state=state["state"], working=state["seconds"],
                  csv=_request(f"{base}{page}/files/runs.csv")[2], message=state["message"])


def _start_server(workers) -> tuple:
    arguments = [sys.executable, "-m", "molid", "serve", "--port", "0"]
    if workers:
        arguments += ["--workers", str(workers)]
    server = subprocess.Popen(arguments, stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True)
    line = server.stdout.readline()
    if " open http://127.0.0.1:" not in line:
        server.kill()
        raise RuntimeError(f"molid serve did not start: {line!r}")
    return server, line.split("open ", 1)[1].strip().rstrip("/")


def _probe(base: str, until: threading.Event, latencies: list) -> None:
    """Ask for the upload page every half second while the uploads run; keep each answer's time."""
    while not until.is_set():
        started = time.monotonic()
        status = _request(base + "/")[0]
        latencies.append((time.monotonic() - started, status))
        until.wait(0.5)


def _sample(pid: int, until: threading.Event, peaks: list) -> None:
    while not until.is_set():
        peaks.append(_tree_rss(pid))
        until.wait(0.2)


def main(uploads: int = 20, runs: int = 10_000, workers: int | None = None) -> None:
    """Run the benchmark and print what it measured."""
    sys.path.insert(0, str(HERE))
    from make_big_file import make_frame

    folder = Path(tempfile.mkdtemp(prefix="molid-web-load-"))
    source = folder / "big.csv"
    make_frame(runs).to_csv(source, index=False)
    data = source.read_bytes()
    subprocess.run([sys.executable, "-m", "molid", "identify", str(source), "-o", str(folder / "cli.csv")],
                   capture_output=True, check=False)
    server, base = _start_server(workers)
    stop = time.monotonic() + DEADLINE
    records = [{} for _ in range(uploads)]
    latencies, peaks, done = [], [], threading.Event()
    helpers = [threading.Thread(target=_probe, args=(base, done, latencies), daemon=True),
               threading.Thread(target=_sample, args=(server.pid, done, peaks), daemon=True)]
    try:
        idle = _tree_rss(server.pid)
        for helper in helpers:
            helper.start()
        started = time.monotonic()
        threads = [threading.Thread(target=_one_upload, args=(base, data, stop, record), daemon=True)
                   for record in records]
        for thread in threads:
            thread.start()
        for thread in threads:
            thread.join(max(1.0, stop - time.monotonic()))
        wall = time.monotonic() - started
    finally:
        done.set()
        server.send_signal(signal.SIGTERM)
        server.wait(60)
    cli_csv = (folder / "cli.csv").read_bytes()
    shutil.rmtree(folder, ignore_errors=True)
    _report(records, latencies, peaks, idle, wall, cli_csv, uploads, runs, len(data))


def _report(records, latencies, peaks, idle, wall, cli_csv, uploads, runs, size) -> None:
    finished = [record for record in records if record.get("state") == "done"]
    times = sorted(record["seconds"] for record in finished)
    answers = sorted(latency for latency, status in latencies if status == 200)
    identical = all(record["csv"] == cli_csv for record in finished)
    print(f"date: {time.strftime('%Y-%m-%d %H:%M %Z')}")
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, "
          f"{os.sysconf('SC_PAGE_SIZE') * os.sysconf('SC_PHYS_PAGES') / 2**30:.0f} GiB, "
          f"{platform.system()} {platform.release()}, Python {platform.python_version()}")
    print(f"uploads: {uploads} at once, each a {runs:,}-run file of {size / 2**20:.1f} MB")
    print(f"finished: {len(finished)} of {uploads}; CSV byte-identical to molid identify -o: {identical}")
    if times:
        print(f"all done after {wall:.1f} s; per upload (upload to result): median "
              f"{statistics.median(times):.1f} s, fastest {times[0]:.1f} s, slowest {times[-1]:.1f} s")
        print(f"analysis time in a worker: median {statistics.median(r['working'] for r in finished):.1f} s")
    if answers:
        print(f"upload page while loaded: {len(answers)} answers, median "
              f"{statistics.median(answers) * 1000:.0f} ms, slowest {answers[-1] * 1000:.0f} ms; "
              f"refused or failed: {len(latencies) - len(answers)}")
    print(f"memory of the server and its workers: idle {idle / 2**20:.0f} MB, "
          f"peak {max(peaks) / 2**20:.0f} MB")
    for record in records:
        if record.get("state") != "done":
            print(f"not finished: {record.get('state')} {record.get('message', '')}")


if __name__ == "__main__":
    numbers = [int(argument) for argument in sys.argv[1:3]]
    main(*numbers)
