"""Thevenin impedance at every node: the diagonal of the inverse of the admittance matrix.

One sparse factorization ``P Y P^T = L D L^T`` (SuperLU with a fill-reducing symmetric
ordering and diagonal pivots), then the selected-inverse recurrence of Takahashi, Fagan and
Chen (1973), also given by Erisman and Tinney (1975), walks the columns of ``L`` from the last
to the first and produces the entries of ``Z = Y^-1`` on the pattern of ``L`` only. For a
radial network the pattern has one entry below the diagonal per column, so the cost grows
linearly with the number of buses. No linear solve per bus.

The admittance matrix of a network of R-L branches and sources is complex symmetric with
positive semi-definite real and negative semi-definite imaginary parts and a path to ground from
every node, so every leading minor is non-singular and diagonal pivots are safe.
"""

from __future__ import annotations

import bisect

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as sla
from scipy.sparse.csgraph import breadth_first_order, connected_components


class FactorizationError(RuntimeError):
    """The symmetric factorization could not be formed with diagonal pivots."""


class SymmetricFactor:
    """``P Y P^T = L D L^T`` of a complex symmetric admittance matrix, kept for reuse.

    ``diagonal()`` gives the whole diagonal of ``Y^-1``; ``columns(nodes)`` solves for the
    columns of ``Y^-1`` at a few nodes (fault contributions), each a pair of triangular solves.
    """

    def __init__(self, y: sp.spmatrix):
        self.n = y.shape[0]
        self._lu = None
        self._tree = None  # (postorder, parent position of each position) for a forest
        if not self.n:
            return
        y = sp.csc_matrix(y)
        order = _forest_postorder(y)
        if order is not None:
            post, parent_pos = order
            self._tree = (post, parent_pos)
            position = np.empty(self.n, dtype=np.int64)
            position[post] = np.arange(self.n)
            c = y.tocoo()
            y = sp.csc_matrix((c.data, (position[c.row], position[c.col])), shape=y.shape)
            spec = "NATURAL"  # children before parents: no fill at all
        else:
            spec = "MMD_AT_PLUS_A"
        self._lu = sla.splu(
            y, permc_spec=spec, diag_pivot_thresh=0.0, options={"SymmetricMode": True}
        )
        if not np.array_equal(self._lu.perm_r, self._lu.perm_c):
            raise FactorizationError("the factorization needed off-diagonal pivots")

    def columns(self, nodes) -> np.ndarray:
        """Columns of ``Y^-1`` at ``nodes``: an array of shape (n, len(nodes))."""
        nodes = np.atleast_1d(np.asarray(nodes, dtype=np.int64))
        rhs = np.zeros((self.n, len(nodes)), dtype=complex)
        rhs[nodes, np.arange(len(nodes))] = 1.0
        if not self.n:
            return rhs
        if self._tree is None:
            return self._lu.solve(rhs)
        post = self._tree[0]
        out = np.empty_like(rhs)
        out[post] = self._lu.solve(rhs[post])
        return out

    def diagonal(self) -> np.ndarray:
        if self._tree is not None:
            return self._forest_diagonal()
        return self._general_diagonal()

    def _forest_diagonal(self) -> np.ndarray:
        """Radial networks: ``Z_jj = 1/d_j + l_pj^2 Z_pp`` from the root down, evaluated for
        all buses at once by pointer jumping (log2 of the depth steps of whole-array work)."""
        post, parent_pos = self._tree
        n = self.n
        low = self._lu.L.tocoo()
        below = low.row != low.col
        l_pj = np.zeros(n, dtype=complex)
        l_pj[low.col[below]] = low.data[below]
        a = 1.0 / self._lu.U.diagonal()
        m = l_pj * l_pj
        up = parent_pos.copy()
        root = up < 0
        up[root] = np.flatnonzero(root)
        m[root] = 0.0
        while True:
            a = a + m * a[up]
            m = m * m[up]
            nxt = up[up]
            if np.array_equal(nxt, up):
                break
            up = nxt
        z = np.empty(n, dtype=complex)
        z[post] = a
        return z

    def _general_diagonal(self) -> np.ndarray:
        """Diagonal of ``Y^-1`` by the selected-inverse recurrence on the pattern of ``L``."""
        n = self.n
        if n == 0:
            return np.zeros(0, dtype=complex)
        lu = self._lu
        low = lu.L.tocsc()
        low.sort_indices()
        inv_d = (1.0 / lu.U.diagonal()).tolist()
        ptr = low.indptr.tolist()
        idx = low.indices.tolist()
        val = low.data.tolist()
        z_low = [0j] * len(val)  # Z on the pattern of L, strictly below the diagonal
        z_diag = [0j] * n
        for j in range(n - 1, -1, -1):
            start, stop = ptr[j] + 1, ptr[j + 1]  # each column's first entry is its diagonal
            if start == stop:
                z_diag[j] = inv_d[j]
                continue
            if stop - start == 1:  # one entry below the diagonal: every column of a radial net
                parent, l_pj = idx[start], val[start]
                z_pj = -l_pj * z_diag[parent]
                z_low[start] = z_pj
                z_diag[j] = inv_d[j] - l_pj * z_pj
                continue
            rows = idx[start:stop]
            ls = val[start:stop]
            acc = inv_d[j]
            for a, k in enumerate(rows):
                total = 0j
                for b, m in enumerate(rows):
                    if m == k:
                        z_mk = z_diag[k]
                    else:
                        lo, hi = (k, m) if k < m else (m, k)
                        pos = bisect.bisect_left(idx, hi, ptr[lo], ptr[lo + 1])
                        if pos == ptr[lo + 1] or idx[pos] != hi:
                            raise FactorizationError("the factor's pattern is not closed")
                        z_mk = z_low[pos]
                    total += ls[b] * z_mk
                z_low[start + a] = -total
                acc -= ls[a] * -total
            z_diag[j] = acc
        # The factored matrix is y[q][:, q] with q = argsort(perm_c).
        return np.asarray(z_diag, dtype=complex)[lu.perm_c]


