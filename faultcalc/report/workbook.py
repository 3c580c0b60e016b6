"""The results workbook: formats what a study computed, computes nothing itself."""

from __future__ import annotations

import dataclasses
import math
from copy import copy
from pathlib import Path

from openpyxl import Workbook
from openpyxl.styles import Alignment, Border, PatternFill, Side

from ..cautions import SHORT_CAUTION
from ..read.names import key as name_key
from ..results import FAULT_OF_COLUMN, NOT_CONVERGED, StudyResult
from ..solve import duty
from .basis import basis_items
from .files import staged
from .frontsheets import diagram_sheet, summary_sheet
from .labeltext import label_lines
from .sheetfit import FACE, lines_needed, row_height_pt
from .sheetpages import (
    LEGIBLE_SCALE,
    fit_scale,
    header_and_footer,
    page,
    sheet_width_pt,
    single_page,
    table_pages,
    text_pages,
)
from .sheettable import BOLD, CAUTION_FILL, FLAG_FILL, TITLE, Col, font, note_below, title_columns
from .sheettable import only_row as _only_row
from .sheettable import table as _table
from .words import FAULT_WORDS, contribution_kv, contributions_cut_note

KA = "0.00"
MVA = "0.0"
OHM = "0.000000"
PU = "0.000000"
XR = "0.00"
KV = "0.000"


def _text_cells(book: Workbook) -> None:
    """Every text is a string cell, never a formula or an error value: openpyxl takes a str
    starting with '=' for a formula and '#N/A' and the like for errors, and a name, title or
    file name from the input must not act when the workbook is opened."""
    for ws in book.worksheets:
        for row in ws.iter_rows():
            for cell in row:
                if cell.data_type in ("f", "e") and isinstance(cell.value, str):
                    cell.data_type = "s"


def _page_setup(ws, result: StudyResult, orientation: str = "landscape") -> None:
    """Page header and footer of every sheet: the study title, the date, the caution and the
    page number."""
    header_and_footer(
        ws,
        result.basis.settings.title or "Short-circuit study",
        result.basis.calculated_at[:10],
        SHORT_CAUTION,
        orientation,
    )


def _note_below(ws, text: str) -> None:
    """A note under the table; on a sheet too wide for one page, right of the columns that
    repeat on every page (so that they carry no cut piece of it) and within the first page."""
    orientation = ws.page_setup.orientation or "landscape"
    width = page(orientation).width_pt
    first = 1
    if fit_scale(ws, orientation) < LEGIBLE_SCALE and title_columns(ws):
        first = title_columns(ws) + 1
        width -= sheet_width_pt(ws, 1, first - 1)
    note_below(ws, text, width, first)


NO_PATH = "no path"


def _ka_or_note(value):
    return NO_PATH if isinstance(value, float) and math.isnan(value) else value


def _shown(r, field: str, value):
    """A bus row's value as the sheets print it: "not converged" for a current the inverter
    iteration did not converge on, "no path" for a missing ground current, else the value."""
    fault = FAULT_OF_COLUMN.get(field.replace("_min", ""))
    blank = isinstance(value, float) and math.isnan(value)
    if blank and fault and f"{fault}: {NOT_CONVERGED}" in (getattr(r, "inverter_note", "") or ""):
        return NOT_CONVERGED
    return _ka_or_note(value) if field in NO_PATH_FIELDS else value


