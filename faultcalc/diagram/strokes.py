"""Each symbol as the strokes that draw it (lines, circles, rectangles, polygons, a letter), in
the drawing's points, y growing downwards: written once here, drawn by every renderer (the
matplotlib one for SVG and PNG, the reportlab one for PDF and the report).

Symbols after IEC 60617 / IEEE 315: a transformer two overlapping circles (a three-winding
one three, drawn on each of its two branches from the h winding's bus), an impedance a
rectangle, a machine a circle with its letter, a source a hatched square (the infeed), a
cable a short line with two slanted marks, a tie's stub an arrow, an open switch a blade
swung off its contact, an off-page reference a pentagon with the page's number in it.
"""

from __future__ import annotations

from dataclasses import dataclass

from .shapes import Symbol

PEN_PT = 1.2  # a symbol's outline
MARK_PT = 1.0  # a cable's marks
HATCH_PT = 0.6  # a source's hatching
HATCH_STEP = 0.22  # hatch spacing, as a fraction of the symbol's width


@dataclass(frozen=True)
class Stroke:
    kind: str  # line, circle, rect, polygon, letter
    points: tuple[tuple[float, float], ...] = ()  # line (an open path) and polygon (closed)
    x: float = 0.0  # circle: centre; rect: left; letter: centre
    y: float = 0.0  # circle: centre; rect: top; letter: centre
    r: float = 0.0  # circle radius
    w: float = 0.0  # rect
    h: float = 0.0  # rect
    width: float = PEN_PT
    colour: str = "#1f2d3d"
    filled: bool = False
    dashed: bool = False
    text: str = ""  # letter
    size: float = 9.0  # letter


