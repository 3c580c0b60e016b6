"""Inverters benchmark: what the inverter iteration costs a study.

A 100,000-bus radial network (benchmarks/generate.py, invented data) is studied without and
with inverters at 20 of its buses (an inverters sheet of our own invention: 1 to 4 x 250 to
2,000 kVA at 13.8 kV, current limits 1.1 to 1.5, a third with a negative-sequence share, a
fifth with a cessation voltage). The iteration runs for every bus and fault type at once on
the columns of Z1 at the 20 inverter buses only. Printed, best of 3 each:

  study without  run_study of the network alone
  study with     run_study with the inverters sheet
  ratio          with / without
  iteration      the iteration alone (four fault types, every bus)
  sweeps         the most any bus needed, and the mean
  not converged  buses where a fault type did not converge

    python benchmarks/inverters.py [--buses 100000] [--inverter-buses 20]
"""

from __future__ import annotations

import argparse
import csv
import shutil
import time
from pathlib import Path

import numpy as np
from generate import generate

HERE = Path(__file__).resolve().parent
OUT = HERE / "out"


def best(action, repeats: int = 3):
    fastest, value = float("inf"), None
    for _ in range(repeats):
        start = time.perf_counter()
        value = action()
        fastest = min(fastest, time.perf_counter() - start)
    return fastest, value


def inverter_rows(n: int, count: int, seed: int = 7) -> list[list]:
    """``count`` invented inverter groups at distinct buses spread over the network."""
    rng = np.random.default_rng(seed)
    buses = rng.choice(np.arange(1, n), count, replace=False)
    rows = []
    for k, b in enumerate(buses.tolist()):
        share = k % 3 == 0
        rows.append(
            [
                f"PV{k}",
                f"N{b}",
                round(float(rng.uniform(250, 2000)), 1),
                13.8,
                int(rng.integers(1, 5)),
                round(float(rng.uniform(1.1, 1.5)), 3),
                "negative_share" if share else "positive",
                round(float(rng.uniform(10, 30)), 1) if share else "",
                0.5 if k % 5 == 0 else "",
            ]
        )
    return rows


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--buses", type=int, default=100_000)
    parser.add_argument("--inverter-buses", type=int, default=20)
    args = parser.parse_args()
    from faultcalc import read_system, run_study
    from faultcalc.study import analyse, inverter_solutions

    base = OUT / f"inverters-{args.buses}-base"
    with_inverters = OUT / f"inverters-{args.buses}-{args.inverter_buses}"
    for folder in (base, with_inverters):
        shutil.rmtree(folder, ignore_errors=True)
        generate(args.buses, folder)
    with (with_inverters / "inverters.csv").open("w", newline="") as f:
        w = csv.writer(f)
        w.writerow(
            [
                "inverter",
                "bus",
                "kva",
                "kv",
                "count",
                "current_limit_pu",
                "behaviour",
                "negative_share_pct",
                "cease_below_pu",
            ]
        )
        w.writerows(inverter_rows(args.buses, args.inverter_buses))
    plain = read_system(base)
    system = read_system(with_inverters)
    without, _ = best(lambda: run_study(plain))
    with_, result = best(lambda: run_study(system))
    a = analyse(system)
    iteration, solved = best(lambda: inverter_solutions(a, np.arange(len(system.buses))))
    sweeps = np.concatenate([s.sweeps for s in solved.values()])
    stuck = result.buses.inverter_note.str.contains("not converged").sum()
    print(f"{args.buses:,} buses, inverters at {args.inverter_buses} buses")
    print(f"  study without  {without:.2f} s")
    print(f"  study with     {with_:.2f} s")
    print(f"  ratio          {with_ / without:.2f}")
    print(f"  iteration      {iteration:.2f} s (four fault types, every bus)")
    print(f"  sweeps         at most {sweeps.max()}, mean {sweeps.mean():.1f}")
    print(f"  not converged  {stuck} buses")


if __name__ == "__main__":
    main()
