"""Positions: each bus a bar in its level's row, the branch that feeds it on the drop above it,
its machines and the ties that cannot run straight hung below it.

Every bus owns a column span wide enough for its own text and for its children's spans side
by side; its drop and bar start at the left of the span and its text runs to the right, so two
spans never share a point and no text meets another bus's symbols. A tie between two buses
next to each other in one row is drawn straight across, in a gap made for its symbol and text;
any other tie is drawn as a marked stub at each end naming the other end.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from ..model import System
from .shapes import FONT, LINE_PT, Line, Symbol, Text, lacks, text_width
from .topology import Branch, Tree, tree_of

SIZE = 8.0  # every label at 8 pt or more (the report's floor)
NAME_SIZE = 9.0
LINE = SIZE * LINE_PT
SYMBOL = 26.0  # a symbol's height and width
MARGIN = 10.0  # between two spans
LEFT = 16.0  # from a span's left edge to its drop
TEXT_GAP = 6.0  # from a drop or symbol to its text
BUS_LINES = 6  # name, kV, currents, X/R, service equipment, rating mark
ELEMENT_LINES = 3
SYMBOL_ZONE = max(SYMBOL, ELEMENT_LINES * LINE) + 16.0
BUS_ZONE = NAME_SIZE * LINE_PT + (BUS_LINES - 1) * LINE + 8.0
LEVEL = SYMBOL_ZONE + BUS_ZONE  # from one row's bars to the next's
SOURCE_ZONE = SYMBOL_ZONE
INK = "#1f2d3d"
BAR = "#1d5c63"  # bus bars: a deep teal of our own
OVER = "#b3261e"
NEAR = "#b86e00"
SERVICE = "#4a3a8c"


@dataclass
class Drawing:
    """The shapes of a diagram and its size in points."""

    width: float
    height: float
    lines: list[Line] = field(default_factory=list)
    symbols: list[Symbol] = field(default_factory=list)
    texts: list[Text] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    def text_of(self, owner: str) -> list[str]:
        return [t.text for t in self.texts if t.owner == owner]


def _fmt_ka(value) -> str:
    return "-" if value is None or not math.isfinite(value) else f"{value:.2f}"


def bus_lines(bus, row: dict | None, status: str) -> list[tuple[str, float, bool, str]]:
    """The bus's text: (text, size, bold, colour) per line."""
    lines = [(bus.bus, NAME_SIZE, True, INK), (f"{bus.kv:g} kV", SIZE, False, INK)]
    if row is not None:
        lines.append(
            (
                f"3ph {_fmt_ka(row['i3ph_ka'])} kA  SLG {_fmt_ka(row['islg_ka'])} kA",
                SIZE,
                False,
                INK,
            )
        )
        xr = row.get("xr")
        shown = f"X/R {xr:.1f}" if xr is not None and math.isfinite(xr) else "X/R -"
        lines.append((shown, SIZE, False, INK))
    marks = []
    if bus.service == "yes":
        marks.append(("service equipment", SERVICE))
    if status:
        marks.append(status)
    for mark in marks:
        lines.append((mark[0], SIZE, True, mark[1]))
    return lines


@dataclass
class _Column:
    """A leaf or bus column under a bus: its width and what is drawn in it."""

    kind: str  # bus, machine, stub
    width: float
    name: str = ""
    left: float = 0.0


