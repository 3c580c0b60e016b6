"""Load the raw cells of an input: an .xlsx workbook or a folder of ``<sheet>.csv`` files.

No interpretation happens here beyond finding sheets, the header row and the spreadsheet row
number of every data row; cell values stay as the file holds them.
"""

from __future__ import annotations

import csv
import hashlib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ..errors import InputError, Problem
from . import sheetnames
from .marked import FormulaCell, PercentCell  # noqa: F401 - re-exported: tables.PercentCell

WORKBOOK_SUFFIXES = (".xlsx", ".xlsm")
# The sheets a workbook loader parses: the known ones and those named close to one (the reader
# looks at their header row to refuse them); a workbook's other sheets are not parsed.
READ_SHEETS = sheetnames.ReadSheets()

# Bounds on what is read (a clear message past them, never an exhausted machine).
MAX_FILE_BYTES = 1 << 30  # one workbook or CSV file
MAX_UNCOMPRESSED_BYTES = 4 << 30  # all parts of a workbook, unpacked
MAX_COMPRESSION_RATIO = 400  # a part unpacking to more than this is a decompression bomb
# XML elements in all the parts of a workbook that are parsed, per byte of the file: the time
# of a read follows them. Measured: 0.4 to 0.8 on workbooks with 20,000 to 200,000 rows of
# real-looking data; 1.45 on the most regular one we could make (100,000 rows of 20 equal
# strings). A workbook of any size may hold MIN_XML_ELEMENTS (a few seconds of reading).
MAX_XML_ELEMENTS_PER_BYTE = 4
MIN_XML_ELEMENTS = 1_000_000


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
    notes: list[str] = field(default_factory=list)  # warnings found while loading


def is_blank(value: Any) -> bool:
    """An empty cell: None or only white space (a formula without a saved value is not)."""
    if value is None:
        return True
    if type(value) is str:
        return not value or value.isspace()
    return False


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
        text = "" if is_blank(cell) else str(cell).strip().lower()
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
        if all(is_blank(c) for c in cells):
            continue
        record: dict[str, Any] = {}
        for position, cell in enumerate(cells, start=1):
            header = headers[position - 1] if position <= len(headers) else ""
            if not header:
                if not is_blank(cell):
                    blank_header_columns.add(position)
                continue
            if header not in record:
                record[header] = cell
        data.append((number, record))
    return RawSheet(name, [h for h in headers if h], data, sorted(blank_header_columns))


def _refuse(path: Path, message: str) -> InputError:
    return InputError([Problem(path.name, None, None, None, message)])


def _load_workbook(path: Path, problems: list[Problem], notes: list[str]) -> dict[str, RawSheet]:
    from . import xlsx  # the workbook loader (it reads the bounds above)

    rows = xlsx.load_workbook_rows(path, notes)
    return {name: _sheet_from_rows(name, cells or [], problems) for name, cells in rows.items()}


def csv_files(folder: Path) -> list[Path]:
    """The CSV files of an input folder, in name order (`.csv` in any capitals)."""
    return sorted(p for p in folder.iterdir() if p.suffix.lower() == ".csv" and p.is_file())


def _load_csv_folder(path: Path, problems: list[Problem]) -> dict[str, RawSheet]:
    sheets: dict[str, RawSheet] = {}
    files: dict[str, str] = {}
    for file in csv_files(path):
        name = file.stem.strip().lower()
        if name in files:
            problems.append(
                Problem(
                    name,
                    None,
                    None,
                    file.name,
                    f"a second file for the sheet (with {files[name]}); keep one",
                )
            )
            continue
        files[name] = file.name
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
    if path.is_dir():
        digest = hashlib.sha256()
        for file in csv_files(path):
            add_file(digest, file.name, file.read_bytes())
        return digest.hexdigest()
    return hashlib.sha256(path.read_bytes()).hexdigest()


def add_file(digest, name: str, data: bytes) -> None:
    """Add one CSV file of a folder to its SHA-256 (files in name order; see input_sha256)."""
    digest.update(name.encode() + b"\0")
    digest.update(data)


def load_input(path: str | Path) -> RawInput:
    """Read every sheet of the input without interpreting cells.

    Raises InputError when the file cannot be read at all; problems inside sheets (a duplicate
    header) are returned in ``problems`` so the reader can report them with the rest.
    """
    path = Path(path)
    problems: list[Problem] = []
    if not path.exists():
        raise InputError([Problem(path.name, None, None, str(path), "no such file or folder")])
    files = csv_files(path) if path.is_dir() else [path]
    for file in files:
        if file.stat().st_size > MAX_FILE_BYTES:
            raise _refuse(
                file,
                f"is {file.stat().st_size / 2**30:.1f} GiB, more than the "
                f"{MAX_FILE_BYTES / 2**30:.0f} GiB this tool reads",
            )
    notes: list[str] = []
    if path.is_dir():
        if not files:
            raise InputError(
                [Problem(path.name, None, None, str(path), "the folder holds no <sheet>.csv files")]
            )
        sheets = _load_csv_folder(path, problems)
    elif path.suffix.lower() in WORKBOOK_SUFFIXES:
        sheets = _load_workbook(path, problems, notes)
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
    return RawInput(sheets, path.name, input_sha256(path), problems, notes)
