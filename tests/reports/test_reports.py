"""Printable reports: what lands on which PDF page, HTML escaping, paper sizes, speed."""

import re
import shutil
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from molid.cli import main
from molid.io.terminal import format_value
from molid.pipeline.identify import identify

pypdf = pytest.importorskip("pypdf")

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "sample_runs" / "qa_cylinders.csv"
PROFILE = ROOT / "sample_runs" / "qa_lab_profile.toml"
HEADER = "run,sample,method,mass_tare,mass_filled,volume,temperature,pressure,humidity,operator"
ROW = "{run},{sample},evacuated-bulb,147.3839,{filled},500.12,21.72,100.39,41,{operator}"
HOSTILE = "<script>alert(1)</script>"


@pytest.fixture(scope="module")
def demo_pdf(tmp_path_factory):
    """Make the demo QA report as PDF; return it with the identification it was made from."""
    out = tmp_path_factory.mktemp("report") / "qa.pdf"
    assert main(["report", str(DEMO), "--profile", str(PROFILE), "-o", str(out)]) == 0
    result = identify(DEMO, profile=PROFILE)
    return out, result


def _pages(path):
    """Each page's text, less a last page holding only the provenance block (run over from a full page)."""
    texts = [page.extract_text() for page in pypdf.PdfReader(str(path)).pages]
    if len(texts) > 1 and texts[-1].splitlines()[1:2] == ["Provenance"]:
        texts.pop()
    return texts


def _flat(text):
    """Page text with line breaks folded into spaces (tables wrap long cells)."""
    return re.sub(r"\s+", " ", text)


def test_one_page_per_sample_in_file_order(demo_pdf):
    """Checks behaviour: the demo file's seven samples give seven pages, in file order."""
    path, result = demo_pdf
    pages = _pages(path)
    samples = list(result.sample_runs)
    assert len(pages) == len(samples) == 7
    for text, sample in zip(pages, samples, strict=True):
        assert f"Sample {sample}" in text


def test_run_ids_only_on_their_samples_page(demo_pdf):
    """Checks behaviour: every run id is printed on its sample's page and on no other page."""
    path, result = demo_pdf
    pages = _pages(path)
    for number, members in enumerate(result.sample_runs.values()):
        for run in members:
            holders = [k for k, text in enumerate(pages) if re.search(rf"\b{run}\b", text)]
            assert holders == [number], run


def test_molar_masses_and_top_candidate_on_each_page(demo_pdf):
    """Checks behaviour: each page shows its M ± U and its top candidate, never an excluded one as best."""
    path, result = demo_pdf
    pages = [_flat(text) for text in _pages(path)]
    frame = result.samples.set_index("sample")
    run_ids = list(result.table.text["run"])
    for text, (sample, members) in zip(pages, result.sample_runs.items(), strict=True):
        row = frame.loc[sample]
        assert format_value(row["value"] * 1e3, 2 * row["u"] * 1e3) in text
        for run in members:
            k = run_ids.index(run)
            assert format_value(result.molar_mass[k] * 1e3, result.U[k] * 1e3) in text
        best = result.ranking.sample_candidates(sample, 1)[0]
        if best["verdict"] in ("consistent", "marginal"):
            assert f"Best candidate: {best['name']}" in text
        else:  # an excluded candidate is never presented as the likely gas
            assert "Best candidate" not in text
            assert "the gas is unidentified" in text and f"nearest library entry, {best['name']}" in text


def test_physics_on_the_page_is_the_trade_expectation(demo_pdf):
    """The argon cylinder's page names argon first, at its standard atomic weight 39.95 g/mol.

    Source: IUPAC 2021 abridged standard atomic weight of argon, 39.95 (from memory).
    """
    path, _ = demo_pdf
    first = _flat(_pages(path)[0])
    assert "Best candidate: argon (Ar), consistent" in first
    assert "(M = 39.950 g/mol)" in first


def test_label_check_and_separation_notes_printed(demo_pdf):
    """Checks behaviour: a wrong label is flagged on its page; the CO2/N2O page says what separates them."""
    path, result = demo_pdf
    pages = [_flat(text) for text in _pages(path)]
    names = list(result.sample_runs)
    isobutane = pages[names.index("CYL-2234")]
    assert "Label 'isobutane' (isobutane): EXCLUDED" in isobutane
    carbon_dioxide = pages[names.index("CYL-2232")]
    assert "separating them needs u(M) below" in carbon_dioxide
    helium = pages[names.index("CYL-2236")]
    told = helium[helium.index("Cannot be told apart by this run:"):][:80]
    assert "deuterium" in told and "helium" in told


