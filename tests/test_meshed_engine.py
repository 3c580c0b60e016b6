"""The all-bus engine on meshed networks: the selected inverse with its dense top.

Check values: a dense ``numpy.linalg.inv`` of the matrix the test builds (independent reference,
DEVELOPERS.md "How to test"), required to 1e-9 relative (the scale issue's figure). Networks
invented: random trees with loop-closing branches between buses near each other or between
random pairs anywhere (distant), with several grounded points, star nodes of three branches
and nothing else (as a three-winding transformer's), and several islands.
"""

from __future__ import annotations

import functools

import numpy as np
import pytest
import scipy.sparse as sp

from faultcalc.solve import thevenin
from faultcalc.solve.thevenin import Orderings, SymmetricFactor, diagonal_of_inverse


def meshed_admittance(
    n: int,
    loops: int,
    seed: int,
    distant: bool = True,
    grounds: int = 1,
    stars: int = 0,
    islands: int = 1,
    radial: int = 0,
) -> sp.csc_matrix:
    """``islands`` random trees over ``n`` buses, each grounded at ``grounds`` buses, with
    ``loops`` loop-closing branches inside the islands (between random pairs, or buses 2 to 9
    apart in number) and ``stars`` star nodes joined to three buses of one island by three
    branches, without a path of their own to ground. The last ``radial`` islands keep no loop
    and no star."""
    rng = np.random.default_rng(seed)
    island = np.sort(rng.integers(0, islands, n))
    island[:islands] = np.arange(islands)  # none empty
    island.sort()
    a, b = [], []
    for i in range(islands):
        buses = np.flatnonzero(island == i)
        for k in range(1, len(buses)):
            a.append(buses[k])
            b.append(buses[int(rng.integers(0, k))])
    meshed = np.flatnonzero(island < islands - radial)
    for _ in range(loops):
        i = int(rng.choice(meshed))
        buses = np.flatnonzero(island == island[i])
        if distant:
            j = int(rng.choice(buses))
        else:
            j = int(np.clip(i - rng.integers(2, 10), buses[0], buses[-1]))
        if i != j:
            a.append(i)
            b.append(j)
    size = n + stars
    for s in range(stars):
        buses = np.flatnonzero(island == island[int(rng.choice(meshed))])
        for j in rng.choice(buses, 3, replace=len(buses) < 3):
            a.append(n + s)
            b.append(int(j))
    a, b = np.array(a, dtype=np.int64), np.array(b, dtype=np.int64)
    y = 1.0 / (rng.uniform(0.01, 0.1, len(a)) + 1j * rng.uniform(0.02, 0.3, len(a)))
    grounded = np.concatenate(
        [rng.choice(np.flatnonzero(island == i), grounds) for i in range(islands)]
    )
    g = 1.0 / (rng.uniform(0.001, 0.01, len(grounded)) + 1j * rng.uniform(0.01, 0.1, len(grounded)))
    rows = np.concatenate([a, b, a, b, grounded])
    cols = np.concatenate([a, b, b, a, grounded])
    vals = np.concatenate([y, y, -y, -y, g])
    return sp.coo_matrix((vals, (rows, cols)), shape=(size, size)).tocsc()


NETWORKS = {
    "2 % distant loops": dict(n=1500, loops=30, seed=1),
    "10 % distant loops": dict(n=1500, loops=150, seed=2),
    "10 % near loops": dict(n=1500, loops=150, seed=3, distant=False),
    "20 % distant loops": dict(n=800, loops=160, seed=4),
    "60 % distant loops": dict(n=800, loops=480, seed=4),
    "grounded at 12 buses, 40 star nodes": dict(n=1200, loops=100, seed=5, grounds=12, stars=40),
    "5 islands": dict(n=1200, loops=300, seed=6, islands=5, grounds=2, stars=10),
    "a radial island beside 2 meshed": dict(n=1200, loops=200, seed=7, islands=3, radial=1),
}
# Enough recurrence saved for the dense top to pay for its start (DENSE_START) on its own:
# about 500,000 triplets of the recurrence (60 ms predicted); the others 3,000 to 52,000.
WITH_TOP = {"60 % distant loops"}


@functools.cache
def network(name: str) -> tuple[sp.csc_matrix, np.ndarray]:
    """The network ``name`` and its dense reference: numpy.linalg.inv of the whole matrix."""
    y = meshed_admittance(**NETWORKS[name])
    return y, np.linalg.inv(y.toarray())


