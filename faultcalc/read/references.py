"""Bus references: which buses a reference may name, and the bus each one names.

The buses sheet's usable buses (named, with a kV, no problem of their own) are indexed once;
each reference column is matched against them on whole columns (one Arrow hash join for all the
base input's references, a pandas hash join otherwise), and only a reference that misses is
looked at on its own: matched as names are compared (``names.key``) with a warning, refused
silently when its bus has a problem of its own (that row says so), or refused with the nearest
name suggested.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

import numpy as np

from . import names
from .collect import Collector
from .columns import Typed

# Nearest names are looked for while there are fewer problems than this, among at most
# MAX_SUGGESTION_NAMES buses (a look costs about 12 us per known name, measured: 0.24 s against
# 20,000 names; a sheet of wrong names gets suggestions for its first rows only).
MAX_SUGGESTIONS = 20
MAX_SUGGESTION_NAMES = 5_000

# Fewer references than this are looked up one by one in the name index: the hash join's own
# index of every bus name costs more (measured: about 20 ms at 100,000 buses, against well
# under 1 ms for a thousand lookups).
SMALL_LOOKUP = 1000

# The bus references of each element sheet.
BUS_REFERENCES = (
    ("sources", ("bus",)),
    ("transformers", ("hv_bus", "lv_bus")),
    ("cables", ("from_bus", "to_bus")),
    ("impedances", ("from_bus", "to_bus")),
    ("machines", ("bus",)),
    ("grounding_transformers", ("bus",)),
    ("three_winding_transformers", ("h_bus", "m_bus", "l_bus")),
    ("inverters", ("bus",)),
)


@dataclass
class Buses:
    """The buses that references may name: position of each usable bus by exact name, the
    names ignoring case, the names of buses whose own row has a problem, and each bus row's
    kV."""

    index: dict[str, int]
    _folded: dict[str, str] | None
    unusable: set[str]
    kv: np.ndarray
    readable: bool
    ends: dict[tuple[str, str], np.ndarray] = field(default_factory=dict)
    # the pandas Index of the usable names and their rows, made on first use and shared by
    # the cases that leave the index as it is
    _lookup: dict = field(default_factory=dict)
    _names: object = None  # every bus name as an Arrow array, when every bus is usable
    joined: dict = field(default_factory=dict)  # (sheet, column) -> positions, by one join

    @property
    def folded(self) -> dict[str, str]:
        """Each usable bus name's ``names.key`` (case, compatibility forms and invisible
        characters ignored) -> the name; made when a reference first misses."""
        if self._folded is None:
            self._folded = {names.key(name): name for name in self.index}
        return self._folded

    def positions(self, values: list, at: np.ndarray, array=None) -> np.ndarray:
        """Bus row of each name of ``values`` at ``at`` (exact match; -1 where none)."""
        import pandas as pd

        if not self.index or not len(at):
            return np.full(len(at), -1, np.int64)
        if array is not None and self._names is not None and len(at) == len(values):
            import pyarrow.compute as pc  # a hash join in C++: the base's whole columns

            found = pc.fill_null(pc.index_in(array, value_set=self._names), -1)
            return found.to_numpy(zero_copy_only=False).astype(np.int64)
        if len(at) < SMALL_LOOKUP:  # a case's few rows: the name index itself
            get = self.index.get
            return np.fromiter((get(values[i], -1) for i in at.tolist()), np.int64, len(at))
        if not self._lookup:
            self._lookup["names"] = pd.Index(list(self.index), dtype=object)
            self._lookup["rows"] = np.fromiter(self.index.values(), np.int64, len(self.index))
        lookup, rows = self._lookup["names"], self._lookup["rows"]
        picked = values if len(at) == len(values) else [values[i] for i in at.tolist()]
        found = lookup.get_indexer(pd.Index(picked, dtype=object))
        return np.where(found >= 0, rows[found], -1)


def bus_table(buses: Typed, readable: bool) -> Buses:
    """The usable buses (named, with a kV, no problem of their own) of the buses sheet."""
    values = buses.values["bus"]
    kv = buses.values["kv"]
    usable = buses.ok & ~np.isnan(kv)
    if usable.all() and None not in values:
        index = dict(zip(values, range(len(values)), strict=True))
        unusable: set[str] = set()
    else:
        index = {}
        for i in np.flatnonzero(usable).tolist():
            if values[i] is not None:
                index.setdefault(values[i], i)
        unusable = {name for name in values if name is not None} - set(index)
    names = buses.arrow.get("bus") if len(index) == len(values) else None
    return Buses(index, None, unusable, kv, readable, _names=names)


def references(
    sheet: Typed, columns: tuple[str, ...], buses: Buses, out: Collector, at: np.ndarray
) -> None:
    """Every bus reference names a bus with a usable kV; both ends of a branch differ. The
    position of each end's bus goes into ``buses.ends``; a name matched ignoring case is
    replaced by the bus's name, with a warning. Said row by row, each row's ends in order."""
    name = sheet.spec.name
    ends = []
    for column in columns:
        values = sheet.values[column]
        positions = buses.ends.setdefault((name, column), np.full(sheet.n, -1, np.int64))
        joined = buses.joined.pop((name, column), None)
        if joined is not None and len(at) == sheet.n:
            positions[:] = joined
        else:
            positions[at] = buses.positions(values, at, sheet.arrow.get(column))
        ends.append(positions)
    if not len(at):
        return
    missing = np.any([positions[at] < 0 for positions in ends], axis=0)
    same = np.zeros(len(at), bool)
    if len(columns) == 2:
        one, two = ends[0][at], ends[1][at]
        same = (one == two) & (one >= 0)
    for i in at[missing | same].tolist():
        for column, positions in zip(columns, ends, strict=True):
            values = sheet.values[column]
            value = values[i]
            if value is None or positions[i] >= 0:
                continue
            if value in buses.unusable:
                sheet.ok[i] = False
                continue
            match = buses.folded.get(names.key(value))
            if match is not None:
                values[i] = match
                positions[i] = buses.index[match]
                how = names.collision(match, value).removeprefix("names are matched ")
                message = f"matched bus {match!r} {how}"  # about the cell's own text
                out.warn(name, int(sheet.rows[i]), column, value, message, cell=True)
                continue
            suggestion = _suggestion(value, buses) if len(out.problems) < MAX_SUGGESTIONS else ""
            out.problem(
                name,
                int(sheet.rows[i]),
                column,
                value,
                "no bus of that name on the 'buses' sheet" + suggestion,
            )
            sheet.ok[i] = False
        if len(columns) == 2:
            a, b = (sheet.values[c][i] for c in columns)
            if a is not None and a == b:
                out.problem(
                    name,
                    int(sheet.rows[i]),
                    columns[1],
                    b,
                    f"both ends are the same bus; {columns[0]} and {columns[1]} must differ",
                )
                sheet.ok[i] = False


def join_references(sheets: dict[str, Typed], buses: Buses) -> None:
    """The bus position of every reference of the base input, in one hash join of all the
    reference columns against the bus names (Arrow), where every bus is usable and every
    column was typed on the fast path; ``references`` takes them from ``buses.joined``."""
    import pyarrow as pa
    import pyarrow.compute as pc

    if buses._names is None:
        return
    keys, arrays = [], []
    for sheet, columns in BUS_REFERENCES:
        if not sheets[sheet].n:
            continue
        for column in columns:
            array = sheets[sheet].arrow.get(column)
            if array is None:
                return
            if len(array):
                keys.append((sheet, column, len(array)))
                arrays.append(array)
    if not arrays:
        return
    found = pc.fill_null(pc.index_in(pa.chunked_array(arrays), value_set=buses._names), -1)
    positions = found.to_numpy(zero_copy_only=False).astype(np.int64)
    start = 0
    for sheet, column, n in keys:
        buses.joined[(sheet, column)] = positions[start : start + n]
        start += n


def _suggestion(name: str, buses: Buses) -> str:
    """'; did you mean X?' for the nearest known bus name, or nothing when none is near."""
    import difflib

    if len(buses.index) + len(buses.unusable) > MAX_SUGGESTION_NAMES:
        return ""  # not worth the time among so many
    known = sorted(set(buses.index) | buses.unusable)
    by_fold = {k.casefold(): k for k in known}
    near = difflib.get_close_matches(name.casefold(), list(by_fold), n=1, cutoff=0.6)
    return f"; did you mean {by_fold[near[0]]!r}?" if near else ""


def update_buses(buses: Buses, sheet: Typed, at: np.ndarray) -> Buses:
    """The bus table of a case: the base's, with the buses at ``at`` made unusable where their
    row now has a problem."""
    gone = {sheet.values["bus"][i] for i in at.tolist() if not sheet.ok[i]}
    ends = {key: positions.copy() for key, positions in buses.ends.items()}  # the base's stay
    kept = dataclasses.replace(buses, kv=sheet.values["kv"], ends=ends, joined={})
    if not gone:
        return kept  # the name index, its folded form and lookups shared with the base
    index = {k: p for k, p in buses.index.items() if k not in gone}
    return dataclasses.replace(
        kept,
        index=index,
        _folded=None,
        unusable=buses.unusable | gone,
        _lookup={},
        _names=None,
    )
