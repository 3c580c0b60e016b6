"""The grid of a worksheet part checked on its bytes, in two steps.

``bound``: what the compiled reader must be given no part without. python-calamine builds a
dense grid from the first cell to the last (one stray cell at XFD1048576 is 17e9 positions,
which ends the process); it reads the first sheetData it meets, matching element names without
their prefix, and takes each cell's place from its reference. So: one sheetData, no prefixed
tag name up to its end, every cell tag ``<c r="A1"`` with its reference first, every reference
within Excel's grid, and the grid from the first cell to the last within the bound of the
expat scan. calamine may parse the part once this has passed.

``rules``: the rest of the expat scan's grid rules (``xlsxparts.scan_sheet``), while calamine
parses: rows ``<row r="N"`` in order and closed, each cell inside the row its reference names,
cells in order within their row, not spread over many more positions than there are cells.

Anything else raises ``Irregular``: the loader then reads the part the careful way.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from .xmltags import MAIN, Irregular, Tags, digits, inside, key, mask, windows

_ROOT = re.compile(rb"<worksheet(?=[\s>])[^>]*?\sxmlns=\"" + re.escape(MAIN) + rb'"')
_ENCODING = re.compile(rb'^(?:\xef\xbb\xbf)?<\?xml[^>]*?\sencoding=["\']([^"\']*)')


@dataclass
class Grid:
    """A worksheet part's tags and grid: bounded (``bound``), then checked (``rules``)."""

    tags: Tags
    body: int = 0  # the sheet data runs from byte body to byte closing
    closing: int = 0
    span: tuple[int, int] = (0, 0)  # the indices of its tags
    cell_index: np.ndarray | None = None  # cell tags: index, position, row, column
    cells: np.ndarray | None = None
    cell_rows: np.ndarray | None = None
    columns: np.ndarray | None = None
    rows: np.ndarray | None = None  # row tags (after ``rules``): position, number, tag end
    numbers: np.ndarray | None = None
    row_tag_end: np.ndarray | None = None

    @property
    def elements(self) -> int:
        return self.tags.elements


def bound(data: bytes, max_rows: int, max_columns: int, spread_per_cell: int) -> Grid:
    """The tags of one worksheet part and the place of every cell, within Excel's grid and
    the bound on positions per cell (``spread_per_cell``); Irregular otherwise."""
    tags = Tags(data)
    declared = _ENCODING.match(data)
    if declared and declared.group(1).lower() not in (b"utf-8", b"utf8"):
        raise Irregular("an encoding other than UTF-8")
    sheet_data = tags.named(b"sheetData")
    if len(sheet_data) != 1:
        raise Irregular("no single sheetData")
    opening = int(sheet_data[0])
    if not _ROOT.search(data, 0, opening) or not data.rstrip().endswith(b"</worksheet>"):
        raise Irregular("not a worksheet in the main namespace")
    body = data.find(b">", opening) + 1
    closing = body if data[body - 2 : body - 1] == b"/" else data.rfind(b"</sheetData>")
    # from the start: the compiled reader matches names without their prefix and reads the
    # first <x:sheetData> it meets, even one before this one
    if closing < body or tags.prefixed(closing):
        raise Irregular("a namespace prefix in the sheet data or before it")
    g = Grid(tags, body, closing, tags.span(body, closing))
    first, stop = g.span
    index = tags.find(b"c")
    if len(index) and (index[0] < first or index[-1] >= stop):
        raise Irregular("a cell outside the sheet data")
    if not len(index):
        return g
    # <c r="A1" ...>: the reference first, one to three capitals, then the row's digits
    cells = tags.lt[index]
    if not ((tags.words[cells] & mask(6)) == key(b'<c r="')).all():
        raise Irregular("a cell without its reference first")
    letters = windows(tags.a, cells + 6, 4).astype(np.int64) - 64
    upper = (letters >= 1) & (letters <= 26)
    two, three = upper[:, 0] & upper[:, 1], upper[:, 0] & upper[:, 1] & upper[:, 2]
    if not upper[:, 0].all() or (three & upper[:, 3]).any():
        raise Irregular("a cell reference that is not one")
    column = np.where(
        three,
        letters[:, 0] * 676 + letters[:, 1] * 26 + letters[:, 2],
        np.where(two, letters[:, 0] * 26 + letters[:, 1], letters[:, 0]),
    )
    cell_rows, ok = digits(tags.a, cells + 7 + two + three, 7)
    if not ok or cell_rows.max() > max_rows or column.max() > max_columns:
        raise Irregular("a cell reference outside Excel's grid")
    limit = max_rows + spread_per_cell * len(cells)
    area = (int(cell_rows.max() - cell_rows.min()) + 1) * (int(column.max() - column.min()) + 1)
    if area > limit:
        raise Irregular("cells spread over the grid")
    g.cell_index, g.cells, g.cell_rows, g.columns = index, cells, cell_rows, column
    return g


def rules(g: Grid, max_rows: int, spread_per_cell: int) -> Grid:
    """The rest of the grid rules on a bounded grid; Irregular where one fails."""
    tags, (first, stop) = g.tags, g.span
    a, lt = tags.a, tags.lt
    tags.check_pairs()
    index = tags.find(b"row")
    if len(index) and (index[0] < first or index[-1] >= stop):
        raise Irregular("a row outside the sheet data")
    if not len(index):
        if g.cells is not None:
            raise Irregular("a cell outside any row")
        return g
    # rows: <row r="N" ...> ... </row> or <row r="N" .../>, numbers rising within Excel's
    rows = lt[index]
    if not (tags.words[rows] == key(b'<row r="')).all():
        raise Irregular("a row without its number first")
    numbers, ok = digits(a, rows + 8, 7)
    if not ok or numbers[-1] > max_rows or (np.diff(numbers) <= 0).any():
        raise Irregular("row numbers out of order or out of range")
    row_tag_end = tags.ends(index)
    open_rows = np.flatnonzero(a[row_tag_end - 1] != 47)
    row_closes = lt[tags.exactly(b"</row>", g.span)]
    if len(row_closes) != len(open_rows):
        raise Irregular("rows that do not close")
    row_end = row_tag_end.copy()
    row_end[open_rows] = row_closes
    if (row_end[:-1] > rows[1:]).any() or (row_end < row_tag_end).any():
        raise Irregular("rows inside rows")
    g.rows, g.numbers, g.row_tag_end = rows, numbers, row_tag_end
    if g.cells is None:
        return g
    # cells: inside the row their reference names, columns rising within it
    row_of = inside(rows, row_end, g.cells)
    if (row_of < 0).any():
        raise Irregular("a cell outside any row")
    if (numbers[row_of] != g.cell_rows).any():
        raise Irregular("a cell written inside another row")
    column = g.columns
    same_row = row_of[1:] == row_of[:-1]
    if (same_row & (column[1:] <= column[:-1])).any():
        raise Irregular("cells out of order")
    last = np.ones(len(column), dtype=bool)
    last[:-1] = ~same_row
    if int(column[last].sum()) > max_rows + spread_per_cell * len(column):
        raise Irregular("cells spread over the grid")
    return g
