"""The report's sections as reportlab flowables, from a StudyResult; nothing computed here.

Every text from the input (names, descriptions, titles) is escaped before it reaches a
Paragraph: reportlab reads '<' and '&' in a paragraph as markup.
"""

from __future__ import annotations

import math
from xml.sax.saxutils import escape

from reportlab.lib import colors
from reportlab.lib.enums import TA_RIGHT
from reportlab.lib.styles import ParagraphStyle
from reportlab.platypus import (
    FrameBreak,
    KeepTogether,
    LongTable,
    NextPageTemplate,
    PageBreak,
    Paragraph,
    Spacer,
    Table,
    TableStyle,
)

from ... import typeface as fonts
from ...results import NOT_CONVERGED, StudyResult
from ...solve import duty
from ..basis import basis_items
from ..labeltext import label_lines
from ..words import FAULT_WORDS as OUTPUT_FAULT_WORDS
from ..words import contribution_kv
from .pages import LANDSCAPE, MARGIN_PT, PORTRAIT, SMALL_PT

FAULT_WORDS = {**OUTPUT_FAULT_WORDS, "": ""}
NO_PATH = "no path"
ZERO_KA = 0.005  # a contribution below this prints as 0.00 kA: left out of the report's table
OVER_FILL = colors.HexColor("#F9D3CF")
NEAR_FILL = colors.HexColor("#FCE7C2")
HEADER_FILL = colors.HexColor("#DCE6F0")
RULE = colors.HexColor("#8EA9C1")
STATUS_FILL = {duty.STATUS_OVER: OVER_FILL, duty.STATUS_NEAR: NEAR_FILL}
PORTRAIT_WIDTH_PT = PORTRAIT[0] - 2 * MARGIN_PT
LANDSCAPE_WIDTH_PT = LANDSCAPE[0] - 2 * MARGIN_PT


def _style(name: str, size: float, *, bold=False, lead=1.25, **kw) -> ParagraphStyle:
    return ParagraphStyle(
        name,
        fontName=fonts.BOLD if bold else fonts.REGULAR,
        fontSize=size,
        leading=size * lead,
        textColor=colors.HexColor("#1f2d3d"),
        **kw,
    )


BODY = _style("body", 9.5, spaceAfter=5)
SMALL = _style("small", SMALL_PT)
CELL = _style("cell", SMALL_PT, lead=1.2)
CELL_NUMBER = _style("number", SMALL_PT, lead=1.2, alignment=TA_RIGHT)
HEAD_CELL = _style("head", SMALL_PT, bold=True, lead=1.2)
H1 = _style("h1", 15, bold=True, spaceBefore=4, spaceAfter=8)
H2 = _style("h2", 11, bold=True, spaceBefore=8, spaceAfter=5)
LABEL_HEAD = _style("label-head", 11, bold=True, spaceBefore=8, spaceAfter=5)  # in the contents
TITLE = _style("title", 22, bold=True, lead=1.2, spaceAfter=10)


def text(value) -> str:
    """A value from the input as paragraph text (escaped)."""
    return escape("" if value is None else str(value))


def ka(value) -> str:
    """A current as the workbook prints it (two decimals), 'no path' where there is none."""
    return NO_PATH if _blank(value) else f"{value:.2f}"


def fixed(value, digits: int) -> str:
    return "" if _blank(value) else f"{value:.{digits}f}"


def _blank(value) -> bool:
    return value is None or (isinstance(value, float) and math.isnan(value))


def heading(title: str, *, landscape: bool = False) -> list:
    """A new section on a new page (landscape for the wide tables)."""
    return [
        NextPageTemplate("landscape" if landscape else "portrait"),
        PageBreak(),
        Paragraph(text(title), H1),
    ]


