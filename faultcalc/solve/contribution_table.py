"""Contributions to faults at many buses at once, as whole arrays: the table of
``contributions.as_table(contributions.contribution_phasors(...))`` row for row, without a
Python step per faulted bus or per element.

The same superposition as contributions.py (read its docstring first): for a fault at node n
with sequence currents I_s, a node's voltage changes by ``dV_s = -Z_s[:, n] I_s``, so a source
or machine of admittance y at node m delivers ``Z_s[m, n] I_s y`` and a branch meeting n its
nodal injection turned round. The entries ``Z_s[m, n]`` come from the factorizations already
made, one of two ways: in a radial network with fewer sources and machines than faulted
buses, from the columns at the shunts' nodes (Z is symmetric) and the values on the branches
(``SymmetricFactor.pair_values``); otherwise from the columns at the faulted nodes, a block of
them at a time. Blocks of faulted buses are done two at a time in threads. Every row of the
table is then the same few lines of arithmetic on arrays of rows.

Rows are in the order of the per-bus path: per faulted bus (in the order asked for), the
three-phase fault, then the line-to-ground one (where the bus has a zero-sequence path); in
each, every source and machine in input order, then the branches at the bus in the order they
are first met (a transformer's zero-sequence path to ground at the bus, the positive-sequence
stamps, the zero-sequence ones).
"""

from __future__ import annotations

import os
from concurrent.futures import ThreadPoolExecutor

import numpy as np
import pandas as pd

from .contributions import CONTRIBUTION_COLUMNS, CONTRIBUTION_FAULTS, NEGLIGIBLE
from .faults import A, sequence_currents
from .network import Network
from .perunit import PerUnitSystem, i_base_ka

# Complex entries of Z columns held at once per sequence (a block of faulted nodes): 4 million
# entries are 64 MB.
BLOCK_ENTRIES = 4_000_000
# At most this many entries in the columns of Z at the shunts' nodes (256 MB), kept for the
# whole table when they are fewer than the faulted nodes.
PAIR_COLUMN_ENTRIES = 16_000_000
SOLVE_COLUMNS = 16