def test_safety_box_lists_ghs_classes_and_sds_note(demo_pdf):
    """Safety cautions carry the library's GHS classes and the pointer to codes and the SDS.

    Argon is a compressed gas and a simple asphyxiant (GHS 'Press. Gas', common practice of
    gas SDSs); the evacuated bulb's implosion caution applies to bulb methods.
    """
    path, result = demo_pdf
    text = _flat(_pages(path)[0])
    library = result.ranking.library.set_index("name")
    for hazard in library.loc["argon", "ghs_hazards"]:
        assert hazard in text
    assert "Simple asphyxiant" in text and "implode" in text
    assert "follow local codes, the site's safety rules" in text.lower()
    assert "safety data sheet (SDS)" in text
    assert "Analysed by:" in text and "Checked by:" in text


def test_header_fields_from_free_columns(demo_pdf):
    """Checks behaviour: operator and date come from the file's own columns."""
    path, _ = demo_pdf
    text = _flat(_pages(path)[0])
    assert "D. Okonkwo-Hale, R. Lindqvist" in text and "2026-11-09" in text


@pytest.mark.parametrize(("paper", "size"), [("a4", (595.28, 841.89)), ("letter", (612.0, 792.0))])
def test_paper_sizes(tmp_path, demo_pdf, paper, size):
    """Page size in PDF points (1/72 in) matches ISO 216 A4 and ANSI Letter, with margins.

    A4 is 210 mm × 297 mm (ISO 216), Letter 8.5 in × 11 in (ANSI/ASME Y14.1); the text
    block (180 mm wide) fits inside both with at least 15 mm side margins. On A4 each sample's
    page fits on one sheet; Letter is 17.6 mm shorter, and a full sample page may run onto a
    second sheet, its signature lines still before the next sample's page.
    """
    out = demo_pdf[0] if paper == "a4" else tmp_path / "r.pdf"
    if paper != "a4":
        assert main(["report", str(DEMO), "--profile", str(PROFILE), "-o", str(out),
                     "--paper", paper]) == 0
    reader = pypdf.PdfReader(str(out))
    pages = _pages(out)
    if paper == "a4":
        assert len(pages) == 7  # a sample's page fits; only the provenance may run over
    else:
        assert 7 <= len(pages) <= 14
        order = re.findall(r"^Sample CYL-\d+$|^Sample LINE-\d+$|Analysed by", "\n".join(pages), re.MULTILINE)
        assert order == [item for pair in zip(order[::2], ["Analysed by"] * 7, strict=True) for item in pair]
        assert len(order) == 14
    box = reader.pages[0].mediabox
    assert float(box.width) == pytest.approx(size[0], abs=0.05)
    assert float(box.height) == pytest.approx(size[1], abs=0.05)
    margin_mm = (float(box.width) / 72 * 25.4 - 180) / 2
    assert margin_mm >= 14.9


def _write(path, rows):
    path.write_text("\n".join([HEADER, *rows]) + "\n", encoding="utf-8")
    return path


def test_hostile_run_id_is_escaped_in_html(tmp_path):
    """Checks behaviour: a run id holding markup appears only escaped in HTML, never as a tag."""
    source = _write(tmp_path / "hostile.csv", [
        ROW.format(run=f'"{HOSTILE}"', sample="", filled="148.2020", operator="<b>x</b>"),
    ])
    out = tmp_path / "r.html"
    assert main(["report", str(source), "-o", str(out)]) == 0
    html_text = out.read_text(encoding="utf-8")
    assert "<script" not in html_text.lower()
    assert "<b>x</b>" not in html_text
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html_text
    assert "&lt;b&gt;x&lt;/b&gt;" in html_text
    # self-contained: no external resources
    assert not re.search(r"""(src|href)\s*=\s*["']?(https?:|//)""", html_text)


def test_user_text_drawn_literally_in_pdf(tmp_path):
    """Checks behaviour: markup in user cells prints as the characters typed (fpdf2 text, markdown off)."""
    source = _write(tmp_path / "hostile.csv", [
        ROW.format(run=f'"{HOSTILE}"', sample="**S1**", filled="148.2020", operator="<b>x</b>"),
    ])
    out = tmp_path / "r.pdf"
    assert main(["report", str(source), "-o", str(out)]) == 0
    text = _flat(_pages(out)[0])
    assert HOSTILE in text and "**S1**" in text and "<b>x</b>" in text


