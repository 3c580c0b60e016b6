"""Positions on one page: each bus a bar, the branch that feeds it on the drop above it, its
machines, stubs and references hung below it.

Every bus owns a column span wide enough for its own text and for its children's columns side
by side; its drop and bar start at the left of the span and its text runs to the right, so two
spans never share a point and no text meets another bus's symbols. Children without a tie in
their subtree may be stacked in a ladder instead (the first column under their parent: a spine
down from the bar, each child on a jog to the right, one under the other), which keeps wide
fan-outs of feeders narrow; how tall each bus's ladders grow is chosen so that its block comes
nearest a shape (``aspect``), itself chosen per panel so that the panels fill the sheet
(pages.py). A tie between two buses next to each other in one row,
with no ladder between them, is drawn straight across, in a gap made for its symbol and text;
any other tie is a marked stub at each end naming the other end (and its page).
"""

from __future__ import annotations

from dataclasses import dataclass, field

from .parts import (
    AWAY,
    BAR,
    BUS_ZONE,
    INK,
    LEFT,
    LEVEL,
    LINE,
    MARGIN,
    OVER,
    SOURCE_ZONE,
    SYMBOL,
    SYMBOL_ZONE,
    TEXT_GAP,
    block_width,
    bus_text_width,
    bus_zone,
    hanging,
    hanging_depth,
    hanging_width,
    on_drop,
    source_xs,
    straight_tie,
    texts,
    tie_gap,
)
from .shapes import LINE_PT, Line, Symbol, Text
from .topology import GROUNDING, INVERTER, Branch, Tree

__all__ = ["OVER", "Drawing", "Reference", "View", "plan", "render"]

RUNG = 10.0  # a ladder: from a bar (or what hangs below it) to the next jog
INDENT = 18.0  # a ladder: from its spine's column edge to its rungs' spans
TIE_ROOM = SYMBOL / 2 + 4 + 2 * LINE  # a straight tie's text above its bars
BAR_END = (
    MARGIN / 2 + 4
)  # from a span's right edge back to where its bar ends: bars of two spans side
# by side stay 12 pt apart, never read as one bus (common practice, no source)


@dataclass(frozen=True)
class Reference:
    """A reference to another page: ``direction`` "to" (the buses under ``here`` go on with
    ``bus`` on ``page``), "from" (``here`` is fed from ``bus`` on ``page``) or "tie" (a tie
    from ``here`` to ``bus`` on ``page``)."""

    direction: str
    page: int
    bus: str
    here: str


@dataclass
class Drawing:
    """The shapes of a diagram page and its size in points; the buses drawn on it and its
    references to other pages."""

    width: float
    height: float
    lines: list[Line] = field(default_factory=list)
    symbols: list[Symbol] = field(default_factory=list)
    texts: list[Text] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    page: int = 1
    pages: int = 1
    buses: list[str] = field(default_factory=list)
    references: list[Reference] = field(default_factory=list)

    def text_of(self, owner: str) -> list[str]:
        return [t.text for t in self.texts if t.owner == owner]


@dataclass
class View:
    """What one panel of a page draws: the buses of panel ``panel`` (all, when ``panel_of``
    is empty) from its ``roots`` down, on page ``page`` (``page_of``: each bus's page);
    ``hidden``: per bus, the text saying what under it is not drawn."""

    tree: Tree
    roots: list[str]
    page_of: dict[str, int] = field(default_factory=dict)
    page: int = 1
    hidden: dict[str, tuple[str, ...]] = field(default_factory=dict)
    panel_of: dict[str, int] = field(default_factory=dict)
    panel: int = 0

    def here(self, bus: str) -> bool:
        return not self.panel_of or self.panel_of.get(bus) == self.panel

    def kids(self, bus: str) -> list[str]:
        return [c for c in self.tree.children[bus] if self.here(c)]

    def away(self, bus: str) -> list[str]:
        return [c for c in self.tree.children[bus] if not self.here(c)] if self.panel_of else []

    def incoming(self, bus: str) -> Branch | None:
        """The branch feeding ``bus`` from another page (``bus`` is then a page root)."""
        branch = self.tree.parent.get(bus)
        return branch if branch is not None and not self.here(branch.one) else None


