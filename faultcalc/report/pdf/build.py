"""The report assembled: the sections laid out by reportlab, each one-line sheet drawn at full
size on a page of its own size by the diagram's PDF renderer (faultcalc.diagram.pdfdraw)."""

from __future__ import annotations

import dataclasses
from pathlib import Path

from ...results import StudyResult
from ...solve import duty
from ..words import contributions_cut_note
from . import sections
from .pages import Marks, NumberedCanvas, ReportDocument, SheetSlot

PAGE_CAUTION = (
    "For review by a qualified, licensed engineer; confirm the source data with the utility; "
    "the local code and the authority having jurisdiction govern (see 'Cautions')."
)


def _marks(result: StudyResult) -> Marks:
    b = result.basis
    return Marks(
        title=b.settings.title or "Short-circuit study",
        basis=(
            f"calculated {b.calculated_at[:10]} {b.calculated_at[11:16]} "
            f"UTC{b.calculated_at[19:]} \u00b7 "
            f"{b.tool_name} {b.tool_version} \u00b7 SHA-256 {b.input_sha256[:12]}\u2026 "
            f"\u00b7 {b.input_name}"
        ),
        caution=PAGE_CAUTION,
    )


def _counts(result: StudyResult) -> dict[str, int]:
    statuses = result.duty.duty_status if result.duty is not None else []
    return {
        "buses": len(result.buses),
        "cases": len(result.cases),
        "rated": len(statuses),
        "over": int(sum(s == duty.STATUS_OVER for s in statuses)),
        "near": int(sum(s == duty.STATUS_NEAR for s in statuses)),
    }


def _lacking(result: StudyResult) -> str:
    """The characters of the input's names and descriptions the report prints wrongly (missing
    from the face, or right to left), by code point, at most 12."""
    from ...typeface import has_glyph, right_to_left

    texts = [result.basis.settings.title, result.basis.input_name, *result.cases]
    texts += list(result.buses.bus) + list(result.descriptions)
    if result.labels is not None:
        texts += list(result.labels.description)
    missing = sorted(
        {
            ch
            for t in texts
            for ch in str(t)
            if not ch.isspace() and (not has_glyph(ch) or right_to_left(ch))
        }
    )
    return ", ".join(f"U+{ord(ch):04X}" for ch in missing[:12]) + (
        " ..." if len(missing) > 12 else ""
    )


def contributions_cut(result: StudyResult, contributions_in: str | None):
    """The result with its contributions cut to what the report prints (whole faulted buses
    of the largest fault currents, at most REPORT_CONTRIBUTION_ROWS rows; ranked on the whole
    result, before any summary) and the note saying so ("" when nothing is cut)."""
    from ..outputs import REPORT_CONTRIBUTION_ROWS

    c = result.contributions
    if c is None or len(c) <= REPORT_CONTRIBUTION_ROWS:
        return result, ""
    cut, kept = result.contributions_at_most(REPORT_CONTRIBUTION_ROWS)
    where = contributions_in or "the workbook's Contributions sheet"
    note = contributions_cut_note(
        c, kept, len(cut), REPORT_CONTRIBUTION_ROWS, where, csv=contributions_in is not None
    )
    return dataclasses.replace(result, contributions=cut), note


def write_report_to(
    result: StudyResult,
    path: str | Path,
    *,
    sheets=(),
    summary_of: str | None = None,
    contributions_in: str | None = None,
) -> int:
    """Write the report of ``result`` to ``path`` (not atomically: the caller stages it);
    returns its number of pages.

    ``sheets``: the one-line diagram's pages (faultcalc.diagram Drawings), each laid on a page
    of its own size. ``summary_of``: the CSV that holds every bus of a study too large to
    print bus by bus; the report then prints the buses a reviewer reads first and says so.
    ``contributions_in``: the CSV that holds every contribution row (the workbook's sheet
    then holds a part of them); the report prints at most REPORT_CONTRIBUTION_ROWS.
    """

    counts = _counts(result)
    result, contribution_note = contributions_cut(result, contributions_in)
    note = None
    if summary_of is not None:
        cut = result.summary()
        note = (
            f"A study of {len(result.buses):,} buses: this report prints the {len(cut.buses)} "
            "buses with the largest fault currents and every duty finding, largest first; every "
            f"bus is in {summary_of}."
        )
        result = cut
    b = result.basis
    doc = ReportDocument(
        path,
        _marks(result),
        title=f"{b.settings.title or 'Short-circuit study'}: short-circuit study report",
        author=f"{b.tool_name} {b.tool_version}",
        subject=f"Short-circuit study of {b.input_name} (SHA-256 {b.input_sha256})",
        creator=b.tool_name,
    )
    story = sections.title_page(result, counts, _lacking(result))
    story += sections.contents() + sections.cautions(result)
    story += sections.basis(result)
    for i, sheet in enumerate(sheets):
        template = doc.add_sheet_page(sheet.width, sheet.height)
        title = "One-line diagram" + (
            f", sheet {i + 1} of {len(sheets)}" if len(sheets) > 1 else ""
        )
        slot = SheetSlot(sheet, i, title)
        story += [sections.NextPageTemplate(template), sections.PageBreak(), slot]
    story += sections.summary(result, note)
    story += sections.after_first_instant(result)
    story += sections.inverters(result)
    story += sections.equipment(result)
    story += sections.cases(result)
    story += sections.contributions(result, contribution_note)
    story += sections.cable_check(result)
    story += sections.warnings(result)
    story += sections.input_restated(
        result,
        "The element echo is left out of the report of a study this large." if note else None,
    )
    story += sections.labels(result)
    doc.multiBuild(story, canvasmaker=NumberedCanvas)  # twice or more: the contents' pages
    return doc.canv.pages_total
