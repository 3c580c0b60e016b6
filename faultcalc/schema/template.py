"""A blank input workbook generated from the schema: every sheet and column, with help.

It prints on few pages: each sheet as wide as its header (the unit shown beside each column
name by the header's number format, so the name the reader looks for stays exactly the
column's name), the help wrapped to the page width, and a worked example of every sheet on
the guide sheet, never as rows on the sheets the tool reads.
"""

from __future__ import annotations

import math

from openpyxl import Workbook
from openpyxl.comments import Comment
from openpyxl.styles import Alignment, Font, PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.datavalidation import DataValidation

from .. import schema
from ..report.sheetfit import (
    BODY_PT,
    FACE,
    lines_needed,
    longest_word_width,
    row_height_pt,
)
from ..report.sheetpages import header_and_footer, table_pages, text_pages
from .examples import EXAMPLES

REQUIRED_FILL = PatternFill("solid", fgColor="F8D7A8")
OPTIONAL_FILL = PatternFill("solid", fgColor="DCE6F0")
EXAMPLE_FILL = PatternFill("solid", fgColor="F2F2F2")
TEMPLATE_ROWS = 500
HEADER_INDENT = 1
MIN_COLUMN_WIDTH = 9.0  # room to type a number under the shortest header
FOOTER = "Blank input workbook for faultcalc: fill a sheet per kind of element; see 'guide'."


def font(size: float = BODY_PT, bold: bool = False, italic: bool = False, color=None) -> Font:
    return Font(name=FACE, size=size, bold=bold, italic=italic, color=color)


def column_help(column: schema.Column, unit: bool = True) -> str:
    """One paragraph of help for a column: meaning, unit (unless ``unit`` is False: the guide
    prints it in a column of its own), allowed values, required/default."""
    parts = [column.help]
    if column.unit and unit:
        parts.append(f"Unit: {column.unit}.")
    parts.append(f"Expected: {column.expected()}.")
    if column.required:
        parts.append("Required.")
    elif column.default_from:
        parts.append(f"Optional; blank = the value of {column.default_from}.")
    elif column.default not in (None, ""):
        parts.append(f"Optional; blank = {column.default}.")
    else:
        parts.append("Optional.")
    return " ".join(parts)


def sheet_rules(sheet: schema.Sheet) -> list[str]:
    return [f"Give {a.describe()} (exactly one)." for a in sheet.alternatives]


def header_shown(column: schema.Column) -> str:
    """The header cell as printed: the column's name, and its unit in brackets."""
    return f"{column.name} ({column.unit})" if column.unit else column.name


def unit_format(column: schema.Column) -> str:
    """A number format showing a text cell followed by the column's unit (the cell's value
    stays the bare name)."""
    if not column.unit:
        return "General"
    return '@" (' + column.unit.replace('"', "") + ')"'


def _header_width(column: schema.Column) -> float:
    shown = header_shown(column)
    word = longest_word_width(shown, bold=True, indent=HEADER_INDENT)
    return math.ceil(max(MIN_COLUMN_WIDTH, word) * 10 + 1e-6) / 10


def _header(ws, sheet: schema.Sheet) -> None:
    lines = 1
    for j, column in enumerate(sheet.columns, start=1):
        cell = ws.cell(row=1, column=j, value=column.name)
        cell.font = font(bold=True)
        cell.fill = REQUIRED_FILL if column.required else OPTIONAL_FILL
        cell.number_format = unit_format(column)
        cell.alignment = Alignment(
            horizontal="left", vertical="bottom", wrap_text=True, indent=HEADER_INDENT
        )
        text = column_help(column)
        rules = [r for r in sheet_rules(sheet) if column.name in r]
        cell.comment = Comment(" ".join([text, *rules]), "faultcalc", width=300, height=140)
        width = _header_width(column)
        ws.column_dimensions[get_column_letter(j)].width = width
        lines = max(
            lines, lines_needed(header_shown(column), width, bold=True, indent=HEADER_INDENT)
        )
        if column.kind == schema.CHOICE:
            allowed = ",".join(column.choices)
            dv = DataValidation(
                type="list",
                formula1=f'"{allowed}"',
                allow_blank=True,
                showErrorMessage=True,
                errorTitle=column.name,
                error=f"Expected {column.expected()}.",
            )
            letter = get_column_letter(j)
            dv.add(f"{letter}2:{letter}{TEMPLATE_ROWS}")
            ws.add_data_validation(dv)
    ws.row_dimensions[1].height = row_height_pt(lines)
    ws.freeze_panes = "B2"


STUDY_WIDTHS = (18, 34, 72)  # setting, value, note (the help)


def _study(ws) -> None:
    _header(ws, schema.STUDY)
    for letter, width in zip("ABC", STUDY_WIDTHS, strict=True):
        ws.column_dimensions[letter].width = width
    for i, setting in enumerate(schema.SETTINGS, start=2):
        ws.cell(row=i, column=1, value=setting.name).font = font()
        value = ws.cell(row=i, column=2, value=setting.default if setting.default != "" else None)
        value.font = font()
        value.alignment = Alignment(horizontal="left", vertical="top")
        text = column_help(setting)
        note = ws.cell(row=i, column=3, value=text)
        note.font = font(italic=True, color="666666")
        note.alignment = Alignment(wrap_text=True, vertical="top", indent=1)
        ws.cell(row=i, column=1).alignment = Alignment(vertical="top")
        ws.row_dimensions[i].height = row_height_pt(lines_needed(text, STUDY_WIDTHS[2], indent=1))


# guide columns: name, unit, up to three example rows, help; its text in GUIDE_PT
GUIDE_WIDTHS = (17, 10, 12, 12, 12, 66)
GUIDE_PT = 9.0  # the guide's tables: legible, and a third shorter than at 10 pt
EXAMPLE_ROWS = 3


