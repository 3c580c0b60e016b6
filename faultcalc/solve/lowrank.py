"""Cases as low-rank updates of the base case's factorizations.

A case that changes a few elements (one out of service, an impedance, a source's strength)
changes the admittance matrix in the rows of the few nodes those elements touch: ``Y' = Y +
E_T D E_T^T`` with ``D`` a small dense block on the touched nodes ``T``. By the Woodbury
identity (Woodbury 1950; Hager, "Updating the inverse of a matrix", SIAM Review 31, 1989)

    Z' = Z - W (I + D W_T)^-1 D W^T,    W = Z[:, T],  W_T = Z[T, T],

so every quantity the study takes from a factorization (the diagonal, columns, solves, the
values on the branches) costs ``len(T)`` solves against the base factor and whole-array work
of order ``n len(T)^2``, not a new factorization. The identity holds for any two matrices of
one size, whatever their nodes stand for; a case whose matrix differs in many rows, or whose
update would lose digits (an ill-conditioned capacitance matrix, or a Z' much smaller than Z),
is factorized afresh.

``StudyFactors`` is the study's cache of orderings (thevenin.Orderings) that also keeps the
base case's factorizations: the study marks the base case, and every factorization a case asks
for is then tried as an update of the base factorization of the same size it differs least
from.
"""

from __future__ import annotations

import contextlib

import numpy as np
import scipy.sparse as sp

from .thevenin import Orderings, SymmetricFactor

# False: every case factorized afresh (the tests compare the two ways).
UPDATE_CASES = True
# At most this many touched nodes for an update (its cost: that many solves, and n times its
# square in whole-array work); more, and the case is factorized afresh.
MAX_UPDATE_NODES = 64
# An entry of the difference of two matrices smaller than this, relative to the largest entry
# of its row in the base matrix, is rounding (the same admittances summed in another order).
ROUNDING = 1e-13
# Refuse the update when the capacitance matrix is worse conditioned than this, or when the
# correction is this many times larger than what it leaves (digits lost to cancellation).
MAX_CONDITION = 1e8
MAX_CANCELLATION = 1e5


def factorize(y: sp.spmatrix, orderings: Orderings | None = None):
    """A factorization of ``y``: an update of a base factorization when ``orderings`` is a
    StudyFactors past its base case and one fits, else ``SymmetricFactor(y, orderings)``."""
    if isinstance(orderings, StudyFactors):
        return orderings.factor(y)
    return SymmetricFactor(y, orderings)


class StudyFactors(Orderings):
    """Orderings, and the base case's factorizations for the cases to update.

    ``base()`` brackets the base case's work: the factorizations made inside it are kept
    (with their matrices); after it, ``factor(y)`` tries each kept one of y's size.
    """

    def __init__(self) -> None:
        super().__init__()
        self._keeping = False
        self._kept: list[tuple[_Matrix, _Kept]] = []
        self.updates = 0  # factorizations a case had as updates (for tests and benchmarks)
        self.fresh = 0  # factorizations a case had afresh

    @contextlib.contextmanager
    def base(self, keep: bool = True):
        """Bracket the base case; ``keep`` False (a study without cases) keeps nothing."""
        self._keeping = self.keep_layouts = keep
        try:
            yield
        finally:
            self._keeping = self.keep_layouts = False

    def factor(self, y: sp.spmatrix):
        y = _canonical(y)
        if self._keeping:
            kept = _Kept(SymmetricFactor(y, self))
            self._kept.append((_Matrix(y), kept))
            return kept
        update = self._update(y) if UPDATE_CASES else None
        if update is not None:
            self.updates += 1
            return update
        self.fresh += 1
        return SymmetricFactor(y, self)

    def _update(self, y: sp.csc_matrix):
        best = None
        sized = [(base, kept) for base, kept in self._kept if base.y.shape == y.shape]
        # those of y's own pattern first: their difference is entry by entry, and a case
        # that changes values only is found among them (the others' differences are sparse
        # subtractions, the costly kind)
        sized.sort(key=lambda pair: not pair[0].same_pattern(y))
        for base, kept in sized:
            touched, block = base.difference(y)
            if best is None or len(touched) < len(best[0]):
                best = (touched, block, kept)
            if len(touched) <= 2:  # a single element's change: look no further
                break
        if best is None:
            return None
        touched, block, kept = best
        if not len(touched):
            return kept
        if block is None or len(touched) > MAX_UPDATE_NODES or 2 * len(touched) >= y.shape[0]:
            return None
        return UpdatedFactor.of(kept, touched, block)


