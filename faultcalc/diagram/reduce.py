"""The reduced diagram of a large system: the buses above 1 kV and the service equipment only.

Each bus kept hangs under its nearest kept ancestor; where buses between them are left out, the
drop between them is dashed and says through which bus (and how many more) it runs. A kept bus
under which buses are left out says how many, and how many machines go with them. The sources'
buses are always kept (the top of the diagram).
"""

from __future__ import annotations

from dataclasses import replace

from .topology import Branch, Tree

KEEP_ABOVE_KV = 1.0  # the levels kept: above 1 kV (low voltage ends at 1 kV, IEC 60038)


def _plural(n: int, word: str) -> str:
    return f"{n:,} {word}" if n == 1 else f"{n:,} {word}es" if word == "bus" else f"{n:,} {word}s"


def reduced(tree: Tree, system) -> tuple[Tree, dict[str, tuple[str, ...]], int]:
    """``tree`` with only the buses kept; per kept bus, the text of what under it is not drawn;
    and the number of buses kept."""
    kv = system.bus_kv()
    service = {b.bus for b in system.buses if b.service == "yes"}
    keep = {b for b in tree.level if kv.get(b, 0.0) > KEEP_ABOVE_KV or b in service}
    keep |= set(tree.roots)
    anchor: dict[str, str] = {}  # each bus's nearest kept ancestor (itself when kept)
    skipped: dict[str, list[str]] = {}  # the buses left out between a kept bus and its anchor
    parent: dict[str, Branch | None] = {}
    children: dict[str, list[str]] = {b: [] for b in keep}
    level: dict[str, int] = {}
    hidden_buses: dict[str, int] = {}
    hidden_machines: dict[str, int] = {}
    stack = list(reversed(tree.roots))
    while stack:
        bus = stack.pop()
        stack.extend(reversed(tree.children[bus]))
        branch = tree.parent.get(bus)
        if branch is None:
            anchor[bus], parent[bus], level[bus] = bus, None, 0
            continue
        up = branch.one
        over = skipped.get(up, []) if up not in keep else []
        if bus not in keep:
            anchor[bus] = anchor[up]
            skipped[bus] = [*over, bus]
            top = anchor[bus]
            hidden_buses[top] = hidden_buses.get(top, 0) + 1
            count = len(tree.machines.get(bus, ()))
            hidden_machines[top] = hidden_machines.get(top, 0) + count
            continue
        top = anchor[up]
        anchor[bus] = bus
        if over:
            first = over[0]
            more = f" and {len(over) - 1:,} more" if len(over) > 1 else ""
            text = (f"through {first}{more}", "not drawn (1 kV or less)")
            branch = Branch("via", f"through {first}", top, bus, text)
        parent[bus] = branch
        level[bus] = level[top] + 1
        children[top].append(bus)
    hidden = {}
    for bus, n in hidden_buses.items():
        lines = [f"{_plural(n, 'bus')} under it", "at 1 kV or less: not drawn"]
        m = hidden_machines.get(bus, 0)
        if m:
            lines.append(f"with {_plural(m, 'machine')}")
        hidden[bus] = tuple(lines)
    ties = [t for t in tree.ties if t.one in keep and t.two in keep]
    machines = {b: m for b, m in tree.machines.items() if b in keep}
    out = replace(
        tree,
        level=level,
        parent=parent,
        children=children,
        ties=ties,
        machines=machines,
        unreached=[b for b in tree.unreached if b in keep],
    )
    return out, hidden, len(keep)
