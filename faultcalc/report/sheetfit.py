"""How much room text takes in a worksheet: one font face, its character widths, the lines a
wrapped cell needs and the column width a header needs so that no word breaks.

One face everywhere, bold and italic included: Arial. It is on Windows and macOS, and
LibreOffice on Linux prints it as Liberation Sans, which has the same character widths, so
the widths below hold wherever the workbook is opened (a face left unnamed prints in whatever
the program chooses, and wrapped text then no longer fits the row heights computed here).
"""

from __future__ import annotations

import math
import unicodedata

FACE = "Arial"
BODY_PT = 10.0  # the table text (common practice (no source): 10 pt prints legibly)

# Advance widths of printable ASCII (space to '~') in 1/1000 em, Arial regular and bold
# (the same as the Helvetica core-font metrics and Liberation Sans).
_REGULAR = (
    278, 278, 355, 556, 556, 889, 667, 191, 333, 333, 389, 584, 278, 333, 278, 278,
    556, 556, 556, 556, 556, 556, 556, 556, 556, 556, 278, 278, 584, 584, 584, 556,
    1015, 667, 667, 722, 722, 667, 611, 778, 722, 278, 500, 667, 556, 833, 722, 778,
    667, 778, 722, 667, 611, 722, 667, 944, 667, 667, 611, 278, 278, 278, 469, 556,
    333, 556, 556, 500, 556, 556, 278, 556, 556, 222, 222, 500, 222, 833, 556, 556,
    556, 556, 333, 500, 278, 556, 500, 722, 500, 500, 500, 334, 260, 334, 584,
)  # fmt: skip
_BOLD = (
    278, 333, 474, 556, 556, 889, 722, 238, 333, 333, 389, 584, 278, 333, 278, 278,
    556, 556, 556, 556, 556, 556, 556, 556, 556, 556, 333, 333, 584, 584, 584, 611,
    975, 722, 722, 722, 722, 667, 611, 778, 722, 278, 556, 722, 611, 833, 722, 778,
    667, 778, 722, 667, 611, 722, 667, 944, 667, 667, 611, 333, 278, 333, 584, 556,
    333, 556, 611, 556, 611, 556, 333, 611, 611, 278, 278, 556, 278, 889, 611, 611,
    611, 611, 389, 556, 333, 611, 556, 778, 556, 556, 500, 389, 280, 389, 584,
)  # fmt: skip
_OTHER = 600  # any other character: a little wider than the average letter
_WIDE = 1000  # East Asian wide and full-width characters: one em

# A column width of w (characters of the default font, Arial 10 pt) holds about 5.25 w
# points of text less 4 points of padding in Excel (7 w pixels at 96 per inch) and 5.56 w
# less 3 in LibreOffice (w digit widths); text is wrapped for the narrower, pages are counted
# for the wider. One indent step takes 8.3 points in LibreOffice (three spaces), taken as 9.
# (Measured on a LibreOffice print of test strings; common practice (no source) otherwise.)
PT_PER_WIDTH = 5.25
PRINT_PT_PER_WIDTH = 5.56
CELL_PADDING_PT = 4.0
INDENT_PT = 9.0
LINE_FACTOR = 1.28  # line height / font size (Arial 10 pt: 12.75 pt lines in Excel)
ROW_PADDING_PT = 3.0


def text_width_pt(text: str, size_pt: float = BODY_PT, bold: bool = False) -> float:
    """Width of ``text`` on one line, in points."""
    table = _BOLD if bold else _REGULAR
    total = 0
    for ch in text:
        code = ord(ch)
        if 32 <= code <= 126:
            total += table[code - 32]
        elif unicodedata.east_asian_width(ch) in ("W", "F"):
            total += _WIDE
        elif unicodedata.category(ch).startswith(("M", "C")):
            continue  # combining marks and invisible characters take no room
        else:
            total += _OTHER
    return total * size_pt / 1000.0


def room_pt(width: float, indent: int = 0) -> float:
    """The text width a column of ``width`` holds, in points."""
    return max(1.0, width * PT_PER_WIDTH - CELL_PADDING_PT - indent * INDENT_PT)


def width_for_pt(text_pt: float, indent: int = 0) -> float:
    """The column width that holds ``text_pt`` points of text on one line."""
    return (text_pt + CELL_PADDING_PT + indent * INDENT_PT) / PT_PER_WIDTH


def lines_needed(
    text: str, width: float, size_pt: float = BODY_PT, bold: bool = False, indent: int = 0
) -> int:
    """Lines ``text`` takes when wrapped at spaces in a column of ``width`` (a word longer
    than the line is broken, as the spreadsheet programs do)."""
    room = room_pt(width, indent)
    space = text_width_pt(" ", size_pt, bold)
    count = 0
    for paragraph in str(text).split("\n"):
        count += 1
        used = 0.0
        for word in paragraph.split():
            w = text_width_pt(word, size_pt, bold)
            if used and used + space + w <= room:
                used += space + w
                continue
            if used:
                count += 1
            if w <= room:
                used = w
            else:  # broken over ceil(w / room) lines; the last piece starts the next
                extra = math.ceil(w / room) - 1
                count += extra
                used = w - extra * room
    return count


def row_height_pt(lines: int, size_pt: float = BODY_PT) -> float:
    """Row height that shows ``lines`` lines of ``size_pt`` text."""
    return round(lines * size_pt * LINE_FACTOR + ROW_PADDING_PT, 1)


def longest_word_width(
    text: str, size_pt: float = BODY_PT, bold: bool = False, indent: int = 0, hyphens=False
) -> float:
    """Column width that holds the longest word of ``text`` unbroken: words are separated by
    spaces and, with ``hyphens``, end after a hyphen too (both programs break a line there:
    'line-' / 'to-ground')."""
    text = str(text)
    if hyphens:
        text = text.replace("-", "- ")
    words = text.split() or [""]
    return width_for_pt(max(text_width_pt(w, size_pt, bold) for w in words), indent)
