"""The typeface of every drawn output (the one-line, the report): DejaVu Sans, shipped with
matplotlib (so no system font is needed), registered with reportlab and embedded in its PDFs
as TrueType subsets; what it cannot print as typed."""

from __future__ import annotations

import functools
from pathlib import Path

# The top of a line of text (the box the diagram lays out) to its baseline, in ems: the height
# of the face's 'l' (0.76 em), as matplotlib sets text aligned to its top.
TOP_TO_BASELINE_EM = 0.76
REGULAR = "DejaVuSans"
BOLD = "DejaVuSans-Bold"
ITALIC = "DejaVuSans-Oblique"
BOLD_ITALIC = "DejaVuSans-BoldOblique"
FAMILY = REGULAR
FILES = {
    REGULAR: "DejaVuSans.ttf",
    BOLD: "DejaVuSans-Bold.ttf",
    ITALIC: "DejaVuSans-Oblique.ttf",
    BOLD_ITALIC: "DejaVuSans-BoldOblique.ttf",
}


@functools.cache
def register() -> str:
    """Register the four faces with reportlab (once) and return the family name."""
    import matplotlib
    from reportlab.lib.fonts import addMapping
    from reportlab.pdfbase import pdfmetrics
    from reportlab.pdfbase.ttfonts import TTFont

    folder = Path(matplotlib.get_data_path()) / "fonts" / "ttf"
    for name, file in FILES.items():
        pdfmetrics.registerFont(TTFont(name, str(folder / file)))
    addMapping(FAMILY, 0, 0, REGULAR)
    addMapping(FAMILY, 1, 0, BOLD)
    addMapping(FAMILY, 0, 1, ITALIC)
    addMapping(FAMILY, 1, 1, BOLD_ITALIC)
    return FAMILY


def has_glyph(ch: str) -> bool:
    """True when the regular face draws ``ch`` (a name in a script it lacks prints as boxes)."""
    from reportlab.pdfbase import pdfmetrics

    register()
    return ord(ch) in pdfmetrics.getFont(REGULAR).face.charToGlyph


def right_to_left(ch: str) -> bool:
    """True for a right-to-left letter (Arabic, Hebrew...): reportlab lays text out left to
    right without shaping, so such text prints with its letters reversed and unjoined."""
    import unicodedata

    return unicodedata.bidirectional(ch) in ("R", "AL")


def prints_as_typed(text: str) -> bool:
    """False when ``text`` holds a character this report prints wrongly (missing from the
    face, or right to left)."""
    return all(ch.isspace() or (has_glyph(ch) and not right_to_left(ch)) for ch in text)