class _RowTable(LongTable):
    """A LongTable that leaves no row alone under its repeated header when it runs on: a split
    that would carry one row over carries two, where the page keeps two or more (common
    practice in typesetting, no source). A row split inside itself (taller than a page) is
    left as it is. The other widow, the header and one row at the foot of a page, is left:
    moving the table on would leave the headings above it alone on their page instead."""

    # reportlab's own attributes are read: _cellvalues (the rows of a table or piece, the
    # repeated header first) and _rowHeights (their heights, set by split's layout pass)
    def split(self, availWidth, availHeight):  # noqa: N803 - reportlab's names
        parts = super().split(availWidth, availHeight)
        if len(parts) != 2:
            return parts
        head = self.repeatRows
        rows = len(self._cellvalues) - head
        kept = len(parts[0]._cellvalues) - head
        carried = len(parts[1]._cellvalues) - head
        if kept + carried != rows:  # split inside a row
            return parts
        if carried == 1 and kept >= 3:
            # room for the header and one row fewer than were kept (not the room less the
            # last row: the foot of the page may have room to spare)
            room = sum(self._rowHeights[: head + kept - 1]) + 1e-6
            again = super().split(availWidth, room)
            if len(again) == 2 and len(again[1]._cellvalues) - head == 2:
                # the rest of this page left blank: else the two rows are tried in the room
                # the shorter first part leaves, and one is split off again
                return [again[0], FrameBreak(), again[1]]
        return parts


