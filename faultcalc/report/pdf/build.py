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
    from .fonts import has_glyph, right_to_left

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
        story = sections.title_page(result, counts, _lacking(result))
        story += sections.contents() + sections.cautions(result)
        story += sections.basis(result)
        slots = []
        for i, sheet in enumerate(sheets):
            template = doc.add_sheet_page(sheet.width, sheet.height)
            title = "One-line diagram" + (
                f", sheet {i + 1} of {len(sheets)}" if len(sheets) > 1 else ""
            )
            slot = SheetSlot(sheet.width, sheet.height, i, title)
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
        doc.multiBuild(story, canvasmaker=NumberedCanvas)  # twice or more: the contents' pages
        if not slots:
            Path(path).write_bytes(body.read_bytes())
            return
        _lay_sheets(body, slots, sheets, Path(tmp), Path(path))


def _lay_sheets(body: Path, slots, sheets, tmp: Path, path: Path) -> None:
    """Each sheet (saved as a one-page PDF by faultcalc.diagram) laid on its slot's page at the
    slot's corner, as a form XObject: its content stream is carried over as it is, never
    parsed (parsing a 2,000-bus sheet's stream to merge it cost 17 s)."""
    from pypdf import PdfReader, PdfWriter
    from pypdf.generic import (
        ArrayObject,
        ContentStream,
        DecodedStreamObject,
        DictionaryObject,
        FloatObject,
        NameObject,
    )

    from ...diagram import save

    writer = PdfWriter(clone_from=PdfReader(body))
    for slot, sheet in zip(slots, sheets, strict=True):
        if slot.placed is None:
            raise RuntimeError(f"one-line sheet {slot.index + 1} was given no page")
        page_number, x, y = slot.placed
        sheet_pdf = tmp / f"sheet-{slot.index}.pdf"
        save(sheet, sheet_pdf)
        source = PdfReader(sheet_pdf).pages[0]
        box = [float(v) for v in source.mediabox]
        form = DecodedStreamObject()
        form.set_data(_content_bytes(source))
        form.update(
            {
                NameObject("/Type"): NameObject("/XObject"),
                NameObject("/Subtype"): NameObject("/Form"),
                NameObject("/BBox"): ArrayObject(FloatObject(v) for v in box),
                NameObject("/Resources"): source["/Resources"].clone(writer),
            }
        )
        page = writer.pages[page_number - 1]
        resources = page["/Resources"].get_object()
        if "/XObject" not in resources:
            resources[NameObject("/XObject")] = DictionaryObject()
        xobjects = resources["/XObject"].get_object()
        name = f"/OneLineSheet{slot.index}"
        xobjects[NameObject(name)] = writer._add_object(form.flate_encode())
        placed = f"\nq 1 0 0 1 {x - box[0]:.3f} {y - box[1]:.3f} cm {name} Do Q\n".encode()
        joined = DecodedStreamObject()
        joined.set_data(_content_bytes(page) + placed)
        page.replace_contents(ContentStream(joined.flate_encode(), writer))
    with open(path, "wb") as out:
        writer.write(out)


def _content_bytes(page) -> bytes:
    """The decoded content of ``page`` (one stream or several joined)."""
    contents = page["/Contents"].get_object()
    if isinstance(contents, list):
        return b"\n".join(c.get_object().get_data() for c in contents)
    return contents.get_data()
