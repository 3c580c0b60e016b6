"""Cases benchmark: what a `cases` sheet costs to read and to study.

A 100,000-bus radial network (benchmarks/generate.py, invented data) is read with and without a
10-case `cases` sheet of our own invention (utility strength changed, a cable out, a cable's
length changed, a motor out, a bus's feeder cable re-sized, and so on: each case changes one to
three elements). Printed, best of 3 each:

  read base     read_system of the folder without cases.csv
  read cases    read_system of the folder with it
  ratio         read cases / read base (target: at most 2)
  study base    run_study of the base alone
  per case      (run_study with the cases - study base) / number of cases (target: at most
                the study base)

With ``--single K`` the sheet is instead K cases of one element each (a cable's length, a
motor out, the utility's strength, in turn), and the run against the base study is printed
with the #17 target (100 single-element cases on 100,000 buses within 5 x the base study);
``--meshed`` studies the generated network with its 2 % loop-closing cables; ``--fresh``
factorizes every case afresh (no low-rank updates), for comparison.

    python benchmarks/cases.py [--buses 100000] [--single 100] [--meshed] [--fresh]
"""

from __future__ import annotations

import argparse
import csv
import shutil
import time
from pathlib import Path

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


def cases_rows(n: int) -> list[list[str]]:
    """Ten invented cases, each changing one to three elements of the generated network."""
    c = [f"C{k}" for k in (n // 5, n // 3, n // 2, (2 * n) // 3, n - 2)]
    return [
        ["utility minimum", "UTILITY", "sc_mva", "450", ""],
        ["utility future", "UTILITY", "sc_mva", "900", ""],
        ["utility future", "UTILITY", "xr", "15", ""],
        ["feeder bus out", f"N{n // 7}", "in_service", "no", "no"],
        ["long lateral", c[1], "length_m", "950", ""],
        ["motor off", "M3", "in_service", "no", ""],
        ["motors off", "M4", "in_service", "no", ""],
        ["motors off", "M5", "in_service", "no", ""],
        ["bigger cable", c[2], "r_ohm_per_km", "0.08", ""],
        ["bigger cable", c[2], "x_ohm_per_km", "0.09", ""],
        ["two feeders", c[3], "sets", "2", ""],
        ["weak zero sequence", "UTILITY", "slg_ka", "9", ""],
        ["end of line", c[4], "length_m", "20", ""],
        ["all changes", "UTILITY", "sc_mva", "450", ""],
        ["all changes", c[1], "length_m", "700", ""],
        ["all changes", "M3", "in_service", "no", ""],
    ]


def single_rows(n: int, count: int) -> list[list[str]]:
    """``count`` invented cases of one element each."""
    rows = []
    for k in range(count):
        if k % 3 == 0:
            rows.append([f"cable {k}", f"C{1 + (k * 7919) % (n - 2)}", "length_m", "777", ""])
        elif k % 3 == 1:
            rows.append([f"motor {k}", f"M{k}", "in_service", "no", ""])
        else:
            rows.append([f"utility {k}", "UTILITY", "sc_mva", str(400 + k), ""])
    return rows


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--buses", type=int, default=100_000)
    parser.add_argument("--single", type=int, default=0)
    parser.add_argument("--meshed", action="store_true")
    parser.add_argument("--fresh", action="store_true", help="every case factorized afresh")
    args = parser.parse_args()
    from faultcalc import read_system, run_study
    from faultcalc.solve import lowrank

    lowrank.UPDATE_CASES = not args.fresh

    kind = "meshed-" if args.meshed else ""
    base = OUT / f"cases-base-{kind}{args.buses}"
    with_cases = OUT / f"cases-{kind}{args.single or ''}-{args.buses}"
    if not (base / "buses.csv").exists():
        generate(args.buses, base, meshed=args.meshed)
    if with_cases.exists():
        shutil.rmtree(with_cases)
    shutil.copytree(base, with_cases)
    with (with_cases / "cases.csv").open("w", newline="") as handle:
        writer = csv.writer(handle)
        writer.writerow(["case", "element", "column", "value", "label"])
        writer.writerows(
            single_rows(args.buses, args.single) if args.single else cases_rows(args.buses)
        )
    read_system(base)  # imports and caches warmed
    read_base, system = best(lambda: read_system(base))
    read_cases, cased = best(lambda: read_system(with_cases))
    count = len(cased.cases)
    study_base, _ = best(lambda: run_study(system))
    counts = {}
    real = lowrank.StudyFactors.__init__

    def counting(self):
        real(self)
        counts["factors"] = self

    lowrank.StudyFactors.__init__ = counting
    study_all, _ = best(lambda: run_study(cased), repeats=1 if args.single else 3)
    lowrank.StudyFactors.__init__ = real
    per_case = (study_all - study_base) / count
    f = counts["factors"]
    print(f"{args.buses:,} buses{' meshed' if args.meshed else ''}, {count} cases")
    print(f"factorizations of the cases: {f.updates} as updates, {f.fresh} afresh")
    print(f"read base   {read_base:8.3f} s")
    print(f"read cases  {read_cases:8.3f} s")
    target = "the target of 2 is for the ten-case sheet" if args.single else "target at most 2"
    print(f"ratio       {read_cases / read_base:8.2f}   ({target})")
    print(f"study base  {study_base:8.3f} s")
    print(f"per case    {per_case:8.3f} s   (target at most the study base)")
    if args.single:
        print(
            f"all cases   {study_all:8.3f} s   = {study_all / study_base:.2f} x the base study "
            "(target: 100 single-element cases on 100,000 buses within 5 x)"
        )


if __name__ == "__main__":
    main()
