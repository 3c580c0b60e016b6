"""The raw cells of an input, column by column, as a loader found them.

A loader (a workbook, a CSV folder) hands the reader one ``RawSheet`` per sheet: the header
names (stripped, lower case), the cells of each named column, and the spreadsheet row number of
every data row (rows with no cell filled are left out; their numbers are skipped). Cells stay
as the file holds them: text, numbers, dates, booleans, ``PercentCell`` and ``FormulaCell``, or
None for an empty cell. A column is a Python list, or an Arrow string array when a CSV file was
parsed by Arrow (empty cells are then empty strings).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import Problem
from .marked import FormulaCell, PercentCell  # noqa: F401 - the marked cells, importable here


def is_blank(value: Any) -> bool:
    """An empty cell: None or only white space (a formula without a saved value is not)."""
    if value is None:
        return True
    if type(value) is str:
        return not value or value.isspace()
    return False


def is_arrow(column: Any) -> bool:
    return not isinstance(column, list)


@dataclass
class RawSheet:
    """One sheet: header names, the cells of each named column, and the row numbers."""

    name: str
    headers: list[str]
    columns: dict[str, Any]  # header -> cells (a list, or an Arrow string array)
    row_numbers: np.ndarray  # spreadsheet row of each data row (int64)
    blank_header_columns: list[int] = field(default_factory=list)  # 1-based, data, no header
    blank: dict[str, np.ndarray] = field(default_factory=dict)  # header -> blank cells, if known
    controls: bool = True  # False: the loader found no control character but tab and line ends
    # header -> its cells as an Arrow string array, when the loader made one (text only, none
    # blank): the same cells, not converted again
    text: dict[str, Any] = field(default_factory=dict)

    @property
    def n(self) -> int:
        return len(self.row_numbers)

    def cells(self, header: str) -> list:
        """The cells of a column as Python values ([None] * n when the column is absent)."""
        column = self.columns.get(header)
        if column is None:
            return [None] * self.n
        return column if isinstance(column, list) else column.to_pylist()

    def cell(self, header: str, i: int) -> Any:
        column = self.columns.get(header)
        if column is None:
            return None
        return column[i] if isinstance(column, list) else column[i].as_py()

    def records(self) -> list[tuple[int, dict[str, Any]]]:
        """The data rows as (row number, {header: cell}) (for tests and small sheets)."""
        columns = {h: self.cells(h) for h in self.headers}
        return [
            (int(number), {h: values[k] for h, values in columns.items()})
            for k, number in enumerate(self.row_numbers.tolist())
        ]

    @classmethod
    def from_records(
        cls,
        name: str,
        headers: list[str],
        rows: list[tuple[int, dict[str, Any]]],
        blank_header_columns: list[int] | None = None,
    ) -> RawSheet:
        """A sheet from (row number, {header: cell}) rows (cells of other headers ignored)."""
        columns = {h: [values.get(h) for _, values in rows] for h in dict.fromkeys(headers)}
        numbers = np.array([number for number, _ in rows], dtype=np.int64)
        return cls(name, list(headers), columns, numbers, list(blank_header_columns or []))


@dataclass
class RawInput:
    sheets: dict[str, RawSheet]
    display_name: str
    sha256: str
    problems: list[Problem]
    notes: list[str] = field(default_factory=list)  # warnings found while loading


def column_letter(index: int) -> str:
    letters = ""
    while index:
        index, rem = divmod(index - 1, 26)
        letters = chr(65 + rem) + letters
    return letters


def header_names(name: str, header_cells: list[Any], problems: list[Problem]) -> list[str]:
    """Normalised header names ('' where a header cell is blank); a name twice is a problem."""
    headers: list[str] = []
    seen: dict[str, int] = {}
    for position, cell in enumerate(header_cells, start=1):
        if type(cell) is float and cell.is_integer():
            cell = int(cell)  # a number typed as a header: 5, not 5.0
        text = "" if is_blank(cell) else str(cell).strip().lower()
        if text and text in seen:
            problems.append(
                Problem(
                    name,
                    1,
                    text,
                    cell,
                    f"the header appears twice (columns {column_letter(seen[text])}"
                    f" and {column_letter(position)}); keep one",
                )
            )
        elif text:
            seen[text] = position
        headers.append(text)
    return headers


def sheet_from_rows(name: str, rows: list[tuple[int, list[Any]]], problems: list[Problem]):
    """A RawSheet from (row number, cell values) with the header row first. Rows with no cell
    filled are left out; cells under no header are dropped (their columns are noted); blank
    cells (None, or only white space) are None."""
    if not rows:
        return RawSheet(name, [], {}, np.zeros(0, np.int64), [])
    numbers = np.array([number for number, _ in rows[1:]], dtype=np.int64)
    return sheet_from_grid(name, rows[0][1], numbers, [cells for _, cells in rows[1:]], problems)


def sheet_from_grid(
    name: str, header_cells: list, numbers: np.ndarray, lines: list[list], problems: list[Problem]
) -> RawSheet:
    """A RawSheet from the header row's cells and the data rows' cells (``lines``, of row
    numbers ``numbers``); see ``sheet_from_rows``."""
    headers = header_names(name, header_cells, problems)
    data = lines
    widths = set(map(len, lines))
    width = max([len(headers), *widths])
    if widths - {width}:
        lines = [c if len(c) == width else [*c, *[None] * (width - len(c))] for c in lines]
    columns = list(map(list, zip(*lines, strict=True))) if lines else [[] for _ in range(width)]
    filled = np.zeros(len(data), bool)
    found = [_blank_and_text(column) for column in columns]
    blank_of, text_of = [b for b, _ in found], [t for _, t in found]
    for blank in blank_of:
        filled |= ~blank
    blank_header_columns = sorted(
        position
        for position, blank in enumerate(blank_of, start=1)
        if (position > len(headers) or not headers[position - 1]) and (~blank & filled).any()
    )
    keep = np.flatnonzero(filled)
    every = len(keep) == len(data)
    named: dict[str, list] = {}
    blank: dict[str, np.ndarray] = {}
    text: dict[str, Any] = {}
    for position, header in enumerate(headers):
        if header and header not in named:
            column = columns[position]
            empty = blank_of[position]
            for k in np.flatnonzero(empty).tolist():
                column[k] = None
            named[header] = column if every else [column[k] for k in keep.tolist()]
            blank[header] = empty[keep]
            if every and text_of[position] is not None and not empty.any():
                text[header] = text_of[position]
    headers = [h for h in headers if h]
    return RawSheet(name, headers, named, numbers[keep], blank_header_columns, blank, text=text)


def blank_cells(column) -> np.ndarray:
    """Which cells of a column are blank (see ``is_blank``), for a list or an Arrow array."""
    import pyarrow.compute as pc

    if not isinstance(column, list):
        empty = pc.equal(column, "")
        spaces = pc.utf8_is_space(column)
        return pc.or_(empty, spaces).to_numpy(zero_copy_only=False).astype(bool)
    return _blank_and_text(column)[0]


def _blank_and_text(column: list):
    """Which cells of a list are blank, and the list as an Arrow string array if it holds
    text only (else None)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    if not column:
        return np.zeros(0, bool), None
    n = len(column)
    kinds = set(map(type, column))
    if str not in kinds and type(None) not in kinds:  # numbers and other values: none blank
        return np.zeros(n, bool), None
    if kinds == {str}:
        array = pa.array(column, pa.string())
        blank = pc.or_(pc.equal(array, ""), pc.utf8_is_space(array))
        return blank.to_numpy(zero_copy_only=False).astype(bool), array
    blank = np.fromiter(column, dtype=object, count=n) == None  # noqa: E711 - elementwise
    types = np.fromiter(map(type, column), dtype=object, count=n)
    text = np.flatnonzero(types == str)  # noqa: E721 - elementwise
    if len(text):  # empty or white space only is blank too
        strings = column if len(text) == len(column) else [column[k] for k in text.tolist()]
        array = pa.array(strings, pa.string())
        space = pc.or_(pc.equal(array, ""), pc.utf8_is_space(array))
        blank[text] |= space.to_numpy(zero_copy_only=False).astype(bool)
    return blank, None
