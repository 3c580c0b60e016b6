"""Contributions benchmark: `faultcalc study` end to end with and without
`--contributions all` on a generated 10,000-bus radial network (benchmarks/generate.py,
invented data: one utility source and motors on a tenth of the buses, so every fault has about
1,000 contributions and the table about 20 million rows).

Printed, best of --repeat runs, each in a fresh interpreter (what a user waits for):

  study           faultcalc study INPUT -o OUT.xlsx
  contributions   the same with --contributions all (the table, the CSV of every row, the
                  workbook's cut)
  ratio           contributions / study (the #17 target: at most 10)

    python benchmarks/contributions.py [--buses 10000] [--repeat 2]
"""

from __future__ import annotations

import argparse
import subprocess
import sys
import time
from pathlib import Path

from generate import generate

HERE = Path(__file__).resolve().parent
OUT = HERE / "out"


def wall(args) -> float:
    begin = time.perf_counter()
    subprocess.run(
        [sys.executable, "-m", "faultcalc.cli", *map(str, args)], check=True, capture_output=True
    )
    return time.perf_counter() - begin


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--buses", type=int, default=10_000)
    parser.add_argument("--repeat", type=int, default=2)
    args = parser.parse_args()
    folder = OUT / f"radial-{args.buses}"
    if not (folder / "cables.csv").exists():
        generate(args.buses, folder)
    target = OUT / f"contributions-{args.buses}.xlsx"
    base = ["study", folder, "-o", target, "--overwrite"]
    study = min(wall(base) for _ in range(args.repeat))
    every = min(wall([*base, "--contributions", "all"]) for _ in range(args.repeat))
    rows = sum(1 for _ in open(target.with_name(target.stem + "-contributions.csv"))) - 1
    size_mb = target.with_name(target.stem + "-contributions.csv").stat().st_size / 1e6
    print(f"{args.buses:,} buses, {rows:,} contribution rows ({size_mb:,.0f} MB of CSV)")
    print(f"study          {study:8.2f} s")
    print(f"contributions  {every:8.2f} s")
    print(f"ratio          {every / study:8.2f}   (target at most 10)")
    for p in OUT.glob(f"contributions-{args.buses}*"):
        p.unlink()


if __name__ == "__main__":
    main()