@dataclass
class _Column:
    kind: str  # bus, ladder, machine, stub, away, hidden
    name: str = ""  # the bus, machine, tie, ...
    rungs: list[str] = field(default_factory=list)
    lines: tuple[str, ...] = ()  # a hanging column's text
    width: float = 0.0
    depth: float = 0.0  # how far below the bar it reaches
    left: float = 0.0
    tie: Branch | None = None


@dataclass
class Plan:
    """A page's placement: sizes, columns, positions."""

    view: View
    order: list[str]
    columns: dict[str, list[_Column]]
    width: dict[str, float]
    depth: dict[str, float]
    straight: list[Branch]
    gap: dict[str, float]
    top_zone: float
    total_width: float = 0.0
    total_height: float = 0.0


def _dfs(view: View) -> list[str]:
    """Every bus of the page depth first (pre-order, children in their drawing order)."""
    out: list[str] = []
    stack = list(reversed(view.roots))
    while stack:
        bus = stack.pop()
        out.append(bus)
        stack.extend(reversed(view.kids(bus)))
    return out


def _page_text(view: View, bus: str) -> str:
    page = view.page_of[bus]
    return "this page" if page == view.page else f"page {page}"


def _stub_text(view: View, tie: Branch, other: str) -> tuple[str, ...]:
    kind = f"open {tie.kind}" if tie.open else tie.kind
    lines = (tie.name, f"{kind} to {other}")
    return lines if view.here(other) else (*lines, f"on {_page_text(view, other)}")


def _away_text(view: View, child: str) -> tuple[str, ...]:
    branch = view.tree.parent[child]
    return (f"to {_page_text(view, child)}", f"bus {child}", f"via {branch.name}")


def _from_text(view: View, branch: Branch) -> tuple[str, ...]:
    return (f"from {_page_text(view, branch.one)}", f"bus {branch.one}")


def plan(view: View, bus_texts: dict, aspect: float) -> Plan:
    """Place the page's buses (``bus_texts``: each bus's lines, see parts.bus_lines), each
    bus's children stacked so that its block is nearest ``aspect`` (width / height) in shape
    (see ``choose``)."""
    tree = view.tree
    order = _dfs(view)
    ties = [t for t in tree.ties if view.here(t.one) or view.here(t.two)]
    both = [t for t in ties if view.here(t.one) and view.here(t.two)]
    every_stub: dict[str, list] = {}
    for t in ties:
        for bus, other in ((t.one, t.two), (t.two, t.one)):
            if view.here(bus):
                every_stub.setdefault(bus, []).append((t, other))
    width: dict[str, float] = {}
    depth: dict[str, float] = {}
    arrangement: dict[str, tuple[list[list[str]], list[str]]] = {}
    columns: dict[str, list[_Column]] = {}
    # Which ties could run straight with every child side by side: only their buses keep
    # their ancestors out of ladders (any other tie is a stub wherever its buses are).
    tied = dict.fromkeys(order, True)
    if both:
        for bus in reversed(order):
            hang = _hanging(view, bus, every_stub.get(bus, []))
            columns[bus] = _columns(bus, ([], view.kids(bus)), hang, width, depth, {}, bus_texts)
            width[bus], depth[bus] = _size(view, bus, bus_texts[bus], columns[bus])
    ends = {
        b for t in (_straight_ties(view, both, columns) if both else ()) for b in (t.one, t.two)
    }
    for bus in reversed(order):
        tied[bus] = bus in ends or any(tied[c] for c in view.kids(bus))
    for bus in reversed(order):  # with every tie a stub: the ladders, fixed from here on
        hang = _hanging(view, bus, every_stub.get(bus, []))
        found = choose(view, bus, tied, hang, width, depth, bus_texts, aspect)
        arrangement[bus], columns[bus], width[bus], depth[bus] = found
    straight = _straight_ties(view, both, columns)
    position = {bus: k for k, bus in enumerate(order)}
    gap: dict[str, float] = {}
    for tie in straight:
        owner = _gap_owner(view, tie, position)
        gap[owner] = max(gap.get(owner, 0.0), tie_gap(tie))
    used = set(straight)
    stubs: dict[str, list] = {}
    for bus, found in every_stub.items():
        stubs[bus] = [(t, o) for t, o in found if t not in used]
    for bus in reversed(order):
        hang = _hanging(view, bus, stubs.get(bus, []))
        columns[bus] = _columns(bus, arrangement[bus], hang, width, depth, gap, bus_texts)
        width[bus], depth[bus] = _size(view, bus, bus_texts[bus], columns[bus])
    incoming = any(view.incoming(r) is not None for r in view.roots)
    top_zone = SOURCE_ZONE + (SYMBOL_ZONE if incoming else 0.0)
    out = Plan(view, order, columns, width, depth, straight, gap, top_zone)
    out.total_width = MARGIN + sum(width[r] + gap.get(r, 0.0) for r in view.roots) + MARGIN
    out.total_height = (
        MARGIN + top_zone + BUS_ZONE + max((depth[r] for r in view.roots), default=0.0) + MARGIN
    )
    return out