def _canonical(y: sp.spmatrix) -> sp.csc_matrix:
    y = sp.csc_matrix(y)
    if not y.has_canonical_format:
        y = y.copy()
        y.sum_duplicates()
    return y


class _Matrix:
    """A base case's matrix, with the size of its largest entry in each column (the matrix
    is symmetric: in each row)."""

    def __init__(self, y: sp.csc_matrix):
        self.y = y
        self.column = np.repeat(np.arange(y.shape[1]), np.diff(y.indptr))  # of each entry
        self.scale = np.zeros(y.shape[1])
        np.maximum.at(self.scale, self.column, np.abs(y.data))
        # per entry, what a difference must exceed to be more than rounding
        self.floor = ROUNDING * np.maximum(self.scale[self.column], self.scale[y.indices])

    def same_pattern(self, y: sp.csc_matrix) -> bool:
        return np.array_equal(y.indptr, self.y.indptr) and np.array_equal(y.indices, self.y.indices)

    def difference(self, y: sp.csc_matrix):
        """The nodes where ``y`` differs from this matrix beyond rounding, and the dense block
        of the difference on them (None when they are more than MAX_UPDATE_NODES)."""
        if self.same_pattern(y):  # values changed: entry by entry, the floors kept
            d = sp.csc_matrix((y.data - self.y.data, y.indices, y.indptr), shape=y.shape)
            column, floor = self.column, self.floor
        else:  # elements in or out
            d = (y - self.y).tocsc()
            column = np.repeat(np.arange(d.shape[1]), np.diff(d.indptr))
            floor = ROUNDING * np.maximum(self.scale[column], self.scale[d.indices])
        real = np.abs(d.data) > floor
        if np.count_nonzero(real) > MAX_UPDATE_NODES**2:  # too many to lie on few nodes
            return np.arange(y.shape[0]), None
        touched = np.unique(np.concatenate([column[real], d.indices[real]]))
        if len(touched) > MAX_UPDATE_NODES:
            return touched, None
        return touched, d[touched][:, touched].toarray()


class _Kept:
    """A base case's factorization with its diagonal kept (the updates start from it)."""

    def __init__(self, factor: SymmetricFactor):
        self._factor = factor
        self._diagonal = None

    def __getattr__(self, name):
        if name.startswith("__") or name == "_factor":  # copies and pickles: not the factor's
            raise AttributeError(name)
        return getattr(self._factor, name)

    def diagonal(self) -> np.ndarray:
        if self._diagonal is None:
            self._diagonal = self._factor.diagonal()
        return self._diagonal.copy()


class UpdatedFactor:
    """``(Y + E_T D E_T^T)^-1`` from the factorization of Y (the module docstring): the
    interface of thevenin.SymmetricFactor (``n``, ``diagonal``, ``columns``, ``solve``,
    ``pair_values``)."""

    def __init__(self, base, touched, w, m, diagonal):
        self.n = base.n
        self._base, self._t, self._w, self._m = base, touched, w, m
        self._diagonal = diagonal

    @classmethod
    def of(cls, base: _Kept, touched: np.ndarray, block: np.ndarray):
        """The update, or None when it would not be accurate (see the module docstring)."""
        w = base.columns(touched)  # Z[:, T]
        capacitance = np.eye(len(touched)) + block @ w[touched]
        if not np.isfinite(capacitance).all() or np.linalg.cond(capacitance) > MAX_CONDITION:
            return None
        m = np.linalg.solve(capacitance, block)  # (I + D W_T)^-1 D
        correction = np.einsum("ik,kl,il->i", w, m, w)
        z = base.diagonal() - correction
        if np.any(np.abs(correction) > MAX_CANCELLATION * np.abs(z)):
            return None
        return cls(base, touched, w, m, z)

    def diagonal(self) -> np.ndarray:
        return self._diagonal.copy()

    def columns(self, nodes) -> np.ndarray:
        nodes = np.atleast_1d(np.asarray(nodes, dtype=np.int64))
        return self._base.columns(nodes) - self._w @ (self._m @ self._w[nodes].T)

    def solve(self, rhs: np.ndarray) -> np.ndarray:
        rhs = np.asarray(rhs, dtype=complex)
        return self._base.solve(rhs) - self._w @ (self._m @ (self._w.T @ rhs))

    def pair_values(self, i, j):
        try:
            base = self._base.pair_values(i, j)
        except ValueError:  # a branch the base case does not have
            return None
        if base is None:
            return None
        i, j = np.asarray(i, np.int64), np.asarray(j, np.int64)
        return base - np.einsum("ik,kl,il->i", self._w[i], self._m, self._w[j])
