"""Time the all-bus Thevenin engine against one sparse factorization of the same matrix.

Synthetic radial feeders (random trees, invented impedances) built directly as admittance
matrices, so only the engine is timed. Prints a table; run: python benchmarks/engine.py
"""

from __future__ import annotations

import time

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as sla

from faultcalc.solve.thevenin import diagonal_of_inverse


def radial_admittance(n: int, loops: int = 0, seed: int = 0) -> sp.csc_matrix:
    rng = np.random.default_rng(seed)
    child = np.arange(1, n)
    parent = (rng.random(n - 1) * child).astype(np.int64)  # a random earlier bus
    a, b = list(child), list(parent)
    for _ in range(loops):  # loop-closing branches between buses near each other
        i = int(rng.integers(10, n))
        a.append(i)
        b.append(max(0, i - int(rng.integers(2, 10))))
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


def main() -> None:
    print(f"{'buses':>9} {'loops':>6} {'splu s':>8} {'all-bus s':>10} {'ratio':>6} {'us/bus':>7}")
    for n, loops in [(1_000, 0), (10_000, 0), (100_000, 0), (10_000, 200), (100_000, 2_000)]:
        y = radial_admittance(n, loops)
        t_lu = best_of(lambda y=y: sla.splu(y))
        t_all = best_of(lambda y=y: diagonal_of_inverse(y))
        print(
            f"{n:>9} {loops:>6} {t_lu:>8.3f} {t_all:>10.3f} {t_all / t_lu:>6.2f} "
            f"{1e6 * t_all / n:>7.2f}"
        )


if __name__ == "__main__":
    main()