def _fault_columns(result: StudyResult) -> list[tuple[Col, object]]:
    """(column, value of a bus row) in sheet order; values are field names or functions."""
    cols: list[tuple[Col, object]] = [
        (Col("Bus", 14, note="Bus name as on the input 'buses' sheet."), "bus"),
        (Col("Description", 26), "description"),
        (
            Col(
                "Nominal kV (line-line)", 10, KV, "Nominal line-to-line voltage; the bus's base kV."
            ),
            "kv",
        ),
        (
            Col(
                "3-phase fault, kA",
                10,
                KA,
                "Initial symmetrical RMS current of a three-phase "
                "fault at the bus: prefault voltage / |Z1 + Zf|, converted with the bus base "
                "current.",
            ),
            "i3ph_ka",
        ),
        (
            Col(
                "Line-to-ground fault, kA",
                10,
                KA,
                "3 I0 = 3 E / |Z1 + Z2 + Z0 + 3 Zf|. 'no path': no zero-sequence path to ground.",
            ),
            "islg_ka",
        ),
        (Col("Line-to-line fault, kA", 10, KA, "sqrt(3) E / |Z1 + Z2 + Zf|."), "ill_ka"),
        (
            Col(
                "Double line-to-ground fault, kA",
                11,
                KA,
                "The larger of the two faulted phase "
                "currents of a double line-to-ground fault (symmetrical RMS).",
            ),
            "illg_ka",
        ),
        (
            Col(
                "Double line-to-ground, 3I0 to ground, kA",
                11,
                KA,
                "Current into ground of the double line-to-ground fault.",
            ),
            "ig_llg_ka",
        ),
        (
            Col(
                "Largest current from", 13, note="The fault type giving the largest phase current."
            ),
            lambda r: FAULT_WORDS[r.max_fault],
        ),
        (
            Col(
                "Peak current ip, kA",
                10,
                KA,
                "kappa x sqrt(2) x three-phase current; kappa by IEC "
                "60909-0 with R/X by its equivalent-frequency method.",
            ),
            "ip_ka",
        ),
        (Col("kappa", 7, "0.000", "IEC 60909-0 peak factor 1.02 + 0.98 exp(-3 R/X)."), "kappa"),
        (
            Col(
                "Half-cycle asymmetrical RMS, kA",
                11,
                KA,
                "Three-phase current x sqrt(1 + 2 exp(-2 pi / (X/R))), X/R of the next column.",
            ),
            "iasym_ka",
        ),
        (
            Col(
                "X/R for asymmetry and duty",
                10,
                XR,
                "By the study's X/R convention (complex "
                "Thevenin impedance or separate R and X reductions).",
            ),
            "xr_fault",
        ),
        (Col("DC time constant, ms", 9, "0.00", "(X/R) / (2 pi f)."), "tau_dc_ms"),
        (
            Col("3-phase fault MVA", 9, MVA, "sqrt(3) x nominal kV x three-phase fault current."),
            "s3ph_mva",
        ),
        (
            Col(
                "Thevenin R1, ohm",
                11,
                OHM,
                "Resistance of the positive-sequence Thevenin "
                "impedance, ohms at the bus's nominal kV. The negative-sequence impedance "
                "equals it (machines at subtransient in both).",
            ),
            "r1_ohm",
        ),
        (
            Col(
                "Thevenin X1, ohm",
                11,
                OHM,
                "Reactance of the positive-sequence Thevenin impedance.",
            ),
            "x1_ohm",
        ),
        (
            Col(
                "|Z1|, per-unit",
                10,
                PU,
                "Magnitude of the Thevenin impedance on the study MVA base and the bus's base kV.",
            ),
            "z1_pu",
        ),
        (Col("X/R of Z1", 8, XR, "X1/R1 of the complex Thevenin impedance."), "xr"),
        (
            Col("Thevenin R0, ohm", 11, OHM, "Resistance of the zero-sequence Thevenin impedance."),
            "r0_ohm",
        ),
        (
            Col("Thevenin X0, ohm", 11, OHM, "Reactance of the zero-sequence Thevenin impedance."),
            "x0_ohm",
        ),
        (
            Col(
                "Prefault / voltage factor c, pu",
                9,
                "0.000",
                "The voltage behind the Thevenin impedance at this bus (c with method iec60909).",
            ),
            "prefault_pu",
        ),
        (
            Col(
                "Same node as (closed ties)",
                16,
                note="Buses joined to this one by closed ties; they share its results.",
            ),
            "ties",
        ),
        (Col("Ground-fault note", 40), "ground_note"),
        (
            Col(
                "Duty, % of rating",
                10,
                "0.0",
                "Equipment duty of the bus's device in the base case; see the Equipment duty "
                "sheet.",
            ),
            "duty_pct",
        ),
        (Col("Duty status", 20), lambda r: r.duty_status if r.device else ""),
    ]
    if result.cases:
        cols += [
            (
                Col(
                    "Worst duty over the cases, % of rating",
                    11,
                    "0.0",
                    "The largest duty of the device over the base case and every case; the row "
                    "is coloured by it.",
                ),
                "worst_duty_pct",
            ),
            (Col("Worst duty in case", 22), "worst_duty_case"),
        ]
    if result.basis.settings.method == "iec60909":
        cols += [
            (
                Col(
                    "Minimum 3-phase, kA (IEC cmin)",
                    11,
                    KA,
                    "IEC 60909-0 minimum: cmin, motors "
                    "excluded, conductors at the end-of-fault temperature.",
                ),
                "i3ph_min_ka",
            ),
            (Col("Minimum line-to-ground, kA", 11, KA), "islg_min_ka"),
            (Col("Minimum line-to-line, kA", 11, KA), "ill_min_ka"),
            (Col("Minimum double line-to-ground, kA", 11, KA), "illg_min_ka"),
        ]
        s = result.basis.settings
        cols += [
            (
                Col(
                    f"Breaking Ib at {s.min_time_delay_s:g} s, kA",
                    11,
                    KA,
                    "IEC 60909-0: each machine's partial decayed by mu (and q for asynchronous "
                    "motors) at the minimum time delay t_min.",
                ),
                "ib_ka",
            ),
            (Col(f"DC component at {s.min_time_delay_s:g} s, kA", 11, KA), "idc_ka"),
            (
                Col(
                    "Steady-state Ik, kA",
                    11,
                    KA,
                    "Far from generators: without the asynchronous motors' partials. Near a "
                    "generator: not computed (see the note column).",
                ),
                "ik_ka",
            ),
            (
                Col(f"Thermal equivalent Ith for {s.fault_duration_s:g} s, kA", 12, KA),
                "ith_ka",
            ),
            (Col("Not computed because", 30), "iec_note"),
        ]
    if result.basis.settings.method == "ieee":
        cols += [
            (
                Col(
                    "Interrupting network E/X, kA",
                    11,
                    KA,
                    "IEEE C37.010: 1.5-4 cycle network (IEEE Std 551 Table 9-1 interrupting "
                    "multipliers), X from the X-only reduction; for MV breaker duty.",
                ),
                "i_int_ka",
            ),
            (Col("Interrupting network X/R", 10, XR), "xr_int"),
        ]
    b = result.buses
    if b.inverter_sweeps.notna().any() or b.inverter_note.fillna("").astype(bool).any():
        cols += [
            (
                Col(
                    "Inverter iteration, sweeps",
                    9,
                    "0",
                    "Sweeps the inverters' iteration took for faults here, the most over the "
                    "four fault types (method iec60909 adds their currents instead).",
                ),
                "inverter_sweeps",
            ),
            (
                Col(
                    "Inverter residual, of a limit current",
                    10,
                    "0.0E+00",
                    "The largest change of an inverter's current in the last sweep, per unit of "
                    "its limit: converged below 1E-11.",
                ),
                "inverter_residual_pu",
            ),
            (
                Col(
                    "Inverters",
                    40,
                    note="Faults where the iteration did not converge (no current reported), "
                    "inverters that ceased (momentary cessation) or held their prefault angle "
                    "(no voltage left to lock to).",
                ),
                "inverter_note",
            ),
        ]
    return cols