def _hanging(view: View, bus: str, stubs) -> list[_Column]:
    """What hangs below ``bus``'s bar: machines, tie stubs, references, what is not drawn."""
    out = []
    for name, letter, lines in view.tree.machines.get(bus, []):
        out.append(_Column("machine", name, lines=lines, tie=None))
        out[-1].rungs = [letter]
    for tie, other in stubs:
        out.append(_Column("stub", other, lines=_stub_text(view, tie, other), tie=tie))
    for child in view.away(bus):
        out.append(_Column("away", child, lines=_away_text(view, child)))
    if bus in view.hidden:
        out.append(_Column("hidden", bus, lines=view.hidden[bus]))
    for c in out:
        c.width, c.depth = hanging_width(c.lines), hanging_depth(c.lines)
    return out


def _rung(bus, depth, bus_texts) -> float:
    """The height a bus takes in a ladder: its jog, its branch, its text, what hangs below."""
    return RUNG + SYMBOL_ZONE + bus_zone(bus_texts[bus]) + depth[bus]


STACK_LIMITS = tuple(LEVEL * k for k in (0, 2, 3, 4, 6, 8, 12, 16, 24, 32))


def choose(view, bus, tied, hang, width, depth, bus_texts, aspect):
    """The arrangement of ``bus``'s children (ladders no taller than each of STACK_LIMITS in
    turn) whose block is smallest once scaled to the shape ``aspect`` (width / height):
    (arrangement, columns, width, depth). Greedy, from the leaves up (common practice, no
    source: a squarified layout in the manner of treemaps)."""
    kids = view.kids(bus)
    best, seen = None, set()
    for limit in STACK_LIMITS if any(not tied[c] for c in kids) else (0.0,):
        arrangement = _arrange(kids, tied, width, depth, hang, limit, bus_texts)
        key = tuple(map(tuple, arrangement[0]))
        if key in seen:
            continue
        seen.add(key)
        columns = _columns(bus, arrangement, hang, width, depth, {}, bus_texts)
        w, d = _size(view, bus, bus_texts[bus], columns)
        score = (max(w, (d + LEVEL) * aspect), w * (d + LEVEL))
        if best is None or score < best[0]:
            best = (score, (arrangement, columns, w, d))
    return best[1]


def _arrange(kids, tied, width, depth, hang, stack_limit, bus_texts):
    """The ladders (lists of children stacked, in order) and the children side by side:
    children whose subtree holds a tie stay side by side (their ties may run straight); the
    others are stacked, next fit, in ladders no taller than the parent's other columns or
    ``stack_limit``. A ladder of one is no ladder."""
    side_tied = [c for c in kids if tied[c]]
    free = sorted((c for c in kids if not tied[c]), key=lambda c: -width[c])  # alike together
    base = max([LEVEL + depth[c] for c in side_tied] + [c.depth for c in hang] + [0.0])
    limit = max(base, stack_limit)
    ladders, side_free, rungs, height = [], [], [], 0.0
    for c in free:
        step = _rung(c, depth, bus_texts)
        if step > limit:
            side_free.append(c)
            continue
        if rungs and height + step > limit:
            ladders.append(rungs)
            rungs, height = [], 0.0
        rungs.append(c)
        height += step
    if rungs:
        ladders.append(rungs)
    side_free += [r[0] for r in ladders if len(r) == 1]
    ladders = [r for r in ladders if len(r) > 1]
    return ladders, side_free + side_tied


