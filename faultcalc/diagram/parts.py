"""What the diagram prints and the pieces it is drawn from: a bus's text, a branch on its drop,
a machine or reference hung below a bar, a tie straight across; the sizes they take, in points.
"""

from __future__ import annotations

import math

from .shapes import LINE_PT, Line, Symbol, Text, text_width

SIZE = 8.0  # every label at 8 pt or more (the report's floor)
NAME_SIZE = 9.0
LINE = SIZE * LINE_PT
SYMBOL = 26.0  # a symbol's height and width
MARGIN = 7.0  # between two spans
LEFT = 12.0  # from a span's left edge to its drop
TEXT_GAP = 4.0  # from a drop or symbol to its text
BUS_LINES = 6  # name, kV and X/R, 3ph, SLG, service equipment, rating mark
ELEMENT_LINES = 3
SYMBOL_ZONE = max(SYMBOL, ELEMENT_LINES * LINE) + 10.0
BUS_ZONE = NAME_SIZE * LINE_PT + (BUS_LINES - 1) * LINE + 8.0
LEVEL = SYMBOL_ZONE + BUS_ZONE  # from one row's bars to the next's
SOURCE_ZONE = SYMBOL_ZONE
HANG_DROP = SYMBOL_ZONE / 2 + 2  # from a bar to the centre of what hangs below it
INK = "#1f2d3d"
BAR = "#1d5c63"  # bus bars: a deep teal of our own
OVER = "#b3261e"
NEAR = "#b86e00"
SERVICE = "#4a3a8c"
AWAY = "#5b6b7a"  # references to other pages, open ties, what is not drawn


def _fmt_ka(value) -> str:
    return "-" if value is None or not math.isfinite(value) else f"{value:.2f}"


def bus_lines(bus, row: dict | None, status) -> list[tuple[str, float, bool, str]]:
    """The bus's text: (text, size, bold, colour) per line."""
    kv = f"{bus.kv:g} kV"
    if row is None:
        lines = [(bus.bus, NAME_SIZE, True, INK), (kv, SIZE, False, INK)]
    else:
        xr = row.get("xr")
        shown = f"X/R {xr:.1f}" if xr is not None and math.isfinite(xr) else "X/R -"
        lines = [
            (bus.bus, NAME_SIZE, True, INK),
            (f"{kv}  {shown}", SIZE, False, INK),
            (f"3ph {_fmt_ka(row['i3ph_ka'])} kA", SIZE, False, INK),
            (f"SLG {_fmt_ka(row['islg_ka'])} kA", SIZE, False, INK),
        ]
    marks = []
    if bus.service == "yes":
        marks.append(("service equipment", SERVICE))
    if status:
        marks.append(status)
    for mark in marks:
        lines.append((mark[0], SIZE, True, mark[1]))
    return lines


def result_rows(result) -> dict[str, dict]:
    """Per bus: the largest three-phase and line-to-ground currents over the base and the
    cases (the envelope), and the base X/R."""
    if result is None:
        return {}
    table = result.buses
    rows = {
        b: {"i3ph_ka": i3, "islg_ka": i1, "xr": xr}
        for b, i3, i1, xr in zip(
            table["bus"], table["i3ph_ka"], table["islg_ka"], table["xr"], strict=True
        )
    }
    if result.envelope is not None:
        env = result.envelope
        for bus, i3, i1 in zip(env["bus"], env["i3ph_ka"], env["islg_ka"], strict=True):
            if bus in rows:
                rows[bus]["i3ph_ka"] = max(rows[bus]["i3ph_ka"], i3)
                if math.isfinite(i1):
                    was = rows[bus]["islg_ka"]
                    rows[bus]["islg_ka"] = i1 if not math.isfinite(was) else max(was, i1)
    return rows


def statuses(result) -> dict[str, tuple[str, str]]:
    """Per rated bus whose device exceeds or nears its rating in any case: the mark."""
    from ..solve.duty import STATUS_NEAR, STATUS_OVER

    if result is None or result.duty is None:
        return {}
    out = {}
    for _, r in result.duty.iterrows():
        if r.duty_status == STATUS_OVER:
            out[r.bus] = (f"{r.device} EXCEEDS RATING ({r.duty_pct:.0f} %)", OVER)
        elif r.duty_status == STATUS_NEAR:
            out[r.bus] = (f"{r.device} near rating ({r.duty_pct:.0f} %)", NEAR)
    return out