def table(
    head: list[str],
    rows: list[list],
    widths: list[float],
    numbers: set[int],
    fills=(),
    *,
    width_pt: float = LANDSCAPE_WIDTH_PT,
):
    """A table whose header row repeats on every page; ``widths`` are fractions of
    ``width_pt`` (the frame the table lands in) that add up to 1; columns in ``numbers``
    right-aligned; ``fills`` a colour (or None) per row."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    col_pt = column_widths(head, rows, widths, width_pt)
    cells = [[Paragraph(text(h), HEAD_CELL) for h in head]]
    for row in rows:
        line = []
        for j, v in enumerate(row):
            value = "" if v is None else str(v)
            # a text that fits on one line is drawn as it is (a Paragraph per cell cost most
            # of a large report's time); a longer one wraps in a Paragraph (escaped)
            if "\n" not in value and stringWidth(value, fonts.REGULAR, SMALL_PT) <= (
                col_pt[j] - PAD_PT - 0.5
            ):
                line.append(value)
            else:
                line.append(Paragraph(text(value), CELL_NUMBER if j in numbers else CELL))
        cells.append(line)
    style = [
        ("BACKGROUND", (0, 0), (-1, 0), HEADER_FILL),
        ("LINEBELOW", (0, 0), (-1, 0), 0.8, RULE),
        ("LINEBELOW", (0, 1), (-1, -1), 0.25, RULE),
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("FONT", (0, 0), (-1, -1), fonts.REGULAR, SMALL_PT, SMALL_PT * 1.2),
        ("TEXTCOLOR", (0, 0), (-1, -1), colors.HexColor("#1f2d3d")),
        ("LEFTPADDING", (0, 0), (-1, -1), 3),
        ("RIGHTPADDING", (0, 0), (-1, -1), 3),
        ("TOPPADDING", (0, 0), (-1, -1), 2),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
    ]
    style += [("ALIGN", (j, 1), (j, -1), "RIGHT") for j in sorted(numbers)]
    for i, fill in enumerate(fills, start=1):
        if fill is not None:
            style.append(("BACKGROUND", (0, i), (-1, i), fill))
    out = _RowTable(
        cells,
        colWidths=col_pt,
        repeatRows=1,
        splitInRow=1,  # a row taller than a page (a long description) runs on to the next
    )
    out.setStyle(TableStyle(style))
    return out


PAD_PT = 6.0  # a cell's left and right padding together


def _longest_word_pt(value, font: str) -> float:
    from reportlab.pdfbase.pdfmetrics import stringWidth

    words = str(value).split() or [""]
    return max(stringWidth(w, font, SMALL_PT) for w in words) + PAD_PT + 0.5


def column_widths(head, rows, fractions, width_pt: float) -> list[float]:
    """Column widths from ``fractions`` of ``width_pt``, each widened to hold the longest word
    of its header and of its cells (a word is never broken while it fits a third of the
    width), the room taken from the columns with most to spare."""
    need = [_longest_word_pt(h, fonts.BOLD) for h in head]
    for row in rows:
        for j, v in enumerate(row):
            need[j] = max(need[j], min(_longest_word_pt(v, fonts.REGULAR), width_pt / 3))
    widths = [f * width_pt for f in fractions]
    short = sum(max(0.0, n - w) for n, w in zip(need, widths, strict=True))
    spare = [max(0.0, w - n) for n, w in zip(need, widths, strict=True)]
    room = sum(spare)
    if short <= 0 or room <= 0:
        return widths
    if short <= room:  # every word fits: take the room from the columns with most to spare
        take = short / room
        return [n if w < n else w - take * sp for n, w, sp in zip(need, widths, spare, strict=True)]
    # not every word fits: the spare room shared among the columns short of it (in proportion
    # to what each lacks), the longest words broken; the table stays inside the page
    give = room / short
    out = [w + give * (n - w) if w < n else n for n, w in zip(need, widths, strict=True)]
    return _header_words_whole(out, [_longest_word_pt(h, fonts.BOLD) for h in head])


def _header_words_whole(widths: list[float], floor: list[float]) -> list[float]:
    """``widths`` with every column at least its header's longest word, the room taken from
    the columns wider than their own floor (in proportion to what each has above it)."""
    short = sum(max(0.0, f - w) for f, w in zip(floor, widths, strict=True))
    above = [max(0.0, w - f) for f, w in zip(floor, widths, strict=True)]
    if short <= 0 or sum(above) <= 0:
        return widths
    take = min(1.0, short / sum(above))
    return [f if w < f else w - take * a for f, w, a in zip(floor, widths, above, strict=True)]


def title_page(result: StudyResult, counts: dict[str, int], lacking: str = "") -> list:
    b = result.basis
    s = b.settings
    title = s.title or "Short-circuit study"
    basis_of = dict(basis_items(result))
    rows = [
        (label, basis_of[label])
        for label in ("Input file", "Input SHA-256", "Calculated at", "Tool", "Calculation method")
    ] + [
        ("Buses studied", f"{counts['buses']:,}"),
        (
            "Cases",
            f"the base case and {counts['cases']} case(s)" if counts["cases"] else "the base case",
        ),
        *(
            [
                (
                    "Devices over their rating",
                    f"{counts['over']} of {counts['rated']} (in any case)",
                ),
                ("Devices within 10 % of it", f"{counts['near']} of {counts['rated']}"),
            ]
            if counts["rated"]
            else [("Devices checked", "none: no bus has a device and rating_ka")]
        ),
    ]
    facts = Table(
        [[Paragraph(text(k), HEAD_CELL), Paragraph(text(v), CELL)] for k, v in rows],
        colWidths=[1.9 * 72, PORTRAIT_WIDTH_PT - 1.9 * 72],
    )
    facts.setStyle(
        TableStyle(
            [
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("FONTNAME", (0, 0), (-1, -1), fonts.REGULAR),
                ("LINEBELOW", (0, 0), (-1, -1), 0.25, RULE),
                ("TOPPADDING", (0, 0), (-1, -1), 3),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 3),
            ]
        )
    )
    review = Table(
        [
            [Paragraph("Reviewed by (name)", SMALL), ""],
            [Paragraph("Licence or registration no. and jurisdiction", SMALL), ""],
            [Paragraph("Signature and seal", SMALL), ""],
            [Paragraph("Date of review", SMALL), ""],
            [Paragraph("Remarks", SMALL), ""],
        ],
        colWidths=[2.2 * 72, PORTRAIT_WIDTH_PT - 2.2 * 72],
        rowHeights=[24, 24, 60, 24, 48],
    )
    review.setStyle(
        TableStyle(
            [
                ("BOX", (0, 0), (-1, -1), 1.0, colors.black),
                ("INNERGRID", (0, 0), (-1, -1), 0.4, colors.grey),
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("FONTNAME", (0, 0), (-1, -1), fonts.REGULAR),
            ]
        )
    )
    return [
        Spacer(1, 36),
        Paragraph(text(title), TITLE),
        Paragraph(
            "Short-circuit study report: available fault current and Thevenin "
            "impedance at every bus",
            BODY,
        ),
        Spacer(1, 14),
        facts,
        Spacer(1, 18),
        Paragraph(
            "This report is an engineering calculation for review and acceptance by a qualified, "
            "licensed engineer. The local electrical code, the authority having jurisdiction and "
            "licensed engineering review govern; see the cautions on the next page.",
            _style("warn", 9.5, bold=True, spaceAfter=8),
        ),
        *(
            [
                Paragraph(
                    "Some names or descriptions hold characters this report cannot print as "
                    f"typed ({text(lacking)}): missing from its typeface (DejaVu Sans), they "
                    "print as boxes; right-to-left text prints with its letters reversed. The "
                    "results workbook holds them as typed; take any label so marked from the "
                    "workbook's label sheet.",
                    BODY,
                )
            ]
            if lacking
            else []
        ),
        Spacer(1, 6),
        KeepTogether(
            [
                Paragraph("Engineering review (to be completed by the reviewing engineer)", H2),
                review,
            ]
        ),
    ]


def contents() -> list:
    """The contents (filled in by the document from the section headings)."""
    from reportlab.platypus.tableofcontents import TableOfContents

    toc = TableOfContents()
    toc.levelStyles = [_style("toc", 9.5, lead=1.35)]
    toc.dotsMinLevel = 0
    toc.tableStyle = TableStyle(
        [
            ("VALIGN", (0, 0), (-1, -1), "TOP"),
            ("FONTNAME", (0, 0), (-1, -1), fonts.REGULAR),  # no base font (never embedded)
            ("LEFTPADDING", (0, 0), (-1, -1), 0),
            ("RIGHTPADDING", (0, 0), (-1, -1), 0),
        ]
    )
    return [
        NextPageTemplate("portrait"),
        PageBreak(),
        Paragraph("Contents", H2),
        toc,
        Spacer(1, 12),
    ]


def cautions(result: StudyResult) -> list:
    out = [Paragraph("Cautions", H1)]
    for i, c in enumerate(result.cautions, start=1):
        out.append(Paragraph(f"{i}. {text(c)}", BODY))
    return out


def basis(result: StudyResult) -> list:
    out = heading("Basis and method")
    rows = [(label, value) for label, value in basis_items(result) if label != "Warnings"]
    rows.append(("Warnings", f"{len(result.warnings)} (see the section 'Warnings')"))
    out.append(
        table(
            ["Item", "Basis"],
            [list(r) for r in rows],
            [0.24, 0.76],
            set(),
            width_pt=PORTRAIT_WIDTH_PT,
        )
    )
    return out


def _duty_words(status: str) -> str:
    return "" if status == duty.STATUS_NONE else status


def summary(result: StudyResult, note: str | None) -> list:
    out = heading("Maximum available fault current at each bus", landscape=True)
    out.append(
        Paragraph(
            "The largest of the three-phase, line-to-ground, line-to-line and double "
            "line-to-ground currents (symmetrical RMS, kA) over the base case"
            + (" and every case" if result.cases else "")
            + ", the fault type and case giving it, and the bus's X/R in that case. Peak and "
            "half-cycle asymmetrical currents are the three-phase fault's, the worst over "
            "all cases. Duty: the worst over all cases (see 'Equipment evaluation').",
            BODY,
        )
    )
    if note:
        out.append(Paragraph(text(note), BODY))
    rows, fills = [], []
    for r in result.maximum.itertuples(index=False):
        rows.append(
            [
                r.bus,
                r.description,
                fixed(r.kv, 3),
                NOT_CONVERGED if r.max_case == NOT_CONVERGED else ka(r.max_ka),
                FAULT_WORDS.get(r.max_fault, ""),
                r.max_case,
                fixed(r.xr, 2),
                ka(r.ip_ka),
                ka(r.iasym_ka),
                _duty_words(r.duty_status),
            ]
        )
        fills.append(STATUS_FILL.get(r.duty_status))
    out.append(
        table(
            [
                "Bus",
                "Description",
                "Nominal kV",
                "Maximum available, kA",
                "Fault type",
                "Case",
                "X/R",
                "Peak ip, kA",
                "Half-cycle asym., kA",
                "Duty",
            ],
            rows,
            [0.11, 0.20, 0.06, 0.08, 0.09, 0.15, 0.05, 0.07, 0.08, 0.11],
            {2, 3, 6, 7, 8},
            fills,
        )
    )
    return out


def after_first_instant(result: StudyResult) -> list:
    """Method iec60909: Ib, the DC component, Ik and Ith; method ieee: the interrupting
    network's E/X and X/R. Nothing for the other methods."""
    s = result.basis.settings
    b = result.buses
    if s.method == "iec60909":
        out = heading("IEC 60909-0 currents after the first instant", landscape=True)
        out.append(
            Paragraph(
                f"Base case, three-phase faults. Breaking current Ib and DC component at the "
                f"minimum time delay {s.min_time_delay_s:g} s; steady-state Ik and thermal "
                f"equivalent Ith for {s.fault_duration_s:g} s, far from generators (near a "
                "generator they need its decrement curves and are not computed). IEC "
                "60909-0:2016 clauses 9 to 14, formulas from memory of the standard; see the "
                "README's method.",
                BODY,
            )
        )
        rows = [
            [
                r.bus,
                fixed(r.kv, 3),
                ka(r.i3ph_ka),
                ka(r.ib_ka),
                ka(r.idc_ka),
                fixed(r.ik_ka, 2),
                fixed(r.ith_ka, 2),
                r.iec_note,
            ]
            for r in b.itertuples(index=False)
        ]
        head = [
            "Bus",
            "Nominal kV",
            'I"k, kA',
            "Ib, kA",
            "DC component, kA",
            "Ik, kA",
            "Ith, kA",
            "Not computed because",
        ]
        out.append(
            table(head, rows, [0.14, 0.07, 0.08, 0.08, 0.09, 0.08, 0.08, 0.38], {1, 2, 3, 4, 5, 6})
        )
        return out
    if s.method == "ieee":
        out = heading("IEEE interrupting network", landscape=True)
        out.append(
            Paragraph(
                "Base case. The 1.5 to 4 cycle network of IEEE C37.010 (machine reactances "
                "times IEEE Std 551-2006 Table 9-1's interrupting multipliers, motors below 50 "
                "hp left out): E/X with X from the reactance-only reduction, X/R from separate R "
                "and X reductions; medium-voltage breakers' interrupting duty starts from it.",
                BODY,
            )
        )
        rows = [
            [
                r.bus,
                fixed(r.kv, 3),
                ka(r.i3ph_ka),
                fixed(r.xr_fault, 2),
                ka(r.i_int_ka),
                fixed(r.xr_int, 2),
            ]
            for r in b.itertuples(index=False)
        ]
        head = [
            "Bus",
            "Nominal kV",
            "First-cycle 3-phase, kA",
            "First-cycle X/R",
            "Interrupting E/X, kA",
            "Interrupting X/R",
        ]
        out.append(table(head, rows, [0.24, 0.12, 0.16, 0.14, 0.18, 0.16], {1, 2, 3, 4, 5}))
        return out
    return []