NO_PATH_FIELDS = ("islg_ka", "ig_llg_ka", "r0_ohm", "x0_ohm", "islg_min_ka")


def _worst_duty_of(result: StudyResult) -> dict[str, tuple]:
    """Bus -> its row of ``result.duty`` (the worst duty over the base and every case)."""
    if result.duty is None:
        return {}
    return {r.bus: r for r in result.duty.itertuples(index=False)}


def _fill_rows(ws, statuses, columns: int) -> None:
    """Colour the rows (from row 2) whose duty status exceeds or is near the rating."""
    for i, status in enumerate(statuses, start=2):
        fill = STATUS_FILL.get(status)
        if fill:
            for j in range(1, columns + 1):
                ws.cell(row=i, column=j).fill = fill


def _fault_sheet(ws, result: StudyResult) -> None:
    spec = _fault_columns(result)
    worst = _worst_duty_of(result)
    found = [worst.get(bus) for bus in result.buses.bus]
    b = result.buses.assign(
        description=list(result.descriptions),
        ties=list(result.node_groups),
        worst_duty_pct=[w.duty_pct if w else None for w in found],
        worst_duty_case=[w.duty_case if w else "" for w in found],
    )
    rows = []
    for r in b.itertuples(index=False):
        row = []
        for _, get in spec:
            value = get(r) if callable(get) else getattr(r, get)
            row.append(_shown(r, get, value) if isinstance(get, str) else value)
        rows.append(tuple(row))
    _table(ws, [c for c, _ in spec], rows)
    fields = [get for _, get in spec]
    for i, r in enumerate(b.itertuples(index=False), start=2):
        ws.cell(row=i, column=fields.index(FIELD_OF[r.max_fault]) + 1).font = BOLD
        for j, field in enumerate(fields, start=1):
            shown_as_words = field in NO_PATH_FIELDS or field in FAULT_OF_COLUMN
            if shown_as_words and ws.cell(row=i, column=j).value in (NO_PATH, NOT_CONVERGED):
                ws.cell(row=i, column=j).alignment = Alignment(horizontal="right", vertical="top")
    statuses = [w.duty_status if w else st for w, st in zip(found, b.duty_status, strict=True)]
    _fill_rows(ws, statuses, len(spec))
    _note_below(
        ws,
        "Fault currents are initial symmetrical RMS; the peak and half-cycle "
        "columns include the DC offset. Bold: the largest at the bus. Red: duty exceeds the "
        "rating, amber: within 10 % of it"
        + (" (in the base case or any case)" if result.cases else "")
        + ". "
        + SHORT_CAUTION,
    )


FIELD_OF = {"3ph": "i3ph_ka", "slg": "islg_ka", "ll": "ill_ka", "llg": "illg_ka"}


STATUS_FILL = {
    duty.STATUS_OVER: PatternFill("solid", fgColor="F4B6B0"),
    duty.STATUS_NEAR: PatternFill("solid", fgColor="FCE4A8"),
}


