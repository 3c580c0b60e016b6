"""The network as a tree for drawing: sources at the top, each bus under the bus that feeds it.

A breadth-first walk from the buses with a utility source (or, without one, a generator)
gives every bus a level (its depth) and a parent branch; the branches that close a loop or
tie two buses already reached are kept as ``ties``. Children are ordered so that two buses
joined by a tie sit side by side where the tree allows (then the tie is drawn straight
across, without crossing anything).
"""

from __future__ import annotations

from collections import deque
from dataclasses import dataclass, field

from ..model import System

GROUNDING = "grounding"  # the letter slot of a grounding bank among a bus's machines
INVERTER = "inverter"  # and of an inverter

# The series elements: sheet, name column, the two bus columns, the kind drawn.
SERIES = (
    ("transformers", "transformer", "hv_bus", "lv_bus", "transformer"),
    ("cables", "cable", "from_bus", "to_bus", "cable"),
    ("impedances", "element", "from_bus", "to_bus", "impedance"),
)


@dataclass(frozen=True)
class Branch:
    """A series element between two buses."""

    kind: str  # transformer, cable or impedance
    name: str
    one: str  # the bus nearer the sources (the parent, for a tree branch)
    two: str
    text: tuple[str, ...]  # the lines printed beside its symbol
    open: bool = False  # out of service (System.open_branches): drawn open, never a tree branch


@dataclass
class Tree:
    """Buses by level, each bus's parent branch and children, and the ties."""

    roots: list[str]
    level: dict[str, int]
    parent: dict[str, Branch | None]
    children: dict[str, list[str]]
    ties: list[Branch]
    sources: dict[str, list[tuple[str, tuple[str, ...]]]] = field(default_factory=dict)
    machines: dict[str, list[tuple[str, str, tuple[str, ...]]]] = field(default_factory=dict)
    unreached: list[str] = field(default_factory=list)


# Figures to four significant digits (three for %Z, X/R and ohms): what identifies an element
# on a one-line; the results workbook echoes the input as typed (common practice, no source).
def _fmt(value, unit: str) -> str:
    return "" if value is None else f"{value:.4g} {unit}"


def rating_text(kva: float) -> str:
    """A transformer's rating as printed: kVA below 10,000 kVA, MVA from there.

    >>> rating_text(1500), rating_text(100000)
    ('1500 kVA', '100 MVA')
    """
    return f"{kva / 1000:.4g} MVA" if kva >= 10_000 else f"{kva:.4g} kVA"


def branch_text(kind: str, item) -> tuple[str, ...]:
    """What is printed beside a branch: its name and the figures that identify it."""
    if kind == "transformer":
        windings = f"{item.hv_winding}{item.lv_winding.lower()}".strip()
        return (
            item.transformer,
            f"{rating_text(item.kva)} {item.z_pct:.3g} %Z",
            f"{item.hv_kv:g}/{item.lv_kv:g} kV {windings}".rstrip(),
        )
    if kind == "cable":
        length = _fmt(item.length_ft, "ft") or _fmt(item.length_m, "m")
        size = f"{item.sets:g} x {item.size}" if item.size else f"{item.sets:g} set(s)"
        return (item.cable, size, length) if length else (item.cable, size)
    return (item.element, f"R {item.r_ohm:.3g} + jX {item.x_ohm:.3g} ohm")


def _three_text(t, x: str) -> tuple[str, ...]:
    """What is printed beside one of a three-winding transformer's two branches (h to x)."""
    what = "auto" if t.kind == "auto" else "3-winding"
    winding = t.h_winding + t.winding_code(x)
    pair = f"h{x}"
    rating = rating_text(getattr(t, pair + "_kva"))
    return (
        t.transformer,
        f"{what} h-{x} {rating} {getattr(t, pair + '_z_pct'):.3g} %Z",
        f"{t.h_kv:g}/{getattr(t, x + '_kv'):g} kV {winding}",
    )


