"""Time the all-bus Thevenin engine against one sparse factorization of the same matrix.

Synthetic feeders (random trees, invented impedances) built directly as admittance matrices,
so only the engine is timed: radial, with loop-closing branches between buses near each other
(``near``), and with loop-closing branches between random bus pairs anywhere in the tree
(``distant``). "One splu" is scipy.sparse.linalg.splu(y) with its default options on the same
matrix; the engine is diagonal_of_inverse (factor and the whole diagonal of the inverse).
Each figure is the best of three. Prints a table; run: python benchmarks/engine.py
"""

from __future__ import annotations

import time

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as sla

from faultcalc.solve.thevenin import diagonal_of_inverse

# Engine / one splu on the meshed rows, at most (issue #17).
TARGET = 3.0


def radial_admittance(
    n: int, loops: int = 0, seed: int = 0, distant: bool = False
) -> sp.csc_matrix:
    """A random tree of ``n`` buses, grounded at bus 0, with ``loops`` loop-closing branches:
    between buses 2 to 9 apart in number (near) or between random pairs (``distant``)."""
    rng = np.random.default_rng(seed)
    child = np.arange(1, n)
    parent = (rng.random(n - 1) * child).astype(np.int64)  # a random earlier bus
    a, b = list(child), list(parent)
    for _ in range(loops):
        if distant:
            i, j = (int(v) for v in rng.choice(n, 2, replace=False))
        else:  # buses near each other
            i = int(rng.integers(10, n))
            j = max(0, i - int(rng.integers(2, 10)))
        a.append(i)
        b.append(j)
    a, b = np.array(a), np.array(b)
    y = 1.0 / (rng.uniform(0.01, 0.1, len(a)) + 1j * rng.uniform(0.02, 0.3, len(a)))
    rows = np.concatenate([a, b, a, b, [0]])
    cols = np.concatenate([a, b, b, a, [0]])
    vals = np.concatenate([y, y, -y, -y, [1 / (0.001 + 0.01j)]])
    return sp.coo_matrix((vals, (rows, cols)), shape=(n, n)).tocsc()


def best_of(fn, repeat=3):
    best = float("inf")
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - start)
    return best


CASES = [  # (buses, loop-closing branches, distant)
    (1_000, 0, False),
    (10_000, 0, False),
    (100_000, 0, False),
    (10_000, 200, False),
    (100_000, 2_000, False),
    (100_000, 2_000, True),
    (10_000, 1_000, False),
    (10_000, 1_000, True),
]


def main() -> None:
    print(
        f"{'buses':>9} {'loops':>6} {'kind':>8} {'splu s':>8} {'all-bus s':>10} {'ratio':>6} "
        f"{'target':>7} {'us/bus':>7}"
    )
    for n, loops, distant in CASES:
        y = radial_admittance(n, loops, distant=distant)
        t_lu = best_of(lambda y=y: sla.splu(y))
        t_all = best_of(lambda y=y: diagonal_of_inverse(y))
        kind = "-" if not loops else "distant" if distant else "near"
        target = f"<= {TARGET:g}" if loops else ""
        print(
            f"{n:>9} {loops:>6} {kind:>8} {t_lu:>8.3f} {t_all:>10.3f} {t_all / t_lu:>6.2f} "
            f"{target:>7} {1e6 * t_all / n:>7.2f}"
        )


if __name__ == "__main__":
    main()
