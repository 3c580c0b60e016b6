"""The report's pages: portrait for text, landscape for wide tables, a page of its own size for
each one-line sheet; every page with the study's title, the input and "page N of M"."""

from __future__ import annotations

from dataclasses import dataclass

from reportlab.lib.pagesizes import landscape, letter
from reportlab.lib.units import inch
from reportlab.pdfgen.canvas import Canvas
from reportlab.platypus import BaseDocTemplate, Flowable, Frame, PageTemplate

from ... import typeface as fonts

PORTRAIT = letter  # 8.5 x 11 in; the text also fits A4 (210 mm wide), the margins allow it
LANDSCAPE = landscape(letter)
MARGIN_PT = 0.6 * inch
HEADER_PT = 22.0  # the band above the frame holding the header line
FOOTER_PT = (
    40.0  # the band below it holding the footer: the caution (two lines at most) and the basis
)
SMALL_PT = 8.0  # the smallest text anywhere in the report
INK = (0.12, 0.18, 0.24)


@dataclass(frozen=True)
class Marks:
    """What every page carries."""

    title: str  # the study's title, left in the header
    basis: str  # tool, input and calculation time, left in the footer
    caution: str  # one line of caution, above the basis line


def _frame(size) -> Frame:
    w, h = size
    return Frame(
        MARGIN_PT,
        MARGIN_PT + FOOTER_PT,
        w - 2 * MARGIN_PT,
        h - 2 * MARGIN_PT - HEADER_PT - FOOTER_PT,
        leftPadding=0,
        rightPadding=0,
        topPadding=0,
        bottomPadding=0,
        id="body",
    )


def sheet_size(width_pt: float, height_pt: float) -> tuple[float, float]:
    """The page that holds a one-line sheet of this size at full size with the header and the
    footer: never smaller than a landscape letter page."""
    w = max(LANDSCAPE[0], width_pt + 2 * MARGIN_PT)
    h = max(LANDSCAPE[1], height_pt + 2 * MARGIN_PT + HEADER_PT + FOOTER_PT)
    return w, h


class ReportDocument(BaseDocTemplate):
    """Portrait and landscape page templates, and one per one-line sheet (add_sheet_page)."""

    def __init__(self, path, marks: Marks, **kw):
        fonts.register()
        super().__init__(
            str(path),
            pagesize=PORTRAIT,
            leftMargin=MARGIN_PT,
            rightMargin=MARGIN_PT,
            topMargin=MARGIN_PT + HEADER_PT,
            bottomMargin=MARGIN_PT + FOOTER_PT,
            **kw,
        )
        self.marks = marks
        self.addPageTemplates(
            [
                PageTemplate("portrait", [_frame(PORTRAIT)], onPage=self._mark, pagesize=PORTRAIT),
                PageTemplate(
                    "landscape", [_frame(LANDSCAPE)], onPage=self._mark, pagesize=LANDSCAPE
                ),
            ]
        )

    def afterFlowable(self, flowable):  # noqa: N802 (reportlab's name)
        """A section heading (style h1), a label or a one-line sheet goes into the contents."""
        from xml.sax.saxutils import escape

        from reportlab.platypus import Paragraph

        # The contents set each entry as a paragraph again: its text (a bus name in a label's
        # heading) escaped once more, or a name holding markup would act there.
        if isinstance(flowable, Paragraph) and flowable.style.name in ("h1", "label-head"):
            self.notify("TOCEntry", (0, escape(flowable.getPlainText()), self.page))
        elif isinstance(flowable, SheetSlot):
            self.notify("TOCEntry", (0, escape(flowable.title), self.page))

    def add_sheet_page(self, width_pt: float, height_pt: float) -> str:
        """A page template for a one-line sheet of this size; returns its id."""
        size = sheet_size(width_pt, height_pt)
        name = f"sheet-{len(self.pageTemplates)}"
        self.addPageTemplates(
            [PageTemplate(name, [_frame(size)], onPage=self._mark, pagesize=size)]
        )
        return name

    def _mark(self, canv: Canvas, doc) -> None:
        w, h = canv._pagesize
        canv.saveState()
        canv.setFillColorRGB(*INK)
        canv.setStrokeColorRGB(0.55, 0.62, 0.7)
        canv.setLineWidth(0.5)
        top = h - MARGIN_PT - HEADER_PT + 6
        canv.line(MARGIN_PT, top, w - MARGIN_PT, top)
        canv.setFont(fonts.BOLD, 9)
        title = " ".join(self.marks.title.split())  # a line break typed in the title: a space
        canv.drawString(MARGIN_PT, top + 5, _fit(title, fonts.BOLD, 9, w * 0.6))
        canv.setFont(fonts.REGULAR, SMALL_PT)
        canv.drawRightString(w - MARGIN_PT, top + 5, "Short-circuit study report")
        bottom = MARGIN_PT + FOOTER_PT - 6
        canv.line(MARGIN_PT, bottom, w - MARGIN_PT, bottom)
        from reportlab.lib.utils import simpleSplit

        lines = simpleSplit(self.marks.caution, fonts.REGULAR, SMALL_PT, w - 2 * MARGIN_PT)
        for k, line in enumerate(lines[:2]):
            canv.drawString(MARGIN_PT, bottom - 10 - 9.5 * k, line)
        room = w - 2 * MARGIN_PT - 80  # leave the page number its place
        canv.drawString(
            MARGIN_PT, MARGIN_PT + 1, _fit(self.marks.basis, fonts.REGULAR, SMALL_PT, room)
        )
        canv.restoreState()


def _fit(text: str, font: str, size: float, width_pt: float) -> str:
    """``text`` cut (with an ellipsis) to ``width_pt`` in ``font`` at ``size``."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    if stringWidth(text, font, size) <= width_pt:
        return text
    while text and stringWidth(text + "\u2026", font, size) > width_pt:
        text = text[:-1]
    return text + "\u2026"


class NumberedCanvas(Canvas):
    """A canvas that holds its pages until the end to write "page N of M" on each."""

    def __init__(self, *args, **kw):
        if not kw.get("initialFontName"):  # no base font (never embedded) in the file
            kw["initialFontName"] = fonts.REGULAR
        super().__init__(*args, **kw)
        self._held: list[dict] = []

    def showPage(self):  # noqa: N802 (reportlab's name)
        self._held.append(dict(self.__dict__))
        self._startPage()

    def save(self):
        total = self.pages_total = len(self._held)
        for number, state in enumerate(self._held, start=1):
            self.__dict__.update(state)
            w, _ = self._pagesize
            self.saveState()
            self.setFont(fonts.REGULAR, SMALL_PT)
            self.setFillColorRGB(*INK)
            self.drawRightString(w - MARGIN_PT, MARGIN_PT + 1, f"page {number} of {total}")
            self.restoreState()
            super().showPage()
        super().save()


class SheetSlot(Flowable):
    """One one-line sheet (a faultcalc.diagram Drawing) at full size, drawn by the diagram's
    PDF renderer on the page of its own size kept for it."""

    def __init__(self, drawing, index: int, title: str):
        super().__init__()
        self.drawing, self.index, self.title = drawing, index, title
        self.width, self.height = drawing.width, drawing.height

    def wrap(self, avail_w, avail_h):
        return self.width, self.height

    def draw(self):
        from ...diagram.pdfdraw import draw_on

        draw_on(self.canv, self.drawing)
