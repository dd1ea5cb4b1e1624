"""Hostile text through every command and every output: nothing crashes, runs, or writes where it should not.

The cases are generated here: the invented demo files of sample_runs/ with hostile
text put into the cells people type (run, sample, operator, notes, student,
expected, vessel): spreadsheet formulas, HTML markup, plot mathematics, terminal
control sequences, bidirectional overrides, scripts the plot font lacks, over-long
cells, absurd reported values. Each command then writes each output it has, and
the tests check what reached the user, against three outside rules:

- spreadsheet formula injection (OWASP, "CSV Injection"): a text cell that starts
  with ``=``, ``+``, ``-``, ``@``, tab or carriage return is neutralised in CSV output;
- terminal control functions (ECMA-48, 5th ed., 1991: the C0 and C1 control sets;
  Unicode's bidirectional overrides, Boucher and Anderson, "Trojan Source", USENIX
  Security 2023): none reaches the terminal unescaped;
- HTML (WHATWG HTML, 13.1.2: text is escaped before it is written into markup):
  no user markup in a report or a plot is live.

Besides: no exit status 3, no warning or traceback text on stderr, the CSV and JSON
keep the cells as written, special files and inputs are refused as outputs, and a
SIGTERM leaves neither a partial file nor a worker process behind.
"""

import csv
import io
import json
import os
import re
import signal
import socket
import subprocess
import sys
import time
from pathlib import Path

import pytest

from molid.cli import main

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "sample_runs"

#: Text that tries to act on a spreadsheet, a browser, a plot or a terminal.
FORMULAS = ['=HYPERLINK("http://example.invalid","open")', "+cmd|' /C calc'!A0", "@SUM(1+1)*cmd",
            "-2+3+cmd|' /C calc'!A0", "\t=1+1", "\r=1+1"]
MARKUP = ["<script>alert(1)</script>", '<img src=x onerror="alert(1)">', "</td></tr></table><b>x"]
MATHEMATICS = [r"$\frac{1}{0}$ Ann", r"$x^$ broken", r"$\undefinedcommand{a}$"]
CONTROLS = ["A\x1b[2J\x1b[H", "\x1b]0;owned\x07title", "\x1b[31mred\x1b[0m", "back\x08\x08\x08",
            "over\rwrite", "bell\x07", "c1\x9b31m", "\u202egnp.exe", "form\x0cfeed"]
SCRIPTS = ["測試 学生", "ünïcödé ✓", "emoji 🧪"]
LONG = "L" * 25_000  # over the default display limit of 10,000 characters
HOSTILE = FORMULAS + MARKUP + MATHEMATICS + CONTROLS + SCRIPTS

#: A raw control character on a terminal: C0 (but the line feed), DEL, C1, bidirectional controls.
RAW_CONTROL = re.compile("[\x00-\x09\x0b-\x1f\x7f-\x9f\u061c\u200e\u200f\u202a-\u202e\u2066-\u2069]")
#: The mark a display leaves where it cut a text.
CUT_MARK = re.compile(r"… \[cut: 2\d,\d{3} characters in all\]")
#: What a warning, a traceback or a source path on stderr looks like.
LEAKED = re.compile(r"Warning|Traceback|site-packages|\.py:\d+|internal error")


def _rows(path):
    with open(path, newline="", encoding="utf-8") as stream:
        rows = list(csv.reader(stream))
    return rows[0], rows[1:]


def _write(path, header, rows):
    with open(path, "w", newline="", encoding="utf-8") as stream:
        csv.writer(stream).writerows([header, *rows])
    return path


def _spoil(header, rows, column, texts, unique=False):
    """Put one hostile text in each row's cell of a column (cycling), made unique where asked."""
    index = header.index(column)
    for number, row in enumerate(rows):
        text = texts[number % len(texts)]
        row[index] = f"{text}#{number}" if unique else text