@pytest.fixture
def dense_tops(monkeypatch):
    """The sizes of the dense tops the engine makes while the test runs."""
    sizes = []
    original = thevenin._dense_top

    def spy(top, *rest):
        sizes.append(len(top))
        return original(top, *rest)

    monkeypatch.setattr(thevenin, "_dense_top", spy)
    return sizes


@pytest.mark.parametrize("name", NETWORKS)
def test_meshed_diagonal_against_the_dense_inverse(name, dense_tops):
    """Dense reference: numpy.linalg.inv; 1e-9 relative, as the engine chooses between the
    recurrence and a dense top (a top of part of the columns on the heaviest network only)."""
    y, z = network(name)
    dense = np.diag(z)
    np.testing.assert_allclose(diagonal_of_inverse(y), dense, rtol=1e-9, atol=0)
    if name in WITH_TOP:
        assert len(dense_tops) == 1 and 0 < dense_tops[0] < y.shape[0] / 2
    else:
        assert dense_tops == []


PATHS = {  # the engine's costs, forced; and the dense top's size it must give
    "recurrence only": (dict(DENSE_COST=np.inf), lambda t, n: t == []),
    "top chosen by the work, no start cost": (
        dict(DENSE_START=0.0),
        lambda t, n: len(t) == 1 and 0 < t[0] < n / 2,
    ),
    "top of at most 50 columns": (
        dict(DENSE_START=0.0, DENSE_TOP_MAX=50),
        lambda t, n: len(t) == 1 and 0 < t[0] <= 50,
    ),
    "all one dense block": (dict(DENSE_START=0.0, DENSE_COST=0.0), lambda t, n: t == [n]),
}


@pytest.mark.parametrize("path", PATHS)
@pytest.mark.parametrize(
    "name", ["10 % distant loops", "5 islands", "a radial island beside 2 meshed"]
)
def test_every_split_between_recurrence_and_dense_top(monkeypatch, dense_tops, name, path):
    """Dense reference: numpy.linalg.inv; 1e-9 relative, however the columns are shared
    between the recurrence and the dense top (the top's size checked as forced)."""
    costs, expected = PATHS[path]
    for constant, value in costs.items():
        monkeypatch.setattr(thevenin, constant, value)
    y, z = network(name)
    dense = np.diag(z)
    np.testing.assert_allclose(SymmetricFactor(y).diagonal(), dense, rtol=1e-9, atol=0)
    assert expected(dense_tops, y.shape[0]), dense_tops


def test_the_dense_top_is_closed_under_the_parent(monkeypatch):
    """The block is a trailing block of the factor only if every column's parent in the
    elimination tree (its first row below the diagonal) is in it too: checked on the
    factor's own pattern, with the block the engine chooses (no start cost)."""
    monkeypatch.setattr(thevenin, "DENSE_START", 0.0)
    y, _ = network("5 islands")
    low = SymmetricFactor(y)._lu.L.tocsc()
    low.sort_indices()
    ptr, idx = low.indptr, low.indices
    size = np.diff(ptr) - 1
    parent = np.where(size > 0, idx[np.minimum(ptr[:-1] + 1, len(idx) - 1)], -1)
    top = thevenin._top_columns(
        size, thevenin._subtree_most(size, parent, thevenin._depths(parent))
    )
    inside = np.zeros(len(size), dtype=bool)
    inside[top] = True
    assert 0 < len(top) < len(size)
    assert inside[parent[inside & (parent >= 0)]].all()
    assert inside[np.argmax(size)]  # the column that fills most is on the top


@pytest.mark.parametrize("name", ["10 % distant loops", "grounded at 12 buses, 40 star nodes"])
def test_columns_and_solve_on_meshed_networks(name):
    """Dense reference: numpy.linalg.inv (its columns, and its product with random
    injections); 1e-9 relative to the largest entry of each column."""
    y, z = network(name)
    factor = SymmetricFactor(y, Orderings())
    nodes = [0, 7, y.shape[0] - 1]
    got = factor.columns(nodes)
    for c, node in enumerate(nodes):
        np.testing.assert_allclose(got[:, c], z[:, node], rtol=0, atol=1e-9 * abs(z[:, node]).max())
    rhs = np.random.default_rng(0).standard_normal((y.shape[0], 2)) + 0j
    want = z @ rhs
    got = factor.solve(rhs)
    for c in range(2):
        np.testing.assert_allclose(got[:, c], want[:, c], rtol=0, atol=1e-9 * abs(want[:, c]).max())