def test_runs_without_sample_get_a_page_each_and_errors_exit_1(tmp_path):
    """Checks behaviour: runs with no sample get a page each; a bad row is reported on its page, exit 1."""
    source = _write(tmp_path / "runs.csv", [
        ROW.format(run="r1", sample="", filled="148.2020", operator="A"),
        ROW.format(run="r2", sample="", filled="oops", operator="A"),
    ])
    out = tmp_path / "r.pdf"
    assert main(["report", str(source), "-o", str(out)]) == 1
    pages = [_flat(text) for text in _pages(out)]
    assert len(pages) == 2
    assert "Run r1" in pages[0] and "Run r2" in pages[1]
    assert "Errors (these runs were not analysed)" in pages[1] and "row 3" in pages[1]


def _small(tmp_path):
    return _write(tmp_path / "small.csv", [
        ROW.format(run="s1", sample="S", filled="148.2020", operator="QA"),
        ROW.format(run="s2", sample="S", filled="148.2024", operator="QA"),
    ])


def test_refuses_to_overwrite_without_force(tmp_path, capsys):
    """Checks behaviour: an existing output is kept (exit 2) unless --force is given."""
    source = _small(tmp_path)
    out = tmp_path / "r.pdf"
    out.write_bytes(b"keep me")
    assert main(["report", str(source), "-o", str(out)]) == 2
    assert out.read_bytes() == b"keep me"
    assert "--force" in capsys.readouterr().err
    assert main(["report", str(source), "-o", str(out), "--force"]) == 0
    assert out.read_bytes().startswith(b"%PDF-")


def test_format_follows_the_suffix_unless_given(tmp_path):
    """Checks behaviour: .html gives HTML; --format pdf overrides the suffix."""
    source = _small(tmp_path)
    html_out, forced = tmp_path / "r.html", tmp_path / "r2.html"
    assert main(["report", str(source), "-o", str(html_out)]) == 0
    assert html_out.read_bytes().startswith(b"<!DOCTYPE html>")
    assert main(["report", str(source), "-o", str(forced), "--format", "pdf"]) == 0
    assert forced.read_bytes().startswith(b"%PDF-")


def test_html_has_a_section_and_a_plot_per_sample(tmp_path):
    """Checks behaviour: the HTML report has a section per sample, each with an embedded SVG plot."""
    out = tmp_path / "r.html"
    assert main(["report", str(DEMO), "--profile", str(PROFILE), "-o", str(out)]) == 0
    text = out.read_text(encoding="utf-8")
    assert text.count('<section class="page"') == 7
    assert text.count('src="data:image/svg+xml;base64,') == 7
    from molid.io.json_document import to_document
    from molid.io.terminal import format_value
    from molid.pipeline.identify import identify

    first = to_document(identify(DEMO, profile=PROFILE))["samples"][0]["molar_mass"]
    assert f"{format_value(first['value'], first['U'])} g/mol" in text


def test_plot_renders_with_pdftoppm(tmp_path, demo_pdf):
    """Checks behaviour: a page rasterises (poppler's pdftoppm) and the plot area is not blank."""
    if shutil.which("pdftoppm") is None:
        pytest.skip("pdftoppm (poppler-utils) is not installed")
    path, _ = demo_pdf
    prefix = tmp_path / "page"
    subprocess.run(["pdftoppm", "-png", "-r", "40", "-f", "1", "-l", "1", str(path),
                    str(prefix)], check=True, capture_output=True, timeout=60)
    image_path = next(tmp_path.glob("page*.png"))
    import matplotlib.image

    pixels = matplotlib.image.imread(str(image_path))
    assert pixels.shape[0] > pixels.shape[1]  # portrait
    dark = (pixels[..., :3].mean(axis=2) < 0.5).mean()
    assert 0.005 < dark < 0.5


# About 13-25 s on a shared two-core machine, half or more of this file's time: marked so
# that `-m "not slow"` can leave it out of a quick run.
@pytest.mark.slow
def test_two_hundred_runs_two_hundred_pages(tmp_path):
    """Checks behaviour: 200 runs without samples make 200 pages; the time is measured and bounded."""
    rng = np.random.default_rng(7)
    filled = 148.2020 + rng.normal(0, 0.0003, 200)
    rows = [ROW.format(run=f"R{k:03d}", sample="", filled=f"{value:.4f}", operator="QA")
            for k, value in enumerate(filled, start=1)]
    source = _write(tmp_path / "many.csv", rows)
    out = tmp_path / "many.pdf"
    start = time.perf_counter()
    assert main(["report", str(source), "-o", str(out)]) == 0
    elapsed = time.perf_counter() - start
    pages = _pages(out)
    assert len(pages) == 200
    assert "Run R137" in pages[136]
    print(f"200-run report: {elapsed:.1f} s", file=sys.stderr)
    assert elapsed < 180  # guards against a runaway (quadratic) path; not a benchmark


