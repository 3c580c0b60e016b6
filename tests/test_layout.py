"""The kept matrix layouts a study with cases assembles its cases' matrices by.

Check values: scipy.sparse's own COO to CSC assembly with duplicates summed (a general-purpose
reference library), entry by entry.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from faultcalc.solve.thevenin import Layout, Orderings


def _entries(seed: int, n: int = 200, m: int = 900):
    rng = np.random.default_rng(seed)
    rows, cols = rng.integers(0, n, m), rng.integers(0, n, m)  # with duplicates
    return rows, cols, rng.normal(size=m) + 1j * rng.normal(size=m), n


def test_a_layout_assembles_what_scipy_assembles():
    rows, cols, values, n = _entries(1)
    layout = Layout(rows, cols, n)
    for scale in (1.0, -3.5 + 2j):  # the same entries with other values: the layout's use
        got = layout.matrix(values * scale)
        want = sp.coo_matrix((values * scale, (rows, cols)), shape=(n, n)).tocsc()
        want.sum_duplicates()
        assert np.array_equal(got.indptr, want.indptr)
        assert np.array_equal(got.indices, want.indices)
        np.testing.assert_allclose(got.data, want.data, rtol=1e-15, atol=1e-15)
        assert got.has_canonical_format


def test_layouts_are_kept_only_when_asked_and_found_only_for_the_same_entries():
    rows, cols, _, n = _entries(2)
    orderings = Orderings()
    assert orderings.assembly(rows, cols, n) is None  # a study without cases keeps none
    orderings.keep_layouts = True
    kept = orderings.assembly(rows, cols, n)
    orderings.keep_layouts = False
    assert orderings.assembly(rows.copy(), cols.copy(), n) is kept
    moved = cols.copy()
    moved[0] = (moved[0] + 1) % n
    assert orderings.assembly(rows, moved, n) is None  # one entry elsewhere: not the layout
    assert orderings.assembly(rows[:-1], cols[:-1], n) is None
