"""Shared helpers: write small inputs as CSV folders or workbooks from Python lists."""

from __future__ import annotations

import csv
from pathlib import Path

import pytest
from openpyxl import Workbook

REPO = Path(__file__).resolve().parents[1]


def write_csv_folder(folder: Path, sheets: dict[str, list[dict]]) -> Path:
    """One <sheet>.csv per entry; columns are the union of the row keys, in first-seen order."""
    folder.mkdir(parents=True, exist_ok=True)
    for name, rows in sheets.items():
        columns: list[str] = []
        for row in rows:
            columns += [k for k in row if k not in columns]
        with (folder / f"{name}.csv").open("w", newline="", encoding="utf-8") as handle:
            writer = csv.writer(handle)
            writer.writerow(columns)
            for row in rows:
                writer.writerow(["" if row.get(c) is None else row.get(c) for c in columns])
    return folder


def write_xlsx(path: Path, sheets: dict[str, list[dict]]) -> Path:
    book = Workbook()
    book.remove(book.active)
    for name, rows in sheets.items():
        ws = book.create_sheet(name)
        columns: list[str] = []
        for row in rows:
            columns += [k for k in row if k not in columns]
        ws.append(columns)
        for row in rows:
            ws.append([row.get(c) for c in columns])
    book.save(path)
    return path


def settings_rows(**settings) -> list[dict]:
    return [{"setting": k, "value": v} for k, v in settings.items()]


@pytest.fixture
def make_input(tmp_path):
    """make_input(sheets, name='case', kind='csv'|'xlsx') -> path of the written input."""
    count = {"n": 0}

    def make(sheets: dict[str, list[dict]], name: str | None = None, kind: str = "csv") -> Path:
        count["n"] += 1
        name = name or f"case{count['n']}"
        if kind == "xlsx":
            return write_xlsx(tmp_path / f"{name}.xlsx", sheets)
        return write_csv_folder(tmp_path / name, sheets)

    return make


def pytest_report_header(config):
    """Name the circuit simulator used by tests/crosscheck, and its version."""
    import shutil
    import subprocess

    path = shutil.which("ngspice")
    if path is None:
        return "cross-check simulator: ngspice not found (tests/crosscheck skip, or fail on CI)"
    out = subprocess.run([path, "--version"], capture_output=True, text=True, check=False)
    version = next(
        (line.strip("* ").strip() for line in out.stdout.splitlines() if "ngspice-" in line),
        "version unknown",
    )
    return f"cross-check simulator: {version} ({path})"


def without_origin(system):
    """A System without the input's name and SHA-256 (to compare one network read from two
    files)."""
    import dataclasses

    return dataclasses.replace(system, input_name="", input_sha256="")
