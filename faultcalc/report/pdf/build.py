"""The report assembled: the sections laid out by reportlab, then each one-line sheet (drawn by
faultcalc.diagram as a PDF page of its own, text kept as text) laid on the page kept for it."""

from __future__ import annotations

import tempfile
from pathlib import Path

from ...results import StudyResult
from ...solve import duty
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
            f"calculated {b.calculated_at[:10]} {b.calculated_at[11:16]} \u00b7 "
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
        "over": int(sum(s == duty.STATUS_OVER for s in statuses)),
        "near": int(sum(s == duty.STATUS_NEAR for s in statuses)),
    }


def write_report_to(
    result: StudyResult,
    path: str | Path,
    *,
    sheets=(),
    summary_of: str | None = None,
) -> None:
    """Write the report of ``result`` to ``path`` (not atomically: the caller stages it).

    ``sheets``: the one-line diagram's pages (faultcalc.diagram Drawings), each laid on a page
    of its own size. ``summary_of``: the CSV that holds every bus of a study too large to
    print bus by bus; the report then prints the buses a reviewer reads first and says so.
    """

    counts = _counts(result)
    note = None
    if summary_of is not None:
        cut = result.summary()
        note = (
            f"A study of {len(result.buses):,} buses: this report prints the {len(cut.buses)} "
            "buses with the largest fault currents and every duty finding, largest first; every "
            f"bus is in {summary_of}."
        )
        result = cut
    with tempfile.TemporaryDirectory(prefix="faultcalc-report-") as tmp:
        body = Path(tmp) / "body.pdf"
        b = result.basis
        doc = ReportDocument(
            body,
            _marks(result),
            title=f"{b.settings.title or 'Short-circuit study'}: short-circuit study report",
            author=f"{b.tool_name} {b.tool_version}",
            subject=f"Short-circuit study of {b.input_name} (SHA-256 {b.input_sha256})",
            creator=b.tool_name,
        )
        story = sections.title_page(result, counts) + sections.cautions(result)
        story += sections.basis(result)
        slots = []
        for i, sheet in enumerate(sheets):
            template = doc.add_sheet_page(sheet.width, sheet.height)
            slot = SheetSlot(sheet.width, sheet.height, i)
            slots.append(slot)
            story += [sections.NextPageTemplate(template), sections.PageBreak(), slot]
        story += sections.summary(result, note)
        story += sections.equipment(result)
        story += sections.cases(result)
        story += sections.contributions(result)
        story += sections.cable_check(result)
        story += sections.warnings(result)
        story += sections.input_restated(
            result,
            "The element echo is left out of the report of a study this large." if note else None,
        )
        story += sections.labels(result)
        doc.build(story, canvasmaker=NumberedCanvas)
        if not slots:
            Path(path).write_bytes(body.read_bytes())
            return
        _lay_sheets(body, slots, sheets, Path(tmp), Path(path))


def _lay_sheets(body: Path, slots, sheets, tmp: Path, path: Path) -> None:
    """Each sheet (saved as a one-page PDF) laid on its slot's page at the slot's corner."""
    from pypdf import PdfReader, PdfWriter, Transformation

    from ...diagram import save

    writer = PdfWriter(clone_from=PdfReader(body))
    for slot, sheet in zip(slots, sheets, strict=True):
        if slot.placed is None:
            raise RuntimeError(f"one-line sheet {slot.index + 1} was given no page")
        page_number, x, y = slot.placed
        sheet_pdf = tmp / f"sheet-{slot.index}.pdf"
        save(sheet, sheet_pdf)
        writer.pages[page_number - 1].merge_transformed_page(
            PdfReader(sheet_pdf).pages[0], Transformation().translate(x, y)
        )
    with open(path, "wb") as out:
        writer.write(out)