def _duty_sheet(ws, result: StudyResult) -> None:
    with_cases = bool(result.cases)
    cols = [
        Col("Bus", 14),
        Col("Description", 24),
        Col("Device", 28),
        Col("Rating, kA", 9, KA, "Interrupting or short-circuit current rating as entered."),
        Col("Test X/R", 8, XR, "X/R of the rating test: entered, or by device (README)."),
        Col(
            "X/R of the fault giving the duty",
            10,
            XR,
            "The bus's X/R for a three-phase fault, the ground-fault loop's for a "
            "line-to-ground fault.",
        ),
        Col("Multiplying factor", 10, "0.000", "Never below 1; see the README."),
        Col(
            "Duty, kA",
            9,
            KA,
            "Multiplying factor x the larger of the three-phase and "
            "line-to-ground currents (each with its own X/R).",
        ),
        Col("Duty, % of rating", 10, "0.0"),
        Col(
            "Status",
            20,
            note="Compared with the rating only; this is not a statement that "
            "the equipment is adequate or safe.",
        ),
        Col("Fault giving the duty", 14, note="Three-phase or line-to-ground."),
    ]
    table = result.duty if result.duty is not None else result.buses.iloc[0:0]
    with_mv = bool(table.device.isin(duty.MV_DEVICES).any()) if len(table) else False
    if with_mv:  # an MV breaker's duty is a percentage of its capability or closing rating
        cols = [
            Col("Duty, % of rating or capability", c.width, c.number_format, c.note)
            if c.label == "Duty, % of rating"
            else c
            for c in cols
        ]
        cols += [
            Col(
                "Compared as",
                14,
                note="MV breakers: the larger of the interrupting duty (against the capability) "
                "and the closing-and-latching duty (against its rating); LV devices: "
                "interrupting.",
            ),
            Col(
                "Capability at the bus's kV, kA",
                11,
                KA,
                "Constant-MVA breakers: rating x rated maximum kV / bus kV, at most K x rating; "
                "otherwise the rating.",
            ),
            Col("Interrupting, % of capability", 11, "0.0"),
            Col(
                "Closing duty, kA",
                10,
                KA,
                "mvcb: the first-cycle peak ip (kA peak); mvcb_mva: 1.6 x the symmetrical current "
                "(kA RMS).",
            ),
            Col("Closing rating, kA", 10, KA, "As entered (closing_ka) or by default."),
            Col(
                "Closing and latching, % of its rating",
                11,
                "0.0",
                "mvcb: peak ip against the peak rating; mvcb_mva: 1.6 x symmetrical current "
                "(the asymmetrical current by X/R above X/R 25) against the RMS rating.",
            ),
        ]
    if with_cases:
        cols += [
            Col(
                "Case giving the duty",
                24,
                note="The worst over the base case and every case on the cases sheet (the base "
                "case when equal).",
            ),
            Col("Duty in the base case, %", 10, "0.0"),
            Col("Status in the base case", 20),
        ]
    rows, statuses = [], []
    for r in table.itertuples(index=False):
        row = (
            r.bus,
            getattr(r, "description", ""),
            duty.DEVICE_NAMES[r.device],
            r.rating_ka,
            r.test_xr,
            r.duty_xr,
            r.mf,
            r.duty_ka,
            r.duty_pct,
            r.duty_status,
            FAULT_WORDS.get(r.duty_fault, ""),
        )
        if with_mv:
            row += (
                r.duty_basis,
                r.capability_ka,
                r.interrupting_pct,
                r.closing_duty_ka,
                r.closing_rating_ka,
                r.closing_pct,
            )
        if with_cases:
            row += (r.duty_case, r.base_duty_pct, r.base_duty_status)
        rows.append(row)
        statuses.append(r.duty_status)
    rows = rows or [_only_row(cols, 1, "No bus has a device and rating_ka on the buses sheet.")]
    _table(ws, cols, rows)
    _fill_rows(ws, statuses, len(cols))
    _note_below(
        ws,
        (
            "Each device's worst duty over the base case and every case, with the case and fault "
            "type that gave it. "
            if with_cases
            else ""
        )
        + (
            "MV breakers: the larger of the interrupting duty (interrupting-network current, or "
            "the line-to-ground current, times the remote-source multiplying factor at contact "
            "parting, against the capability at the bus's kV) and the closing-and-latching duty "
            "(first cycle, against its rating); see the README. "
            if with_mv
            else ""
        )
        + "Red: duty exceeds the rating. Amber: within 10 % of it. Duty checks compare "
        "numbers only; equipment suitability is for the engineer of record. " + SHORT_CAUTION,
    )


