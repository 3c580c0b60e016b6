"""How each sheet prints: orientation, margins, the scale (fit to the page width only where
that stays legible, otherwise full size over several pages with the titles repeated) and a
page header and footer that never run into each other or into the table.

The paper size is left to the program (Letter in North America, A4 elsewhere); the layouts
are sized for the smaller of the two in each direction, so they print on either.
"""

from __future__ import annotations

from dataclasses import dataclass

from openpyxl.utils import get_column_letter
from openpyxl.worksheet.page import PageMargins

from .sheetfit import FACE, PRINT_PT_PER_WIDTH, text_width_pt

# The smaller of Letter (8.5 x 11 in) and A4 (8.27 x 11.69 in) in each direction, inches.
PAPER_SHORT_IN = 8.27
PAPER_LONG_IN = 11.0
SIDE_MARGIN_IN = 0.5
TOP_MARGIN_IN = 0.75
BOTTOM_MARGIN_IN = 0.85  # room for the two-line footer below the table
HEADER_MARGIN_IN = 0.3
FOOTER_MARGIN_IN = 0.3
# Smallest scale a sheet is fitted to the page width at: 10 pt text prints at 8.5 pt
# (common practice (no source)). A sheet that would need less prints full size instead.
LEGIBLE_SCALE = 0.85
HEADER_PT = 8.0
FOOTER_PT = 7.0
MIN_FOOTER_PT = 6.0
FOOTER_GAP_PT = 36.0  # half an inch between the caution and the page number
HEADER_TITLE_CHARS = 120  # the study title in the page header, at most (after '&' doubled)


@dataclass(frozen=True)
class Page:
    """The printable area of a page, in points."""

    width_pt: float
    height_pt: float


def page(orientation: str) -> Page:
    short = (PAPER_SHORT_IN - 2 * SIDE_MARGIN_IN) * 72
    across = PAPER_LONG_IN - 2 * SIDE_MARGIN_IN
    long_pt = (PAPER_LONG_IN - TOP_MARGIN_IN - BOTTOM_MARGIN_IN) * 72
    if orientation == "landscape":
        return Page(across * 72, (PAPER_SHORT_IN - TOP_MARGIN_IN - BOTTOM_MARGIN_IN) * 72)
    return Page(short, long_pt)


def sheet_width_pt(ws, first: int = 1, last: int | None = None) -> float:
    """Width of columns ``first`` to ``last`` (1-based, inclusive), in points."""
    last = ws.max_column if last is None else last
    total = 0.0
    for j in range(first, last + 1):
        dim = ws.column_dimensions.get(get_column_letter(j))
        width = dim.width if dim is not None and dim.width else 8.43  # the programs' default
        total += width * PRINT_PT_PER_WIDTH
    return total


def fit_scale(ws, orientation: str) -> float:
    """The scale at which the sheet's columns fit one page width (at most 1)."""
    return min(1.0, page(orientation).width_pt / max(1.0, sheet_width_pt(ws)))


def header_text(text: str, limit: int) -> str:
    """``text`` for a page header: '&' doubled (it starts a header code), at most ``limit``
    characters."""
    out = ""
    for ch in text:
        piece = "&&" if ch == "&" else ch
        if len(out) + len(piece) > limit:
            break
        out += piece
    return out


def fitted(text: str, room_pt: float, size_pt: float) -> str:
    """``text`` on one line of ``room_pt``: whole, or cut and ended with '...' (after a word,
    unless that leaves less than half the line filled)."""
    if text_width_pt(text, size_pt) <= room_pt:
        return text
    room = room_pt - text_width_pt(" ...", size_pt)
    head = text
    while head and text_width_pt(head, size_pt) > room:
        head = head[:-1]
    at_space = text[len(head) : len(head) + 1] == " "
    words = head if at_space or " " not in head else head.rsplit(" ", 1)[0]
    if text_width_pt(words, size_pt) >= room / 2:
        head = words
    return head.rstrip(" ,;:") + " ..."


def _margins(ws) -> None:
    ws.page_margins = PageMargins(
        left=SIDE_MARGIN_IN,
        right=SIDE_MARGIN_IN,
        top=TOP_MARGIN_IN,
        bottom=BOTTOM_MARGIN_IN,
        header=HEADER_MARGIN_IN,
        footer=FOOTER_MARGIN_IN,
    )


def header_and_footer(ws, title: str, calculated: str, caution: str, orientation: str) -> None:
    """Title left and date right in the header; the caution left in the footer, in lines
    short enough to leave the page number on the right free."""
    width = page(orientation).width_pt
    right = f"calculated {calculated}"
    room = width - text_width_pt(right, HEADER_PT) - 36
    ws.oddHeader.left.text = header_text(fitted(title, room, HEADER_PT), HEADER_TITLE_CHARS)
    ws.oddHeader.right.text = right
    number = "page &P of &N"
    size = footer_size(caution, width)
    ws.oddFooter.left.text = caution
    ws.oddFooter.right.text = number
    for part in (ws.oddHeader.left, ws.oddHeader.right):
        part.size, part.font = HEADER_PT, f"{FACE},Regular"
    for part in (ws.oddFooter.left, ws.oddFooter.right):
        part.size, part.font = size, f"{FACE},Regular"


def footer_size(caution: str, width_pt: float) -> float:
    """The footer's font size: FOOTER_PT, or smaller (in half points, not below
    MIN_FOOTER_PT) so that the caution and the page number fit on one line, apart (a line
    break in a footer prints as a code in some programs)."""
    size = FOOTER_PT
    while size > MIN_FOOTER_PT and footer_width_pt(caution, size) > width_pt:
        size -= 0.5
    return size


def footer_width_pt(caution: str, size_pt: float) -> float:
    """The caution, the page number of a 999-page print and the gap between, in points."""
    return text_width_pt(caution + "page 999 of 999", size_pt) + FOOTER_GAP_PT


def table_pages(ws, orientation: str = "landscape", title_columns: int = 1) -> None:
    """A table sheet: fitted to the page width when that keeps it legible, otherwise printed
    full size across pages with the header row and the first ``title_columns`` columns
    repeated on each; always as many pages tall as it needs."""
    _margins(ws)
    ws.page_setup.orientation = orientation
    ws.print_options.horizontalCentered = False
    if fit_scale(ws, orientation) >= LEGIBLE_SCALE:
        ws.page_setup.fitToWidth = 1
        ws.page_setup.fitToHeight = 0
        ws.sheet_properties.pageSetUpPr.fitToPage = True
    else:
        ws.sheet_properties.pageSetUpPr.fitToPage = False
        ws.page_setup.scale = 100
        ws.page_setup.pageOrder = "overThenDown"  # the pages of one set of rows together
        if title_columns:
            ws.print_title_cols = f"A:{get_column_letter(title_columns)}"
    ws.print_title_rows = "1:1"


def single_page(ws, orientation: str = "portrait") -> None:
    """A sheet laid out for one page (a label): fitted to one page."""
    _margins(ws)
    ws.page_setup.orientation = orientation
    ws.page_setup.fitToWidth = 1
    ws.page_setup.fitToHeight = 1
    ws.sheet_properties.pageSetUpPr.fitToPage = True


def text_pages(ws, orientation: str = "portrait") -> None:
    """A sheet of text sized to the page width: one page wide, as many tall as it needs."""
    _margins(ws)
    ws.page_setup.orientation = orientation
    ws.page_setup.fitToWidth = 1
    ws.page_setup.fitToHeight = 0
    ws.sheet_properties.pageSetUpPr.fitToPage = True