TEACHING = ROOT / "sample_runs" / "teaching_section.csv"
TEACHING_KEY = ROOT / "sample_runs" / "teaching_key.csv"


@pytest.fixture(scope="module")
def graded_pdf(tmp_path_factory):
    """Make the demo section's graded report; return it with the grading it shows."""
    pytest.importorskip("molid.teaching.grading")
    from molid.teaching.grading import grade

    out = tmp_path_factory.mktemp("graded") / "section.pdf"
    # one student's row has no readings: exit 1, every other row still on its sheet
    assert main(["report", str(TEACHING), "--key", str(TEACHING_KEY), "-o", str(out)]) == 1
    return out, grade(TEACHING, key=TEACHING_KEY)


def test_graded_report_has_a_sheet_per_student_then_the_summary(graded_pdf):
    """Checks behaviour: one sheet per student in file order, then the class summary pages."""
    path, grading = graded_pdf
    pages = [_flat(text) for text in _pages(path)]
    students = list(dict.fromkeys(grading.grades["student"]))
    assert len(pages) == len(students) + 2
    for text, student in zip(pages, students, strict=False):
        assert f"Student: {student}" in text
    assert "Class summary" in pages[len(students)]
    for unknown in grading.summary["by_unknown"]:
        assert unknown["unknown"] in pages[len(students)]


def test_student_sheet_shows_points_recomputation_and_diagnosis(graded_pdf):
    """Checks behaviour: each sheet carries the student's run, points, recomputed M ± U and diagnosis."""
    path, grading = graded_pdf
    pages = [_flat(text) for text in _pages(path)]
    for number, row in enumerate(grading.grades.itertuples(index=False)):
        text = pages[number]
        assert re.search(rf"\b{row.run}\b", text)
        if row.error:
            assert "Not graded" in text
            continue
        assert f"Points: {row.points:g} of {row.max_points:g}" in text
        assert format_value(row.molar_mass, row.U) in text
        if row.diagnosis_text:
            words = row.diagnosis_text[0].upper() + row.diagnosis_text[1:]
            assert words in text
        else:
            assert "No mistake found" in text


def test_percent_error_on_sheet_matches_standard_atomic_weight(graded_pdf):
    """B03 reported 2.983 g/mol for argon: 100·(2.983 − 39.95)/39.95 = −92.5 %.

    Source: IUPAC 2021 abridged standard atomic weight of argon, 39.95 (from memory).
    """
    path, grading = graded_pdf
    pages = [_flat(text) for text in _pages(path)]
    number = list(grading.grades["run"]).index("B03")
    expected = 100 * (2.983 - 39.95) / 39.95
    assert f"{expected:+.1f} %".replace("-", "−") in pages[number]
    assert "argon (Ar)" in pages[number]


def test_student_and_reported_columns_make_a_file_graded(tmp_path):
    """Checks behaviour: without --key, a file with student and reported_molar_mass columns is graded."""
    pytest.importorskip("molid.teaching.grading")
    source = tmp_path / "s.csv"
    source.write_text(
        "run,student,sample,expected,method,mass_tare,mass_filled,volume,temperature,pressure,"
        "reported_molar_mass\n"
        "k1,Ana <i>Ruiz</i>,U1,argon,evacuated-bulb,147.3839,148.2020,500.12,21.72,100.39,39.9\n",
        encoding="utf-8")
    out = tmp_path / "s.html"
    assert main(["report", str(source), "-o", str(out)]) == 0
    text = out.read_text(encoding="utf-8")
    assert "Student: Ana &lt;i&gt;Ruiz&lt;/i&gt;" in text and "<i>Ruiz" not in text
    assert "Class summary" in text


def test_characters_without_a_glyph_print_as_code_points(tmp_path):
    """Checks behaviour: a run id in a script DejaVu Sans lacks prints as [U+XXXX], not as a blank.

    U+6D4B is the CJK ideograph 测 (Unicode Standard, CJK Unified Ideographs block).
    """
    source = _write(tmp_path / "cjk.csv", [
        ROW.format(run="测-1", sample="", filled="148.2020", operator="Zoë Ångström"),
    ])
    out = tmp_path / "r.pdf"
    assert main(["report", str(source), "-o", str(out)]) == 0
    text = _flat(_pages(out)[0])
    assert "Run [U+6D4B]-1" in text and "Zoë Ångström" in text


