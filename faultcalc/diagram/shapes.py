"""The drawing's primitives, in points (1/72 inch), y growing downwards, each with its box.

Text widths are the advance widths of the font the renderer embeds (DejaVu Sans, shipped
with matplotlib), so the boxes the tests check are the boxes that print.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

FONT = "DejaVu Sans"
RASTER_DPI = 110  # the PNG's resolution (render.PNG_DPI)
LINE_PT = 1.25  # a text line's height as a multiple of its size (common practice, no source)


@dataclass(frozen=True)
class Line:
    x1: float
    y1: float
    x2: float
    y2: float
    width: float = 1.0
    colour: str = "#1f2d3d"
    dashed: bool = False
    owner: str = ""

    def box(self) -> tuple[float, float, float, float]:
        half = self.width / 2
        return (
            min(self.x1, self.x2) - half,
            min(self.y1, self.y2) - half,
            max(self.x1, self.x2) + half,
            max(self.y1, self.y2) + half,
        )


@dataclass(frozen=True)
class Symbol:
    """A drawn element: ``kind`` says which (the renderer draws it inside ``box``)."""

    kind: str  # transformer, cable, impedance, source, motor, generator, breaker, ref
    x: float  # centre
    y: float
    w: float
    h: float
    colour: str = "#1f2d3d"
    owner: str = ""
    letter: str = ""
    turned: bool = False  # on a horizontal line

    def box(self) -> tuple[float, float, float, float]:
        return (self.x - self.w / 2, self.y - self.h / 2, self.x + self.w / 2, self.y + self.h / 2)


@dataclass(frozen=True)
class Text:
    x: float  # left
    y: float  # top
    text: str
    size: float = 8.0
    bold: bool = False
    colour: str = "#1f2d3d"
    owner: str = ""

    @property
    def width(self) -> float:
        return text_width(self.text, self.size, self.bold)

    def box(self) -> tuple[float, float, float, float]:
        return (self.x, self.y, self.x + self.width, self.y + self.size * LINE_PT)


@functools.cache
def _font(bold: bool):
    from matplotlib import font_manager
    from matplotlib.ft2font import FT2Font

    weight = "bold" if bold else "normal"
    path = font_manager.findfont(font_manager.FontProperties(family=FONT, weight=weight))
    return FT2Font(path)


@functools.lru_cache(maxsize=200_000)
def text_width(text: str, size: float, bold: bool = False) -> float:
    """The printed width of ``text`` in points, at least: per character the larger of its
    advance width (as the PDF and SVG set it) and its hinted advance in the PNG's pixels;
    kerning, which only narrows a pair here, left out. A cached sum per character is about
    100 x faster than laying each string out (measured on 2,000 buses: 5.2 s to 0.05 s)."""
    return sum(_advance(c, size, bold) for c in text) + 0.5  # and half a point for rounding


@functools.lru_cache(maxsize=20_000)
def _advance(char: str, size: float, bold: bool) -> float:
    from matplotlib.ft2font import LoadFlags

    font = _font(bold)
    font.set_size(size, RASTER_DPI)
    if not font.get_char_index(ord(char)):  # not in the font: drawn as a box, about 1 em
        return size
    glyph = font.load_char(ord(char), flags=LoadFlags.FORCE_AUTOHINT)
    hinted = glyph.horiAdvance / 64.0 * 72.0 / RASTER_DPI
    return max(hinted, glyph.linearHoriAdvance / 65536.0 * 72.0 / RASTER_DPI)


def lacks(text: str) -> bool:
    """Whether the font has no glyph for some character of ``text`` (it prints as a box)."""
    font = _font(False)
    return any(not font.get_char_index(ord(c)) for c in set(text) if not c.isspace())


def laid_out_width(text: str, size: float, bold: bool = False) -> float:
    """The width matplotlib's raster layout gives ``text`` at the PNG's resolution (with
    kerning and hinting), in points, for the tests to compare."""
    font = _font(bold)
    font.set_size(size, RASTER_DPI)
    font.set_text(text, 0.0)
    return font.get_width_height()[0] / 64.0 * 72.0 / RASTER_DPI


def overlaps(a, b, gap: float = 0.0) -> bool:
    """Whether the boxes of ``a`` and ``b`` overlap (closer than ``gap``)."""
    ax0, ay0, ax1, ay1 = a.box()
    bx0, by0, bx1, by1 = b.box()
    return ax0 < bx1 + gap and bx0 < ax1 + gap and ay0 < by1 + gap and by0 < ay1 + gap
