"""Load the raw cells of an input: an .xlsx workbook or a folder of ``<sheet>.csv`` files.

No interpretation happens here beyond finding sheets, the header row and the spreadsheet row
number of every data row; cell values stay as the file holds them.
"""

from __future__ import annotations

import hashlib
import zipfile
from pathlib import Path
from typing import Any

from ..errors import InputError, Problem
from . import sheetnames, xlsxparts
from .csvload import csv_files, load_folder
from .marked import FormulaCell, PercentCell
from .raw import RawInput, RawSheet, is_blank, sheet_from_rows  # noqa: F401 - imported from here

_sheet_from_rows = sheet_from_rows  # the workbook loader's name for it

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


def _check_workbook_bounds(path: Path, archive: zipfile.ZipFile) -> None:
    """The unpacked size of the whole workbook, and the ratio of every part, however small."""
    parts = archive.infolist()
    total = sum(p.file_size for p in parts)
    if total > MAX_UNCOMPRESSED_BYTES:
        raise _refuse(
            path,
            f"unpacks to {total / 2**30:.1f} GiB, more than the "
            f"{MAX_UNCOMPRESSED_BYTES / 2**30:.0f} GiB this tool reads; split the "
            "workbook or use CSV files",
        )
    for p in parts:
        if p.compress_size and p.file_size / p.compress_size > MAX_COMPRESSION_RATIO:
            raise _refuse(
                path,
                f"part {p.filename} unpacks {p.file_size / p.compress_size:.0f} "
                "times larger than it is stored, which no real workbook does; refused "
                "as a decompression bomb",
            )


def _load_workbook(path: Path, problems: list[Problem], notes: list[str]) -> dict[str, RawSheet]:
    import openpyxl
    from openpyxl.reader.excel import ExcelReader

    if not openpyxl.DEFUSEDXML or openpyxl.LXML:
        raise _refuse(
            path,
            "the hardened XML parser is not in use (install defusedxml and do not "
            "set OPENPYXL_DEFUSEDXML=False or OPENPYXL_LXML=True); the workbook was "
            "not opened",
        )
    with path.open("rb") as handle:
        try:
            archive = zipfile.ZipFile(handle)
        except (zipfile.BadZipFile, OSError, ValueError) as exc:
            raise _refuse(path, f"cannot be read as an .xlsx workbook ({exc})") from None
        with archive:
            _check_workbook_bounds(path, archive)
            size = path.stat().st_size
            try:
                survey = xlsxparts.survey(
                    archive,
                    READ_SHEETS,
                    max(MIN_XML_ELEMENTS, MAX_XML_ELEMENTS_PER_BYTE * size),
                    size,
                )
            except xlsxparts.Refused as exc:
                raise _refuse(path, f"cannot be read as an .xlsx workbook: {exc}") from None
        try:
            reader = ExcelReader(handle, read_only=True, data_only=True, keep_links=False)
            # the sheets the tool does not read are left unopened (openpyxl passes over a sheet
            # whose part is not among its valid files)
            reader.valid_files = [n for n in reader.valid_files if n not in survey.skipped]
            reader.read()
        except Exception as exc:  # noqa: BLE001 - any failure to parse is a located input error
            raise _refuse(
                path, f"cannot be read as an .xlsx workbook ({type(exc).__name__}: {exc})"
            ) from None
        return _read_book(path, reader.wb, survey, problems, notes)


def _sheet_rows(ws, formulas: dict[tuple[int, int], str]) -> list[tuple[int, list[Any]]]:
    """(row number, cell values) of a streamed sheet: row 1 always, then rows with cells."""
    ws.reset_dimensions()  # the cells say where the table ends, not the sheet's stated size
    rows = []
    for number, row in enumerate(ws.iter_rows(), start=1):
        if not row and number > 1:
            continue
        values = []
        for position, cell in enumerate(row, start=1):
            value = cell.value
            if value is None:
                if formulas:
                    text = formulas.get((number, position))
                    if text is not None:
                        value = FormulaCell(text)
            elif (
                isinstance(value, (int, float))
                and not isinstance(value, bool)
                and "%" in (getattr(cell, "number_format", "") or "")
            ):
                value = PercentCell(value)
            values.append(value)
        rows.append((number, values))
    return rows


def _read_book(path: Path, book, survey, problems, notes) -> dict[str, RawSheet]:
    sheets: dict[str, RawSheet] = {}
    streamed = iter(book.worksheets)
    try:
        for facts in survey.sheets:
            name = facts.name.strip().lower()
            if not facts.read:
                sheets[name] = sheet_from_rows(name, [], problems)  # named, never parsed
                continue
            ws = next(streamed, None)  # the reader must open the part that was checked
            if ws is None or (ws.title, getattr(ws, "_worksheet_path", facts.part)) != (
                facts.name,
                facts.part,
            ):
                raise _refuse(
                    path, f"cannot be read as an .xlsx workbook (sheet '{facts.name}' not found)"
                )
            try:
                rows = _sheet_rows(ws, facts.formulas)
            except Exception as exc:  # noqa: BLE001 - any failure to parse is a located error
                raise _refuse(
                    path,
                    f"cannot be read as an .xlsx workbook: sheet '{facts.name}' (part "
                    f"{facts.part}): {type(exc).__name__}: {exc}",
                ) from None
            if facts.state != "visible":
                notes.append(f"sheet '{name}' is hidden in the workbook; it is read like any other")
            for merged in facts.merged:
                notes.append(
                    f"sheet '{name}': cells {merged} are merged; only the first "
                    "holds a value and the others read as blank: unmerge them and fill "
                    "each cell"
                )
            hidden_rows, hidden_cols = facts.hidden_rows, facts.hidden_columns
            if hidden_rows or hidden_cols:
                what = ", ".join(
                    [f"row {r}" for r in hidden_rows[:5]] + [f"column {c}" for c in hidden_cols[:5]]
                )
                notes.append(f"sheet '{name}': hidden {what}; hidden cells are read like any other")
            sheets[name] = _sheet_from_rows(name, rows, problems)
    finally:
        book.close()
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
        digest = hashlib.sha256()
        sheets = load_folder(path, problems, lambda name, data: add_file(digest, name, data))
        sha256 = digest.hexdigest()
    elif path.suffix.lower() in WORKBOOK_SUFFIXES:
        sheets = _load_workbook(path, problems, notes)
        sha256 = input_sha256(path)
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