def draw(system: System, result=None) -> Drawing:
    """The diagram of ``system``, annotated with ``result`` (a StudyResult) when given."""
    tree = tree_of(system)
    rows = _result_rows(result)
    status = _statuses(result)
    buses = {b.bus: b for b in system.buses}
    order = _dfs(tree)
    position = {bus: k for k, bus in enumerate(order)}
    ties_straight, stubs = _straight_ties(tree, order)
    texts = {
        b: bus_lines(buses[b], rows.get(b), status.get(b, "")) for b in buses if b in tree.level
    }
    width: dict[str, float] = {}
    gap_before: dict[str, float] = {}
    for tie in ties_straight:
        owner = _gap_owner(tree, tie, position)
        gap_before[owner] = max(gap_before.get(owner, 0.0), _tie_gap(tie))

    def own_width(bus: str) -> float:
        text = max(text_width(t, s, b) for t, s, b, _ in texts[bus])
        branch = tree.parent.get(bus)
        if branch is not None:
            text = max(text, SYMBOL / 2 + _block_width(branch.text))
        sources = tree.sources.get(bus, [])
        own = LEFT + TEXT_GAP + text + MARGIN
        if not sources:
            return own
        xs = _source_xs(LEFT, _bus_text_width(texts[bus]), sources)
        return max(own, xs[-1] - LEFT + _source_width(sources[-1][1]))

    def columns(bus: str) -> list[_Column]:
        out = [_Column("bus", 0.0, c) for c in tree.children[bus]]
        for name, _letter, lines in tree.machines.get(bus, []):
            w = LEFT + SYMBOL / 2 + TEXT_GAP + _block_width(lines) + MARGIN
            out.append(_Column("machine", w, name))
        for tie, other in stubs.get(bus, []):
            text = _block_width(_stub_text(tie, other))
            w = LEFT + SYMBOL / 2 + TEXT_GAP + text + MARGIN
            out.append(_Column("stub", w, tie.name + "\0" + other))
        return out

    # widths from the leaves up, then lefts from the roots down (loops, not recursion: a
    # feeder of a thousand buses in series is a thousand levels deep)
    kids = {bus: columns(bus) for bus in order}
    for bus in reversed(order):  # every child comes after its parent in ``order``
        for c in kids[bus]:
            if c.kind == "bus":
                c.width = width[c.name] + gap_before.get(c.name, 0.0)
        width[bus] = max(own_width(bus), sum(c.width for c in kids[bus]))
    left_of: dict[str, float] = {}
    x = MARGIN
    for root in tree.roots:
        left_of[root] = x + gap_before.get(root, 0.0)
        x += width[root] + gap_before.get(root, 0.0)
    for bus in order:  # a parent is placed before its children
        at = left_of[bus]
        for c in kids[bus]:
            c.left = at
            if c.kind == "bus":
                left_of[c.name] = at + gap_before.get(c.name, 0.0)
            at += c.width
    depth = max(tree.level.values(), default=0)
    top = MARGIN + SOURCE_ZONE
    height = top + BUS_ZONE + depth * LEVEL + SYMBOL_ZONE + MARGIN
    drawing = Drawing(width=x + MARGIN, height=height)

    def bar_y(bus: str) -> float:
        return top + BUS_ZONE + tree.level[bus] * LEVEL

    for bus in tree.level:
        colour = status[bus][1] if bus in status else BAR
        _draw_bus(
            drawing,
            tree,
            bus,
            (left_of[bus], width[bus], bar_y(bus)),
            texts[bus],
            kids[bus],
            stubs,
            colour,
        )
    for tie in ties_straight:
        a, b = tie.one, tie.two
        if left_of[a] > left_of[b]:
            a, b = b, a
        _draw_straight_tie(
            drawing, tie, left_of[a] + width[a] - MARGIN / 2, left_of[b] + 4, bar_y(a)
        )
    if tree.unreached:
        drawing.notes.append(
            "not fed from any source or generator (drawn apart): " + ", ".join(tree.unreached)
        )
    if any(lacks(t.text) for t in drawing.texts):
        drawing.notes.append(
            f"some names hold characters the diagram's font ({FONT}) does not have; they print "
            "as boxes here (the results workbook holds them as typed)"
        )
    _footer(drawing, system, result)
    return drawing


FOOTER_MIN_WIDTH = 6.5 * 72  # the cautions stay readable on a letter page's width


def _wrapped(text: str, width: float, size: float, bold: bool = False) -> list[str]:
    lines, line = [], ""
    for word in text.split():
        trial = f"{line} {word}".strip()
        if line and text_width(trial, size, bold) > width:
            lines.append(line)
            line = word
        else:
            line = trial
    return [*lines, line] if line else lines


def _footer(drawing: Drawing, system: System, result) -> None:
    """The title block under the diagram: the study's title and basis, the notes and every
    caution (SAFETY.md): a diagram handed on alone still carries them."""
    from ..cautions import CAUTIONS

    drawing.width = max(drawing.width, FOOTER_MIN_WIDTH + 2 * MARGIN)
    width = drawing.width - 2 * MARGIN
    y = drawing.height + 4
    drawing.lines.append(Line(MARGIN, y, drawing.width - MARGIN, y, 0.8, INK, owner="footer"))
    y += 6
    title = system.settings.title or "One-line diagram"
    lines: list[tuple[str, float, bool]] = [
        (t, NAME_SIZE, True) for t in _wrapped(title, width, NAME_SIZE, True)
    ]
    if result is not None:
        b = result.basis
        basis = (
            f"Calculated {b.calculated_at} by {b.tool_name} {b.tool_version}, method "
            f"{b.settings.method} (see the results workbook's basis); input "
            f"{b.input_name or '-'}, SHA-256 {b.input_sha256 or '-'}. Currents are the "
            "largest over the base case and the cases; X/R of the base case."
        )
    else:
        basis = "Topology only: no study figures."
    lines += [(t, SIZE, False) for t in _wrapped(basis, width, SIZE)]
    for note in drawing.notes:
        lines += [(t, SIZE, False) for t in _wrapped(f"Note: {note}", width, SIZE)]
    for caution in CAUTIONS:
        lines += [(t, SIZE, False) for t in _wrapped(caution, width, SIZE)]
    for text, size, bold in lines:
        drawing.texts.append(Text(MARGIN, y, text, size, bold, INK, "footer"))
        y += size * LINE_PT
    drawing.height = y + MARGIN