def _case_sheet(ws, result: StudyResult) -> None:
    cols = [
        Col("Case", 24),
        Col("Bus", 14),
        Col("Nominal kV", 9, KV),
        Col("3-phase, kA", 10, KA),
        Col("Line-to-ground, kA", 10, KA),
        Col("Line-to-line, kA", 10, KA),
        Col("Double line-to-ground, kA", 11, KA),
        Col("Peak ip, kA", 10, KA),
        Col("Half-cycle asym., kA", 10, KA),
        Col("Duty, % of rating", 10, "0.0"),
        Col("Duty status", 20),
        Col("Duty from", 14, note="The fault type giving the duty: three-phase or line-to-ground."),
    ]
    rows, statuses = [], []
    for name, table in {"base": result.buses, **result.cases}.items():
        for r in table.itertuples(index=False):
            statuses.append(r.duty_status if r.device else "")
            rows.append(
                (
                    name,
                    r.bus,
                    r.kv,
                    _shown(r, "i3ph_ka", r.i3ph_ka),
                    _shown(r, "islg_ka", r.islg_ka),
                    _shown(r, "ill_ka", r.ill_ka),
                    _shown(r, "illg_ka", r.illg_ka),
                    _shown(r, "ip_ka", r.ip_ka),
                    _shown(r, "iasym_ka", r.iasym_ka),
                    r.duty_pct,
                    r.duty_status if r.device else "",
                    FAULT_WORDS.get(r.duty_fault, "") if r.device else "",
                )
            )
    _table(ws, cols, rows, freeze_columns=2)
    _fill_rows(ws, statuses, len(cols))
    _note_below(
        ws,
        "Red: duty exceeds the rating, amber: within 10 % of it, in that case. " + SHORT_CAUTION,
    )


def _envelope_sheet(ws, result: StudyResult) -> None:
    cols = [Col("Bus", 14)]
    labels = {
        "i3ph_ka": "3-phase, kA",
        "islg_ka": "Line-to-ground, kA",
        "ill_ka": "Line-to-line, kA",
        "illg_ka": "Double line-to-ground, kA",
        "ip_ka": "Peak ip, kA",
        "iasym_ka": "Half-cycle asym., kA",
        "duty_pct": "Duty, % of rating",
    }
    env = result.envelope
    keys = []
    for column, label in labels.items():
        case = column.replace("_ka", "").replace("_pct", "") + "_case"
        cols += [
            Col(f"Worst {label}", 11, "0.0" if column == "duty_pct" else KA),
            Col("in case", 14),
        ]
        keys += [column, case]
    cols += [Col("Worst duty status", 20), Col("Worst duty from", 14)]
    rows, statuses = [], []
    for _, r in env.iterrows():
        rated = r["duty_status"] != duty.STATUS_NONE
        fault = FAULT_WORDS.get(r["duty_fault"], "")
        rows.append((r["bus"], *[r[k] for k in keys], r["duty_status"] if rated else "", fault))
        statuses.append(r["duty_status"])
    _table(ws, cols, rows)
    _fill_rows(ws, statuses, len(cols))
    _note_below(
        ws,
        "The worst value at each bus over the base case and every case on the "
        "cases sheet, and the case that gives it. Red: the worst duty exceeds the rating, "
        "amber: within 10 % of it. " + SHORT_CAUTION,
    )


LABEL_WIDTH = 80  # the label's column: about 6 inches of a portrait page


def _label_sheet(ws, result: StudyResult, bus: str) -> None:
    """A printable marking for service equipment (NFPA 70 110.24): the words of labeltext."""
    ws.column_dimensions["A"].width = 4
    ws.column_dimensions["B"].width = LABEL_WIDTH
    lines = [
        (line.text, font(bold=True, size=line.size_pt) if line.bold else font(size=line.size_pt))
        if line.text
        else ("", None)
        for line in label_lines(result, bus)
    ]
    for i, (text, style) in enumerate(lines, start=2):
        style = style or font(size=11)
        cell = ws.cell(row=i, column=2, value=text)
        cell.alignment = Alignment(horizontal="left", wrap_text=True, vertical="center", indent=1)
        cell.font = style
        need = lines_needed(text, LABEL_WIDTH, style.size, bool(style.bold), indent=1)
        ws.row_dimensions[i].height = row_height_pt(need, style.size) + 3
    border = Side(style="thick", color="000000")
    for i in range(2, len(lines) + 2):
        c = ws.cell(row=i, column=2)
        c.border = Border(
            left=border,
            right=border,
            top=border if i == 2 else None,
            bottom=border if i == len(lines) + 1 else None,
        )
    single_page(ws, "portrait")
    ws.print_area = f"A1:B{len(lines) + 2}"


