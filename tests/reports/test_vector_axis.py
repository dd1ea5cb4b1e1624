"""The molar-mass axis written as SVG without matplotlib draws what matplotlib draws.

The reference is matplotlib itself (its ``MaxNLocator``, ``ScalarFormatter`` and SVG
backend, drawing :func:`molid.reports.figures.axis_figure`): every path, marker and text
of the SVG written directly must be matplotlib's, in the same order and style, within
a thousandth of a point.
"""

import random
import string
import subprocess
import sys
import xml.etree.ElementTree as ElementTree
from pathlib import Path

import pytest

from molid.reports import figures, vector_axis

ROOT = Path(__file__).resolve().parents[2]
_SVG = "{http://www.w3.org/2000/svg}"
_LINK = "{http://www.w3.org/1999/xlink}href"


def _style(text):
    pairs = (part.split(":", 1) for part in (text or "").split(";") if ":" in part)
    return {key.strip(): value.strip() for key, value in pairs}


def _moved(words, x, y):
    moved, numbers = [], 0
    for word in words:
        if word.isalpha():
            moved.append(word)
        else:
            moved.append(str(float(word) + (x if numbers % 2 == 0 else y)))
            numbers += 1
    return moved


def _drawn(svg: bytes) -> list:
    """Each drawn element in order: kind, its numbers and words, its style, whether clipped to the axes."""
    root = ElementTree.fromstring(svg)
    defined = {node.get("id"): node for node in root.iter() if node.get("id")}
    found = []

    def walk(node, clipped):
        tag = node.tag.replace(_SVG, "")
        if tag in ("defs", "clipPath", "style"):
            return
        clipped = clipped or node.get("clip-path") is not None
        if tag == "path":
            found.append(("path", node.get("d").split(), _style(node.get("style")), clipped))
        elif tag == "use":  # a marker placed at (x, y): the same as its outline moved there
            marker = defined[node.get(_LINK)[1:]]
            style = {**_style(marker.get("style")), **_style(node.get("style"))}
            found.append(("path", _moved(marker.get("d").split(), float(node.get("x")), float(node.get("y"))),
                          style, clipped))
        elif tag == "text":
            numbers = [node.get("x"), node.get("y"), node.text]
            found.append(("text", numbers, _style(node.get("style")), clipped))
        for child in node:
            walk(child, clipped)

    walk(root, False)
    return found


def _differences(reference: bytes, written: bytes, tolerance=1e-3) -> list:
    expected, actual = _drawn(reference), _drawn(written)
    if len(expected) != len(actual):
        return [f"{len(actual)} elements where matplotlib draws {len(expected)}"]
    problems = []
    for index, (one, other) in enumerate(zip(expected, actual, strict=True)):
        if (one[0], one[2], one[3], len(one[1])) != (other[0], other[2], other[3], len(other[1])):
            problems.append((index, one, other))
            continue
        for first, second in zip(one[1], other[1], strict=True):
            try:
                close = abs(float(first) - float(second)) <= tolerance
            except (TypeError, ValueError):
                close = first == second
            if not close:
                problems.append((index, one[0], first, second))
    return problems


def _random_spec(generator):
    centre = 10 ** generator.uniform(0.3, 2.8)
    scale = centre * 10 ** generator.uniform(-5, -0.5)
    points = []
    for _ in range(generator.randint(0, 6)):
        name = "".join(generator.choice(string.ascii_letters + " -,()'0123456789")
                       for _ in range(generator.randint(1, 28)))
        molar_mass = centre + generator.gauss(0, 3 * scale)
        measured, spread = molar_mass + generator.gauss(0, scale), abs(generator.gauss(0, scale))
        verdict = generator.choice([*figures.VERDICT_COLOURS, "other"])
        points.append((name, molar_mass, measured, spread, verdict, generator.random() < 0.2))
    return ("axis", centre + generator.gauss(0, scale), abs(generator.gauss(0, scale)), points, 90.0,
            generator.choice([43.0, 46.0]))