def test_same_input_same_bytes_with_source_date_epoch(tmp_path, monkeypatch):
    """Checks behaviour: with SOURCE_DATE_EPOCH set (reproducible-builds.org), two PDFs are identical."""
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1764547200")
    source = _write(tmp_path / "two.csv", [
        ROW.format(run="a1", sample="S", filled="148.2020", operator="QA"),
        ROW.format(run="a2", sample="S", filled="148.2024", operator="QA"),
    ])
    first, second = tmp_path / "1.pdf", tmp_path / "2.pdf"
    assert main(["report", str(source), "-o", str(first)]) == 0
    assert main(["report", str(source), "-o", str(second)]) == 0
    assert first.read_bytes() == second.read_bytes()
    assert "generated 2025-12-01 00:00 UTC" in _pages(first)[0]


def test_top_limits_the_candidate_table(tmp_path):
    """Checks behaviour: --top 2 lists two ranked candidates per page."""
    source = _write(tmp_path / "two.csv", [
        ROW.format(run="t1", sample="", filled="148.2020", operator="QA"),
        ROW.format(run="t2", sample="", filled="148.2024", operator="QA"),
    ])
    out = tmp_path / "r.html"
    assert main(["report", str(source), "-o", str(out), "--top", "2"]) == 0
    text = out.read_text(encoding="utf-8")
    assert text.count("Candidates, ranked (top 2)") == 2
    assert "Candidates, ranked (top 5)" not in text


def test_plots_drawn_in_workers_match_plots_drawn_here(tmp_path, monkeypatch):
    """Checks behaviour: a long report's plots come from worker processes; the PDF equals the serial one."""
    import molid.reports.pdf as pdf_writer
    from molid.reports import build_report, render_report

    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1764547200")
    rows = [ROW.format(run=f"w{k}", sample="", filled=f"{148.2 + k * 1e-4:.4f}", operator="QA")
            for k in range(4)]
    report, _ = build_report(_write(tmp_path / "w.csv", rows))
    monkeypatch.setattr(pdf_writer, "PARALLEL_MINIMUM", 2)
    parallel = render_report(report, "pdf")
    monkeypatch.setattr(pdf_writer, "PARALLEL_MINIMUM", 10**6)
    serial = render_report(report, "pdf")
    assert parallel == serial


def test_budget_sensitivities_follow_the_ideal_gas_law(tmp_path):
    """The budget's c for a single run: ∂M/∂p = −M/p, ∂M/∂T = M/T, ∂M/∂V = −M/V.

    Source: differentiating the ideal-gas molar mass M = m·R·T/(p·V) (common practice);
    buoyancy and the air-density terms change these by far less than the 2 % allowed.
    """
    from molid.reports import build_report
    from molid.reports.content import Columns

    source = _write(tmp_path / "one.csv", [
        ROW.format(run="c1", sample="", filled="148.2020", operator="QA")])
    report, _ = build_report(source)
    budget = next(block.left for block in report.pages[0].blocks if isinstance(block, Columns))
    rows = {row[0]: float(row[2].replace("−", "-")) for row in budget.rows if row[2]}
    molar_mass = float(re.search(r"([\d.]+) ± ", report.pages[0].blocks[1].lines[0]).group(1))
    kelvin = 21.72 + 273.15  # the row's 21.72 °C (ITS-90: T/K = t/°C + 273.15)
    assert rows["gas pressure"] == pytest.approx(-molar_mass / 100.39, rel=0.02)  # per kPa
    assert rows["gas temperature"] == pytest.approx(molar_mass / kelvin, rel=0.02)  # per K
    assert rows["volume"] == pytest.approx(-molar_mass / 500.12, rel=0.02)  # per mL


def test_a_candidate_without_a_value_as_that_gas_is_shown_with_dashes():
    """Checks behaviour: a candidate whose Z or value could not be had (null in the JSON) is a row of dashes.

    Such a candidate (no real root of the virial equation at the run's state) once made
    the report stop with an internal error.
    """
    from molid.reports.content import _candidate_rows

    item = {"rank": 7, "name": "heavy vapour", "formula": "C9H20", "molar_mass": 128.26,
            "measured": {"value": None, "u": None}, "Z": None, "z": None, "verdict": "excluded"}
    rows, _ = _candidate_rows([item])
    assert rows[0][4:7] == ["–", "–", "–"]
    item["measured"] = {"value": 127.9, "u": None}
    assert _candidate_rows([item])[0][0][4] == "127.9 ± –"