def _contribution_sheet(ws, result: StudyResult) -> None:
    cols = [
        Col("Faulted bus", 14),
        Col("Fault", 14),
        Col("Element", 14),
        Col("Kind", 16),
        Col(
            "From bus",
            14,
            note="Branches: the bus at the far end, the current flowing from it into the faulted "
            "bus. Sources and machines: the bus they are connected to.",
        ),
        Col(
            "Currents at kV (line-line)",
            10,
            KV,
            "The nominal voltage at which this row's currents (phase and 3I0) are expressed: "
            "sources and machines at that of the bus they are connected to, branches at the "
            "faulted bus's.",
        ),
        Col(
            "Current, kA sym (largest phase)",
            13,
            KA,
            "Sources and machines: at their terminals, in their own windings (phase displacement "
            "of D-Y transformers applied). Branches: at the faulted-bus end.",
        ),
        Col(
            "Angle, degrees",
            10,
            "0.0",
            "Relative to the prefault phase-a voltage at the faulted bus.",
        ),
        Col("Phase", 7, note="The phase carrying the current in the column before."),
        Col(
            "Residual 3I0, kA",
            11,
            KA,
            "Zero-sequence (ground or neutral) current of the element: 0 for sources seen "
            "through a delta winding.",
        ),
    ]
    rows = [
        (
            r.faulted_bus,
            FAULT_WORDS[r.fault],
            r.element,
            r.kind.replace("_", " "),
            r.from_bus,
            at_kv,
            r.i_ka,
            r.angle_deg,
            r.phase,
            r.ig_ka,
        )
        for r, at_kv in zip(
            result.contributions.itertuples(index=False), contribution_kv(result), strict=True
        )
    ]
    _table(ws, cols, rows)
    _note_below(
        ws,
        "Each row's currents are at the voltage in the column 'Currents at kV': a source's or "
        "machine's at the bus it is connected to (its own windings), a branch's at the faulted "
        "bus. A current at another voltage than the faulted bus's is converted by the ratio of "
        "the two voltages before it is compared with the faulted bus's fault current. "
        + SHORT_CAUTION,
    )


def _element_sheet(ws, result: StudyResult) -> None:
    cols = [
        Col("Element", 14),
        Col("Kind", 17),
        Col("From bus (HV side)", 14),
        Col("To bus (LV side)", 14),
        Col("As entered", 40, note="The input restated, so a reviewer can check what was read."),
        Col("Ohms referred to bus", 14, note="The bus whose voltage the ohm values are at."),
        Col("Base kV", 9, KV),
        Col("R, ohm", 12, OHM),
        Col("X, ohm", 12, OHM),
        Col("R, per-unit", 12, PU, "On the study MVA base and the base kV beside it."),
        Col("X, per-unit", 12, PU),
        Col(
            "Ratio (tap)",
            9,
            "0.0000",
            "Transformers: rated ratio over the ratio of the bus "
            "nominal voltages; 1 when they agree.",
        ),
        Col("Note", 22),
        Col("R0, per-unit", 12, PU, "Zero-sequence resistance on the study base (see the model)."),
        Col("X0, per-unit", 12, PU, "Zero-sequence reactance on the study base."),
        Col(
            "Zero-sequence model",
            28,
            note="How the element enters the zero-sequence network (winding connection, "
            "grounding, given or assumed values).",
        ),
    ]
    rows = [(r[0], r[1].replace("_", " "), *r[2:]) for r in result.elements.itertuples(index=False)]
    _table(ws, cols, rows)


def _cable_check_sheet(ws, result: StudyResult) -> None:
    cols = [
        Col("Cable", 14),
        Col("Flagged", 9, note="yes: the typed R or X is beyond the tolerance from the table."),
        Col("Finding", 44),
        Col("Typed R, ohm/1000 ft", 12, "0.0000", "Per conductor, converted to ohm/1000 ft."),
        Col("Typed X, ohm/1000 ft", 12, "0.0000"),
        Col("Table R, ohm/1000 ft", 12, "0.0000", "The table row as printed (75 C)."),
        Col("Table X, ohm/1000 ft", 12, "0.0000"),
        Col("Table row", 32),
    ]
    table = result.cable_checks
    rows = [
        (
            r.cable,
            "yes" if r.flagged else "no",
            r.reason,
            r.given_r_ohm_per_kft,
            r.given_x_ohm_per_kft,
            r.table_r_ohm_per_kft,
            r.table_x_ohm_per_kft,
            r.table_row,
        )
        for r in table.itertuples(index=False)
    ] or [_only_row(cols, 2, "No cable has typed R and X: every cable took them from the tables.")]
    _table(ws, cols, rows)
    for i, r in enumerate(table.itertuples(index=False), start=2):
        if r.flagged:
            for j in range(1, len(cols) + 1):
                ws.cell(row=i, column=j).fill = FLAG_FILL


def _warning_sheet(ws, result: StudyResult) -> None:
    cols = [Col("No.", 6), Col("Warning (doubtful input or assumption made)", 88)]
    rows = [(i, w) for i, w in enumerate(result.warnings, start=1)] or [("", "No warnings.")]
    _table(ws, cols, rows, freeze_columns=0)


BASIS_LABEL_WIDTH = 24
BASIS_TEXT_WIDTH = 69  # with the labels, the width of a portrait page


