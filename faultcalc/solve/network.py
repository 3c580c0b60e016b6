"""Sparse sequence admittance matrices over the network's nodes.

Buses joined by closed ties (zero impedance) share one node in every sequence. A bus with no path
to any source is an input error naming it. The negative-sequence matrix equals the positive one
(see perunit.py), so only ``y1`` and ``y0`` are built.
"""

from __future__ import annotations

from collections import deque
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from ..errors import InputError, Problem
from . import perunit as pu_
from .perunit import PerUnitSystem


@dataclass(frozen=True)
class Stamps:
    """One sequence's entries: series branches and shunts, with the element each came from.

    ``series_elem`` and ``shunt_elem`` index ``PerUnitSystem.series``; ``shunt_elem`` of -1 means
    the shunt comes from ``PerUnitSystem.shunts[shunt_source]`` instead.
    """

    series_elem: np.ndarray
    series_from: np.ndarray
    series_to: np.ndarray
    series_y: np.ndarray
    series_tap: np.ndarray
    shunt_elem: np.ndarray
    shunt_source: np.ndarray
    shunt_node: np.ndarray
    shunt_y: np.ndarray

    def matrix(self, n: int, ones_at=(), orderings=None) -> sp.csc_matrix:
        """The nodal admittance matrix (canonical CSC), with 1 added on the diagonal at the
        nodes ``ones_at``; assembled by the study's kept layout of the same entries when
        ``orderings`` has one (``Orderings.assembly``)."""
        f, t, y, tap = self.series_from, self.series_to, self.series_y, self.series_tap
        ones_at = np.asarray(ones_at, np.int64)
        rows = np.concatenate([f, t, f, t, self.shunt_node, ones_at])
        cols = np.concatenate([f, t, t, f, self.shunt_node, ones_at])
        vals = np.concatenate(
            [y / tap**2, y, -y / tap, -y / tap, self.shunt_y, np.ones(len(ones_at))]
        )
        layout = None if orderings is None else orderings.assembly(rows, cols, n)
        if layout is not None:
            return layout.matrix(vals)
        m = sp.coo_matrix((vals, (rows, cols)), shape=(n, n)).tocsc()
        m.sum_duplicates()
        return m


@dataclass(frozen=True)
class Network:
    """Node-indexed admittance matrices and the maps between buses, nodes and elements."""

    node_of_bus: np.ndarray  # node index of each bus, in input bus order
    n_nodes: int
    y1: sp.csc_matrix  # positive- (and negative-) sequence nodal admittance, per-unit
    y0: (
        sp.csc_matrix
    )  # zero-sequence; nodes without a path to ground carry a dummy 1 on the diagonal
    grounded: np.ndarray  # per node: True where a zero-sequence path to ground exists
    seq1: Stamps
    seq0: Stamps
    series_used: tuple[int, ...]  # indices into PerUnitSystem.series that enter y1
    warnings: tuple[str, ...]


def _merge_ties(pu: PerUnitSystem) -> np.ndarray:
    n = len(pu.bus_names)
    kinds = np.asarray(pu.series.column("kind"), dtype=object)
    ties = np.flatnonzero(kinds == "tie")
    if not len(ties):
        return np.arange(n)
    a, b = (ends[ties] for ends in pu.series_ends)
    graph = sp.coo_matrix((np.ones(len(a)), (a, b)), shape=(n, n))
    _, labels = connected_components(graph, directed=False)
    # Renumber nodes in order of first appearance so node order follows bus order.
    _, first = np.unique(labels, return_index=True)
    order = np.argsort(first)
    renumber = np.empty_like(order)
    renumber[order] = np.arange(len(order))
    return renumber[labels]