@pytest.mark.parametrize("seed", range(40))
def test_random_axes_match_matplotlib(seed):
    """Random results and candidates (2 to 600 g/mol, spreads 1e-5 to 0.3 relative) match matplotlib's SVG."""
    spec = _random_spec(random.Random(seed))
    written = vector_axis.axis_svg(*spec[1:])
    assert written is not None
    assert _differences(figures.spec_svg_for_pdf(spec), written) == []


@pytest.mark.parametrize("spec", [
    ("axis", 44.0, 0.0, [], 90.0, 43.0),
    ("axis", 44.0, 0.0, [("CO2", 44.0, 44.0, 0.0, "consistent", True)], 90.0, 43.0),
    ("axis", 2.016, 0.5, [("hydrogen", 2.016, 2.1, 0.4, "consistent", False),
                          ("helium", 4.0026, 2.0, 0.45, "excluded", True)], 90.0, 43.0),
    ("axis", 44.01, 1e-9, [("a", 44.01, 44.01, 1e-9, "marginal", False)], 90.0, 43.0),
    ("axis", 44.0, 0.1, [("a <b> & 'c'", 44.0, 44.0, 0.1, "marginal", False)], 90.0, 43.0),
    ("axis", -5.0, 0.1, [("below zero", -5.0, -4.9, 0.1, "marginal", False)], 90.0, 43.0),
])
def test_edge_cases_match_matplotlib(spec):
    """Empty, zero-width, tiny, markup-like and negative axes match matplotlib's SVG."""
    assert _differences(figures.spec_svg_for_pdf(spec), vector_axis.axis_svg(*spec[1:])) == []


@pytest.mark.parametrize("spec", [
    ("axis", float("nan"), 1.0, [], 90.0, 43.0),
    ("axis", 44.0, 0.1, [("x", 44.0, float("inf"), 0.1, "marginal", False)], 90.0, 43.0),
    ("axis", 1e6, 1e3, [("x", 1e6, 1e6, 10.0, "marginal", False)], 90.0, 43.0),
    ("axis", 2e-5, 1e-6, [("x", 2e-5, 2e-5, 1e-7, "marginal", False)], 90.0, 43.0),
    ("axis", 44.0, 0.1, [("R_1", 44.0, 44.0, 0.1, "marginal", False)], 90.0, 43.0),
    ("axis", 44.0, 0.1, [("kohlendioxid ä", 44.0, 44.0, 0.1, "marginal", False)], 90.0, 43.0),
])
def test_what_is_not_reproduced_is_left_to_matplotlib(spec):
    """Checks behaviour: non-finite values, labels with exponents and unmeasured characters give None."""
    assert vector_axis.axis_svg(*spec[1:]) is None


def test_tick_values_of_matplotlibs_locator():
    """Tick positions equal matplotlib's ``MaxNLocator(steps=[1, 2, 2.5, 5, 10])`` bit for bit."""
    from matplotlib.ticker import MaxNLocator

    generator = random.Random(7)
    for _ in range(500):
        low = generator.uniform(-1e3, 1e3)
        high = low + 10 ** generator.uniform(-9, 3)
        bins = generator.randint(1, 9)
        expected = MaxNLocator(nbins=bins, steps=[1, 2, 2.5, 5, 10]).tick_values(low, high)
        assert vector_axis.tick_values(low, high, bins).tolist() == expected.tolist()


def test_a_report_of_axes_draws_without_matplotlib(tmp_path):
    """Checks behaviour: a PDF report whose plots are all axes imports neither matplotlib nor its figures."""
    code = ("import sys\nfrom molid.reports import write_report\n"
            "write_report(sys.argv[1], sys.argv[2])\n"
            "print('matplotlib' in sys.modules)\n")
    runs = ROOT / "sample_runs" / "qa_cylinders.csv"
    result = subprocess.run([sys.executable, "-c", code, str(runs), str(tmp_path / "r.pdf")],
                            capture_output=True, text=True, check=True, cwd=tmp_path)
    assert result.stdout.split()[-1] == "False"
    assert (tmp_path / "r.pdf").read_bytes().startswith(b"%PDF")
