"""A blank input workbook generated from the schema: every sheet and column, with help."""

from __future__ import annotations

from openpyxl import Workbook
from openpyxl.comments import Comment
from openpyxl.styles import Font, PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.datavalidation import DataValidation

from .. import schema

REQUIRED_FILL = PatternFill("solid", fgColor="F8D7A8")
OPTIONAL_FILL = PatternFill("solid", fgColor="DCE6F0")
TEMPLATE_ROWS = 500


def column_help(column: schema.Column) -> str:
    """One paragraph of help for a column: meaning, unit, allowed values, required/default."""
    parts = [column.help]
    if column.unit:
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


def _header(ws, sheet: schema.Sheet) -> None:
    for j, column in enumerate(sheet.columns, start=1):
        cell = ws.cell(row=1, column=j, value=column.name)
        cell.font = Font(bold=True)
        cell.fill = REQUIRED_FILL if column.required else OPTIONAL_FILL
        text = column_help(column)
        rules = [r for r in sheet_rules(sheet) if column.name in r]
        cell.comment = Comment(" ".join([text, *rules]), "faultcalc", width=300, height=140)
        ws.column_dimensions[get_column_letter(j)].width = max(12, len(column.name) + 4)
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
    ws.freeze_panes = "A2"


def _study(ws) -> None:
    _header(ws, schema.STUDY)
    ws.column_dimensions["A"].width = 16
    ws.column_dimensions["B"].width = 40
    for i, setting in enumerate(schema.SETTINGS, start=2):
        ws.cell(row=i, column=1, value=setting.name)
        ws.cell(row=i, column=2, value=setting.default if setting.default != "" else None)
        ws.cell(row=i, column=3, value=column_help(setting)).font = Font(
            italic=True, color="666666"
        )
    ws.column_dimensions["C"].width = 90


def _guide(ws) -> None:
    ws.page_setup.orientation = "landscape"
    ws.page_setup.fitToWidth = 1
    ws.page_setup.fitToHeight = 0
    ws.sheet_properties.pageSetUpPr.fitToPage = True
    ws.column_dimensions["A"].width = 16
    ws.column_dimensions["B"].width = 18
    ws.column_dimensions["C"].width = 160
    ws.cell(row=1, column=1, value="How to fill this workbook").font = Font(bold=True, size=14)
    lines = [
        "One element per row, header in row 1, columns in any order; blank rows are ignored.",
        "Orange headers are required, blue ones optional. Hover over a header for its help.",
        "Choices are case-insensitive. Names (bus, source, ...) must be unique in the workbook.",
        "This sheet is for reading only; the tool passes over it.",
    ]
    row = 2
    for line in lines:
        ws.cell(row=row, column=1, value=line)
        row += 1
    for sheet in schema.SHEETS:
        row += 1
        ws.cell(row=row, column=1, value=sheet.name).font = Font(bold=True)
        ws.cell(
            row=row, column=3, value=sheet.help + (" Required sheet." if sheet.required else "")
        )
        row += 1
        for rule in sheet_rules(sheet):
            ws.cell(row=row, column=3, value=rule)
            row += 1
        entries = schema.SETTINGS if sheet is schema.STUDY else sheet.columns
        for column in entries:
            ws.cell(row=row, column=2, value=column.name)
            ws.cell(row=row, column=3, value=column_help(column))
            row += 1


def build_template() -> Workbook:
    book = Workbook()
    guide = book.active
    guide.title = schema.GUIDE_SHEET
    _guide(guide)
    for sheet in schema.SHEETS:
        ws = book.create_sheet(sheet.name)
        if sheet is schema.STUDY:
            _study(ws)
        else:
            _header(ws, sheet)
    return book
