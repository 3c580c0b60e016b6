"""A table on a results sheet: header row, typed cells, widths and row heights that fit.

Column widths hold the longest word of the header unbroken and the widest number; text
cells wrap at spaces, one indent step in, so a number right-aligned in the column before
never touches them; every row is as tall as its most wrapped cell.
"""

from __future__ import annotations

import math
from copy import copy
from dataclasses import dataclass

from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE
from openpyxl.comments import Comment
from openpyxl.styles import Alignment, Border, Font, PatternFill, Side
from openpyxl.styles.numbers import BUILTIN_FORMATS
from openpyxl.utils import get_column_letter

from .sheetfit import (
    BODY_PT,
    FACE,
    PRINT_PT_PER_WIDTH,
    lines_needed,
    longest_word_width,
    row_height_pt,
    text_width_pt,
    width_for_pt,
)

HEADER_FILL = PatternFill("solid", fgColor="DCE6F0")
CAUTION_FILL = PatternFill("solid", fgColor="FFF4CE")
FLAG_FILL = PatternFill("solid", fgColor="F9D3CF")
BODY = Font(name=FACE, size=BODY_PT)
BOLD = Font(name=FACE, size=BODY_PT, bold=True)
ITALIC = Font(name=FACE, size=BODY_PT, italic=True)
TITLE = Font(name=FACE, size=14, bold=True)
THIN = Side(style="thin", color="8EA9C1")
HEADER_BORDER = Border(bottom=THIN)
WRAP = Alignment(wrap_text=True, vertical="top")
TEXT = Alignment(horizontal="left", wrap_text=True, vertical="top", indent=1)
NUMBER = Alignment(horizontal="right", vertical="top")
HEADER = Alignment(horizontal="left", wrap_text=True, vertical="bottom", indent=1)
TEXT_INDENT = 1
MIN_WIDTH = 5.0  # no column narrower, whatever it holds
LONGEST_WORD = 40.0  # a column is widened to hold a text's longest word up to this width
NUMBER_GAP_PT = 9.0  # room left of the widest number, so it never touches the column before


def font(size: float = BODY_PT, bold: bool = False, italic: bool = False, color=None) -> Font:
    """A font of the one face the workbook uses."""
    return Font(name=FACE, size=size, bold=bold, italic=italic, color=color)


@dataclass(frozen=True)
class Col:
    label: str
    width: float  # the widest the column gets for text; numbers and header words may widen it
    number_format: str = "General"
    note: str = ""


def finite(value):
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, str) and ILLEGAL_CHARACTERS_RE.search(value):  # only from the API
        return ILLEGAL_CHARACTERS_RE.sub(lambda m: f"\\x{ord(m.group()):02x}", value)
    return value


def is_number(value) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool)


def shown(value, number_format: str) -> str:
    """``value`` as the sheet shows it (numbers in ``number_format``; enough for widths)."""
    if not is_number(value):
        return "" if value is None else str(value)
    fmt = BUILTIN_FORMATS.get(0) if number_format == "General" else number_format
    if fmt and fmt[0] == "0" and set(fmt) <= set("0.,"):
        decimals = len(fmt.split(".")[1]) if "." in fmt else 0
        return f"{value:,.{decimals}f}" if "," in fmt else f"{value:.{decimals}f}"
    return f"{value:.10g}"


def _column_width(col: Col, values: list) -> float:
    """At least the header's longest word, the widest number with a gap before it and the
    longest word of the texts (up to LONGEST_WORD); text columns as wide as their longest
    text (or the header on one line), up to ``col.width``."""
    header_word = longest_word_width(col.label, bold=True, indent=TEXT_INDENT, hyphens=True)
    header_line = width_for_pt(text_width_pt(col.label, bold=True), TEXT_INDENT)
    numbers = {shown(v, col.number_format) for v in values if is_number(v)}
    texts = {str(v) for v in values if isinstance(v, str) and v}  # each text measured once
    # Digits are of one width in the face (tabular figures): the widest number is among the
    # longest texts of numbers (those within two characters of the longest, to allow for
    # points, commas and signs).
    longest = max((len(t) for t in numbers), default=0)
    widest_number = max(
        (width_for_pt(text_width_pt(t) + NUMBER_GAP_PT) for t in numbers if len(t) >= longest - 2),
        default=0.0,
    )
    widest_text = max((width_for_pt(text_width_pt(t), TEXT_INDENT) for t in texts), default=0.0)
    text_word = max((longest_word_width(t, indent=TEXT_INDENT) for t in texts), default=0.0)
    wanted = min(col.width, max(widest_number, widest_text, header_line))
    width = max(MIN_WIDTH, header_word, widest_number, min(text_word, LONGEST_WORD), wanted)
    return math.ceil(width * 10) / 10


