"""Sparse sequence admittance matrices over the network's nodes.

Buses joined by closed ties (zero impedance) share one node. Each node that has no path to any
source is an input error naming its buses.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from .errors import InputError, Problem
from .perunit import PerUnitSystem


@dataclass(frozen=True)
class Network:
    """Node-indexed admittance matrix and the maps between buses, nodes and elements."""

    node_of_bus: np.ndarray  # node index of each bus, in input bus order
    n_nodes: int
    y1: sp.csc_matrix  # positive-sequence nodal admittance, per-unit
    series_used: tuple[int, ...]  # indices into PerUnitSystem.series that enter the matrix
    warnings: tuple[str, ...]


def _merge_ties(pu: PerUnitSystem) -> np.ndarray:
    n = len(pu.bus_names)
    index = {name: i for i, name in enumerate(pu.bus_names)}
    ties = [(index[s.from_bus], index[s.to_bus]) for s in pu.series if s.kind == "tie"]
    if not ties:
        return np.arange(n)
    a, b = np.array(ties).T
    graph = sp.coo_matrix((np.ones(len(a)), (a, b)), shape=(n, n))
    _, labels = connected_components(graph, directed=False)
    # Renumber nodes in order of first appearance so node order follows bus order.
    _, first = np.unique(labels, return_index=True)
    order = np.argsort(first)
    renumber = np.empty_like(order)
    renumber[order] = np.arange(len(order))
    return renumber[labels]


def build_network(pu: PerUnitSystem, bus_rows: dict[str, int] | None = None) -> Network:
    """Assemble the positive-sequence admittance matrix.

    Raises InputError listing every bus that has no path to a source.
    """
    index = {name: i for i, name in enumerate(pu.bus_names)}
    node_of_bus = _merge_ties(pu)
    n = int(node_of_bus.max()) + 1 if len(node_of_bus) else 0
    warnings = []
    used = []
    f, t, y, tap = [], [], [], []
    for k, s in enumerate(pu.series):
        if s.kind == "tie":
            continue
        a, b = node_of_bus[index[s.from_bus]], node_of_bus[index[s.to_bus]]
        if a == b:
            warnings.append(
                f"{s.kind} {s.element}: both ends ({s.from_bus}, {s.to_bus}) are joined "
                "by closed ties, so it carries no fault current; left out"
            )
            continue
        used.append(k)
        f.append(a)
        t.append(b)
        y.append(1.0 / s.z1_pu)
        tap.append(s.tap)
    f, t = np.array(f, dtype=np.int64), np.array(t, dtype=np.int64)
    y, tap = np.array(y, dtype=complex), np.array(tap, dtype=float)
    shunt_node = np.array([node_of_bus[index[s.bus]] for s in pu.shunts], dtype=np.int64)
    shunt_y = np.array([1.0 / s.z1_pu for s in pu.shunts], dtype=complex)
    rows = np.concatenate([f, t, f, t, shunt_node])
    cols = np.concatenate([f, t, t, f, shunt_node])
    vals = np.concatenate([y / tap**2, y, -y / tap, -y / tap, shunt_y])
    y1 = sp.coo_matrix((vals, (rows, cols)), shape=(n, n)).tocsc()
    y1.sum_duplicates()

    _check_connected(pu, node_of_bus, n, f, t, shunt_node, bus_rows or {})
    return Network(node_of_bus, n, y1, tuple(used), tuple(warnings))


def _check_connected(pu, node_of_bus, n, f, t, shunt_node, bus_rows):
    graph = sp.coo_matrix((np.ones(len(f)), (f, t)), shape=(n, n))
    count, labels = connected_components(graph, directed=False)
    fed = np.zeros(count, dtype=bool)
    fed[labels[shunt_node]] = True
    dead = ~fed[labels[node_of_bus]]
    if not dead.any():
        return
    problems = []
    for i in np.flatnonzero(dead):
        name = pu.bus_names[i]
        island = [
            pu.bus_names[j] for j in np.flatnonzero(labels[node_of_bus] == labels[node_of_bus[i]])
        ]
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
                "the bus has no path to any source" + joined,
            )
        )
    raise InputError(problems)
