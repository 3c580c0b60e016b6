"""Regenerate sample_systems/ from the bundled samples in faultcalc/samples/.

The CSV folders are copied as they are; each .xlsx holds the same sheets with numbers stored as
numbers, as a spreadsheet program would save them. Run: python scripts/make_samples.py
"""

from __future__ import annotations

import csv
import shutil
from pathlib import Path

from openpyxl import Workbook

ROOT = Path(__file__).resolve().parents[1]
SOURCE = ROOT / "faultcalc" / "samples"
TARGET = ROOT / "sample_systems"
SHEET_ORDER = (
    "study",
    "buses",
    "sources",
    "transformers",
    "cables",
    "impedances",
    "machines",
    "cases",
)


def _cell(text: str):
    if text == "":
        return None
    try:
        number = float(text)
    except ValueError:
        return text
    return int(number) if number.is_integer() and "." not in text else number


def make(name: str) -> None:
    folder = SOURCE / name
    out = TARGET / name
    if out.exists():
        shutil.rmtree(out)
    out.mkdir(parents=True)
    book = Workbook()
    book.remove(book.active)
    files = sorted(folder.glob("*.csv"), key=lambda f: SHEET_ORDER.index(f.stem))
    for file in files:
        shutil.copyfile(file, out / file.name)
        ws = book.create_sheet(file.stem)
        with file.open(newline="", encoding="utf-8") as handle:
            for row in csv.reader(handle):
                ws.append([_cell(c) for c in row])
    book.save(TARGET / f"{name}.xlsx")


if __name__ == "__main__":
    for sample in sorted(p.name for p in SOURCE.iterdir() if p.is_dir() and p.name[0] != "_"):
        make(sample)
        print(f"wrote sample_systems/{sample}/ and sample_systems/{sample}.xlsx")