def _text_row(ws, row: int, label: str, text: str, *, label_font=None, fill=None) -> None:
    """A label in column A and a wrapped text in column B, the row as tall as the text."""
    label_cell = ws.cell(row=row, column=1, value=label)
    label_cell.alignment = Alignment(horizontal="right" if label_font is None else "left",
                                     vertical="top")  # fmt: skip
    label_cell.font = label_font or font()
    cell = ws.cell(row=row, column=2, value=text)
    cell.alignment = Alignment(wrap_text=True, vertical="top", indent=1)
    cell.font = font()
    if fill is not None:
        cell.fill = fill
    ws.row_dimensions[row].height = row_height_pt(
        lines_needed(str(text), BASIS_TEXT_WIDTH, indent=1)
    )


def _basis_sheet(ws, result: StudyResult) -> None:
    b = result.basis
    s = b.settings
    ws.column_dimensions["A"].width = BASIS_LABEL_WIDTH
    ws.column_dimensions["B"].width = BASIS_TEXT_WIDTH
    title = ws.cell(row=1, column=1, value=s.title or "Short-circuit study")
    title.font = TITLE
    ws.merge_cells("A1:B1")
    title.alignment = Alignment(wrap_text=True, vertical="top")
    title_lines = lines_needed(str(title.value), BASIS_LABEL_WIDTH + BASIS_TEXT_WIDTH, 14, True)
    ws.row_dimensions[1].height = row_height_pt(title_lines, 14)
    ws.cell(row=3, column=1, value="Cautions").font = BOLD
    row = 4
    for i, text in enumerate(result.cautions, start=1):
        _text_row(ws, row, f"{i}.", text, fill=CAUTION_FILL)
        row += 1
    row += 1
    ws.cell(row=row, column=1, value="Basis of the calculation").font = BOLD
    row += 1
    items = basis_items(result)
    for label, value in items:
        _text_row(ws, row, label, value, label_font=BOLD)
        row += 1


# (title, fill, orientation); orientation None: a sheet of text sized to a portrait page.
def _table_sheets(result: StudyResult) -> list[tuple]:
    extra = []
    if result.contributions is not None:
        extra = [("Contributions", _contribution_sheet, "landscape")]
    if result.envelope is not None:
        extra += [
            ("Cases", _case_sheet, "landscape"),
            ("Envelope", _envelope_sheet, "landscape"),
        ]
    return [
        ("Fault currents", _fault_sheet, "landscape"),
        ("Equipment duty", _duty_sheet, "landscape"),
        *extra,
        ("Element impedances", _element_sheet, "landscape"),
        ("Cable check", _cable_check_sheet, "landscape"),
        ("Warnings", _warning_sheet, "portrait"),
        ("Basis and cautions", _basis_sheet, None),
    ]


SUMMARY_NOTE = (
    "Maximum available: the largest initial symmetrical RMS current of a 3-phase, "
    "line-to-ground, line-to-line or double line-to-ground fault at the bus over the base case "
    "and every case, with the fault type and the case that give it; every column of every "
    "fault type is on the Fault currents sheet. Red: the duty of the bus's device exceeds its "
    "rating, amber: within 10 % of it. "
)


def _default_font(book: Workbook) -> None:
    """The workbook's default font (empty cells, row heights) is the face every cell uses."""
    book._fonts[0] = font()  # openpyxl keeps the default as the first font of the book


def _named_fonts(book: Workbook) -> None:
    """Every font in the book names the one face (a font without a name prints in another)."""
    unnamed = {k for k, f in enumerate(book._fonts) if f.name != FACE}  # the book's fonts
    if not unnamed:
        return
    for ws in book.worksheets:
        for cell in list(ws._cells.values()):  # the cells written (iter_rows would make more)
            if cell.has_style and cell._style.fontId in unnamed:
                named = copy(cell.font)
                named.name = FACE
                cell.font = named


def build_workbook(result: StudyResult, *, diagram_png: bytes | None = None) -> Workbook:
    """The results workbook; ``diagram_png`` (PNG bytes of the one-line diagram) adds the
    'One-line' sheet after the Summary."""
    book = Workbook()
    _default_font(book)
    summary = book.active
    summary.title = "Summary"
    summary.page_setup.orientation = "landscape"
    summary_sheet(summary, result, STATUS_FILL)
    _note_below(summary, SUMMARY_NOTE + SHORT_CAUTION)
    table_pages(summary, "landscape")
    _page_setup(summary, result)
    if diagram_png is not None:
        picture = book.create_sheet("One-line")
        orientation = diagram_sheet(picture, diagram_png)
        single_page(picture, orientation)
        _page_setup(picture, result, orientation)
    for title, fill, orientation in _table_sheets(result):
        ws = book.create_sheet(title)
        ws.page_setup.orientation = orientation or "portrait"
        fill(ws, result)
        if orientation is None:
            text_pages(ws, "portrait")
        else:
            table_pages(ws, orientation, title_columns(ws))
        _page_setup(ws, result, orientation or "portrait")
    titles = _label_titles(result.service_buses, book.sheetnames)
    for bus, title in zip(result.service_buses, titles, strict=True):
        label = book.create_sheet(title)
        if label.title != title:  # titles are made unique: openpyxl renamed it all the same
            raise RuntimeError(f"label sheet {title!r} was named {label.title!r}")
        _label_sheet(label, result, bus)
        _page_setup(label, result, "portrait")
    _named_fonts(book)
    _text_cells(book)
    return book