def _result_rows(result) -> dict[str, dict]:
    """Per bus: the largest three-phase and line-to-ground currents over the base and the
    cases (the envelope), and the base X/R."""
    if result is None:
        return {}
    table = result.buses.set_index("bus")
    rows = {
        b: {"i3ph_ka": r.i3ph_ka, "islg_ka": r.islg_ka, "xr": r.xr} for b, r in table.iterrows()
    }
    if result.envelope is not None:
        for _, r in result.envelope.iterrows():
            if r.bus in rows:
                rows[r.bus]["i3ph_ka"] = max(rows[r.bus]["i3ph_ka"], r.i3ph_ka)
                if math.isfinite(r.islg_ka):
                    rows[r.bus]["islg_ka"] = (
                        r.islg_ka
                        if not math.isfinite(rows[r.bus]["islg_ka"])
                        else max(rows[r.bus]["islg_ka"], r.islg_ka)
                    )
    return rows


def _statuses(result) -> dict[str, tuple[str, str]]:
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


def _straight_ties(tree: Tree, order: list[str]):
    """The ties drawn straight across (two buses next to each other in one row) and, per bus,
    the other ties' stubs (tie, the bus at the other end). ``order``: the buses depth first."""
    rows: dict[int, list[str]] = {}
    for bus in order:
        rows.setdefault(tree.level[bus], []).append(bus)
    next_to = {}
    for row in rows.values():
        for a, b in zip(row, row[1:], strict=False):
            next_to[(a, b)] = next_to[(b, a)] = True
    straight, stubs, used = [], {}, set()
    for tie in tree.ties:
        pair = (tie.one, tie.two)
        if pair in next_to and pair not in used and (pair[1], pair[0]) not in used:
            used.add(pair)
            straight.append(tie)
        else:
            stubs.setdefault(tie.one, []).append((tie, tie.two))
            stubs.setdefault(tie.two, []).append((tie, tie.one))
    return straight, stubs


def _gap_owner(tree: Tree, tie: Branch, position: dict[str, int]) -> str:
    """The bus whose span the gap for a straight tie goes before: the right one's ancestor
    that is a child of the two buses' lowest common ancestor (or a root). ``position``: each
    bus's place depth first."""

    def chain(bus):
        out = [bus]
        while tree.parent.get(out[-1]) is not None:
            out.append(tree.parent[out[-1]].one)
        return out

    a, b = chain(tie.one), chain(tie.two)
    if position[tie.one] > position[tie.two]:
        a, b = b, a
    ancestors_a = set(a)
    for k, bus in enumerate(b):
        if k + 1 < len(b) and b[k + 1] in ancestors_a:
            return bus
    return b[-1]


def _dfs(tree: Tree) -> list[str]:
    """Every bus depth first (pre-order, children in their drawing order), root by root."""
    out: list[str] = []
    stack = list(reversed(tree.roots))
    while stack:
        bus = stack.pop()
        out.append(bus)
        stack.extend(reversed(tree.children[bus]))
    return out


def _tie_text(tie: Branch) -> tuple[str, ...]:
    return tie.text[:2]


def _tie_gap(tie: Branch) -> float:
    return max(SYMBOL, _block_width(_tie_text(tie))) + 2 * MARGIN


def _stub_text(tie: Branch, other: str) -> tuple[str, ...]:
    return (tie.name, f"{tie.kind} to {other}")


def _block_width(lines) -> float:
    """The width of an element's text block: its first line (the name) is bold."""
    return max(text_width(t, SIZE, k == 0) for k, t in enumerate(lines))


def _source_xs(x: float, bus_text: float, sources) -> list[float]:
    """The drops of a bus's sources: the first on the bus's own drop, the others to the right
    of both the bus's text and the sources before them, so no drop crosses a text."""
    xs = [x] if sources else []
    for k in range(1, len(sources)):
        after_text = x + TEXT_GAP + bus_text + MARGIN + LEFT
        after_source = xs[-1] + _source_width(sources[k - 1][1])
        xs.append(max(after_text, after_source))
    return xs


def _source_width(lines) -> float:
    return LEFT + SYMBOL / 2 + TEXT_GAP + _block_width(lines) + MARGIN