def tree_of(system: System) -> Tree:
    buses = [b.bus for b in system.buses]
    known = set(buses)
    adjacent: dict[str, list[Branch]] = {b: [] for b in buses}
    for sheet, name, one, two, kind in SERIES:
        for item in getattr(system, sheet):
            a, b = getattr(item, one), getattr(item, two)
            if a in known and b in known:
                branch = Branch(kind, getattr(item, name), a, b, branch_text(kind, item))
                adjacent[a].append(branch)
                adjacent[b].append(branch)
    for t in system.three_winding_transformers:  # two branches from h: to m and to l
        for x in ("m", "l"):
            other = getattr(t, f"{x}_bus")
            if t.h_bus in known and other in known:
                branch = Branch("three_winding", t.transformer, t.h_bus, other, _three_text(t, x))
                adjacent[t.h_bus].append(branch)
                adjacent[other].append(branch)
    sources: dict[str, list] = {}
    for s in system.sources:
        strength = f"{s.sc_mva:.4g} MVA" if s.sc_mva is not None else f"{s.sc_ka:.4g} kA"
        sources.setdefault(s.bus, []).append((s.source, (s.source, f"{strength} X/R {s.xr:.3g}")))
    machines: dict[str, list] = {}
    for m in system.machines:
        size = f"{m.kva:.4g} kVA" if m.kva is not None else f"{m.hp:.4g} hp"
        count = f"{m.count:g} x " if m.count and m.count != 1 else ""
        letter = "G" if m.kind == "generator" else "M"
        machines.setdefault(m.bus, []).append((m.machine, letter, (m.machine, f"{count}{size}")))
    for g in system.grounding_transformers:  # hung below their bus like a machine
        z0 = f"Z0 {g.z0_ohm:.4g} ohm" if g.z0_ohm is not None else f"Z0 {g.z0_pct:.4g} %"
        kind = "zig-zag" if g.kind == "zigzag" else "wye-delta"
        machines.setdefault(g.bus, []).append(
            (g.grounding_transformer, GROUNDING, (g.grounding_transformer, f"{kind} {z0}"))
        )
    for inv in system.inverters:  # hung below their bus like a machine
        count = f"{inv.count:g} x " if inv.count != 1 else ""
        machines.setdefault(inv.bus, []).append(
            (
                inv.inverter,
                INVERTER,
                (inv.inverter, f"{count}{inv.kva:.4g} kVA, limit {inv.current_limit_pu:.3g} pu"),
            )
        )
    roots = [b for b in buses if b in sources]
    if not roots:
        roots = [b for b in buses if any(k == "G" for _, k, _ in machines.get(b, ()))][:1]
    level: dict[str, int] = {}
    parent: dict[str, Branch | None] = {}
    children: dict[str, list[str]] = {b: [] for b in buses}
    tree_branches: set[Branch] = set()
    queue = deque()
    for r in roots:
        level[r], parent[r] = 0, None
        queue.append(r)
    while True:
        while queue:
            bus = queue.popleft()
            for branch in adjacent[bus]:
                other = branch.two if branch.one == bus else branch.one
                if other in level:
                    continue
                level[other] = level[bus] + 1
                parent[other] = Branch(branch.kind, branch.name, bus, other, branch.text)
                tree_branches.add(branch)
                children[bus].append(other)
                queue.append(other)
        rest = [b for b in buses if b not in level]  # islands: drawn from their first bus
        if not rest:
            break
        roots.append(rest[0])
        level[rest[0]], parent[rest[0]] = 0, None
        queue.append(rest[0])
    unreached = roots[len([b for b in buses if b in sources]) or 1 :]
    seen: set[Branch] = set()
    ties = []
    for bus in buses:
        for branch in adjacent[bus]:
            if branch not in tree_branches and branch not in seen:
                seen.add(branch)
                ties.append(branch)
    for item in system.open_branches:  # normally-open ties: beside the tree, never in it
        if item.from_bus in known and item.to_bus in known:
            text = (item.name, f"open {item.kind}")
            ties.append(Branch(item.kind, item.name, item.from_bus, item.to_bus, text, True))
    tree = Tree(roots, level, parent, children, ties, sources, machines, unreached)
    _order_for_ties(tree)
    return tree


def _order_for_ties(tree: Tree) -> None:
    """Children whose subtree holds a bus tied to a sibling's subtree are put next to that
    sibling (a greedy chain: each next child is the one most tied to the last placed)."""
    partners: dict[str, set[str]] = {}
    for t in tree.ties:
        partners.setdefault(t.one, set()).add(t.two)
        partners.setdefault(t.two, set()).add(t.one)
    if not partners:
        return
    below: dict[str, set[str]] = {}

    def subtree(bus: str) -> set[str]:
        if bus not in below:
            found = {bus}
            stack = [bus]
            while stack:
                for c in tree.children[stack.pop()]:
                    found.add(c)
                    stack.append(c)
            below[bus] = found
        return below[bus]

    for bus, kids in tree.children.items():
        if len(kids) < 2:
            continue
        tied = {k: set().union(*(partners.get(b, set()) for b in subtree(k))) for k in kids}
        if not any(tied.values()):
            continue
        order = [kids[0]]
        left = kids[1:]
        while left:
            last = subtree(order[-1])
            best = max(left, key=lambda k: (len(tied[k] & last), -left.index(k)))
            order.append(best)
            left.remove(best)
        tree.children[bus] = order