SHEET_TITLE_CHARS = 31  # Excel's limit on a sheet title (UTF-16 code units)
NOT_IN_TITLES = "[]:*?/\\"


def _title_length(title: str) -> int:
    return len(title.encode("utf-16-le")) // 2


def _label_titles(buses, taken) -> list[str]:
    """A sheet title for the label of each bus, none the same as another ignoring case
    (Excel compares titles so; here as names are compared, names.key) nor as one of
    ``taken``: 'Label <bus>' ([]:*?/\\ and unprintable characters made '_') when that fits in
    31 characters and is no other bus's; otherwise the bus name cut short with '~1', '~2'...
    after it, never a title that is some bus's own.

    >>> _label_titles(["SWBD-1", "swbd-1", "A/B", "X" * 40], ["Fault currents"])
    ['Label SWBD-1~1', 'Label swbd-1~2', 'Label A_B', 'Label XXXXXXXXXXXXXXXXXXXXXXX~1']
    """
    own = [
        "Label " + "".join("_" if ch in NOT_IN_TITLES or not ch.isprintable() else ch for ch in bus)
        for bus in buses
    ]
    count: dict[str, int] = {}
    for title in own:
        count[name_key(title)] = count.get(name_key(title), 0) + 1
    fixed = {name_key(t) for t in taken}
    used = fixed | set(count)
    titles = []
    for title in own:
        key = name_key(title)
        if (
            count[key] == 1
            and key not in fixed
            and _title_length(title) <= SHEET_TITLE_CHARS
            and not title.endswith("'")  # Excel refuses a title ending in an apostrophe
        ):
            titles.append(title)
            continue
        k = 0
        while True:
            k += 1
            mark = f"~{k}"
            head = ""
            for ch in title:
                if _title_length(head + ch + mark) > SHEET_TITLE_CHARS:
                    break
                head += ch
            candidate = head.rstrip() + mark
            if name_key(candidate) not in used:
                break
        used.add(name_key(candidate))
        titles.append(candidate)
    return titles


def _summary_note(studied: int, kept: int, csv_name: str) -> str:
    """The note on a summary workbook's sheets that says what was left out and where it is."""
    return (
        f"Summary of a study of {studied:,} buses: the {kept} buses with the largest fault "
        f"currents and every duty finding, largest first. Every bus is in {csv_name} (its last "
        "column, input_sha256, is the input's SHA-256, as on the Basis and cautions sheet); "
        "the element echo is left out of this workbook."
    )


def write_workbook_to(
    result: StudyResult,
    path: Path,
    summary_of: str | None = None,
    *,
    diagram_png: bytes | None = None,
    contributions_in: str | None = None,
) -> None:
    """Write the workbook; ``summary_of`` names the CSV holding every bus of a large study,
    and the workbook then holds the summary; ``diagram_png`` adds the One-line sheet;
    ``contributions_in`` names the CSV holding every contribution row when they are more
    than a sheet takes (BIG_CONTRIBUTION_ROWS): the sheet then holds the largest."""
    from .outputs import BIG_CONTRIBUTION_ROWS

    note = None
    contribution_note = None
    if result.contributions is not None and len(result.contributions) > BIG_CONTRIBUTION_ROWS:
        cut, kept = result.contributions_at_most(BIG_CONTRIBUTION_ROWS)
        contribution_note = contributions_cut_note(
            result.contributions, kept, len(cut), BIG_CONTRIBUTION_ROWS, contributions_in
        )
        result = dataclasses.replace(result, contributions=cut)
    if summary_of is not None:
        cut = result.summary()
        note = _summary_note(len(result.buses), len(cut.buses), summary_of)
        result = cut
    book = build_workbook(result, diagram_png=diagram_png)
    if note:
        for ws in book.worksheets:
            if ws.title in ("Summary", "Fault currents", "Element impedances", "Cases", "Envelope"):
                _note_below(ws, note)
    if contribution_note:
        _note_below(book["Contributions"], contribution_note)
    book.save(path)


def write_workbook(result: StudyResult, path: str | Path) -> None:
    """Write the results workbook, atomically (a temporary file renamed into place)."""
    with staged(path) as (temp,):
        write_workbook_to(result, temp)
