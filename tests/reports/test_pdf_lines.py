"""Lines of report text placed without fpdf2's cell layout land where ``cell`` puts them."""

import shutil
import subprocess

import numpy as np
import pytest

from molid.reports import pdf

_LINES = [("L", "QA-001  147.3839 g  ±0.12  argon (label)"), ("R", "39.98 ± 0.12"), ("L", ""),
          ("R", "−2.01"), ("L", "CO₂ · ethylene · [U+6D4B]")]


def _document(draw):
    document = pdf._document_class()(orientation="P", unit="mm", format="A4")
    document.add_page()
    document.set_font("DejaVu", "", 7)
    document.set_text_color(178, 24, 43)
    document.set_xy(40, 50)
    positions = []
    for align, text in _LINES:
        draw(document, 60, 3.3, text, align)
        positions.append((document.x, document.y, document.page))
    return document, positions


def _by_cell(document, width, height, text, align):
    document.cell(width, height, text, align=align, new_x="LEFT", new_y="NEXT")


def test_positions_follow_cell():
    """Checks behaviour: after each line the position is where ``cell(new_x=LEFT, new_y=NEXT)`` leaves it."""
    assert _document(pdf._line)[1] == _document(_by_cell)[1]


def test_a_line_past_the_page_break_goes_through_cell():
    """Checks behaviour: a line that would cross the page break starts a new page, as ``cell`` does."""
    document = pdf._document_class()(orientation="P", unit="mm", format="A4")
    document.set_auto_page_break(True, margin=17)
    document.add_page()
    document.set_font("DejaVu", "", 7)
    document.set_y(document.page_break_trigger - 1)
    pdf._line(document, 60, 3.3, "the last line")
    assert document.page == 2


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="needs pdftoppm (poppler-utils) to rasterise")
def test_lines_rasterise_like_cells(tmp_path):
    """Checks behaviour: the lines drawn both ways give the same pixels at 150 dpi."""
    from PIL import Image

    images = []
    for name, draw in (("line", pdf._line), ("cell", _by_cell)):
        (tmp_path / f"{name}.pdf").write_bytes(bytes(_document(draw)[0].output()))
        subprocess.run(["pdftoppm", "-r", "150", "-png", "-singlefile", str(tmp_path / f"{name}.pdf"),
                        str(tmp_path / name)], check=True)
        images.append(np.asarray(Image.open(tmp_path / f"{name}.png").convert("L"), dtype=int))
    assert (images[0] < 200).sum() > 500  # the text is there
    assert np.abs(images[0] - images[1]).max() <= 8