def inverters(result: StudyResult) -> list:
    """The inverters' part: how they were modelled and, with the iteration, what it did at
    every bus. Nothing without inverters."""
    b = result.buses
    notes = b.inverter_note.fillna("").astype(str)
    if not (b.inverter_sweeps.notna().any() or notes.astype(bool).any()):
        return []
    out = heading("Inverter-based sources", landscape=True)
    if result.basis.settings.method == "iec60909":
        out.append(
            Paragraph(
                "Method iec60909: each inverter is a current source at its limit current "
                "I_skPF, added to the equivalent source with the magnitudes of the transfer "
                'impedances: I"k = (c Un / sqrt(3) + sum |Z_kj| I_skPFj) / |Z_kk| (IEC '
                "60909-0:2016 6.9, from memory), in every fault type; left out of the minimum "
                "currents; no momentary cessation. See the README's method.",
                BODY,
            )
        )
        return out
    out.append(
        Paragraph(
            "Base case. Each inverter delivers its limit current lagging its positive-sequence "
            "terminal voltage by 90 degrees, or less where its voltage would rise above "
            "prefault (a negative-sequence share leading V2 with behaviour negative_share), "
            "found by iteration for every bus and fault type; below cease_below_pu it injects "
            "nothing. Where the iteration did not converge no current is reported. See the "
            "README's method.",
            BODY,
        )
    )
    rows = [
        [
            r.bus,
            fixed(r.kv, 3),
            NOT_CONVERGED if f"3ph: {NOT_CONVERGED}" in note else ka(r.i3ph_ka),
            NOT_CONVERGED if f"slg: {NOT_CONVERGED}" in note else ka(r.islg_ka),
            fixed(r.inverter_sweeps, 0),
            "" if _blank(r.inverter_residual_pu) else f"{r.inverter_residual_pu:.1e}",
            note,
        ]
        for r, note in zip(b.itertuples(index=False), notes, strict=True)
    ]
    head = [
        "Bus",
        "Nominal kV",
        "3-phase, kA",
        "Line-to-ground, kA",
        "Sweeps",
        "Residual, of a limit",
        "Inverters",
    ]
    out.append(table(head, rows, [0.14, 0.07, 0.08, 0.09, 0.06, 0.08, 0.48], {1, 2, 3, 4, 5}))
    return out