def _bus_text_width(lines) -> float:
    return max(text_width(t, size, bold) for t, size, bold, _ in lines)


def _texts(drawing: Drawing, x: float, y: float, lines, owner: str) -> float:
    for text, size, bold, colour in lines:
        drawing.texts.append(Text(x, y, text, size, bold, colour, owner))
        y += size * LINE_PT
    return y


def _draw_bus(drawing, tree, bus, where, lines, kids, stubs, colour) -> None:
    left, width, y = where
    x = left + LEFT
    right = left + width - MARGIN / 2
    drops = [c.left + LEFT for c in kids]
    bar_right = max([right, *drops])
    drawing.lines.append(Line(left + 4, y, bar_right, y, 3.5, colour, owner=bus))
    # the bus's text, above its bar, right of its drop
    text_top = y - 4 - sum(s * LINE_PT for _, s, _, _ in lines)
    _texts(drawing, x + TEXT_GAP, text_top, lines, bus)
    branch = tree.parent.get(bus)
    zone_top = y - LEVEL if branch is not None else y - BUS_ZONE - SOURCE_ZONE
    if branch is not None:
        _draw_on_drop(drawing, branch.kind, x, zone_top, y, branch.text, branch.name)
    sources = tree.sources.get(bus, [])
    for (name, text), sx in zip(
        sources, _source_xs(x, _bus_text_width(lines), sources), strict=True
    ):
        _draw_on_drop(drawing, "source", sx, zone_top, y, text, name)
    for c in kids:
        cx = c.left + LEFT
        if c.kind == "machine":
            name, letter, text = next(m for m in tree.machines[bus] if m[0] == c.name)
            kind = "generator" if letter == "G" else "motor"
            _draw_hanging(drawing, kind, cx, y, text, name, letter)
        elif c.kind == "stub":
            tie_name, other = c.name.split("\0")
            tie = next(t for t, o in stubs[bus] if t.name == tie_name and o == other)
            _draw_hanging(drawing, "ref", cx, y, _stub_text(tie, other), tie_name, "")


def _draw_on_drop(drawing, kind, x, top, bottom, text, owner) -> None:
    """A branch (or a source) on the vertical drop from ``top`` to ``bottom``: its symbol in
    the upper zone, its text to the right."""
    cy = top + SYMBOL_ZONE / 2
    if kind == "source":
        drawing.lines.append(Line(x, cy + SYMBOL / 2, x, bottom, 1.2, INK, owner=owner))
    else:
        drawing.lines.append(Line(x, top, x, cy - SYMBOL / 2, 1.2, INK, owner=owner))
        drawing.lines.append(Line(x, cy + SYMBOL / 2, x, bottom, 1.2, INK, owner=owner))
    drawing.symbols.append(Symbol(kind, x, cy, SYMBOL, SYMBOL, INK, owner))
    lines = [(t, SIZE, k == 0, INK) for k, t in enumerate(text)]
    height = len(lines) * LINE
    _texts(drawing, x + SYMBOL / 2 + TEXT_GAP, cy - height / 2, lines, owner)


def _draw_hanging(drawing, kind, x, bar_y, text, owner, letter) -> None:
    """A machine or a tie's stub below its bus bar."""
    cy = bar_y + SYMBOL_ZONE / 2 + 2
    drawing.lines.append(Line(x, bar_y, x, cy - SYMBOL / 2, 1.2, INK, owner=owner))
    drawing.symbols.append(Symbol(kind, x, cy, SYMBOL, SYMBOL, INK, owner, letter))
    lines = [(t, SIZE, k == 0, INK) for k, t in enumerate(text)]
    _texts(drawing, x + SYMBOL / 2 + TEXT_GAP, cy - len(lines) * LINE / 2, lines, owner)


def _draw_straight_tie(drawing, tie, x_left, x_right, y) -> None:
    """A tie between two buses side by side: straight across, its symbol in the gap."""
    cx = (x_left + x_right) / 2
    drawing.lines.append(Line(x_left, y, cx - SYMBOL / 2, y, 1.2, INK, owner=tie.name))
    drawing.lines.append(Line(cx + SYMBOL / 2, y, x_right, y, 1.2, INK, owner=tie.name))
    drawing.symbols.append(Symbol(tie.kind, cx, y, SYMBOL, SYMBOL, INK, tie.name, turned=True))
    lines = [(t, SIZE, k == 0, INK) for k, t in enumerate(_tie_text(tie))]
    top = y - SYMBOL / 2 - 4 - len(lines) * LINE
    for text, size, bold, colour in lines:
        w = text_width(text, size, bold)
        drawing.texts.append(Text(cx - w / 2, top, text, size, bold, colour, tie.name))
        top += LINE
