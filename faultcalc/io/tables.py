"""Load the raw cells of an input: an .xlsx workbook or a folder of ``<sheet>.csv`` files.

No interpretation happens here beyond finding sheets, the header row and the spreadsheet row
number of every data row; cell values stay as the file holds them.
"""

from __future__ import annotations

import csv
import hashlib
import zipfile
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from ..errors import InputError, Problem

WORKBOOK_SUFFIXES = (".xlsx", ".xlsm")


@dataclass
class RawSheet:
    """One sheet: normalised header names and the data rows as {header: raw value}."""

    name: str
    headers: list[str]
    rows: list[tuple[int, dict[str, Any]]]
    blank_header_columns: list[int]  # 1-based columns with data under an empty header


@dataclass
class RawInput:
    sheets: dict[str, RawSheet]
    display_name: str
    sha256: str
    problems: list[Problem]


def _is_blank(value: Any) -> bool:
    return value is None or (isinstance(value, str) and value.strip() == "")


def _column_letter(index: int) -> str:
    letters = ""
    while index:
        index, rem = divmod(index - 1, 26)
        letters = chr(65 + rem) + letters
    return letters


def _sheet_from_rows(name: str, rows: list[tuple[int, list[Any]]], problems: list[Problem]):
    """Build a RawSheet from (row number, cell values) with the header first."""
    if not rows:
        return RawSheet(name, [], [], [])
    _, header_cells = rows[0]
    headers: list[str] = []
    seen: dict[str, int] = {}
    for position, cell in enumerate(header_cells, start=1):
        text = "" if _is_blank(cell) else str(cell).strip().lower()
        if text and text in seen:
            problems.append(
                Problem(
                    name,
                    1,
                    text,
                    cell,
                    f"the header appears twice (columns {_column_letter(seen[text])}"
                    f" and {_column_letter(position)}); keep one",
                )
            )
        elif text:
            seen[text] = position
        headers.append(text)
    data: list[tuple[int, dict[str, Any]]] = []
    blank_header_columns: set[int] = set()
    for number, cells in rows[1:]:
        if all(_is_blank(c) for c in cells):
            continue
        record: dict[str, Any] = {}
        for position, cell in enumerate(cells, start=1):
            header = headers[position - 1] if position <= len(headers) else ""
            if not header:
                if not _is_blank(cell):
                    blank_header_columns.add(position)
                continue
            if header not in record:
                record[header] = cell
        data.append((number, record))
    return RawSheet(name, [h for h in headers if h], data, sorted(blank_header_columns))


def _load_workbook(path: Path, problems: list[Problem]) -> dict[str, RawSheet]:
    import openpyxl

    try:
        book = openpyxl.load_workbook(path, read_only=True, data_only=True)
    except (zipfile.BadZipFile, OSError, KeyError, ValueError) as exc:
        raise InputError(
            [Problem(path.name, None, None, None, f"cannot be read as an .xlsx workbook ({exc})")]
        ) from None
    sheets: dict[str, RawSheet] = {}
    try:
        for ws in book.worksheets:
            name = ws.title.strip().lower()
            rows = [
                (number, list(values))
                for number, values in enumerate(ws.iter_rows(values_only=True), start=1)
            ]
            sheets[name] = _sheet_from_rows(name, rows, problems)
    finally:
        book.close()
    return sheets


def _load_csv_folder(path: Path, problems: list[Problem]) -> dict[str, RawSheet]:
    sheets: dict[str, RawSheet] = {}
    for file in sorted(path.glob("*.csv")):
        name = file.stem.strip().lower()
        try:
            with file.open(newline="", encoding="utf-8-sig") as handle:
                reader = csv.reader(handle)
                rows = []
                for cells in reader:
                    rows.append((reader.line_num, cells))
        except UnicodeDecodeError:
            problems.append(
                Problem(name, None, None, file.name, "is not UTF-8 text; save it as 'CSV UTF-8'")
            )
            continue
        except csv.Error as exc:
            problems.append(Problem(name, None, None, file.name, f"is not valid CSV ({exc})"))
            continue
        sheets[name] = _sheet_from_rows(name, rows, problems)
    return sheets


def input_sha256(path: Path) -> str:
    """SHA-256 of a workbook file; for a CSV folder, of each file's name and bytes in name order."""
    digest = hashlib.sha256()
    if path.is_dir():
        for file in sorted(path.glob("*.csv")):
            digest.update(file.name.encode() + b"\0")
            digest.update(file.read_bytes())
    else:
        digest.update(path.read_bytes())
    return digest.hexdigest()


def load_input(path: str | Path) -> RawInput:
    """Read every sheet of the input without interpreting cells.

    Raises InputError when the file cannot be read at all; problems inside sheets (a duplicate
    header) are returned in ``problems`` so the reader can report them with the rest.
    """
    path = Path(path)
    problems: list[Problem] = []
    if not path.exists():
        raise InputError([Problem(path.name, None, None, str(path), "no such file or folder")])
    if path.is_dir():
        if not any(path.glob("*.csv")):
            raise InputError(
                [Problem(path.name, None, None, str(path), "the folder holds no <sheet>.csv files")]
            )
        sheets = _load_csv_folder(path, problems)
    elif path.suffix.lower() in WORKBOOK_SUFFIXES:
        sheets = _load_workbook(path, problems)
    else:
        raise InputError(
            [
                Problem(
                    path.name,
                    None,
                    None,
                    path.suffix,
                    "expected an .xlsx workbook or a folder of <sheet>.csv files",
                )
            ]
        )
    return RawInput(sheets, path.name, input_sha256(path), problems)