def equipment(result: StudyResult) -> list:
    out = heading("Equipment evaluation", landscape=True)
    with_cases = bool(result.cases)
    out.append(
        Paragraph(
            "Each device's duty against its rating: the multiplying factor for the X/R of the "
            "fault giving the duty times the larger of the three-phase and line-to-ground "
            "currents"
            + (", the worst over the base case and every case" if with_cases else "")
            + ". MV breakers: the larger of the interrupting duty (the interrupting network's "
            "current, or the line-to-ground current, times the remote-source multiplying "
            "factor at contact parting, against the capability at the bus's voltage) and the "
            "closing-and-latching duty (first-cycle) against its rating. Red: the duty exceeds "
            "the rating. Amber: within 10 % of it. The comparison is of numbers only; "
            "equipment suitability is for the engineer of record.",
            BODY,
        )
    )
    table_ = result.duty
    if table_ is None or table_.empty:
        out.append(Paragraph("No bus has a device and rating_ka on the buses sheet.", BODY))
        return out
    with_mv = bool(table_.device.isin(duty.MV_DEVICES).any())
    rows, fills = [], []
    for r in table_.itertuples(index=False):
        row = [
            r.bus,
            duty.DEVICE_NAMES[r.device],
            fixed(r.rating_ka, 2),
            fixed(r.test_xr, 2),
            fixed(r.duty_xr, 2),
            fixed(r.mf, 3),
            fixed(r.duty_ka, 2),
            fixed(r.duty_pct, 1),
            r.duty_status,
            FAULT_WORDS.get(r.duty_fault, ""),
        ]
        if with_mv:
            row += [r.duty_basis, fixed(r.capability_ka, 2), fixed(r.closing_pct, 1)]
        if with_cases:
            row += [r.duty_case, fixed(r.base_duty_pct, 1)]
        rows.append(row)
        fills.append(STATUS_FILL.get(r.duty_status))
    head = [
        "Bus",
        "Device",
        "Rating, kA",
        "Test X/R",
        "X/R of the fault",
        "Multiplying factor",
        "Duty, kA",
        "Duty, % of rating",
        "Status",
        "Fault giving the duty",
    ]
    widths = [0.11, 0.2, 0.07, 0.06, 0.07, 0.08, 0.07, 0.07, 0.14, 0.13]
    numbers = {2, 3, 4, 5, 6, 7}
    if with_mv:
        head[head.index("Duty, % of rating")] = "Duty, % of rating or capability"
        head += ["Compared as", "Capability at bus kV, kA", "Closing and latching, %"]
        widths = [w * 0.8 for w in widths] + [0.08, 0.06, 0.06]
        numbers |= {len(head) - 2, len(head) - 1}
    if with_cases:
        head += ["Case giving the duty", "Base case duty, %"]
        widths = [w / sum(widths) * 0.8 for w in widths] + [0.14, 0.06]
        numbers |= {len(head) - 1}
    out.append(table(head, rows, widths, numbers, fills))
    return out


