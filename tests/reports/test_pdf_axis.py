"""The PDF writer paints the molar-mass axis directly, as its SVG (and so matplotlib's) would draw it."""

import io
import shutil
import subprocess
import sys

import numpy as np
import pytest

from molid.reports import pdf, vector_axis
from molid.reports.content import Page, Plot, Report

_SPEC = ("axis", 28.044, 0.094, [("ethylene", 28.054, 27.878, 0.095, "excluded", False),
                                 ("nitrogen", 28.014, 28.037, 0.095, "consistent", True),
                                 ("carbon monoxide", 28.010, 28.033, 0.095, "consistent", False)], 90.0, 43.0)


def _page(draw) -> bytes:
    """One A4 page with the figure drawn by ``draw(document, x, y)``, as PDF bytes."""
    document = pdf._document_class()(orientation="P", unit="mm", format="A4")
    document.add_page()
    draw(document, 30.0, 40.0)
    return bytes(document.output())


def _raster(data: bytes, folder, name) -> np.ndarray:
    from PIL import Image

    path = folder / f"{name}.pdf"
    path.write_bytes(data)
    command = ["pdftoppm", "-r", "150", "-png", "-singlefile", str(path), str(folder / name)]
    subprocess.run(command, check=True)
    return np.asarray(Image.open(folder / f"{name}.png").convert("L"), dtype=int)


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="needs pdftoppm (poppler-utils) to rasterise")
def test_painted_axis_looks_like_its_svg(tmp_path):
    """Checks behaviour: the painted figure and its SVG read by fpdf2 rasterise alike (150 dpi).

    The SVG is the one checked against matplotlib's in test_vector_axis.py. Glyph edges
    are anti-aliased a little differently (positions are rounded differently), so the
    images are compared after a 3 × 3 box blur: a missing dot, cap or label changes some
    blurred pixel by more than 140 grey levels, these rounding differences by less than 80.
    """
    figure = vector_axis.axis_shapes(*_SPEC[1:])
    svg = vector_axis.axis_svg(*_SPEC[1:], font_family="DejaVu")

    def painted(document, x, y):
        pdf._paint(document, figure, x, y, _SPEC[4] / figure.width)

    def read(document, x, y):
        pdf._register_font(document, "DejaVu", "")
        document.image(io.BytesIO(svg), x=x, y=y, w=_SPEC[4], h=_SPEC[5])

    first, second = _raster(_page(painted), tmp_path, "painted"), _raster(_page(read), tmp_path, "read")
    assert first.shape == second.shape
    assert (first < 128).sum() > 2000  # the figure is there: lines, dots and labels
    difference = np.abs(_blurred(first) - _blurred(second))
    assert difference.max() < 110
    assert (difference > 40).sum() < 100


def _blurred(image):
    padded = np.pad(image, 1, mode="edge").astype(float)
    rows, columns = image.shape
    return sum(padded[i:i + rows, j:j + columns] for i in range(3) for j in range(3)) / 9


def test_a_figure_not_reproduced_is_drawn_by_matplotlib(tmp_path):
    """Checks behaviour: an axis with a label the direct layout does not cover prints via matplotlib."""
    spec = ("axis", 44.0, 0.1, [("R_1 blend", 44.0, 44.05, 0.1, "marginal", True)], 90.0, 43.0)
    code = ("import sys\nfrom molid.reports import figures, pdf\n"
            "from molid.reports.content import Page, Plot, Report\n"
            f"spec = {spec!r}\n"
            "plot = Plot(lambda: figures.spec_figure(spec), 90.0, 43.0, spec=spec)\n"
            "data = pdf.render_pdf(Report('t', 's', [Page('p', blocks=[plot])]))\n"
            "print(data[:5], 'matplotlib' in sys.modules)\n")
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert result.stdout.split()[-2:] == ["b'%PDF-'", "True"]


def test_a_report_of_reproduced_axes_paints_them(monkeypatch):
    """Checks behaviour: render_pdf paints each reproduced axis and asks no SVG of anyone."""
    painted = []
    monkeypatch.setattr(pdf, "_paint", lambda document, figure, x, y, scale: painted.append(figure))
    monkeypatch.setattr(pdf._FigureSource, "svg", lambda self, block: pytest.fail("an SVG was drawn"))
    plots = [Plot(lambda: None, 90.0, 43.0, spec=_SPEC) for _ in range(3)]
    data = pdf.render_pdf(Report("t", "s", [Page("p", blocks=plots)]))
    assert data.startswith(b"%PDF") and len(painted) == 3