def build_network(pu: PerUnitSystem, bus_rows=None, orderings=None) -> Network:
    """Assemble the sequence admittance matrices (whole-array work, one pass over elements).

    Raises InputError listing every bus that has no path to a source; ``bus_rows`` gives the
    spreadsheet row of each bus for that message (a dict, or a function returning one, called
    only then). ``orderings``: the study's cache (thevenin.Orderings), whose kept layouts
    assemble the matrices of a case with the base case's entries.
    """
    node_of_bus = _merge_ties(pu)
    n_bus_nodes = int(node_of_bus.max()) + 1 if len(node_of_bus) else 0
    n = n_bus_nodes + len(pu.star_names)  # star points of three-winding transformers last
    series = pu.series
    k_all = np.arange(len(series), dtype=np.int64)
    tie = np.asarray(series.column("kind"), dtype=object) == "tie"
    if pu.star_names:
        stars = n_bus_nodes + np.arange(len(pu.star_names), dtype=np.int64)
        node_of_end = np.concatenate([node_of_bus, stars])
        one_ended = pu.series_ends[0] < 0  # a tertiary with no bus: to ground only
        a = node_of_end[np.where(one_ended, pu.series_ends[1], pu.series_ends[0])]
        b = node_of_end[pu.series_ends[1]]
    else:
        one_ended = np.zeros(len(series), bool)
        a, b = (node_of_bus[e] for e in pu.series_ends)
    z1 = series.array("z1_pu", complex)
    z0 = np.nan_to_num(series.array("z0_pu", complex), nan=0.0)
    tap = series.array("tap", float)
    mode = np.asarray(series.column("z0_mode"), dtype=object)
    shorted = ~tie & (a == b) & ~one_ended
    warnings = [
        f"{e.kind} {e.element}: both ends ({e.from_bus}, "
        f"{e.to_bus}) are joined by closed ties, so it carries no fault current; "
        "left out"
        for e in series.take(np.flatnonzero(shorted))
    ]
    used = ~tie & ~shorted
    u = np.flatnonzero(used & ~one_ended)
    with np.errstate(divide="ignore", invalid="ignore"):
        y1_series = 1.0 / z1[u]
    s0 = np.flatnonzero(used & ~one_ended & (mode == pu_.Z0_SERIES))
    sf = np.flatnonzero(used & ~one_ended & (mode == pu_.Z0_SHUNT_FROM))
    st = np.flatnonzero(used & (mode == pu_.Z0_SHUNT_TO))
    shunt_node = node_of_bus[pu.shunt_buses]
    h_z1 = pu.shunts.array("z1_pu", complex)
    h_z0_all = pu.shunts.array("z0_pu", complex)
    h_has0 = ~np.isnan(h_z0_all)
    h_z0 = h_z0_all[h_has0]
    h_idx = np.arange(len(pu.shunts), dtype=np.int64)
    seq1 = Stamps(
        k_all[u],
        a[u],
        b[u],
        y1_series,
        tap[u],
        np.full(len(h_idx), -1, np.int64),
        h_idx,
        shunt_node,
        1.0 / h_z1,
    )
    t_shunt = np.concatenate([sf, st])
    seq0 = Stamps(
        k_all[s0],
        a[s0],
        b[s0],
        1.0 / z0[s0],
        tap[s0],
        np.concatenate([t_shunt, np.full(int(h_has0.sum()), -1, np.int64)]),
        np.concatenate([np.full(len(t_shunt), -1, np.int64), h_idx[h_has0]]),
        np.concatenate([a[sf], b[st], shunt_node[h_has0]]),
        np.concatenate([1.0 / z0[sf], 1.0 / z0[st], 1.0 / h_z0]),
    )
    y1 = seq1.matrix(n, orderings=orderings)
    _check_fed(pu, node_of_bus, n, seq1, bus_rows)
    grounded = _reaches_shunt(n, seq0)
    y0 = seq0.matrix(n, np.flatnonzero(~grounded), orderings)  # a dummy 1 where no path
    return Network(
        node_of_bus,
        n,
        y1,
        y0,
        grounded,
        seq1,
        seq0,
        tuple(k_all[u].tolist()),
        tuple(warnings),
    )


def _components(n, stamps: Stamps):
    graph = sp.coo_matrix(
        (np.ones(len(stamps.series_from)), (stamps.series_from, stamps.series_to)), shape=(n, n)
    )
    return connected_components(graph, directed=False)


def _reaches_shunt(n: int, stamps: Stamps) -> np.ndarray:
    """Per node: does its component (in this sequence) hold a shunt to the reference?"""
    count, labels = _components(n, stamps)
    fed = np.zeros(count, dtype=bool)
    fed[labels[stamps.shunt_node]] = True
    return fed[labels]