def cases(result: StudyResult) -> list:
    if result.envelope is None:
        return []
    out = heading("Cases and envelope", landscape=True)
    left_out = set(result.label_cases_left_out)
    out.append(
        Paragraph(
            "Each case is the base case with the changes below, studied on its own. The "
            "envelope after them is the worst value at each bus over the base case and every "
            "case, and the case that gives it; each case's own table is on the workbook's Cases "
            "sheet.",
            BODY,
        )
    )
    out.append(
        table(
            ["Case", "What it changes from the base case", "In the service labels"],
            [
                [
                    name,
                    "; ".join(result.case_changes.get(name, ())),
                    "no (label = no)" if name in left_out else "yes",
                ]
                for name in result.cases
            ],
            [0.25, 0.6, 0.15],
            set(),
        )
    )
    out.append(Spacer(1, 10))
    rows, fills = [], []
    for _, r in result.envelope.iterrows():
        rows.append(
            [
                r["bus"],
                NOT_CONVERGED if r["i3ph_case"] == NOT_CONVERGED else ka(r["i3ph_ka"]),
                r["i3ph_case"],
                NOT_CONVERGED if r["islg_case"] == NOT_CONVERGED else ka(r["islg_ka"]),
                r["islg_case"],
                ka(r["ill_ka"]),
                ka(r["illg_ka"]),
                ka(r["ip_ka"]),
                fixed(r["duty_pct"], 1),
                r["duty_case"],
            ]
        )
        fills.append(STATUS_FILL.get(r["duty_status"]))
    out.append(
        table(
            [
                "Bus",
                "Worst 3-phase, kA",
                "in case",
                "Worst line-to-ground, kA",
                "in case",
                "Worst line-to-line, kA",
                "Worst double line-to-ground, kA",
                "Worst peak ip, kA",
                "Worst duty, % of rating",
                "in case",
            ],
            rows,
            [0.12, 0.08, 0.15, 0.09, 0.15, 0.08, 0.09, 0.07, 0.07, 0.10],
            {1, 3, 5, 6, 7, 8},
            fills,
        )
    )
    return out