def contribution_table(
    pu: PerUnitSystem,
    network: Network,
    factor1,
    factor0,
    z1_node,
    z0_node,
    buses,
    zf_pu: np.ndarray,
    angle_deg: np.ndarray,
) -> pd.DataFrame:
    """The contributions table (CONTRIBUTION_COLUMNS) for faults at the buses with input
    indices ``buses``; a network without inverters (their iteration is per fault: see
    contributions.contribution_phasors)."""
    buses = np.asarray(buses, dtype=np.int64)
    n_nodes = network.n_nodes
    parts = _Parts(pu, network)
    faulted = len(np.unique(network.node_of_bus[buses]))
    z1 = _source_of_z(factor1, parts, 0, faulted, z1_node)
    z0 = _source_of_z(factor0, parts, 1, faulted, np.nan_to_num(z0_node))
    per_bus = max(
        len(parts.h_node), n_nodes if isinstance(z1, _Columns) or isinstance(z0, _Columns) else 1
    )
    size = max(1, BLOCK_ENTRIES // max(1, per_bus))
    blocks = [buses[start : start + size] for start in range(0, len(buses), size)]

    def rows(block):
        return parts.rows(block, z1, z0, z1_node, z0_node, zf_pu, angle_deg)

    if len(blocks) > 1 and (os.cpu_count() or 1) > 1:  # numpy lets go of the interpreter
        with ThreadPoolExecutor(2) as pool:  # on whole arrays: two blocks at once
            pieces = list(pool.map(rows, blocks))
    else:
        pieces = [rows(block) for block in blocks]
    return parts.table(pieces)


class _Parts:
    """What every block needs, gathered once: the shunts and the branch stamps by node."""

    def __init__(self, pu: PerUnitSystem, network: Network):
        self.network = network
        s1, s0 = network.seq1, network.seq0
        n_bus = len(pu.bus_names)
        self.i_base = i_base_ka(np.asarray(pu.bus_kv, dtype=float), pu.base_mva)
        self.prefault = np.asarray(pu.prefault_pu, dtype=float)
        # Shunts: every source and machine (s1 lists them all, in input order).
        self.h_node = s1.shunt_node.astype(np.int64)
        self.h_y1 = s1.shunt_y.astype(complex)
        self.h_index = s1.shunt_source.astype(np.int64)
        self.h_bus = pu.shunt_buses[self.h_index].astype(np.int64)
        own0 = s0.shunt_elem < 0
        self.h_y0 = np.zeros(len(self.h_index), complex)  # zero-sequence admittance, 0 if none
        position = np.full(len(pu.shunts), -1, np.int64)
        position[self.h_index] = np.arange(len(self.h_index))
        np.add.at(self.h_y0, position[s0.shunt_source[own0]], s0.shunt_y[own0])
        # Transformers' zero-sequence paths to ground, by node.
        g = np.flatnonzero(~own0)
        self.g_elem = s0.shunt_elem[g].astype(np.int64)
        self.g_node = s0.shunt_node[g].astype(np.int64)
        self.g_y = s0.shunt_y[g].astype(complex)
        self.g_by_node = _by_node(self.g_node, n_nodes=network.n_nodes)
        self.g_seq = np.arange(len(g))
        # Series stamps of each sequence, by the node at either end.
        self.stamps = []
        for seq, s in enumerate((s1, s0)):
            ends = np.concatenate([s.series_from, s.series_to]).astype(np.int64)
            j = np.concatenate([np.arange(len(s.series_from))] * 2)
            self.stamps.append((seq, s, _by_node(ends, network.n_nodes, j)))
        # Element names and kinds: shunts first, then series elements.
        series, shunts = pu.series, pu.shunts
        self.n_shunts = len(shunts)
        self.names = np.array(
            list(shunts.column("element")) + list(series.column("element")), dtype=object
        )
        self.kinds = np.array(list(shunts.column("kind")) + list(series.column("kind")), object)
        bus_names = list(pu.bus_names)
        # Text codes of bus names: the buses, then each series element's from and to bus.
        ends = np.empty(2 * len(series), dtype=object)
        ends[0::2] = list(series.column("from_bus"))
        ends[1::2] = list(series.column("to_bus"))
        self.all_names = np.concatenate([np.array(bus_names, dtype=object), ends])
        if pu.star_names:
            node_of_end = np.concatenate(
                [
                    network.node_of_bus,
                    network.n_nodes - len(pu.star_names) + np.arange(len(pu.star_names)),
                ]
            )
        else:
            node_of_end = network.node_of_bus
        ends_to = pu.series_ends[1]
        self.series_to_node = np.where(
            ends_to >= 0, node_of_end[np.maximum(ends_to, 0)], -1
        ).astype(np.int64)
        self.n_bus = n_bus

    def rows(self, block, z1, z0, z1_node, z0_node, zf_pu, angle_deg):
        """The rows of faults at the buses ``block`` (input indices), in table order: a dict
        of arrays (text as codes), or None."""
        network = self.network
        nodes = network.node_of_bus[block]
        unique, col = np.unique(nodes, return_inverse=True)
        z1c, z0c = z1.at(unique), z0.at(unique)
        grounded = network.grounded[nodes]
        h = len(self.h_node)
        faults = []
        for f_code, fault in enumerate(CONTRIBUTION_FAULTS):
            at = np.arange(len(block)) if fault == "3ph" else np.flatnonzero(grounded)
            b, n, c = block[at], nodes[at], col[at]
            z0 = np.where(grounded[at], z0_node[n], np.nan)
            seq = sequence_currents(fault, z1_node[n], z1_node[n], z0, self.prefault[b], zf_pu[b])
            i1, i2, i0 = (np.asarray(x, complex) for x in (seq.i1, seq.i2, seq.i0))
            shunts = self._shunt_rows(n, c, i1, i2, i0, z1c, z0c, angle_deg) if h else None
            series = self._series_rows(b, n, c, i1, i2, i0, z1c, z0c)
            faults.append((f_code, at, shunts, series))
        # Where each (bus, fault) group starts: per bus, the three-phase rows then the
        # line-to-ground ones; in each, the shunts then the branches.
        count = np.zeros((len(block), 2), np.int64)
        for f_code, at, _, series in faults:
            count[at, f_code] += h
            if series is not None:
                np.add.at(count[:, f_code], at[series["at"]], 1)
        start = (np.cumsum(count.ravel()) - count.ravel()).reshape(count.shape)
        total = int(count.sum())
        if not total:
            return None
        out = dict(  # codes of the text columns (see table), the currents
            faulted=np.empty(total, np.int32),
            fault=np.empty(total, np.int8),
            element=np.empty(total, np.int32),
            from_bus=np.empty(total, np.int32),
            i_ka=np.empty(total),
            angle_deg=np.empty(total),
            phase=np.empty(total, np.int8),
            ig_ka=np.empty(total),
        )
        for f_code, at, shunts, series in faults:
            if shunts is not None and len(at):
                dest = (start[at, f_code][:, None] + np.arange(h)[None, :]).ravel()
                out["faulted"][dest] = np.repeat(block[at], h)
                out["fault"][dest] = f_code
                out["element"][dest] = np.tile(self.h_index, len(at))
                out["from_bus"][dest] = np.tile(self.h_bus, len(at))
                base = np.tile(self.i_base[self.h_bus], len(at))
                _currents(out, dest, *(v.ravel() for v in shunts), base, f_code == 0)
            if series is not None:
                k = series["at"]
                order = np.lexsort((series["place"], k))
                k = k[order]
                first = np.searchsorted(k, k)  # the first row of each bus among these
                dest = start[at[k], f_code] + h + np.arange(len(k)) - first
                out["faulted"][dest] = block[at[k]]
                out["fault"][dest] = f_code
                out["element"][dest] = series["element"][order]
                out["from_bus"][dest] = series["from_bus"][order]
                _currents(
                    out,
                    dest,
                    *(series[v][order] for v in ("c1", "c2", "c0")),
                    self.i_base[block[at[k]]],
                    False,
                )
        return out

    def _shunt_rows(self, n, c, i1, i2, i0, z1c, z0c, angle_deg):
        """Every shunt's sequence currents for each fault: arrays (faulted buses, shunts), so
        that their rows are the table's in order."""
        z1 = z1c.shunts(n, c)
        c1 = z1 * i1[:, None] * self.h_y1[None, :]
        c2 = z1 * i2[:, None] * self.h_y1[None, :]
        c0 = z0c.shunts(n, c) * i0[:, None] * self.h_y0[None, :]
        # Turned into the shunt's own zone (contributions._rotate, on whole arrays).
        theta = angle_deg[self.h_node][None, :] - angle_deg[n][:, None]
        if theta.any():
            rot = np.exp(1j * np.radians(theta))
            half = theta / 180.0
            c1, c2 = c1 * rot, c2 / rot
            c0 = np.where(np.abs(half - np.round(half)) < 1e-9, c0 * rot, c0)
        return c1, c2, c0

    def _series_rows(self, b, n, c, i1, i2, i0, z1c, z0c):
        """Branches at each faulted node: the ground paths, then the stamps of each sequence;
        one row per element, its currents summed, in the order first met."""
        keys, seqs, cur1, cur2, cur0 = [], [], [], [], []
        count = 0
        # Transformers' zero-sequence paths to ground at the faulted node.
        at, pos = _pairs(self.g_by_node, n)
        if len(at):
            k = self.g_elem[pos]
            value = z0c.diagonal(n[at], c[at]) * i0[at] * self.g_y[pos]
            keys.append((at, k))
            seqs.append(count + self.g_seq[pos])
            cur1.append(np.zeros(len(at), complex))
            cur2.append(np.zeros(len(at), complex))
            cur0.append(value)
        count += len(self.g_seq)
        for seq, s, by_node in self.stamps:
            at, j = _pairs(by_node, n)
            if not len(at):
                count += len(s.series_from)
                continue
            f = s.series_from[j].astype(np.int64)
            t = s.series_to[j].astype(np.int64)
            y = s.series_y[j].astype(complex)
            tap = s.series_tap[j].astype(float)
            here = f == n[at]
            zf, zt = (z1c if seq == 0 else z0c).ends(f, t, j, n[at], c[at])
            # injected = y/tap^2 dV_f - y/tap dV_t (from end at n) or -y/tap dV_f + y dV_t;
            # with dV = -Z I, the branch's contribution (-injected) is, per unit of I:
            per_i = np.where(here, y / tap**2 * zf - y / tap * zt, -y / tap * zf + y * zt)
            keys.append((at, s.series_elem[j].astype(np.int64)))
            seqs.append(count + j)
            if seq == 0:
                cur1.append(per_i * i1[at])
                cur2.append(per_i * i2[at])
                cur0.append(np.zeros(len(at), complex))
            else:
                cur1.append(np.zeros(len(at), complex))
                cur2.append(np.zeros(len(at), complex))
                cur0.append(per_i * i0[at])
            count += len(s.series_from)
        if not keys:
            return None
        at = np.concatenate([a for a, _ in keys])
        elem = np.concatenate([e for _, e in keys])
        seq_no = np.concatenate(seqs)
        key = at * (len(self.names) + 1) + elem
        unique, inverse = np.unique(key, return_inverse=True)
        first = np.full(len(unique), np.iinfo(np.int64).max)
        np.minimum.at(first, inverse, seq_no)
        sums = []
        for parts in (cur1, cur2, cur0):
            v = np.concatenate(parts)
            sums.append(
                np.bincount(inverse, v.real, len(unique))
                + 1j * np.bincount(inverse, v.imag, len(unique))
            )
        u_at = unique // (len(self.names) + 1)
        u_elem = unique % (len(self.names) + 1)
        # The far bus: the element's to-bus unless that end is the faulted node (as the
        # per-bus path names it).
        to_here = self.series_to_node[u_elem] == n[u_at]
        far_is_from = to_here
        return dict(
            at=u_at,
            place=first,
            element=self.n_shunts + u_elem,
            from_bus=self.n_bus + 2 * u_elem + np.where(far_is_from, 0, 1),
            c1=sums[0],
            c2=sums[1],
            c0=sums[2],
        )

    def table(self, blocks) -> pd.DataFrame:
        """The blocks' rows as one table: each text column's codes mapped block by block to
        the categories that occur (the row codes are never joined: 20 million rows, 240 MB
        less fresh memory), the currents joined as they are."""
        blocks = [b for b in blocks if b is not None]
        texts = {
            "faulted_bus": (self.all_names, "faulted"),
            "fault": (np.array(CONTRIBUTION_FAULTS, object), "fault"),
            "element": (self.names, "element"),
            "kind": (self.kinds, "element"),
            "from_bus": (self.all_names, "from_bus"),
            "phase": (np.array(["a", "b", "c", ""], object), "phase"),
        }
        columns = {}
        for name in CONTRIBUTION_COLUMNS:
            if name in texts:
                values, key = texts[name]
                columns[name] = _text(values, [b[key] for b in blocks])
            else:
                columns[name] = np.concatenate([b[name] for b in blocks]) if blocks else np.zeros(0)
        # each column its own new array: no copy into one block
        return pd.DataFrame(columns, columns=list(CONTRIBUTION_COLUMNS), copy=False)


def _currents(out, dest, c1, c2, c0, base, balanced):
    """The table's current columns at rows ``dest`` from sequence currents (per-unit) and the
    base current (kA) of each row, as contributions.as_table forms them. ``balanced``: every
    row is of a three-phase fault (no negative or zero sequence), so the three phases are
    equal and phase a is reported, as a tie goes to 'a'."""
    if balanced:
        i_a = c1 * base
        size = np.abs(i_a)
        largest, k, chosen = size, np.zeros(len(size), np.int64), i_a
        top = size
        ig = np.zeros(len(size))
    else:
        phases = (
            (c0 + c1 + c2) * base,
            (c0 + A * A * c1 + A * c2) * base,
            (c0 + A * c1 + A * A * c2) * base,
        )
        # sizes compared squared (no square roots), phase by phase (no stack of the three)
        square = [p.real**2 + p.imag**2 for p in phases]
        top_sq = np.maximum(np.maximum(square[0], square[1]), square[2])
        tie = top_sq * (1 - 1e-9) ** 2
        # the first phase within the tie of the largest: 'a' first, and 'a' where none is
        # (NaN)
        k = np.where(
            square[0] >= tie, 0, np.where(square[1] >= tie, 1, np.where(square[2] >= tie, 2, 0))
        )
        chosen = np.where(k == 0, phases[0], np.where(k == 1, phases[1], phases[2]))
        largest, top = np.abs(chosen), np.sqrt(top_sq)
        ig = np.abs(3 * c0 * base)
    floor = NEGLIGIBLE * np.maximum(1.0, top)
    live = largest > floor
    out["i_ka"][dest] = np.where(live, largest, 0.0)
    out["angle_deg"][dest] = np.where(live, np.degrees(np.angle(chosen)), np.nan)
    out["phase"][dest] = np.where(live, k, 3)
    out["ig_ka"][dest] = np.where(ig > floor, ig, 0.0)


def _source_of_z(factor, parts: _Parts, seq: int, faulted: int, diagonal):
    """How a sequence's Z entries are had: from the columns at the shunts and the branch
    values of the factor (radial networks, when there are fewer shunts than faulted nodes),
    else from the columns at the faulted nodes."""
    _, s, _ = parts.stamps[seq]
    admittance = parts.h_y1 if seq == 0 else parts.h_y0
    needed = np.unique(parts.h_node[admittance != 0])
    if len(needed) < faulted and len(needed) * factor.n <= PAIR_COLUMN_ENTRIES:
        edge = factor.pair_values(s.series_from, s.series_to)
        if edge is not None:
            return _ShuntColumns(factor, parts.h_node, admittance != 0, edge, diagonal)
    return _Columns(factor, parts.h_node)


class _Columns:
    """Z entries from the columns at the faulted nodes, solved a block at a time."""

    def __init__(self, factor, h_node, z=None):
        self.factor, self.h_node, self.z = factor, h_node, z

    def at(self, unique_nodes):
        """The columns at ``unique_nodes``: (n_nodes, len(unique_nodes)), a new object (the
        blocks run in threads)."""
        return _Columns(self.factor, self.h_node, _columns(self.factor, unique_nodes))

    def shunts(self, n, c):  # (faulted buses, shunts)
        return np.ascontiguousarray(self.z[self.h_node][:, c].T)

    def diagonal(self, n, c):
        return self.z[n, c]

    def ends(self, f, t, j, n, c):
        return self.z[f, c], self.z[t, c]


class _ShuntColumns:
    """Z entries from the columns at the shunts' nodes (solved once; Z is symmetric, so
    ``Z[h, n] = Z[n, h]``), the diagonal, and the values on the branches (``pair_values``)."""

    def __init__(self, factor, h_node, live, edge, diagonal):
        self.h_node, self.live = h_node, np.flatnonzero(live)
        unique, self.column = np.unique(h_node[self.live], return_inverse=True)
        self.x = _columns(factor, unique) if len(unique) else None
        self.edge, self.diag = edge, diagonal

    def at(self, unique_nodes):
        return self

    def shunts(self, n, c):
        out = np.zeros((len(n), len(self.h_node)), complex)
        if self.x is not None:
            out[:, self.live] = self.x[n][:, self.column]
        return out

    def diagonal(self, n, c):
        return self.diag[n]

    def ends(self, f, t, j, n, c):
        zf = np.where(f == n, self.diag[n], self.edge[j])
        zt = np.where(t == n, self.diag[n], self.edge[j])
        return zf, zt


def _columns(factor, nodes: np.ndarray) -> np.ndarray:
    """``factor.columns(nodes)``, SOLVE_COLUMNS at a time: SuperLU's solve costs several
    times more per column when given hundreds at once (measured on 10,000-bus networks:
    about 0.26 ms a column in tens, 1.8 ms in thousands)."""
    out = np.empty((factor.n, len(nodes)), complex)
    for k in range(0, len(nodes), SOLVE_COLUMNS):
        out[:, k : k + SOLVE_COLUMNS] = factor.columns(nodes[k : k + SOLVE_COLUMNS])
    return out


def _text(values: np.ndarray, codes: list[np.ndarray]) -> pd.Categorical:
    """``values[codes]`` (the blocks' codes in turn) as a text column: categorical (one Python
    string per distinct value in the column, not per row), its categories only the values
    that occur."""
    names, inverse = np.unique(np.asarray(values, dtype=str), return_inverse=True)
    # the small maps composed first, then one pass over the rows (20 million: 0.3 s to 0.1 s)
    occurs = np.zeros(len(values), bool)
    for part in codes:
        occurs |= np.bincount(part, minlength=len(values)) > 0
    used = np.flatnonzero(np.bincount(inverse, occurs, minlength=len(names)) > 0)
    renumber = np.full(len(names), -1, np.int32)
    renumber[used] = np.arange(len(used))
    dtype = np.int8 if len(used) < 128 else np.int16 if len(used) < 32768 else np.int32
    code_of_value = renumber[inverse].astype(dtype)  # codes of the size pandas keeps
    rows = np.empty(sum(len(part) for part in codes), dtype)
    start = 0
    for part in codes:
        np.take(code_of_value, part, out=rows[start : start + len(part)])
        start += len(part)
    return pd.Categorical.from_codes(rows, categories=names[used].astype(object))


def _by_node(nodes: np.ndarray, n_nodes: int, payload: np.ndarray | None = None):
    """(pointer, payload sorted by node): the entries at node m are
    ``payload[pointer[m]:pointer[m + 1]]``, in their original order."""
    payload = np.arange(len(nodes)) if payload is None else payload
    order = np.argsort(nodes, kind="stable")
    pointer = np.zeros(n_nodes + 1, np.int64)
    np.add.at(pointer, nodes + 1, 1)
    return np.cumsum(pointer), payload[order]


def _pairs(by_node, nodes: np.ndarray):
    """For each position i of ``nodes``, every payload entry at ``nodes[i]``: (i, entry)."""
    pointer, payload = by_node
    first, last = pointer[nodes], pointer[nodes + 1]
    count = last - first
    total = int(count.sum())
    at = np.repeat(np.arange(len(nodes)), count)
    offsets = np.arange(total) - np.repeat(np.cumsum(count) - count, count)
    return at, payload[np.repeat(first, count) + offsets]