def bus_zone(lines) -> float:
    """The height a bus's text takes above its bar (BUS_ZONE for the most lines)."""
    return sum(size * LINE_PT for _, size, _, _ in lines) + 8.0


def block_width(lines) -> float:
    """The width of an element's text block: its first line (the name) is bold."""
    return max(text_width(t, SIZE, k == 0) for k, t in enumerate(lines))


def hanging_width(lines) -> float:
    """The column a machine, stub or reference below a bar takes."""
    return LEFT + SYMBOL / 2 + TEXT_GAP + block_width(lines) + MARGIN


def hanging_depth(lines) -> float:
    """How far below its bar a machine, stub or reference reaches."""
    return HANG_DROP + max(SYMBOL / 2, len(lines) * LINE / 2)


def source_xs(x: float, bus_text: float, sources) -> list[float]:
    """The drops of a bus's sources: the first on the bus's own drop, the others to the right
    of both the bus's text and the sources before them, so no drop crosses a text."""
    xs = [x] if sources else []
    for k in range(1, len(sources)):
        after_text = x + TEXT_GAP + bus_text + MARGIN + LEFT
        after_source = xs[-1] + hanging_width(sources[k - 1][1])
        xs.append(max(after_text, after_source))
    return xs


def bus_text_width(lines) -> float:
    return max(text_width(t, size, bold) for t, size, bold, _ in lines)


def texts(drawing, x: float, y: float, lines, owner: str) -> float:
    for text, size, bold, colour in lines:
        drawing.texts.append(Text(x, y, text, size, bold, colour, owner))
        y += size * LINE_PT
    return y


def on_drop(drawing, kind, x, top, bottom, text, owner, letter="", colour=INK) -> None:
    """A branch (or a source, or a reference from another page) on the vertical drop from
    ``top`` to ``bottom``: its symbol in the upper zone, its text to the right."""
    cy = top + SYMBOL_ZONE / 2
    dashed = kind == "via"
    if kind not in ("source", "offpage"):
        drawing.lines.append(Line(x, top, x, cy - SYMBOL / 2, 1.2, INK, dashed, owner))
    drawing.lines.append(Line(x, cy + SYMBOL / 2, x, bottom, 1.2, INK, dashed, owner))
    drawing.symbols.append(Symbol(kind, x, cy, SYMBOL, SYMBOL, colour, owner, letter))
    lines = [(t, SIZE, k == 0, colour) for k, t in enumerate(text)]
    texts(drawing, x + SYMBOL / 2 + TEXT_GAP, cy - len(lines) * LINE / 2, lines, owner)


def hanging(drawing, kind, x, bar_y, text, owner, letter="", colour=INK, dashed=False) -> None:
    """A machine, a tie's stub or a reference to another page below its bus bar."""
    cy = bar_y + HANG_DROP
    drawing.lines.append(Line(x, bar_y, x, cy - SYMBOL / 2, 1.2, INK, dashed, owner))
    drawing.symbols.append(Symbol(kind, x, cy, SYMBOL, SYMBOL, colour, owner, letter))
    lines = [(t, SIZE, k == 0, colour) for k, t in enumerate(text)]
    texts(drawing, x + SYMBOL / 2 + TEXT_GAP, cy - len(lines) * LINE / 2, lines, owner)


def tie_text(tie) -> tuple[str, ...]:
    return tie.text[:2]


def tie_gap(tie) -> float:
    return max(SYMBOL, block_width(tie_text(tie))) + 2 * MARGIN


def straight_tie(drawing, tie, x_left, x_right, y) -> None:
    """A tie between two buses side by side: straight across, its symbol in the gap (an open
    tie dashed, with an open switch)."""
    cx = (x_left + x_right) / 2
    kind, colour = ("open", AWAY) if tie.open else (tie.kind, INK)
    drawing.lines.append(Line(x_left, y, cx - SYMBOL / 2, y, 1.2, colour, tie.open, tie.name))
    drawing.lines.append(Line(cx + SYMBOL / 2, y, x_right, y, 1.2, colour, tie.open, tie.name))
    drawing.symbols.append(Symbol(kind, cx, y, SYMBOL, SYMBOL, colour, tie.name, turned=True))
    lines = [(t, SIZE, k == 0, colour) for k, t in enumerate(tie_text(tie))]
    top = y - SYMBOL / 2 - 4 - len(lines) * LINE
    for text, size, bold, c in lines:
        w = text_width(text, size, bold)
        drawing.texts.append(Text(cx - w / 2, top, text, size, bold, c, tie.name))
        top += LINE