def contributions(result: StudyResult, cut_note: str = "") -> list:
    """The contributions of ``result`` (already cut by build.contributions_cut when they are
    more than the report prints; ``cut_note`` then says so)."""
    if result.contributions is None:
        return []
    out = heading("Contributions to the fault current", landscape=True)
    cut_note = f" {cut_note}" if cut_note else ""
    rows = [
        [
            r.faulted_bus,
            FAULT_WORDS[r.fault],
            r.element,
            r.kind.replace("_", " "),
            r.from_bus,
            fixed(at_kv, 3),
            ka(r.i_ka),
            fixed(r.angle_deg, 1),
            r.phase,
            ka(r.ig_ka),
        ]
        for r, at_kv in zip(
            result.contributions.itertuples(index=False), contribution_kv(result), strict=True
        )
        if not (abs(r.i_ka) < ZERO_KA and abs(r.ig_ka) < ZERO_KA)
    ]
    dropped = len(result.contributions) - len(rows)
    out.append(
        Paragraph(
            "In the base case: the current from every source, machine and branch for "
            "three-phase and line-to-ground faults at the buses asked for, at the voltage in the "
            "column 'Currents at kV': a source's or machine's at its terminals (the bus it is "
            "connected to), a branch's at the faulted-bus end. Convert a current at another "
            "voltage by the ratio of the two before comparing it with the faulted bus's. Angles "
            "relative to the prefault phase-a voltage at the faulted bus."
            + cut_note
            + (
                f" {dropped:,} rows carrying less than 0.005 kA (a branch with nothing behind "
                "it) are left out here"
                + ("." if cut_note else "; the workbook's Contributions sheet has every row.")
                if dropped
                else ""
            ),
            BODY,
        )
    )
    out.append(
        table(
            [
                "Faulted bus",
                "Fault",
                "Element",
                "Kind",
                "From bus",
                "Currents at kV",
                "Current, kA (largest phase)",
                "Angle, degrees",
                "Phase",
                "Residual 3I0, kA",
            ],
            rows,
            [0.12, 0.1, 0.13, 0.11, 0.12, 0.08, 0.1, 0.08, 0.06, 0.1],
            {5, 6, 7, 9},
        )
    )
    return out


def cable_check(result: StudyResult) -> list:
    out = heading("Cable check", landscape=True)
    checks = result.cable_checks
    if checks is None or checks.empty:
        out.append(
            Paragraph(
                "No cable has typed R and X: there is nothing to compare (any cable took its R "
                "and X from the tables).",
                BODY,
            )
        )
        return out
    out.append(
        Paragraph(
            "Each cable with typed R and X compared with the conductor tables; flagged rows "
            "(red) differ by more than the tolerance.",
            BODY,
        )
    )
    rows, fills = [], []
    for r in checks.itertuples(index=False):
        rows.append(
            [
                r.cable,
                "yes" if r.flagged else "no",
                r.reason,
                fixed(r.given_r_ohm_per_kft, 4),
                fixed(r.given_x_ohm_per_kft, 4),
                fixed(r.table_r_ohm_per_kft, 4),
                fixed(r.table_x_ohm_per_kft, 4),
                r.table_row,
            ]
        )
        fills.append(OVER_FILL if r.flagged else None)
    out.append(
        table(
            [
                "Cable",
                "Flagged",
                "Finding",
                "Typed R, ohm/1000 ft",
                "Typed X, ohm/1000 ft",
                "Table R, ohm/1000 ft",
                "Table X, ohm/1000 ft",
                "Table row",
            ],
            rows,
            [0.1, 0.06, 0.34, 0.08, 0.08, 0.08, 0.08, 0.18],
            {3, 4, 5, 6},
            fills,
        )
    )
    return out


