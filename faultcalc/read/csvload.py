"""Load a folder of ``<sheet>.csv`` files into raw sheets.

Each file is parsed by Arrow's CSV parser (C++, whole columns) when it is plain: UTF-8 with
line feeds or CR LF, one line per row, every row with the header's number of cells, no blank
line and no quote Arrow could read differently. Any other file (blank lines, a lone carriage
return, a cell running over lines, ragged rows, quotes that Python's csv module reads otherwise)
is parsed by Python's csv module, whose reading is the reference: both give the same raw cells
(``tests/read/test_csv_loading.py``), so what follows does not know which one ran.
"""

from __future__ import annotations

import csv
import io
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import Problem
from .raw import RawSheet, blank_cells, header_names, sheet_from_rows

BOM = b"\xef\xbb\xbf"
# Control characters other than tab and line ends: Python and Arrow differ on what white space
# and line ends are among them, so a file holding one is parsed by the csv module.
CONTROL = bytes(range(0, 9)) + b"\x0b\x0c" + bytes(range(0x0E, 0x20)) + b"\x7f"
NOT_CONTROL = bytes(b for b in range(256) if b not in CONTROL)


def csv_files(folder: Path) -> list[Path]:
    """The CSV files of an input folder, in name order (`.csv` in any capitals)."""
    return sorted(p for p in folder.iterdir() if p.suffix.lower() == ".csv" and p.is_file())


def load_folder(path: Path, problems: list[Problem], add=None) -> dict[str, RawSheet]:
    """The raw sheets of the CSV folder ``path``; ``add(name, data)`` is given each file's
    name and bytes (for the input's SHA-256)."""
    sheets: dict[str, RawSheet] = {}
    files: dict[str, str] = {}
    for file in csv_files(path):
        data = file.read_bytes()
        if add is not None:
            add(file.name, data)
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
        sheet = load_file(name, data, problems, file.name)
        if sheet is not None:
            sheets[name] = sheet
    return sheets


def load_file(name: str, data: bytes, problems: list[Problem], file_name: str) -> RawSheet | None:
    """One CSV file's raw sheet (None, with a problem, when it is not UTF-8 CSV)."""
    body = data[len(BOM) :] if data.startswith(BOM) else data
    sheet = _with_arrow(name, body, problems)
    if sheet is not None:
        return sheet
    try:
        text = body.decode("utf-8")
    except UnicodeDecodeError:
        problems.append(
            Problem(name, None, None, file_name, "is not UTF-8 text; save it as 'CSV UTF-8'")
        )
        return None
    try:
        reader = csv.reader(io.StringIO(text, newline=""))
        rows = [(reader.line_num, cells) for cells in reader]
    except csv.Error as exc:
        problems.append(Problem(name, None, None, file_name, f"is not valid CSV ({exc})"))
        return None
    return sheet_from_rows(name, rows, problems)


def _with_arrow(name: str, body: bytes, problems: list[Problem]) -> RawSheet | None:
    """The raw sheet parsed by Arrow, or None when the file is not plain (see the docstring)."""
    import pyarrow as pa
    import pyarrow.csv as pcsv

    if b"\r" in body and body.count(b"\r") != body.count(b"\r\n"):
        return None
    if body.translate(None, NOT_CONTROL):
        return None
    end = body.find(b"\n")
    first, rest = (body, b"") if end < 0 else (body[:end], body[end + 1 :])
    try:
        header_cells = next(csv.reader([first.rstrip(b"\r").decode("utf-8")], strict=True), [])
    except (UnicodeDecodeError, csv.Error):
        return None
    if not header_cells or any(not h.strip() for h in header_cells):
        return None  # an unnamed column: the csv module's path notes it
    lines = rest.count(b"\n") + (1 if rest and not rest.endswith(b"\n") else 0)
    local: list[Problem] = []
    headers = header_names(name, header_cells, local)
    if local:
        return None  # a header twice: the csv module's path says so
    if lines == 0:
        return RawSheet(name, headers, {h: [] for h in headers}, np.zeros(0, np.int64))
    keys = [f"c{i}" for i in range(len(headers))]
    try:
        table = pcsv.read_csv(
            io.BytesIO(rest),
            read_options=pcsv.ReadOptions(column_names=keys),
            parse_options=pcsv.ParseOptions(newlines_in_values=False),
            convert_options=pcsv.ConvertOptions(
                column_types={k: pa.string() for k in keys},
                strings_can_be_null=False,
                quoted_strings_can_be_null=False,
                check_utf8=True,
            ),
        )
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError):
        return None
    starts, ends = _lines(rest, lines)
    data = np.frombuffer(rest, np.uint8)
    length = ends - starts
    empty = (length == 0) | ((length == 1) & (data[np.minimum(starts, len(data) - 1)] == 13))
    if table.num_rows != lines - int(empty.sum()):
        return None  # a line Arrow reads otherwise (white space only: a row of one cell)
    arrays = {h: table.column(k).combine_chunks() for h, k in zip(headers, keys, strict=True)}
    kept_lines = np.flatnonzero(~empty)  # Arrow skips empty lines; their numbers are counted
    if b'"' in rest and not _same_as_python_csv(rest, arrays, starts, ends, kept_lines):
        return None
    numbers = kept_lines.astype(np.int64) + 2
    blank = {h: blank_cells(a) for h, a in arrays.items()}
    filled = np.zeros(len(numbers), bool)
    for mask in blank.values():
        filled |= ~mask
    if not filled.all():  # rows of empty cells (",,,") are left out, as by the csv path
        keep = np.flatnonzero(filled)
        arrays = {h: a.take(keep) for h, a in arrays.items()}
        blank = {h: mask[keep] for h, mask in blank.items()}
        numbers = numbers[keep]
    return RawSheet(name, headers, arrays, numbers, [], blank, controls=False)


def _lines(body: bytes, count: int) -> tuple[np.ndarray, np.ndarray]:
    """Start and end (before the line feed) of each of the ``count`` lines of ``body``."""
    data = np.frombuffer(body, np.uint8)
    feeds = np.flatnonzero(data == 10)
    starts = np.concatenate([[0], feeds + 1])[:count]
    ends = np.concatenate([feeds, [len(body)]])[:count]
    return starts, ends


def _same_as_python_csv(body: bytes, arrays: dict[str, Any], starts, ends, kept) -> bool:
    """Lines with quotes, parsed again by Python's csv module one at a time: True when every
    one reads as Arrow read its row (``kept``: the line of each of Arrow's rows)."""
    quotes = np.flatnonzero(np.frombuffer(body, np.uint8) == 34)
    quoted = np.unique(np.searchsorted(ends, quotes))  # the line holding each quote
    row_of = np.full(len(starts), -1, np.int64)
    row_of[kept] = np.arange(len(kept))
    columns = [a.to_pylist() if len(quoted) > 1000 else a for a in arrays.values()]

    def cell(column, k):
        return column[k] if isinstance(column, list) else column[k].as_py()

    for line in quoted.tolist():
        text = body[starts[line] : ends[line]].rstrip(b"\r")
        try:
            row = next(csv.reader([text.decode("utf-8")], strict=True))
        except (csv.Error, UnicodeDecodeError, StopIteration):
            return False
        k = row_of[line]
        if k < 0 or row != [cell(c, k) for c in columns]:
            return False
    return True