@pytest.fixture(scope="module")
def identify_file(tmp_path_factory):
    """Write the QA demo file with hostile run ids, samples, operators and notes."""
    header, rows = _rows(DEMO / "qa_cylinders.csv")
    header.append("notes")
    for row in rows:
        row.append("")
    _spoil(header, rows, "run", HOSTILE, unique=True)
    _spoil(header, rows, "sample", CONTROLS + [LONG] + MARKUP + MATHEMATICS + FORMULAS)
    _spoil(header, rows, "operator", list(reversed(HOSTILE)))
    _spoil(header, rows, "notes", [LONG, *HOSTILE])
    return _write(tmp_path_factory.mktemp("identify") / "runs.csv", header, rows)


@pytest.fixture(scope="module")
def section_file(tmp_path_factory):
    """Write the teaching demo section with hostile students and absurd reported values."""
    header, rows = _rows(DEMO / "teaching_section.csv")
    _spoil(header, rows, "student", [*HOSTILE, LONG])
    reported = header.index("reported_molar_mass [g/mol]")
    for row, value in zip(rows, ["1e308", "inf", "-1e308", "nan", "1e-308", "-inf", "1e300"],
                          strict=False):
        row[reported] = value
    rows[-1][header.index("run")] = LONG
    return _write(tmp_path_factory.mktemp("grade") / "section.csv", header, rows)


def _run(capsys, *arguments):
    """Run the command line in-process; give the exit status and what it printed."""
    code = main([str(item) for item in arguments])
    captured = capsys.readouterr()
    return code, captured.out, captured.err


def _check_streams(code, out, err, terminal=True):
    assert code in (0, 1), err
    assert not LEAKED.search(err), err[-2000:]
    if terminal:
        assert not RAW_CONTROL.search(out), repr(RAW_CONTROL.search(out))
        assert not RAW_CONTROL.search(err)
        assert max(map(len, out.split("\n"))) < 10_000 + 200  # the long cell is cut


def _check_csv(text, expected_cells=()):
    """No live formula in any cell (OWASP); the hostile cells kept otherwise as written."""
    rows = list(csv.reader(io.StringIO(text)))
    width = len(rows[0])
    cells = [cell for row in rows for cell in row]
    for cell in cells:
        if cell[:1] in ("=", "+", "-", "@", "\t", "\r"):
            float(cell.replace(",", "."))  # only a number may start so
    assert all(len(row) == width for row in rows)  # no cell broke its row (CR, LF, quotes)
    for text in expected_cells:
        assert text in cells or "'" + text in cells, repr(text)
    return rows


def test_identify_terminal_shows_user_text_escaped_and_cut(identify_file, capsys):
    """Checks behaviour: the terminal table escapes control characters and cuts the long cell, with a note."""
    code, out, err = _run(capsys, "identify", identify_file)
    _check_streams(code, out, err)
    assert r"\x1b[2J" in out and r"\u202e" in out  # shown, not obeyed
    assert "is cut in this display" in out and CUT_MARK.search(out)


def test_identify_json_and_csv_keep_cells_whole(identify_file, tmp_path, capsys):
    """Checks behaviour: --json keeps every cell as written; -o CSV keeps them too, formulas neutralised."""
    output = tmp_path / "out.csv"
    code, out, err = _run(capsys, "identify", identify_file, "--json", "-o", output)
    _check_streams(code, out, err, terminal=False)
    document = json.loads(out)
    runs = [entry["run"] for entry in document["results"]]
    # as written, but for the white space the reader trims around an id
    assert runs == [f"{text}#{number}".strip() for number, text in enumerate(HOSTILE[:len(runs)])]
    assert LONG in {entry["sample"] for entry in document["results"]}
    rows = _check_csv(output.read_bytes().decode("utf-8"), [LONG, *HOSTILE[len(FORMULAS):]])
    assert len(rows) == len(runs) + 1


def test_identify_csv_to_standard_output(identify_file, capsys):
    """Checks behaviour: -o - writes the per-run CSV to stdout instead of the table."""
    code, out, err = _run(capsys, "identify", identify_file, "-o", "-")
    _check_streams(code, out, err, terminal=False)
    _check_csv(out)
    assert out.startswith('"run","sample","method"')
    assert "wrote" not in err


