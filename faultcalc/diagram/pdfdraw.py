"""The drawing written into a PDF with reportlab, text kept as text (DejaVu Sans embedded):
the diagram's own PDF (a page per drawing) and its sheets in the study report. Each
primitive drawn directly on the canvas: a 2,000-bus diagram's 14 sheets (about 1,100 texts
each) took 24 s as matplotlib figures, 0.7 s so."""

from __future__ import annotations

from pathlib import Path

from .. import typeface
from .layout import Drawing
from .strokes import strokes


def draw_on(canv, drawing: Drawing, x0: float = 0.0, y0: float = 0.0) -> None:
    """Draw ``drawing`` on reportlab canvas ``canv`` with its bottom-left corner at (x0, y0)
    (the drawing's y grows downwards from its top; the canvas's upwards)."""
    from reportlab.lib.colors import HexColor

    typeface.register()
    top = y0 + drawing.height
    colours: dict[str, object] = {}

    def colour(hexa: str):
        if hexa not in colours:
            colours[hexa] = HexColor(hexa)
        return colours[hexa]

    canv.saveState()
    canv.setLineCap(0)  # butt
    for line in drawing.lines:
        canv.setStrokeColor(colour(line.colour))
        canv.setLineWidth(line.width)
        canv.setDash([4 * line.width, 3 * line.width] if line.dashed else [])
        canv.line(x0 + line.x1, top - line.y1, x0 + line.x2, top - line.y2)
    canv.setDash([])
    for symbol in drawing.symbols:
        for s in strokes(symbol):
            _stroke(canv, s, x0, top, colour(s.colour))
    ascent = typeface.TOP_TO_BASELINE_EM
    for t in drawing.texts:
        canv.setFillColor(colour(t.colour))
        canv.setFont(typeface.BOLD if t.bold else typeface.REGULAR, t.size)
        canv.drawString(x0 + t.x, top - t.y - ascent * t.size, t.text)
    canv.restoreState()


def _stroke(canv, s, x0: float, top: float, colour) -> None:
    canv.setStrokeColor(colour)
    canv.setFillColor(colour)
    canv.setLineWidth(s.width)
    canv.setDash([2 * s.width, 2 * s.width] if s.dashed else [])
    if s.kind in ("line", "polygon"):
        path = canv.beginPath()
        (x, y), *rest = s.points
        path.moveTo(x0 + x, top - y)
        for x, y in rest:
            path.lineTo(x0 + x, top - y)
        if s.kind == "polygon":
            path.close()
        canv.drawPath(path, stroke=1, fill=1 if s.filled else 0)
    elif s.kind == "circle":
        canv.circle(x0 + s.x, top - s.y, s.r, stroke=1, fill=1 if s.filled else 0)
    elif s.kind == "rect":
        canv.rect(x0 + s.x, top - s.y - s.h, s.w, s.h, stroke=1, fill=1 if s.filled else 0)
    elif s.kind == "letter":
        canv.setFont(typeface.BOLD, s.size)
        canv.drawCentredString(x0 + s.x, top - s.y - 0.36 * s.size, s.text)  # cap height / 2
    else:
        raise ValueError(f"unknown stroke {s.kind!r}")


def save_pdf(drawings: list[Drawing], path: str | Path) -> None:
    """Write ``drawings`` to ``path`` as one PDF, a page per drawing, each page its size."""
    from reportlab.pdfgen.canvas import Canvas

    typeface.register()
    canv = Canvas(str(path), initialFontName=typeface.REGULAR, pageCompression=1)
    canv.setCreator("faultcalc")
    for drawing in drawings:
        canv.setPageSize((drawing.width, drawing.height))
        draw_on(canv, drawing)
        canv.showPage()
    canv.save()