def _columns(bus, arrangement, hang, width, depth, gap, bus_texts) -> list[_Column]:
    ladders, side = arrangement
    out = []
    for rungs in ladders:
        w = INDENT + max(width[r] for r in rungs)
        d = sum(_rung(r, depth, bus_texts) for r in rungs)
        out.append(_Column("ladder", bus, rungs=rungs, width=w, depth=d))
    for c in side:
        out.append(_Column("bus", c, width=width[c] + gap.get(c, 0.0), depth=LEVEL + depth[c]))
    return out + hang


def _size(view: View, bus: str, lines, columns) -> tuple[float, float]:
    """A bus's span width and how far below its bar its columns reach."""
    text = bus_text_width(lines)
    branch = view.tree.parent.get(bus)
    if branch is not None:
        text = max(text, SYMBOL / 2 + block_width(branch.text))
    incoming = view.incoming(bus)
    if incoming is not None:
        text = max(text, SYMBOL / 2 + block_width(_from_text(view, incoming)))
    own = LEFT + TEXT_GAP + text + MARGIN
    sources = view.tree.sources.get(bus, [])
    if sources and bus in view.roots:
        xs = source_xs(LEFT, bus_text_width(lines), sources)
        own = max(own, xs[-1] - LEFT + hanging_width(sources[-1][1]))
    kids = sum(c.width for c in columns)
    return max(own, kids), max([c.depth for c in columns] + [0.0])


def _straight_ties(view: View, ties, columns) -> list[Branch]:
    """The ties drawn straight across: two buses next to each other in one row, with no ladder
    reaching down into that row between them."""
    rows: dict[int, list[str | None]] = {}
    stack = [(r, 0) for r in reversed(view.roots)]
    while stack:
        bus, level = stack.pop()
        if bus is None:  # a ladder's mark in a row it reaches
            rows.setdefault(level, []).append(None)
            continue
        rows.setdefault(level, []).append(bus)
        for c in reversed(columns[bus]):
            if c.kind == "bus":
                stack.append((c.name, level + 1))
            elif c.kind == "ladder":
                k = 1
                while k * LEVEL - TIE_ROOM < c.depth:
                    stack.append((None, level + k))
                    k += 1
    next_to = set()
    for row in rows.values():
        for a, b in zip(row, row[1:], strict=False):
            if a is not None and b is not None:
                next_to.add((a, b))
                next_to.add((b, a))
    straight, used = [], set()
    for tie in ties:
        pair = (tie.one, tie.two)
        if pair in next_to and frozenset(pair) not in used:
            used.add(frozenset(pair))
            straight.append(tie)
    return straight


def _gap_owner(view: View, tie: Branch, position: dict[str, int]) -> str:
    """The bus whose span the gap for a straight tie goes before: the right one's ancestor
    that is a child of the two buses' lowest common ancestor on the page (or a page root)."""

    def chain(bus):
        out = [bus]
        while out[-1] not in view.roots and view.tree.parent.get(out[-1]) is not None:
            out.append(view.tree.parent[out[-1]].one)
        return out

    a, b = chain(tie.one), chain(tie.two)
    if position[tie.one] > position[tie.two]:
        a, b = b, a
    ancestors_a = set(a)
    for k, bus in enumerate(b):
        if k + 1 < len(b) and b[k + 1] in ancestors_a:
            return bus
    return b[-1]