def test_grade_outputs_with_hostile_students_and_absurd_values(section_file, tmp_path, capsys):
    """Checks behaviour: grade's table, CSV and plots survive hostile names and 1e308 / inf results.

    No value that is not finite reaches an axis (the run is drawn off the scale);
    names are drawn literally (no mathtext) and markup stays text in the SVG.
    """
    plots, output = tmp_path / "plots", tmp_path / "grades.csv"
    code, out, err = _run(capsys, "grade", section_file, "--key", DEMO / "teaching_key.csv",
                          "--plots", plots, "-o", output)
    _check_streams(code, out, err)
    _check_csv(output.read_bytes().decode("utf-8"), HOSTILE[len(FORMULAS):])
    svg = (plots / "intervals.svg").read_text(encoding="utf-8")
    assert "<script>" not in svg and "&lt;script&gt;" in svg
    assert r"$\frac{1}{0}$ Ann" in svg  # drawn as typed, not as a fraction
    assert "off the scale" in (plots / "percent_error.svg").read_text(encoding="utf-8")
    code, out, err = _run(capsys, "grade", section_file, "--key", DEMO / "teaching_key.csv", "--json")
    _check_streams(code, out, err, terminal=False)
    assert json.loads(out)["results"] and LONG in out  # kept whole in the JSON


@pytest.mark.parametrize("suffix", ["html", "pdf"])
def test_reports_of_hostile_files(identify_file, section_file, tmp_path, capsys, suffix):
    """Checks behaviour: both reports of both kinds are written; no user markup is live in HTML."""
    for source, extra in ((identify_file, []), (section_file, ["--key", DEMO / "teaching_key.csv"])):
        output = tmp_path / f"{source.stem}.{suffix}"
        code, out, err = _run(capsys, "report", source, "-o", output, *extra)
        _check_streams(code, out, err)
        data = output.read_bytes()
        if suffix == "html":
            text = data.decode("utf-8")
            assert "<script>" not in text and "onerror=" not in text.replace("onerror=&quot;", "")
            assert "&lt;script&gt;" in text
            assert LONG not in text and CUT_MARK.search(text)
        else:
            assert data.startswith(b"%PDF")


def test_report_beyond_its_page_limit_summarises_the_rest(identify_file, tmp_path, capsys):
    """Checks behaviour: --max-pages 2 draws two pages and one page counting the rest."""
    output = tmp_path / "short.html"
    code, out, err = _run(capsys, "report", identify_file, "-o", output, "--max-pages", "2")
    _check_streams(code, out, err)
    text = output.read_text(encoding="utf-8")
    assert text.count('<section class="page"') == 3
    assert "more samples and runs are not drawn" in text


def test_calibrate_with_hostile_vessel_names(tmp_path, capsys):
    """Checks behaviour: calibrate's summary is escaped on the terminal and its register neutralised."""
    header, rows = _rows(DEMO / "qa_vessel_fills.csv")
    names = {name: f"{text}{number}" for number, (name, text) in enumerate(zip(
        dict.fromkeys(row[0] for row in rows), FORMULAS[:2] + CONTROLS[:2] + MARKUP[:1],
        strict=False))}
    for row in rows:
        row[0] = names.get(row[0], row[0])
    source = _write(tmp_path / "fills.csv", header, rows)
    output = tmp_path / "register.csv"
    code, out, err = _run(capsys, "calibrate", source, "-o", output)
    _check_streams(code, out, err)
    _check_csv(output.read_bytes().decode("utf-8"))


# -- outputs that are not regular files, or are inputs ------------------------------------------------
@pytest.fixture()
def small_file(tmp_path):
    header, rows = _rows(DEMO / "qa_cylinders.csv")
    return _write(tmp_path / "runs.csv", header, rows[:3])


def _special_files(folder):
    fifo = folder / "pipe"
    os.mkfifo(fifo)
    server = socket.socket(socket.AF_UNIX)
    server.bind(str(folder / "socket"))
    return server, {"a named pipe": fifo, "a socket": folder / "socket",
                    "a character device": Path(os.devnull)}


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes are POSIX")
@pytest.mark.parametrize("command", ["identify", "grade", "report", "calibrate"])
def test_special_files_are_refused_as_outputs_even_with_force(small_file, tmp_path, capsys, command):
    """Checks behaviour: a device, a socket or a named pipe is never an output (exit 2), even with --force."""
    server, specials = _special_files(tmp_path)
    try:
        for kind, path in specials.items():
            started = time.monotonic()
            code, out, err = _run(capsys, command, small_file, "-o", path, "--force")
            assert code == 2 and f"is {kind}, not a regular file" in err
            assert time.monotonic() - started < 30  # refused before opening: a pipe never blocks
        assert specials["a named pipe"].is_fifo()
    finally:
        server.close()


