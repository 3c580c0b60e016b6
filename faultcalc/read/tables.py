"""Load the raw cells of an input: an .xlsx workbook or a folder of ``<sheet>.csv`` files.

No interpretation happens here beyond finding sheets, the header row and the spreadsheet row
number of every data row; cell values stay as the file holds them.
"""

from __future__ import annotations

import hashlib
from pathlib import Path

from ..errors import InputError, Problem
from . import sheetnames
from .csvload import csv_files, load_folder
from .marked import FormulaCell, PercentCell  # noqa: F401 - re-exported: tables.PercentCell
from .raw import (  # noqa: F401 - imported from here
    RawInput,
    RawSheet,
    is_blank,
    sheet_from_grid,
    sheet_from_rows,
)

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


def _refuse(path: Path, message: str) -> InputError:
    return InputError([Problem(path.name, None, None, None, message)])


def _load_workbook(
    path: Path, problems: list[Problem], notes: list[str], data: bytes | None = None
) -> dict[str, RawSheet]:
    from . import xlsx  # the workbook loader (it reads the bounds above)

    def build(name: str, table) -> tuple[RawSheet, list[Problem]]:
        own: list[Problem] = []  # said in workbook order below, whatever order sheets load in
        if table.header is None:
            return sheet_from_rows(name, [], own), own
        return sheet_from_grid(name, table.header, table.numbers, table.lines, own), own

    sheets = {}
    for name, built in xlsx.load_workbook(path, notes, build, data).items():
        sheet, own = built or (sheet_from_rows(name, [], problems), [])
        sheets[name] = sheet
        problems.extend(own)
    return sheets


def add_file(digest, name: str, data: bytes) -> None:
    """Add one CSV file of a folder to its SHA-256 (files in name order)."""
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
        digest = hashlib.sha256()
        sheets = load_folder(path, problems, lambda name, data: add_file(digest, name, data))
        sha256 = digest.hexdigest()
    elif path.suffix.lower() in WORKBOOK_SUFFIXES:
        data = path.read_bytes()  # read once: hashed, and given to the loader
        sha256 = hashlib.sha256(data).hexdigest()
        sheets = _load_workbook(path, problems, notes, data)
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
    return RawInput(sheets, path.name, sha256, problems, notes)