def _check_fed(pu, node_of_bus, n, seq1: Stamps, bus_rows):
    kinds = np.asarray(pu.shunts.column("kind"), dtype=object)
    sources = (kinds == "source") | (kinds == "generator")
    count, labels = _components(n, seq1)
    fed = np.zeros(count, dtype=bool)
    fed[labels[seq1.shunt_node[sources[seq1.shunt_source]]]] = True
    dead = ~fed[labels[node_of_bus]]
    if not dead.any():
        return
    problems = []
    bus_rows = (bus_rows() if callable(bus_rows) else bus_rows) or {}
    bus_labels = labels[node_of_bus]
    for i in np.flatnonzero(dead):
        name = pu.bus_names[i]
        island = [pu.bus_names[j] for j in np.flatnonzero(bus_labels == bus_labels[i])]
        joined = (
            f"; it is connected only to {', '.join(b for b in island if b != name)}"
            if len(island) > 1
            else "; no element connects it"
        )
        problems.append(
            Problem(
                "buses",
                bus_rows.get(name),
                "bus",
                name,
                "the bus has no path to any source or generator"
                + joined
                + " (a bus de-energized on purpose takes in_service = no)",
            )
        )
    raise InputError(problems)


def zone_angles_deg(pu: PerUnitSystem, network: Network, where=None) -> np.ndarray:
    """Phase displacement of every node's positive-sequence quantities, degrees.

    Each transformer's low-voltage side lags its high-voltage side by 30 degrees per clock hour;
    the first node of each island is at 0. A loop whose displacements do not add up to a whole
    turn is an input error: such a network would circulate current.
    """
    n = network.n_nodes
    s = network.seq1
    clocks = np.asarray(pu.series.column("clock"), dtype=np.int64)
    if not len(s.series_elem) or not clocks[s.series_elem].any():
        return np.zeros(n)
    adjacency: list[list[tuple[int, float, int]]] = [[] for _ in range(n)]
    for k, a, b in zip(
        s.series_elem.tolist(), s.series_from.tolist(), s.series_to.tolist(), strict=True
    ):
        shift = -30.0 * int(clocks[k])
        adjacency[a].append((b, shift, k))
        adjacency[b].append((a, -shift, k))
    angle = np.full(n, np.nan)
    problems = []
    for start in range(n):
        if not np.isnan(angle[start]):
            continue
        angle[start] = 0.0
        queue = deque([start])
        while queue:
            a = queue.popleft()
            for b, shift, k in adjacency[a]:
                want = angle[a] + shift
                if np.isnan(angle[b]):
                    angle[b] = want
                    queue.append(b)
                elif abs((angle[b] - want + 180.0) % 360.0 - 180.0) > 1e-6:
                    element = pu.series[k]
                    located = where() if callable(where) else (where or {})
                    sheet, row = located.get(element.element, (element.kind + "s", None))
                    column = {
                        "transformer": "clock_number",
                        "three_winding": "m_clock, l_clock",
                    }.get(element.kind)
                    problems.append(
                        Problem(
                            sheet,
                            row,
                            column,
                            element.element,
                            "closes a loop whose phase displacements do not add up (a loop "
                            "through transformers of different vector groups would circulate "
                            "current): check the transformers' winding connections and "
                            "clock numbers",
                        )
                    )
    if problems:
        unique = list({(p.sheet, p.row, p.value): p for p in problems}.values())
        raise InputError(unique)
    return angle


def positive_matrix_variant(
    pu: PerUnitSystem, network: Network, transform, orderings=None
) -> sp.csc_matrix:
    """The positive-sequence matrix with every impedance z replaced by ``transform(z)``
    (applied to whole complex arrays).

    For the X/R conventions (R-only and X-only reductions) and the IEC 60909-0
    equivalent-frequency impedance; same nodes, taps and elements as ``network.y1``
    (``orderings`` as in build_network).
    """
    s = network.seq1
    series_y = 1.0 / transform(pu.series.array("z1_pu", complex)[s.series_elem])
    shunt_y = 1.0 / transform(pu.shunts.array("z1_pu", complex)[s.shunt_source])
    stamps = Stamps(
        s.series_elem,
        s.series_from,
        s.series_to,
        series_y,
        s.series_tap,
        s.shunt_elem,
        s.shunt_source,
        s.shunt_node,
        shunt_y,
    )
    return stamps.matrix(network.n_nodes, orderings=orderings)