def _guide_cell(ws, row: int, column: int, value, *, bold=False):
    cell = ws.cell(row=row, column=column, value=value)
    cell.font = font(size=GUIDE_PT, bold=bold)
    cell.alignment = Alignment(
        horizontal="right" if isinstance(value, int | float) else "left",
        vertical="top",
        wrap_text=True,
        indent=0 if isinstance(value, int | float) else 1,
    )
    return cell


def _guide_row(ws, row: int, values: list, *, bold=False) -> None:
    """One row of the guide's table, as tall as its most wrapped cell."""
    lines = 1
    for j, value in enumerate(values, start=1):
        if value is None or value == "":
            continue
        _guide_cell(ws, row, j, value, bold=bold)
        if isinstance(value, str):
            width = guide_widths()[j - 1]
            lines = max(lines, lines_needed(value, width, GUIDE_PT, bold, indent=1))
    ws.row_dimensions[row].height = row_height_pt(lines, GUIDE_PT)


def _text_line(ws, row: int, text: str, *, size: float = BODY_PT, bold=False) -> None:
    """A line of text across the guide's width."""
    cell = ws.cell(row=row, column=1, value=text)
    cell.font = font(size=size, bold=bold)
    cell.alignment = Alignment(wrap_text=True, vertical="top")
    ws.merge_cells(start_row=row, start_column=1, end_row=row, end_column=len(GUIDE_WIDTHS))
    lines = lines_needed(text, sum(guide_widths()), size, bold)
    ws.row_dimensions[row].height = row_height_pt(lines, size)


def _example_value(rows: list[dict], k: int, name: str):
    return rows[k].get(name) if k < len(rows) else None


def guide_widths() -> tuple[float, ...]:
    """GUIDE_WIDTHS, the example columns widened to hold every example's longest word."""
    words = [
        longest_word_width(str(v), GUIDE_PT, indent=1)
        for rows in EXAMPLES.values()
        for r in rows
        for v in r.values()
    ]
    example = max([GUIDE_WIDTHS[2], *words])
    return (*GUIDE_WIDTHS[:2], *[example] * EXAMPLE_ROWS, GUIDE_WIDTHS[-1])


def _guide(ws) -> None:
    for j, width in enumerate(guide_widths(), start=1):
        ws.column_dimensions[get_column_letter(j)].width = width
    _text_line(ws, 1, "How to fill this workbook", size=14, bold=True)
    lines = [
        "One element per row, header in row 1, columns in any order; blank rows are ignored.",
        "Orange headers are required, blue ones optional. Hover over a header for its help; "
        "the unit printed beside a header's name is not part of it (the header is the name).",
        "Choices are case-insensitive. Names (bus, source, ...) must be unique in the workbook.",
        "This sheet is for reading only; the tool passes over it. Below, each sheet's columns "
        "with a worked example: the grey columns are what rows 2, 3 and 4 of that sheet would "
        "hold for an invented 480 V plant (a blank grey cell is a cell left blank).",
    ]
    row = 2
    for line in lines:
        _text_line(ws, row, line)
        row += 1
    for sheet in schema.SHEETS:
        row += 1
        about = sheet.help + (" Required sheet." if sheet.required else "")
        _text_line(ws, row, f"Sheet '{sheet.name}': {about}", bold=True)
        row += 1
        for rule in sheet_rules(sheet):
            _text_line(ws, row, rule)
            row += 1
        examples = EXAMPLES.get(sheet.name, [])
        heading = ["column", "unit", *[f"row {k + 2}" for k in range(EXAMPLE_ROWS)], "help"]
        _guide_row(ws, row, heading, bold=True)
        for j in range(1, len(GUIDE_WIDTHS) + 1):
            ws.cell(row=row, column=j).fill = OPTIONAL_FILL
        row += 1
        for column in sheet.columns:
            values = [_example_value(examples, k, column.name) for k in range(EXAMPLE_ROWS)]
            _guide_row(
                ws,
                row,
                [column.name, column.unit, *values, column_help(column, unit=False)],
            )
            for k in range(min(EXAMPLE_ROWS, len(examples))):  # a blank example is grey too
                ws.cell(row=row, column=3 + k).fill = EXAMPLE_FILL
            row += 1
        if sheet is schema.STUDY:
            _text_line(ws, row, "The settings, each with its help, are on the study sheet.")
            row += 1


def _page(ws, orientation: str = "landscape") -> None:
    header_and_footer(ws, f"faultcalc input template: sheet '{ws.title}'", "", FOOTER, orientation)
    ws.oddHeader.right.text = ""


def _named_fonts(book: Workbook) -> None:
    book._fonts[0] = font()  # the default font: every cell left unstyled
    for ws in book.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                if cell.has_style and cell.font.name != FACE:
                    cell.font = font(
                        size=cell.font.size or BODY_PT,
                        bold=bool(cell.font.b),
                        italic=bool(cell.font.i),
                        color=cell.font.color,
                    )


def build_template() -> Workbook:
    book = Workbook()
    book._fonts[0] = font()
    guide = book.active
    guide.title = schema.GUIDE_SHEET
    _guide(guide)
    text_pages(guide, "landscape")
    guide.print_title_rows = None
    _page(guide)
    for sheet in schema.SHEETS:
        ws = book.create_sheet(sheet.name)
        if sheet is schema.STUDY:
            _study(ws)
            text_pages(ws, "landscape")
            ws.print_title_rows = "1:1"
        else:
            _header(ws, sheet)
            ws.page_setup.orientation = "landscape"
            table_pages(ws, "landscape", title_columns=1)
        _page(ws)
    _named_fonts(book)
    return book
