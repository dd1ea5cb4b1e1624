r"""User text made safe to show: control characters escaped, over-long cells cut.

Cells reach the terminal, reports and plots as the user wrote them. A terminal
obeys the control characters in what it prints (ESC sequences clear the screen,
set the window title or colour the text; BEL, backspace and carriage return move
or hide what was printed), so every display shows them escaped, the way Python
writes them (``\x1b``). Unicode's bidirectional controls, which reorder what is
shown (the "Trojan Source" problem, CVE-2021-42574), are escaped as well. The CSV
and JSON outputs keep every character as it was.

A cell longer than a display's limit (default 10,000 characters) is cut there
with a note of its full length; the CSV and JSON outputs keep it whole.

References
----------
ECMA-48, *Control Functions for Coded Character Sets*, 5th ed. (1991): the C0 and
C1 control sets and the escape and control sequences built from them.
N. Boucher and R. Anderson, "Trojan Source: Invisible Vulnerabilities", USENIX
Security 2023 (the bidirectional-override characters).
"""

from __future__ import annotations

import functools

__all__ = ["DEFAULT_CELL_LIMIT", "FIGURE_LABEL_LIMIT", "cut", "drawable", "escape_controls", "shown",
           "was_cut"]

#: Characters of one cell a display shows before cutting it (the CSV and JSON keep it whole).
DEFAULT_CELL_LIMIT = 10_000

_CONTROLS = [*range(0x00, 0x20), 0x7F, *range(0x80, 0xA0), 0x061C, 0x200E, 0x200F,
             *range(0x202A, 0x202F), *range(0x2066, 0x206A)]


def _escape(code: int) -> str:
    return {0x09: "\\t", 0x0A: "\\n", 0x0D: "\\r"}.get(code) or (
        f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}")


_TABLE = str.maketrans({code: _escape(code) for code in _CONTROLS})
_CUT_MARK = "… [cut: {length:,} characters in all]"


def escape_controls(text) -> str:
    r"""Write each control character of a text as an escape, so a terminal shows it and does not obey it.

    Examples
    --------
    >>> escape_controls("A1\x1b[2J\a")
    'A1\\x1b[2J\\x07'
    >>> escape_controls("über 25 °C")
    'über 25 °C'
    """
    return str(text).translate(_TABLE)


def cut(text, limit: int = DEFAULT_CELL_LIMIT) -> str:
    """Cut a text longer than ``limit`` characters, saying how long it was.

    Examples
    --------
    >>> cut("x" * 12, 5)
    'xxxxx… [cut: 12 characters in all]'
    """
    text = str(text)
    if limit is None or len(text) <= limit:
        return text
    return text[:limit] + _CUT_MARK.format(length=len(text))


def was_cut(text) -> bool:
    """Tell whether a shown text carries the mark :func:`cut` adds."""
    return "… [cut: " in str(text)


def shown(text, limit: int = DEFAULT_CELL_LIMIT) -> str:
    r"""Make user text safe for a display: cut to ``limit`` characters, control characters escaped.

    Examples
    --------
    >>> shown("R1\rR2", 10)
    'R1\\rR2'
    """
    return escape_controls(cut(text, limit))


@functools.lru_cache(maxsize=1)
def _font_characters() -> frozenset:
    """Code points of DejaVu Sans, the font matplotlib ships and molid's figures use."""
    from pathlib import Path

    import matplotlib
    from matplotlib.ft2font import FT2Font

    path = Path(matplotlib.get_data_path()) / "fonts" / "ttf" / "DejaVuSans.ttf"
    return frozenset(FT2Font(str(path)).get_charmap())


#: Characters of one label a figure shows (a tick label or an annotation).
FIGURE_LABEL_LIMIT = 60


def drawable(text, limit: int = FIGURE_LABEL_LIMIT) -> str:
    r"""Make user text safe to draw in a matplotlib figure, shown literally.

    Cut to ``limit`` characters (with "…"), control characters escaped, ``$`` escaped
    so that matplotlib does not read the text as mathematics (mathtext), and each
    character the font has no glyph for written as its code, ``[U+XXXX]`` (matplotlib
    would draw an empty box and warn).

    Examples
    --------
    >>> drawable(r"$\frac{1}{0}$ Ann")
    '\\$\\frac{1}{0}\\$ Ann'
    >>> drawable("x" * 70, 5)
    'xxxx…'
    """
    text = escape_controls(str(text))
    if len(text) > limit:
        text = text[: limit - 1] + "…"
    characters = _font_characters()
    if not all(ord(character) in characters for character in text):
        text = "".join(character if ord(character) in characters else f"[U+{ord(character):04X}]"
                       for character in text)
    return text.replace("$", r"\$")
