"""The study's cache of factor orderings: reused only for exactly the same pattern.

Check values: a dense ``numpy.linalg.inv`` of the matrices the test builds (independent
reference, DEVELOPERS.md "How to test").
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from faultcalc.solve.thevenin import Orderings, SymmetricFactor


def _matrix(edges, n, rng):
    y = np.zeros((n, n), dtype=complex)
    for a, b in edges:
        g = complex(rng.uniform(1, 5), -rng.uniform(5, 20))
        y[a, a] += g
        y[b, b] += g
        y[a, b] -= g
        y[b, a] -= g
    y[np.arange(n), np.arange(n)] += complex(0.5, -2.0)  # a path to ground at every node
    return y


def test_patterns_take_turns_without_mixing_their_orderings():
    rng = np.random.default_rng(3)
    tree = [(0, 1), (1, 2), (1, 3), (3, 4)]
    loop = [*tree, (2, 4)]  # same size, one loop: the forest ordering must not be reused
    orderings = Orderings()
    for edges in (tree, loop, tree, loop, [(0, 4), (4, 3), (3, 2), (2, 1)], tree):
        dense = _matrix(edges, 5, rng)
        got = SymmetricFactor(sp.csc_matrix(dense), orderings).diagonal()
        want = np.diag(np.linalg.inv(dense))
        assert np.allclose(got, want, rtol=1e-12, atol=0)
    assert len(orderings._seen) == Orderings.KEEP