def _forest_postorder(y: sp.csc_matrix):
    """For a matrix whose graph is a forest: a postorder (children before parents) and, per
    position, the position of its parent (-1 for roots); None when the graph has a loop."""
    n = y.shape[0]
    upper = sp.triu(y, k=1, format="coo")  # duplicates are summed in csc: one entry an edge
    edges = np.stack([upper.row, upper.col])
    pattern = sp.coo_matrix((np.ones(len(upper.row)), (upper.row, upper.col)), shape=(n, n))
    count, labels = connected_components(pattern, directed=False)
    if edges.shape[1] != n - count:
        return None  # a loop somewhere: the general path
    # One breadth-first search from a virtual root joined to the first node of every tree.
    _, first = np.unique(labels, return_index=True)
    a = np.concatenate([edges[0], np.full(count, n)])
    b = np.concatenate([edges[1], first])
    graph = sp.coo_matrix((np.ones(len(a)), (a, b)), shape=(n + 1, n + 1)).tocsr()
    order, pred = breadth_first_order(graph, n, directed=False, return_predecessors=True)
    order = order[1:]  # drop the virtual root
    post = order[::-1]
    position = np.empty(n, dtype=np.int64)
    position[post] = np.arange(n)
    parents = pred[post]
    parent_pos = np.where(parents == n, -1, position[np.where(parents == n, 0, parents)])
    return post, parent_pos


def diagonal_of_inverse(y: sp.spmatrix) -> np.ndarray:
    """Diagonal of ``inv(y)`` for a complex symmetric sparse matrix ``y``.

    Examples
    --------
    >>> import numpy as np, scipy.sparse as sp
    >>> y = sp.csc_matrix(np.array([[3.0, -1.0], [-1.0, 2.0]], dtype=complex))
    >>> np.round(diagonal_of_inverse(y).real, 6)
    array([0.4, 0.6])
    """
    return SymmetricFactor(y).diagonal()