def warnings(result: StudyResult) -> list:
    out = heading("Warnings")
    if not result.warnings:
        out.append(Paragraph("No warnings.", BODY))
        return out
    out.append(Paragraph("Doubtful input and the assumptions made; review each.", BODY))
    rows = [[str(i), w] for i, w in enumerate(result.warnings, start=1)]
    out.append(table(["No.", "Warning"], rows, [0.06, 0.94], {0}, width_pt=PORTRAIT_WIDTH_PT))
    return out


def input_restated(result: StudyResult, note: str | None) -> list:
    out = heading("Input restated", landscape=True)
    out.append(
        Paragraph(
            "Every element as it was read, so that a reviewer can check it against the "
            "one-line and the data sheets; per-unit values on the study's MVA base and the base "
            "kV of the bus named.",
            BODY,
        )
    )
    if note:
        out.append(Paragraph(text(note), BODY))
        return out
    service = set(result.service_buses)
    out.append(Paragraph("Buses", H2))
    out.append(
        table(
            ["Bus", "Description", "Nominal kV", "Device", "Rating, kA", "Service equipment"],
            [
                [
                    r.bus,
                    description,
                    fixed(r.kv, 3),
                    duty.DEVICE_NAMES.get(r.device, "") if r.device else "",
                    fixed(r.rating_ka, 2),
                    "yes" if r.bus in service else "",
                ]
                for r, description in zip(
                    result.buses.itertuples(index=False), result.descriptions, strict=True
                )
            ],
            [0.14, 0.34, 0.08, 0.28, 0.08, 0.08],
            {2, 4},
        )
    )
    out.append(Paragraph("Elements", H2))
    rows = [
        [
            r.element,
            r.kind.replace("_", " "),
            r.from_bus,
            r.to_bus,
            r.input,
            fixed(r.r_pu, 6),
            fixed(r.x_pu, 6),
            r.note,
        ]
        for r in result.elements.itertuples(index=False)
    ]
    out.append(
        table(
            [
                "Element",
                "Kind",
                "From bus (HV side)",
                "To bus (LV side)",
                "As entered",
                "R, per-unit",
                "X, per-unit",
                "Note",
            ],
            rows,
            [0.1, 0.08, 0.1, 0.1, 0.35, 0.08, 0.08, 0.11],
            {5, 6},
        )
    )
    return out


def labels(result: StudyResult) -> list:
    """One service label per page, the words of labeltext (as on the workbook's label sheets)."""
    if result.labels is None or result.labels.empty:
        return heading("Service equipment labels") + [
            Paragraph(
                "No bus is marked service = yes on the buses sheet: no label is printed. Mark "
                "the service equipment to have its maximum available fault current and the date "
                "of calculation printed for field marking (NFPA 70 110.24).",
                BODY,
            )
        ]
    out: list = [NextPageTemplate("portrait")]
    for bus, description in zip(result.labels.bus, result.labels.description, strict=True):
        lines = [
            Paragraph(text(line.text), _style("label", line.size_pt, bold=line.bold, lead=1.2))
            if line.text
            else Spacer(1, 8)
            for line in label_lines(result, bus)
        ]
        box = Table([[lines]], colWidths=[PORTRAIT_WIDTH_PT * 0.92], splitInRow=1)
        box.setStyle(
            TableStyle(
                [
                    ("BOX", (0, 0), (-1, -1), 2.5, colors.black),
                    ("FONTNAME", (0, 0), (-1, -1), fonts.REGULAR),
                    ("LEFTPADDING", (0, 0), (-1, -1), 14),
                    ("RIGHTPADDING", (0, 0), (-1, -1), 14),
                    ("TOPPADDING", (0, 0), (-1, -1), 12),
                    ("BOTTOMPADDING", (0, 0), (-1, -1), 12),
                ]
            )
        )
        out += [
            PageBreak(),
            Paragraph(f"Service label: {text(bus)}", LABEL_HEAD),
            KeepTogether([box]),
        ]
        if not fonts.prints_as_typed(f"{bus} {description}"):
            out.append(
                Paragraph(
                    "This label's equipment name or description holds characters this report "
                    "cannot print as typed (see the title page): do not post this page; take "
                    "the label from the workbook's label sheet.",
                    _style("label-warn", 10, bold=True, spaceBefore=8),
                )
            )
    return out
