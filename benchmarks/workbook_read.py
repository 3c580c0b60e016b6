"""Workbook reading against the compiled cell loader it is built on, and against CSV.

Builds (into benchmarks/out/, invented data from benchmarks/generate.py) a network of N buses
as a CSV folder and as an .xlsx workbook (openpyxl's write-only writer, numbers as numbers),
then prints, each the best of 3 runs in this process:

  calamine     python-calamine loading the cells of every sheet (CalamineWorkbook.from_path,
               then get_sheet_by_name(n).to_python() for each sheet): the floor
  load_input   faultcalc's workbook loader: the cells of every sheet read, with the checks
               (bounds, grid, merged/hidden cells, formulas without a value, percent formats)
  read xlsx    faultcalc.read_system of the workbook, end to end
  read csv     faultcalc.read_system of the CSV folder
  ratios       load_input / calamine, read xlsx / calamine (target 1.5), read xlsx / read csv

    python benchmarks/workbook_read.py            # 50,000 buses
    python benchmarks/workbook_read.py --buses 5000
"""

from __future__ import annotations

import argparse
import csv
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
OUT = HERE / "out"
sys.path.insert(0, str(HERE))

from generate import generate  # noqa: E402 - the benchmark folder's own module


def _number(text: str):
    """A CSV cell as the number it holds (int or float), or the text."""
    try:
        return int(text)
    except ValueError:
        pass
    try:
        return float(text)
    except ValueError:
        return text


def write_workbook(folder: Path, path: Path) -> Path:
    """The CSV folder as one workbook, a sheet per file, numbers written as numbers."""
    from openpyxl import Workbook

    book = Workbook(write_only=True)
    for file in sorted(folder.glob("*.csv")):
        sheet = book.create_sheet(file.stem)
        with file.open(newline="") as handle:
            for k, row in enumerate(csv.reader(handle)):
                sheet.append(row if k == 0 else [_number(c) for c in row])
    book.save(path)
    return path


def build(buses: int) -> tuple[Path, Path]:
    folder = OUT / f"radial-{buses}"
    path = OUT / f"radial-{buses}.xlsx"
    if not (folder / "buses.csv").exists():
        generate(buses, folder)
    if not path.exists() or path.stat().st_mtime < (folder / "buses.csv").stat().st_mtime:
        write_workbook(folder, path)
    return folder, path


def calamine_cells(path: Path) -> int:
    from python_calamine import CalamineWorkbook

    book = CalamineWorkbook.from_path(path)
    cells = 0
    for name in book.sheet_names:
        cells += sum(len(r) for r in book.get_sheet_by_name(name).to_python())
    book.close()
    return cells


def best_of(action, repeats: int = 3) -> float:
    fastest = float("inf")
    for _ in range(repeats):
        start = time.perf_counter()
        action()
        fastest = min(fastest, time.perf_counter() - start)
    return fastest


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--buses", type=int, default=50_000)
    args = parser.parse_args()
    folder, path = build(args.buses)
    from faultcalc import read_system
    from faultcalc.read.tables import load_input

    read_system(folder)  # imports and first-use costs out of the figures
    read_system(path)
    figures = {
        "calamine": best_of(lambda: calamine_cells(path)),
        "load_input": best_of(lambda: load_input(path)),
        "read xlsx": best_of(lambda: read_system(path)),
        "read csv": best_of(lambda: read_system(folder)),
    }
    size = path.stat().st_size / 2**20
    print(f"{args.buses:,} buses, workbook {size:.1f} MB ({path}), best of 3:")
    for name, seconds in figures.items():
        print(f"  {name:<11} {seconds:7.3f} s")
    floor = figures["calamine"]
    print(f"  load_input / calamine  {figures['load_input'] / floor:5.2f}")
    print(f"  read xlsx / calamine   {figures['read xlsx'] / floor:5.2f}  (target 1.5)")
    csv_ratio = figures["read xlsx"] / figures["read csv"]
    print(f"  read xlsx / read csv   {csv_ratio:5.2f}  (target 20)")


if __name__ == "__main__":
    main()