@pytest.mark.parametrize("command", ["identify", "grade", "calibrate"])
def test_an_input_is_never_an_output(small_file, capsys, command):
    """Checks behaviour: naming the input as the output is refused (exit 2) and the input is unchanged."""
    before = small_file.read_bytes()
    code, out, err = _run(capsys, command, small_file, "-o", small_file, "--force")
    assert code == 2 and "is an input of this command" in err
    assert small_file.read_bytes() == before


def test_plots_never_replace_an_input(section_file, tmp_path, capsys):
    """Checks behaviour: --plots into a folder whose plot file is the key is refused, even with --force."""
    plots = tmp_path / "plots"
    plots.mkdir()
    key = plots / "percent_error.svg"  # an answer key saved under a plot's name
    key.write_bytes((DEMO / "teaching_key.csv").read_bytes())
    code, out, err = _run(capsys, "grade", section_file, "--key", key, "--plots", plots, "--force")
    assert code == 2 and "is an input of this command" in err
    assert key.read_bytes() == (DEMO / "teaching_key.csv").read_bytes()
    assert not (plots / "intervals.png").exists()


@pytest.mark.parametrize("where", ["missing/out.csv", "/proc/molid-cannot-write.csv"])
def test_an_output_folder_that_cannot_be_written_is_a_usage_error(small_file, tmp_path, capsys, where):
    """Checks behaviour: a folder that does not exist or cannot be written → a message and exit 2, not 3."""
    if where.startswith("/proc") and not Path("/proc").is_dir():
        pytest.skip("needs a read-only system folder")
    output = tmp_path / where if not where.startswith("/") else Path(where)
    for command in ("identify", "report"):
        code, out, err = _run(capsys, command, small_file, "-o", output)
        assert code == 2 and err.startswith("molid: ") and str(output) in err


# -- interruption ------------------------------------------------------------------------------------
def _children(pid):
    try:
        return {int(item) for item in Path(f"/proc/{pid}/task/{pid}/children").read_text().split()}
    except OSError:
        return set()


def _alive(pid):
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return False
    return state != "Z"


@pytest.mark.skipif(not Path("/proc/self/task").is_dir(), reason="reads child processes from /proc")
@pytest.mark.parametrize("number", [signal.SIGTERM, signal.SIGINT])
def test_a_signal_leaves_no_partial_file_and_no_worker(tmp_path, number):
    """Checks behaviour: SIGTERM or SIGINT during a chunked run → exit 128 + signal, message, clean folder.

    The exit status is the one a POSIX shell gives a process ended by the signal
    (IEEE Std 1003.1-2017, 2.8.2: 128 + n; common practice).
    """
    sys.path.insert(0, str(ROOT / "benchmarks"))
    from make_big_file import make_frame

    source = tmp_path / "big.csv"
    make_frame(60_000).to_csv(source, index=False)
    output = tmp_path / "out.csv"
    process = subprocess.Popen([sys.executable, "-m", "molid", "identify", str(source), "-o",
                                str(output)], cwd=tmp_path, stdout=subprocess.DEVNULL,
                               stderr=subprocess.PIPE, text=True)
    workers = set()
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline and process.poll() is None:
        workers |= _children(process.pid)
        if list(tmp_path.glob(".out.csv.*.part")) and workers:
            break
        time.sleep(0.05)
    assert process.poll() is None, "the run ended before it could be interrupted"
    process.send_signal(number)
    err = process.communicate(timeout=120)[1]
    assert process.returncode == 128 + number
    assert "interrupted" in err and "Traceback" not in err and "big.csv" not in err
    assert sorted(path.name for path in tmp_path.iterdir()) == ["big.csv"]
    time.sleep(0.5)
    assert not [pid for pid in workers if _alive(pid)]