def render(p: Plan, bus_texts: dict, colours: dict) -> Drawing:
    """The shapes of a placed page (no title block yet)."""
    view, columns, width, gap = p.view, p.columns, p.width, p.gap
    left: dict[str, float] = {}
    bar: dict[str, float] = {}
    rise: dict[str, float] = {}  # from the top of a bus's drop to its bar
    x = MARGIN
    for root in view.roots:
        left[root] = x + gap.get(root, 0.0)
        bar[root] = MARGIN + p.top_zone + BUS_ZONE
        x += width[root] + gap.get(root, 0.0)
    for bus in p.order:  # a parent is placed before its children
        at = left[bus]
        for c in columns[bus]:
            c.left = at
            if c.kind == "bus":
                left[c.name] = at + gap.get(c.name, 0.0)
                bar[c.name] = bar[bus] + LEVEL
            elif c.kind == "ladder":
                y = bar[bus]
                for r in c.rungs:
                    left[r] = at + INDENT
                    rise[r] = SYMBOL_ZONE + bus_zone(bus_texts[r])
                    bar[r] = y + RUNG + rise[r]
                    y = bar[r] + p.depth[r]
            at += c.width
    drawing = Drawing(width=p.total_width, height=p.total_height, page=view.page)
    drawing.buses = list(p.order)
    for bus in p.order:
        where = (left[bus], width[bus], bar[bus], rise.get(bus, LEVEL))
        _draw_bus(drawing, view, bus, where, bus_texts[bus], p, colours.get(bus, BAR))
        for c in columns[bus]:
            if c.kind == "ladder":
                _draw_ladder(drawing, bus, c, left, [bar[r] - rise[r] for r in c.rungs])
    for tie in p.straight:
        a, b = tie.one, tie.two
        if left[a] > left[b]:
            a, b = b, a
        straight_tie(drawing, tie, left[a] + width[a] - BAR_END, left[b] + 4, bar[a])
    return drawing


def _draw_ladder(drawing, bus, column, left, jogs) -> None:
    """A ladder's spine down from ``bus``'s bar, a jog to each rung's drop."""
    x = column.left + LEFT
    drawing.lines.append(Line(x, jogs[0] - RUNG, x, jogs[-1], 1.2, INK, owner=bus))  # from the bar
    for r, y in zip(column.rungs, jogs, strict=True):
        drawing.lines.append(Line(x, y, left[r] + LEFT, y, 1.2, INK, owner=r))


def _draw_bus(drawing, view: View, bus, where, lines, p: Plan, colour) -> None:
    left, width, y, rise = where
    x = left + LEFT
    right = left + width - BAR_END
    kids = p.columns[bus]
    drops = [c.left + LEFT for c in kids]
    drawing.lines.append(Line(left + 4, y, max([right, *drops]), y, 3.5, colour, owner=bus))
    text_top = y - 4 - sum(s * LINE_PT for _, s, _, _ in lines)
    texts(drawing, x + TEXT_GAP, text_top, lines, bus)
    branch = view.tree.parent.get(bus)
    incoming = view.incoming(bus)
    if branch is not None:
        on_drop(drawing, branch.kind, x, y - rise, y, branch.text, branch.name)
    if incoming is not None:
        top = y - LEVEL - SOURCE_ZONE
        page = view.page_of[incoming.one]
        text = _from_text(view, incoming)
        on_drop(drawing, "offpage", x, top, y - LEVEL, text, "reference", str(page), AWAY)
        drawing.references.append(Reference("from", page, incoming.one, bus))
    sources = view.tree.sources.get(bus, [])
    if bus in view.roots and branch is None:
        zone_top = y - BUS_ZONE - SOURCE_ZONE
        for (name, text), sx in zip(
            sources, source_xs(x, bus_text_width(lines), sources), strict=True
        ):
            on_drop(drawing, "source", sx, zone_top, y, text, name)
    for c in kids:
        cx = c.left + LEFT
        if c.kind == "machine" and c.rungs[0] == GROUNDING:
            hanging(drawing, "grounding", cx, y, c.lines, c.lines[0])
        elif c.kind == "machine" and c.rungs[0] == INVERTER:
            hanging(drawing, "inverter", cx, y, c.lines, c.lines[0])
        elif c.kind == "machine":
            kind = "generator" if c.rungs[0] == "G" else "motor"
            hanging(drawing, kind, cx, y, c.lines, c.lines[0], c.rungs[0])
        elif c.kind == "stub":
            kind, dashed = ("open", True) if c.tie.open else ("ref", False)
            ink = AWAY if c.tie.open else INK
            hanging(drawing, kind, cx, y, c.lines, c.tie.name, "", ink, dashed)
            if not view.here(c.name):
                drawing.references.append(Reference("tie", view.page_of[c.name], c.name, bus))
        elif c.kind == "away":
            page = view.page_of[c.name]
            hanging(drawing, "offpage", cx, y, c.lines, "reference", str(page), AWAY)
            drawing.references.append(Reference("to", page, c.name, bus))
        elif c.kind == "hidden":
            hanging(drawing, "hidden", cx, y, c.lines, "hidden", "", AWAY, True)
