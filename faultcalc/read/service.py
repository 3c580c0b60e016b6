"""Elements and buses out of service: left out of the study, and said so.

``in_service`` = no on an element sheet keeps the row's checks and leaves the element out of the
System (a normally-open tie, a standby generator); a case can set it either way. A bus out of
service (in the base case or a case) is removed after reading, with every element connected to
it and whatever then hangs only on it (buses left without a path to any source or generator,
with their elements).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from .. import schema
from ..errors import Problem
from ..model import OpenBranch, System

IN_SERVICE = "in_service"
ELEMENT_OUT_NOTE = "is out of service: left out of this study"  # in an element's note

NAME_COLUMN = {sheet.name: sheet.columns[0].name for sheet in schema.ELEMENT_SHEETS}
# The series elements of a System and their two bus columns.
SERIES = (
    ("transformers", "hv_bus", "lv_bus"),
    ("cables", "from_bus", "to_bus"),
    ("impedances", "from_bus", "to_bus"),
)


def in_service(system: System) -> tuple[System, list[str]]:
    """``system`` with what is out of service left out, and the warnings that say so.

    Elements with ``in_service`` = no go (each said, in sheet and row order); so do buses with
    ``in_service`` = no and whatever is then fed only through them. A bus that only elements
    out of service fed is not removed (the study reports it as cut off from every source: a
    missing row looks the same); its in_service says when it is de-energized on purpose. Both
    readers call this on the System they built, so they say the same things."""
    gone = {}
    for sheet in schema.ELEMENT_SHEETS:
        flags = _out(getattr(system, sheet.name))
        if flags.any():
            gone[sheet.name] = flags
    bus_off = _out(system.buses)
    if not gone and not bus_off.any():
        return system, []
    notes = []
    changes = {}
    for sheet in schema.ELEMENT_SHEETS:
        flags = gone.get(sheet.name)
        if flags is None:
            continue
        items = getattr(system, sheet.name)
        names, rows = items.column(NAME_COLUMN[sheet.name]), items.column("row")
        for k in np.flatnonzero(flags).tolist():
            notes.append(
                str(
                    Problem(
                        sheet.name,
                        rows[k],
                        IN_SERVICE,
                        "no",
                        f"{names[k]} {ELEMENT_OUT_NOTE}",
                    )
                )
            )
        changes[sheet.name] = items.subset(np.flatnonzero(~flags))
    switched = dataclasses.replace(system, **changes) if changes else system
    if changes:
        _carry_positions(system, switched, {s: np.flatnonzero(~gone[s]) for s in changes})
    if bus_off.any():
        bus_names = system.buses.column("bus")
        switched, note = without_buses(switched, [bus_names[k] for k in np.flatnonzero(bus_off)])
        notes.append(f"sheet 'buses': {note}")
    opened = open_branches(system, gone, set(switched.buses.column("bus")))
    if opened:
        switched = dataclasses.replace(switched, open_branches=opened)
    return switched, notes


def open_branches(system: System, gone: dict[str, np.ndarray], buses: set[str]):
    """The series elements of ``system`` flagged in ``gone`` whose two buses are among
    ``buses`` (those left in service), in sheet and row order: drawn open on the one-line."""
    out = []
    for sheet, one, two in SERIES:
        flags = gone.get(sheet)
        if flags is None:
            continue
        items = getattr(system, sheet)
        names, rows = items.column(NAME_COLUMN[sheet]), items.column("row")
        a, b = items.column(one), items.column(two)
        for k in np.flatnonzero(flags).tolist():
            if a[k] in buses and b[k] in buses:
                out.append(OpenBranch(sheet, names[k], a[k], b[k], sheet[:-1], int(rows[k])))
    return tuple(out)


# The bus columns of each element sheet.
BUS_COLUMNS = {
    "sources": ("bus",),
    "transformers": ("hv_bus", "lv_bus"),
    "cables": ("from_bus", "to_bus"),
    "impedances": ("from_bus", "to_bus"),
    "machines": ("bus",),
    "grounding_transformers": ("bus",),
    "three_winding_transformers": ("h_bus", "m_bus", "l_bus"),  # l_bus may be blank
    "inverters": ("bus",),
}


# The order in which the note names the elements left out with a bus.
REMOVAL_ORDER = (
    "transformers",
    "cables",
    "impedances",
    "sources",
    "machines",
    "grounding_transformers",
    "three_winding_transformers",
    "inverters",
)


def _carry_positions(
    before: System, after: System, kept: dict[str, np.ndarray], bus_kept: np.ndarray | None = None
) -> None:
    """``after`` knows its bus positions without looking the names up again: it is ``before``
    with the rows ``kept`` of some element sheets (the other sheets the same Records), and,
    when ``bus_kept`` is given, only the buses at those positions (in order)."""
    if bus_kept is None:
        after.remember_bus_index(before.bus_index())
        renumber = None
    else:
        renumber = np.full(len(before.buses), -1, np.int64)
        renumber[bus_kept] = np.arange(len(bus_kept))
    for sheet, columns in BUS_COLUMNS.items():
        items, rows = getattr(after, sheet), kept.get(sheet)
        if rows is None and items is not getattr(before, sheet):
            continue
        for column in columns:
            positions = before.bus_positions(getattr(before, sheet).column(column))
            if rows is not None:
                positions = positions[rows]
            if renumber is not None:  # a blank reference (-1) stays blank
                positions = np.where(positions >= 0, renumber[positions], -1)
            after.remember_positions(items.column(column), positions)


def _out(items) -> np.ndarray:
    """Which rows say in_service = no (kept with the Records: the cases that leave a sheet
    as it is share the base's)."""
    memo = items.memo()
    flags = memo.get(IN_SERVICE)
    if flags is None:
        column = items.column(IN_SERVICE)
        if "no" not in column:
            flags = np.zeros(len(items), bool)
        else:
            flags = np.array([f == "no" for f in column], bool)
        memo[IN_SERVICE] = flags
    return flags


def _live(system: System, bus_in: np.ndarray) -> np.ndarray:
    """Buses (among ``bus_in``) joined to a source or a generator through in-service series
    elements whose two buses are both in."""
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    n = len(system.buses)
    a, b = [], []
    for sheet, one, two in SERIES:
        items = getattr(system, sheet)
        if len(items):
            i, j = system.bus_positions(items.column(one)), system.bus_positions(items.column(two))
            keep = bus_in[i] & bus_in[j]
            a.append(i[keep])
            b.append(j[keep])
    three = system.three_winding_transformers
    if len(three):  # h and m joined when both are in; l to them when it is in too
        h, m, low = (system.bus_positions(three.column(c)) for c in ("h_bus", "m_bus", "l_bus"))
        both = bus_in[h] & bus_in[m]
        a.append(h[both])
        b.append(m[both])
        tertiary = both & (low >= 0) & bus_in[np.maximum(low, 0)]
        a.append(h[tertiary])
        b.append(low[tertiary])
    i = np.concatenate(a) if a else np.zeros(0, np.int64)
    j = np.concatenate(b) if b else np.zeros(0, np.int64)
    graph = coo_matrix((np.ones(len(i)), (i, j)), shape=(n, n))
    _, label = connected_components(graph, directed=False)
    fed = np.zeros(n, bool)
    fed[system.bus_positions(system.sources.column("bus"))] = True
    machines = system.machines
    generator = np.array([k == "generator" for k in machines.column("kind")], bool)
    fed[system.bus_positions(machines.column("bus"))[generator]] = True
    fed &= bus_in
    return bus_in & np.isin(label, label[fed])


def without_buses(system: System, names: list[str]) -> tuple[System, str]:
    """``system`` without the buses ``names`` and what hangs only on them; and the note that
    says what was removed."""
    every = np.ones(len(system.buses), bool)
    live_before = _live(system, every)
    bus_in = every.copy()
    bus_in[system.bus_positions(names)] = False
    live = _live(system, bus_in)
    gone = ~bus_in | (live_before & ~live)
    bus_names = system.buses.column("bus")
    removed_buses = [bus_names[k] for k in np.flatnonzero(gone & bus_in).tolist()]
    keep_bus = ~gone
    bus_kept = np.flatnonzero(keep_bus)
    changes: dict[str, object] = {"buses": system.buses.subset(bus_kept)}
    removed: list[str] = []
    kept: dict[str, np.ndarray] = {}
    opened: list[str] = []
    three = system.three_winding_transformers
    if len(three):  # a tertiary whose bus goes: the winding is opened, the transformer stays
        h, m, low = (system.bus_positions(three.column(c)) for c in ("h_bus", "m_bus", "l_bus"))
        tertiary_out = (low >= 0) & ~keep_bus[np.maximum(low, 0)] & keep_bus[h] & keep_bus[m]
        if tertiary_out.any():
            l_bus = list(three.column("l_bus"))
            for k in np.flatnonzero(tertiary_out).tolist():
                opened.append(f"{three.column('transformer')[k]} (winding l on {l_bus[k]})")
                l_bus[k] = None
            three = three.replace(l_bus=l_bus)
            changes["three_winding_transformers"] = three
            system = dataclasses.replace(system, three_winding_transformers=three)
    for sheet in REMOVAL_ORDER:
        items, columns = getattr(system, sheet), BUS_COLUMNS[sheet]
        keep = np.ones(len(items), bool)
        for column in columns:
            positions = system.bus_positions(items.column(column))
            keep &= np.where(positions >= 0, keep_bus[positions], True)  # -1: no bus
        removed += [items.column(NAME_COLUMN[sheet])[k] for k in np.flatnonzero(~keep).tolist()]
        if not keep.all():
            kept[sheet] = np.flatnonzero(keep)
            changes[sheet] = items.subset(kept[sheet])
    note = f"out of service: bus {', '.join(names)}"
    if removed_buses:
        note += f"; removed with it, fed only through it: bus(es) {', '.join(removed_buses)}"
    if removed:
        note += f"; elements connected to the removed buses left out: {', '.join(removed)}"
    if opened:
        note += (
            "; windings opened (a delta still gives the zero sequence its path, a wye winding "
            f"no longer carries current): {', '.join(opened)}"
        )
    after = dataclasses.replace(system, **changes)
    _carry_positions(system, after, kept, bus_kept)
    return after, note
