"""The first sheets of the results workbook: the Summary (each bus's maximum available fault
current, one page wide) and the One-line picture. They format ``StudyResult.maximum`` and a
PNG made elsewhere; they compute nothing."""

from __future__ import annotations

import io
import math

from openpyxl.drawing.image import Image
from openpyxl.styles import Alignment

from ..results import NOT_CONVERGED, StudyResult
from ..solve import duty
from .sheetfit import PRINT_PT_PER_WIDTH, lines_needed, row_height_pt
from .sheetpages import page
from .sheettable import BOLD, Col, finite, font, table
from .words import FAULT_WORDS

KA = "0.00"
KV = "0.000"
XR = "0.00"
SUMMARY_COLUMNS = [
    Col("Bus", 14, note="Bus name as on the input 'buses' sheet."),
    Col("Description", 24),
    Col("Nominal kV", 8, KV, "Nominal line-to-line voltage."),
    Col(
        "Maximum available, kA",
        10,
        KA,
        "The largest initial symmetrical RMS current of the four fault types (3-phase, "
        "line-to-ground, line-to-line, double line-to-ground) over the base case and every case.",
    ),
    Col("Fault type giving it", 14),
    Col("Case giving it", 22, note="base case, or the case on the cases sheet."),
    Col("X/R in that case", 8, XR, "The bus's X/R in the case that gives the maximum."),
    Col("Worst peak ip, kA", 9, KA, "Three-phase peak current, worst over every case."),
    Col(
        "Worst half-cycle asym., kA",
        10,
        KA,
        "Three-phase half-cycle asymmetrical RMS current, worst over every case.",
    ),
    Col(
        "Worst duty status",
        14,
        note="Of the bus's device, worst over the base case and every case; see the Equipment "
        "duty sheet. A status compares numbers only.",
    ),
]
MAX_COLUMN = 4  # 1-based: the maximum available current, in bold


def _case_words(case: str) -> str:
    return "base case" if case == "base" else case


def summary_rows(result: StudyResult) -> list[tuple]:
    table_ = result.maximum
    if table_ is None or not len(table_):
        return []
    rows = []
    for r in table_.itertuples(index=False):
        found = isinstance(r.max_ka, float) and math.isfinite(r.max_ka)
        rows.append(
            (
                r.bus,
                r.description if isinstance(r.description, str) else "",
                r.kv,
                r.max_ka
                if found
                else (NOT_CONVERGED if r.max_case == NOT_CONVERGED else "no fault current"),
                FAULT_WORDS.get(r.max_fault, ""),
                _case_words(r.max_case) if found else "",
                r.xr,
                r.ip_ka,
                r.iasym_ka,
                "" if r.duty_status == duty.STATUS_NONE else r.duty_status,
            )
        )
    return rows


def summary_sheet(ws, result: StudyResult, status_fill: dict) -> None:
    rows = summary_rows(result) or [
        tuple("No bus was studied." if j == 0 else None for j in range(len(SUMMARY_COLUMNS)))
    ]
    table(ws, SUMMARY_COLUMNS, rows)
    statuses = list(result.maximum.duty_status) if result.maximum is not None else []
    for i, status in enumerate(statuses, start=2):
        ws.cell(row=i, column=MAX_COLUMN).font = BOLD
        fill = status_fill.get(status)
        for j in range(1, len(SUMMARY_COLUMNS) + 1) if fill else ():
            ws.cell(row=i, column=j).fill = fill


DIAGRAM_NOTE = (
    "One-line diagram of the studied system, drawn by faultcalc from the input with this "
    "study's results beside each bus. The figures of record are on the Summary and Fault "
    "currents sheets."
)
DIAGRAM_TOP_ROW = 3  # the picture's top-left cell (a blank row under the note)
NOTE_LINES = 3  # the note above the picture takes at most this many lines
GAP_ROW_PT = 12.0  # the blank row between the note and the picture
PX_PER_PT = 96 / 72  # openpyxl sizes pictures in pixels at 96 per inch


def _picture(png: bytes):
    """(openpyxl Image, width pt, height pt at its own resolution), or None if not a PNG."""
    try:
        from PIL import Image as PILImage

        with PILImage.open(io.BytesIO(png)) as probe:
            if probe.format != "PNG":
                return None
            probe.verify()
        with PILImage.open(io.BytesIO(png)) as opened:
            dpi = opened.info.get("dpi", (96, 96))[0] or 96
            width_px, height_px = opened.size
        picture = Image(io.BytesIO(png))
    except Exception:  # a picture that cannot be read: said on the sheet, never a traceback
        return None
    return picture, width_px * 72 / float(dpi), height_px * 72 / float(dpi)


def diagram_sheet(ws, png: bytes) -> str:
    """The One-line sheet: a line saying what the picture is, then the picture shrunk to the
    page (never enlarged), upright or across, whichever shows it larger. Returns the page's
    orientation."""
    found = _picture(png) if isinstance(png, bytes | bytearray) else None
    if found is None:
        _diagram_note(
            ws,
            "The one-line diagram could not be included: the picture given is not a PNG image.",
            "portrait",
        )
        return "portrait"
    picture, width_pt, height_pt = found
    best = None
    for orientation in ("landscape", "portrait"):
        area = page(orientation)
        room_pt = area.height_pt - row_height_pt(NOTE_LINES) - GAP_ROW_PT
        scale = min(1.0, area.width_pt / width_pt, room_pt / height_pt)
        if best is None or scale > best[1] + 1e-9:
            best = (orientation, scale)
    orientation, scale = best
    shown = f" Shown at {scale:.0%} of its drawn size." if scale < 0.995 else ""
    _diagram_note(ws, DIAGRAM_NOTE + shown, orientation)
    picture.width = width_pt * scale * PX_PER_PT
    picture.height = height_pt * scale * PX_PER_PT
    ws.add_image(picture, f"A{DIAGRAM_TOP_ROW}")
    return orientation


def _diagram_note(ws, text: str, orientation: str) -> None:
    ws.page_setup.orientation = orientation
    width = page(orientation).width_pt / PRINT_PT_PER_WIDTH
    ws.column_dimensions["A"].width = width
    note = ws.cell(row=1, column=1, value=finite(text))
    note.font = font()
    note.alignment = Alignment(wrap_text=True, vertical="top")
    ws.row_dimensions[1].height = row_height_pt(lines_needed(text, width))
    ws.row_dimensions[DIAGRAM_TOP_ROW - 1].height = GAP_ROW_PT