def strokes(s: Symbol) -> list[Stroke]:
    """The strokes of symbol ``s``."""
    r = s.w / 2
    c = s.colour
    x, y = s.x, s.y

    def line(*points, width=PEN_PT):
        return Stroke("line", points=tuple(points), width=width, colour=c)

    def circle(cx, cy, radius, filled=False):
        return Stroke("circle", x=cx, y=cy, r=radius, colour=c, filled=filled)

    def polygon(*points, dashed=False):
        return Stroke("polygon", points=tuple(points), colour=c, dashed=dashed)

    if s.turned:  # on a horizontal line: drawn as on a vertical one, turned a quarter
        if s.kind == "impedance":
            return [Stroke("rect", x=x - r * 0.8, y=y - r * 0.35, w=r * 1.6, h=r * 0.7, colour=c)]
        if s.kind == "cable":
            out = [line((x - r, y), (x + r, y))]
            for dx in (-0.15, 0.2):
                out.append(
                    line(
                        (x + (dx - 0.3) * r, y + r * 0.5),
                        (x + (dx + 0.3) * r, y - r * 0.5),
                        width=MARK_PT,
                    )
                )
            return out
        if s.kind == "open":  # an open switch on a horizontal tie
            return [
                line((x - r, y), (x - r * 0.45, y)),
                line((x - r * 0.45, y - r * 0.3), (x - r * 0.45, y + r * 0.3)),
                line((x + r * 0.6, y), (x - r * 0.3, y - r * 0.55)),
                circle(x + r * 0.6, y, r * 0.08, filled=True),
                line((x + r * 0.6, y), (x + r, y)),
            ]
        if s.kind == "three_winding":  # three circles in a row
            return [circle(x + dx * r, y, r * 0.42) for dx in (-0.55, 0.0, 0.55)]
        # a transformer as a tie: two circles side by side
        return [circle(x - r * 0.42, y, r * 0.55), circle(x + r * 0.42, y, r * 0.55)]
    if s.kind == "transformer":
        return [circle(x, y - r * 0.42, r * 0.55), circle(x, y + r * 0.42, r * 0.55)]
    if s.kind == "three_winding":  # three overlapping circles: h above, the others below
        return [
            circle(x, y - r * 0.4, r * 0.5),
            circle(x - r * 0.36, y + r * 0.25, r * 0.5),
            circle(x + r * 0.36, y + r * 0.25, r * 0.5),
        ]
    if s.kind == "impedance":
        return [Stroke("rect", x=x - r * 0.35, y=y - r * 0.8, w=r * 0.7, h=r * 1.6, colour=c)]
    if s.kind in ("motor", "generator"):
        return [circle(x, y, r * 0.8), Stroke("letter", x=x, y=y, text=s.letter, colour=c)]
    if s.kind == "source":
        half = r * 0.8
        return [
            Stroke("rect", x=x - half, y=y - half, w=2 * half, h=2 * half, colour=c),
            *_hatch(x, y, half, c),
        ]
    if s.kind == "cable":
        return [
            line((x, y - r), (x, y + r)),
            line((x - r * 0.5, y + r * 0.3), (x + r * 0.5, y - r * 0.3), width=MARK_PT),
            line((x - r * 0.5, y + r * 0.6), (x + r * 0.5, y), width=MARK_PT),
        ]
    if s.kind == "offpage":  # a pentagon pointing down, the other page's number in it
        return [
            polygon(
                (x - r * 0.75, y - r * 0.8),
                (x + r * 0.75, y - r * 0.8),
                (x + r * 0.75, y + r * 0.25),
                (x, y + r * 0.9),
                (x - r * 0.75, y + r * 0.25),
            ),
            Stroke(
                "letter",
                x=x,
                y=y - r * 0.1,
                text=s.letter,
                size=8 if len(s.letter) < 3 else 6.5,
                colour=c,
            ),
        ]
    if s.kind == "open":  # an open switch: fixed contact, blade swung off it
        return [
            line((x, y - r), (x, y - r * 0.45)),
            line((x - r * 0.3, y - r * 0.45), (x + r * 0.3, y - r * 0.45)),
            line((x, y + r * 0.6), (x + r * 0.55, y - r * 0.3)),
            circle(x, y + r * 0.6, r * 0.08, filled=True),
            line((x, y + r * 0.6), (x, y + r)),
        ]
    if s.kind == "hidden":  # what is not drawn: a dashed triangle, a subtree left out
        return [
            polygon(
                (x, y - r * 0.8),
                (x + r * 0.75, y + r * 0.7),
                (x - r * 0.75, y + r * 0.7),
                dashed=True,
            )
        ]
    if s.kind == "grounding":  # a grounding bank: a zig-zag winding down to earth (our own)
        zig = [(x, y - r)]
        for k in range(4):
            zig.append((x + (0.35 if k % 2 == 0 else -0.35) * r, y - r * (0.7 - 0.3 * k)))
        zig.append((x, y + r * 0.5))
        return [
            Stroke("line", points=tuple(zig), colour=c),
            line((x - r * 0.6, y + r * 0.5), (x + r * 0.6, y + r * 0.5)),
            line((x - r * 0.4, y + r * 0.72), (x + r * 0.4, y + r * 0.72)),
            line((x - r * 0.2, y + r * 0.94), (x + r * 0.2, y + r * 0.94)),
        ]
    if s.kind == "inverter":  # an inverter: a box split corner to corner, DC above, AC below
        half = r * 0.75  # (our own symbol)
        return [
            line((x, y - r), (x, y - half)),
            polygon(
                (x - half, y - half),
                (x + half, y - half),
                (x + half, y + half),
                (x - half, y + half),
            ),
            line((x - half, y + half), (x + half, y - half)),
            Stroke("letter", x=x - half * 0.45, y=y - half * 0.4, text="=", size=6.5, colour=c),
            Stroke("letter", x=x + half * 0.45, y=y + half * 0.45, text="~", size=6.5, colour=c),
        ]
    if s.kind == "via":  # buses left out on the way: three dots on the drop
        return [circle(x, y + r * dy, r * 0.09, filled=True) for dy in (-0.5, 0.0, 0.5)]
    if s.kind == "ref":
        return [
            line((x, y - r), (x, y + r * 0.2)),
            polygon((x - r * 0.5, y + r * 0.2), (x + r * 0.5, y + r * 0.2), (x, y + r)),
        ]
    raise ValueError(f"no strokes for a symbol of kind {s.kind!r}")


def _hatch(x: float, y: float, half: float, colour: str) -> list[Stroke]:
    """Lines rising to the right at 45 degrees (as "/") across the square of half-side
    ``half`` centred on (x, y), clipped to it."""
    out = []
    side = 2 * half
    step = side * HATCH_STEP
    d = -side + step
    while d < side - 1e-9:  # the line v = u + d in the square's own frame (u right, v up)
        u0, u1 = max(0.0, -d), min(side, side - d)
        out.append(
            Stroke(
                "line",
                points=((x - half + u0, y + half - (u0 + d)), (x - half + u1, y + half - (u1 + d))),
                width=HATCH_PT,
                colour=colour,
            )
        )
        d += step
    return out