def table(ws, cols: list[Col], rows, *, freeze_columns: int = 1) -> None:
    """Write ``rows`` under a header of ``cols`` on ``ws`` from A1."""
    rows = [tuple(finite(v) for v in row) for row in rows]
    widths = []
    for j, col in enumerate(cols):
        width = _column_width(col, [row[j] for row in rows])
        widths.append(width)
        ws.column_dimensions[get_column_letter(j + 1)].width = width
    header_lines = 1
    for j, col in enumerate(cols, start=1):
        cell = ws.cell(row=1, column=j, value=col.label)
        cell.font = BOLD
        cell.fill = HEADER_FILL
        cell.border = HEADER_BORDER
        cell.alignment = HEADER  # left and indented: never against the column before
        if col.note:
            cell.comment = Comment(col.note, "faultcalc", width=320, height=120)
        lines = lines_needed(col.label, widths[j - 1], bold=True, indent=TEXT_INDENT)
        header_lines = max(header_lines, lines)
    ws.row_dimensions[1].height = row_height_pt(header_lines)
    # Each column's two looks (a number, a text) made once and copied to its cells: setting
    # a cell's font, alignment and format looks each up in the workbook's style lists, which
    # cost more than writing the value (measured: 5,000 buses' workbook 11 s to about 5 s).
    looks: dict[tuple[int, bool], object] = {}
    for i, values in enumerate(rows, start=2):
        lines = 1
        for j, (col, value) in enumerate(zip(cols, values, strict=True), start=1):
            cell = ws.cell(row=i, column=j, value=value)
            number = is_number(value)
            look = looks.get((j, number))
            if look is None:
                cell.number_format = col.number_format
                cell.font = BODY
                cell.alignment = NUMBER if number else TEXT
                looks[(j, number)] = copy(cell._style)
            else:
                cell._style = copy(look)
            if not number and value:
                lines = max(lines, lines_needed(str(value), widths[j - 1], indent=1))
        ws.row_dimensions[i].height = row_height_pt(lines)
    ws.freeze_panes = ws.cell(row=2, column=freeze_columns + 1)
    last = get_column_letter(len(cols))
    ws.auto_filter.ref = f"A1:{last}{max(1, ws.max_row)}"


def fit_row(ws, row: int) -> None:
    """Make ``row`` as tall as its most wrapped cell (after its cells were changed)."""
    lines = 1
    for cell in ws[row]:
        if isinstance(cell.value, str) and cell.value:
            width = ws.column_dimensions[cell.column_letter].width or 8.43
            size = cell.font.size or BODY_PT
            indent = int(cell.alignment.indent or 0)
            need = lines_needed(cell.value, width, size, bool(cell.font.bold), indent)
            lines = max(lines, math.ceil(need * size / BODY_PT))
    ws.row_dimensions[row].height = row_height_pt(lines)


def only_row(cols: list[Col], position: int, text: str) -> tuple:
    """The one row of an empty table: ``text`` in column ``position`` (0-based), blank else."""
    return tuple(text if j == position else None for j in range(len(cols)))


def title_columns(ws) -> int:
    """The columns kept in view (frozen) left of the table, repeated on every printed page of
    a sheet too wide for one."""
    frozen = ws.freeze_panes
    if not frozen:
        return 0
    return ws[frozen].column - 1


def note_below(ws, text: str, page_width_pt: float, first_column: int = 1) -> None:
    """A note under the table, wrapped across the columns from ``first_column`` that fit the
    page width."""
    row = ws.max_row + 2
    last, used = first_column, 0.0
    for j in range(first_column, max(first_column, ws.max_column) + 1):
        width = ws.column_dimensions[get_column_letter(j)].width or 8.43
        if j > first_column and used + width * PRINT_PT_PER_WIDTH > page_width_pt:
            break
        last, used = j, used + width * PRINT_PT_PER_WIDTH
    cell = ws.cell(row=row, column=first_column, value=text)
    cell.fill = CAUTION_FILL
    cell.font = ITALIC
    cell.alignment = Alignment(horizontal="left", wrap_text=True, vertical="top", indent=1)
    if last > first_column:
        ws.merge_cells(start_row=row, start_column=first_column, end_row=row, end_column=last)
    lines = lines_needed(text, used / PRINT_PT_PER_WIDTH, indent=1)
    ws.row_dimensions[row].height = row_height_pt(lines)
