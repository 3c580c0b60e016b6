"""A worksheet part checked on its bytes, beside the compiled reader that gives its values.

The workbook loader (``read/xlsx.py``) takes cell values from python-calamine, which does not
say what a careful reader must: merged cells, hidden rows and columns, formulas whose value was
never saved, percent formats; nor does it refuse a grid that no spreadsheet program writes (and
it builds a dense grid from the first to the last cell: one stray cell at XFD1048576 is 17e9
positions, which ends the process). This pass finds all that on the decompressed bytes with
numpy (every tag's position at once: no Python call per XML element) and a few C regular
expressions, in the form every spreadsheet program writes: ``<row r="N" ...>`` and
``<c r="A1" ...>`` with the reference first, no comment, CDATA or document type, no namespace
prefix in the sheet data, UTF-8.

Anything else raises ``Irregular``: the loader then runs the expat scan
(``xlsxparts.scan_sheet``), whose messages are the careful reader's, and openpyxl for the values.
What the pass cannot tell from bytes cheaply it hands over as cells whose value openpyxl's own
cell parser gives (dates and other formats, error cells, inline text that the compiled reader
would trim), a few per sheet in practice.
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET
from dataclasses import dataclass, field

import numpy as np
from openpyxl.utils.cell import get_column_letter
from openpyxl.worksheet.cell_range import CellRange

from . import xlsxparts

MAIN = b"http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_PAD = b"\0" * 32  # so that a window read past the last byte stays in the array
_DELIM = np.zeros(256, dtype=bool)  # what may follow a tag's name
_DELIM[list(b" \t\r\n/>")] = True
_ROOT = re.compile(rb"<worksheet(?=[\s>])[^>]*?\sxmlns=\"" + re.escape(MAIN) + rb'"')
_STRINGS_ROOT = re.compile(rb"<sst(?=[\s>])[^>]*?\sxmlns=\"" + re.escape(MAIN) + rb'"')
_ENCODING = re.compile(rb'^(?:\xef\xbb\xbf)?<\?xml[^>]*?\sencoding=["\']([^"\']*)')
# a number both readers read alike (an optional sign, digits, a point, an exponent); any other
# value text of a number cell is given by openpyxl's cell parser (a text, an error)
_NUMBER = re.compile(rb"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?")
_SHORT = 15  # value texts checked on the bytes up to this length; longer ones by _NUMBER
_CHARACTER = np.full(256, 64, dtype=np.uint8)  # digits and points counted apart in one sum
_CHARACTER[list(b"0123456789")] = 1
_CHARACTER[ord(".")] = 16
_SPACE = np.zeros(256, dtype=bool)  # XML white space
_SPACE[list(b" \t\r\n")] = True
# shared text with spaces at an end and no xml:space="preserve": the compiled reader trims it
_TRIMMED = re.compile(rb"<t>(?:\s+[^\s<]|[^<]*[^\s<]\s+</t>)")
_ESCAPE = re.compile(rb"_x[0-9A-Fa-f]{4}_")  # read as a character by one reader, not the other
_UNIQUE_COUNT = re.compile(rb'uniqueCount="(\d{1,9})"')  # strings the compiled reader reserves
_HIDDEN = re.compile(rb'\shidden="([^"]*)"')
_COLUMN_TAG = re.compile(rb"<col[\s/>]")
_COLUMN = re.compile(rb"<col\s([^>]*?)/?>")
_ATTRIBUTE = re.compile(rb'([^\s=]+)="([^"]*)"')
_MERGE_TAG = re.compile(rb"<mergeCell[\s/>]")
_MERGE = re.compile(rb'<mergeCell\s+ref="([^"]*)"\s*/>')
_FORMULA = re.compile(rb"<f(\s[^>]*?)?(?:/>|>([^<]*)</f>)\s*(?:<v\s*/>|<v>([^<]*)</v>)?\s*</c>")
_FORMULA_ATTRIBUTE = re.compile(rb'\s(t|si)="([^"]*)"')
# Cell types (the t attribute): number (also when absent), shared string, formula string,
# boolean, error, ISO date, inline string
NUMBER, SHARED, STR, BOOL, ERROR, DATE, INLINE = range(7)
_TYPES = {b'n"': NUMBER, b's"': SHARED, b'str"': STR, b'b"': BOOL, b'e"': ERROR, b'd"': DATE}


class Irregular(Exception):
    """The part is not in the form this pass reads; ``str()`` says what it saw."""


@dataclass
class Formats:
    """What the cell styles (styles.xml cellXfs, by index) mean for a number's value.

    ``percent``: the number format holds '%' (the cell reads as a PercentCell); ``redo``: a
    format after which the two readers may differ (a date, a time, anything but a plain
    number or percentage), so openpyxl's cell parser gives the value.
    """

    percent: np.ndarray  # bool, one per style
    redo: np.ndarray  # bool, one per style


@dataclass
class SheetBytes:
    """What one worksheet part holds beyond the values the compiled reader gives."""

    elements: int  # XML elements, as expat counts them
    hidden_rows: list[int] = field(default_factory=list)
    hidden_columns: list[str] = field(default_factory=list)
    merged: list[str] = field(default_factory=list)
    formulas: dict[tuple[int, int], str] = field(default_factory=dict)  # no saved value
    percent: list[tuple[int, int]] = field(default_factory=list)  # (row, column), numbers
    redo: list[tuple[int, int, int, bytes]] = field(default_factory=list)  # row, col, style, xml
    # the row and column of every cell holding a value (a <v> with text, or an <is>)
    valued: tuple[np.ndarray, np.ndarray] = (np.zeros(0, np.int64), np.zeros(0, np.int64))


def element_count(data: bytes) -> int:
    """XML elements of a part (start and empty tags); Irregular if it holds a declaration,
    comment or CDATA section, or its tags do not pair."""
    return _Tags(data).elements


def scan_strings(data: bytes) -> tuple[int, bool]:
    """A shared-strings part: its XML elements, and whether the compiled reader reads it as
    openpyxl does, and safely (the root in the main namespace, no prefixed tag, no text with
    white space at an end and no xml:space, no _xHHHH_ escape, a stated count of strings no
    larger than the part); Irregular as element_count."""
    tags = _Tags(data)
    if not data.rstrip().endswith(b"</sst>"):
        raise Irregular("not closed")
    faithful = (
        _STRINGS_ROOT.search(data, 0, 4096) is not None
        and not _prefixed(tags.a, tags.lt, tags.gt, 0, len(data))
        and _TRIMMED.search(data) is None
        and _ESCAPE.search(data) is None
        and _counted(data, tags.elements)
    )
    return tags.elements, faithful


def _counted(data: bytes, elements: int) -> bool:
    """Whether every uniqueCount in the part is a plain number of at most ``elements``: the
    compiled reader reserves room for that many strings before it reads one (4e9 asked for
    96 GB and ended the process)."""
    at = data.find(b"uniqueCount")
    while at >= 0:
        m = _UNIQUE_COUNT.match(data, at)
        if m is None or int(m.group(1)) > elements:
            return False
        at = data.find(b"uniqueCount", at + 1)
    return True


def _key(text: bytes) -> np.uint64:
    return np.uint64(int.from_bytes(text, "little"))


def _mask(length: int) -> np.uint64:
    return np.uint64((1 << (8 * length)) - 1)


class _Tags:
    """Every tag of a part: where its '<' and '>' are, and its first 8 bytes as one number."""

    def __init__(self, data: bytes):
        n = len(data)
        self.data = data
        self.a = a = np.frombuffer(data + _PAD, np.uint8)
        self.lt = np.flatnonzero(a[:n] == 60)
        self.key = _windows(a, self.lt, 8).view("<u8").ravel()
        second = self.key & _mask(2)
        if (second == _key(b"<!")).any():  # <!DOCTYPE, <!ENTITY, <!-- -->, <![CDATA[
            raise Irregular("a declaration, comment or CDATA section")
        self.closing = int((second == _key(b"</")).sum())
        self.elements = len(self.lt) - self.closing - int((second == _key(b"<?")).sum())
        self.gt = np.flatnonzero(a[:n] == 62)
        if self.elements - int((a[self.gt - 1] == 47).sum()) != self.closing:  # '/>' ends one
            raise Irregular("tags that do not pair")

    def named(self, name: bytes, start: int = 0, end: int | None = None) -> np.ndarray:
        """Positions of the start tags <name (followed by white space, / or >) in a span."""
        text = b"<" + name
        if len(text) < 8:
            hit = np.flatnonzero((self.key & _mask(len(text))) == _key(text))
        else:
            hit = np.flatnonzero(self.key == _key(text[:8]))
            hit = hit[[self.data.startswith(text, p) for p in self.lt[hit].tolist()]]
        found = self.lt[hit]
        found = found[_DELIM[self.a[found + len(text)]]]
        if start or end is not None:
            found = found[(found >= start) & (found < (len(self.data) if end is None else end))]
        return found

    def exactly(self, text: bytes, start: int, end: int) -> np.ndarray:
        """Indices (into lt) of the tags beginning with ``text`` (up to 8 bytes) in a span."""
        hit = np.flatnonzero((self.key & _mask(len(text))) == _key(text))
        return hit[(self.lt[hit] >= start) & (self.lt[hit] < end)]


def _digits(a: np.ndarray, starts: np.ndarray, width: int, zero: bool = False):
    """Decimal numbers of up to ``width`` digits at ``starts``, each closed by a quote: the
    values and whether every one is so (no leading zero unless ``zero``)."""
    values = np.zeros(len(starts), dtype=np.int64)
    count = np.zeros(len(starts), dtype=np.int64)
    alive = np.ones(len(starts), dtype=bool)
    for j in range(width):
        byte = a[starts + j]
        alive &= (byte >= 48) & (byte <= 57)
        values = np.where(alive, values * 10 + (byte.astype(np.int64) - 48), values)
        count += alive
    ok = (count >= 1) & ~alive & (a[starts + count] == 34)  # closed within the width
    first = a[starts]
    ok &= (first != 48) | (zero & (count == 1))
    return values, bool(ok.all())


def _inside(starts: np.ndarray, ends: np.ndarray, points: np.ndarray) -> np.ndarray:
    """Index of the span [starts[k], ends[k]) holding each point, or -1."""
    k = np.searchsorted(starts, points, side="right") - 1
    held = (k >= 0) & (points < ends[np.maximum(k, 0)])
    return np.where(held, k, -1)


@dataclass
class Grid:
    """A worksheet part's tags and grid, checked: what the compiled reader may be given."""

    tags: _Tags
    body: int = 0  # the sheet data runs from body to closing
    closing: int = 0
    rows: np.ndarray | None = None  # row tags: position, number, end of the start tag
    numbers: np.ndarray | None = None
    row_tag_end: np.ndarray | None = None
    cells: np.ndarray | None = None  # cell tags: position, row, column
    cell_rows: np.ndarray | None = None
    columns: np.ndarray | None = None

    @property
    def elements(self) -> int:
        return self.tags.elements


def prepare(data: bytes, max_rows: int, max_columns: int, spread_per_cell: int) -> Grid:
    """The tags and the grid of one worksheet part; Irregular for anything not plain.

    The grid rules are the expat scan's (``xlsxparts.scan_sheet``): rows in order within
    Excel's rows, cells in order within their row and column XFD, cells not spread over many
    more positions than there are cells (``spread_per_cell``). The compiled reader's dense
    grid, from the first cell to the last, is held to the same bound.
    """
    tags = _Tags(data)
    a, lt, gt = tags.a, tags.lt, tags.gt
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
    if closing < body or _prefixed(a, lt, gt, 0, closing):
        raise Irregular("a namespace prefix in the sheet data or before it")
    g = Grid(tags, body, closing)
    rows, cells = tags.named(b"row"), tags.named(b"c")
    if (rows.size and (rows[0] < body or rows[-1] >= closing)) or (
        cells.size and (cells[0] < body or cells[-1] >= closing)
    ):
        raise Irregular("a row or cell outside the sheet data")
    if not len(rows):
        if len(cells):
            raise Irregular("a cell outside any row")
        return g
    # rows: <row r="N" ...> ... </row> or <row r="N" .../>, numbers rising within Excel's
    if not (_windows(a, rows, 8).view("<u8").ravel() == _key(b'<row r="')).all():
        raise Irregular("a row without its number first")
    numbers, ok = _digits(a, rows + 8, 7)
    if not ok or numbers[-1] > max_rows or (np.diff(numbers) <= 0).any():
        raise Irregular("row numbers out of order or out of range")
    row_tag_end = gt[np.searchsorted(gt, rows)]
    open_rows = np.flatnonzero(a[row_tag_end - 1] != 47)
    row_closes = lt[tags.exactly(b"</row>", body, closing)]
    if len(row_closes) != len(open_rows):
        raise Irregular("rows that do not close")
    row_end = row_tag_end.copy()
    row_end[open_rows] = row_closes
    if (row_end[:-1] > rows[1:]).any() or (row_end < row_tag_end).any():
        raise Irregular("rows inside rows")
    g.rows, g.numbers, g.row_tag_end = rows, numbers, row_tag_end
    if not len(cells):
        return g
    # cells: <c r="A1" ...>, the reference first, inside the row it names, columns rising
    start = _windows(a, cells, 10)
    if not ((start[:, :8].copy().view("<u8").ravel() & _mask(6)) == _key(b'<c r="')).all():
        raise Irregular("a cell without its reference first")
    letters = start[:, 6:10].astype(np.int64) - 64
    upper = (letters >= 1) & (letters <= 26)
    two, three = upper[:, 0] & upper[:, 1], upper[:, 0] & upper[:, 1] & upper[:, 2]
    if not upper[:, 0].all() or (three & upper[:, 3]).any():
        raise Irregular("a cell reference that is not one")
    width = 1 + two + three
    column = np.where(
        three,
        letters[:, 0] * 676 + letters[:, 1] * 26 + letters[:, 2],
        np.where(two, letters[:, 0] * 26 + letters[:, 1], letters[:, 0]),
    )
    row_of = _inside(rows, row_end, cells)
    if (row_of < 0).any():
        raise Irregular("a cell outside any row")
    # the digits of each cell's reference, and the quote after them, are its row's
    size = 1 + np.floor(np.log10(numbers)).astype(np.int64)  # digits of each row number
    keep = np.where(
        size >= 7,
        ~np.uint64(0),
        (np.uint64(1) << (8 * (size + 1)).astype(np.uint64)) - np.uint64(1),
    )
    own = (_windows(a, rows + 8, 8).view("<u8").ravel() & keep)[row_of]
    written = _windows(a, cells + 6 + width, 8).view("<u8").ravel() & keep[row_of]
    if (written != own).any():
        raise Irregular("a cell written inside another row")
    cell_rows = numbers[row_of]
    same_row = row_of[1:] == row_of[:-1]
    if (same_row & (column[1:] <= column[:-1])).any() or column.max() > max_columns:
        raise Irregular("cells out of order or beyond column XFD")
    last = np.ones(len(cells), dtype=bool)
    last[:-1] = ~same_row
    bound = max_rows + spread_per_cell * len(cells)
    area = (int(cell_rows.max() - cell_rows.min()) + 1) * (int(column.max() - column.min()) + 1)
    if int(column[last].sum()) > bound or area > bound:
        raise Irregular("cells spread over the grid")
    g.cells, g.cell_rows, g.columns = cells, cell_rows, column
    return g


def scan(g: Grid, formats: Formats) -> SheetBytes:
    """What a prepared part holds beyond the values; Irregular for anything not plain."""
    tags, body, closing = g.tags, g.body, g.closing
    data, a = tags.data, tags.a
    facts = SheetBytes(g.elements)
    _columns(data[: data.find(b"<sheetData")], facts)
    _merged(data[closing:], facts)
    if g.rows is None:
        return facts
    _hidden_rows(data, body, closing, g.rows, g.row_tag_end, g.numbers, facts)
    if g.cells is None:
        return facts
    cells, cell_rows, column = g.cells, g.cell_rows, g.columns
    cell_tag_end = tags.gt[np.searchsorted(tags.gt, cells)]
    kinds, styles = _attributes(a, body, closing, cells, cell_tag_end, len(formats.redo))
    numeric = kinds == NUMBER
    redo = (numeric & formats.redo[styles]) | (kinds == ERROR) | (kinds == DATE)
    odd, valued = _odd_values(tags, body, closing, cells)
    holds = np.zeros(len(cells), dtype=bool)
    holds[valued] = True
    holds[_owners(tags.named(b"is", body, closing), cells)] = True
    facts.valued = (cell_rows[holds], column[holds])
    if np.isin(kinds[odd], (SHARED, BOOL)).any():
        raise Irregular("a shared string or boolean cell whose value is not a number")
    redo[odd[kinds[odd] == NUMBER]] = True
    redo[_trimmed_texts(tags, body, closing, cells)] = True
    if data.find(b"_x", body, closing) >= 0:
        redo[_hits(_ESCAPE, data, body, closing, cells)] = True
    percent = numeric & formats.percent[styles] & ~redo
    for k in np.flatnonzero(percent):
        facts.percent.append((int(cell_rows[k]), int(column[k])))
    for k in np.flatnonzero(redo):
        start = int(cells[k])
        end = int(cell_tag_end[k]) + 1
        if data[end - 2] != 47:  # not <c .../>: up to its </c>
            end = data.find(b"</c>", end) + 4
        facts.redo.append((int(cell_rows[k]), int(column[k]), int(styles[k]), data[start:end]))
    formulas = tags.named(b"f", body, closing)
    if len(formulas):
        _formulas(data, formulas, cells, cell_tag_end, cell_rows, column, facts)
    return facts


def scan_sheet(
    data: bytes, formats: Formats, max_rows: int, max_columns: int, spread_per_cell: int
) -> SheetBytes:
    """``prepare`` and ``scan`` in one."""
    return scan(prepare(data, max_rows, max_columns, spread_per_cell), formats)


def _prefixed(a, lt, gt, start, end) -> bool:
    """Whether a tag between ``start`` and ``end`` has a prefixed name (a colon before its
    first delimiter), or a name longer than any the format has; prefixed attributes
    (xml:space, x14ac:dyDescent) are fine."""
    colons = np.flatnonzero(a[start:end] == 58) + start
    k, j = np.searchsorted(lt, colons) - 1, np.searchsorted(gt, colons) - 1
    opened = np.where(k >= 0, lt[np.maximum(k, 0)], -1)
    shut = np.where(j >= 0, gt[np.maximum(j, 0)], -1)
    in_tag = (opened > shut) & (opened >= start)
    colons, opened = colons[in_tag], opened[in_tag]
    if not len(colons):
        return False
    reach = np.arange(1, 1 + len(_PAD))  # the window stays in the padded array
    window = _windows(a, opened + 1, len(_PAD))
    named = _DELIM[window] & (reach < (colons - opened)[:, None])
    return bool((~named.any(axis=1)).any())


def _attributes(a, body, closing, cells, tag_end, styles_known):
    """Type and style of every cell, from its t and s attributes."""
    equals = np.flatnonzero(a[body:closing] == 61) + body
    named = (a[equals - 2] == 32) & (a[equals + 1] == 34)
    kinds = np.zeros(len(cells), dtype=np.int8)
    styles = np.zeros(len(cells), dtype=np.int64)
    for letter, store in ((116, kinds), (115, styles)):  # t, s
        at = equals[named & (a[equals - 1] == letter)]
        owner = _inside(cells, tag_end + 1, at)
        at, owner = at[owner >= 0], owner[owner >= 0]
        if (np.diff(owner) == 0).any():  # owners rise with the positions
            raise Irregular("an attribute twice")
        if letter == 115:
            values, ok = _digits(a, at + 2, 6, zero=True)
            if not ok or (values >= styles_known).any():
                raise Irregular("a style that is not one")
            store[owner] = values
            continue
        key = _windows(a, at + 2, 8).view("<u8").ravel()  # the value's first 8 bytes
        code = np.full(len(at), -1, dtype=np.int8)
        for text, kind in _TYPES.items():
            mask = (1 << (8 * len(text))) - 1
            code[(key & np.uint64(mask)) == np.uint64(int.from_bytes(text, "little"))] = kind
        inline = key == np.uint64(int.from_bytes(b"inlineSt", "little"))
        inline &= (a[at + 10] == ord("r")) & (a[at + 11] == ord('"'))
        code[inline] = INLINE
        if (code < 0).any():
            raise Irregular("a cell type that is not one")
        store[owner] = code
    return kinds, styles


def _windows(a: np.ndarray, starts: np.ndarray, width: int) -> np.ndarray:
    """The ``width`` bytes from each start, one row each (copied row by row, no index array)."""
    return np.lib.stride_tricks.sliding_window_view(a, width)[starts]


def _text_spans(tags: _Tags, opening: bytes, body: int, closing: int):
    """Where the text after each tag ``opening`` (such as <v>) of the sheet data runs."""
    index = tags.exactly(opening, body, closing)
    return tags.lt[index] + len(opening), tags.lt[np.minimum(index + 1, len(tags.lt) - 1)]


def _odd_values(tags: _Tags, body: int, closing: int, cells) -> np.ndarray:
    """Cells whose <v> text is not a number in the form both readers read alike."""
    a = tags.a
    values = tags.named(b"v", body, closing)
    plain = (a[values + 2] == 62) | ((a[values + 2] == 47) & (a[values + 3] == 62))
    plain |= (a[values + 2] == 32) & (a[values + 3] == 47) & (a[values + 4] == 62)
    if not plain.all():
        raise Irregular("a value tag with attributes")
    starts, ends = _text_spans(tags, b"<v>", body, closing)
    length = ends - starts
    kind = _CHARACTER[_windows(a, starts, _SHORT)]  # 1 a digit, 16 a point, 64 anything else
    kind[np.arange(_SHORT) >= length[:, None]] = 0
    total = kind.sum(axis=1, dtype=np.uint16)
    digits, points = total % 16, (total // 16) % 4
    simple = (length <= _SHORT) & (digits >= 1) & (total < 64) & (points <= 1)
    odd = [
        start
        for start, end in zip(starts[~simple].tolist(), ends[~simple].tolist(), strict=True)
        if _NUMBER.fullmatch(tags.data, start, end) is None
    ]
    return _owners(np.array(odd, dtype=np.int64), cells), _owners(starts[length > 0], cells)


def _trimmed_texts(tags: _Tags, body: int, closing: int, cells) -> np.ndarray:
    """Cells whose <t> text (no xml:space) has white space at an end: calamine trims it."""
    a = tags.a
    starts, ends = _text_spans(tags, b"<t>", body, closing)
    keep = (ends > starts) & (_SPACE[a[starts]] | _SPACE[a[np.maximum(ends - 1, 0)]])
    return _owners(starts[keep], cells)


def _hits(pattern, data, body, closing, cells) -> np.ndarray:
    """Indices of the cells holding a match of ``pattern``."""
    found = [m.start() for m in pattern.finditer(data, body, closing)]
    return _owners(np.array(found, dtype=np.int64), cells)


def _owners(points: np.ndarray, cells: np.ndarray) -> np.ndarray:
    """Index of the cell each point of the sheet data lies in (after its start)."""
    k = np.searchsorted(cells, points, side="right") - 1
    return k[k >= 0]


def _hidden_rows(data, body, closing, rows, tag_end, numbers, facts) -> None:
    if data.find(b' hidden="', body, closing) < 0:
        return
    for m in _HIDDEN.finditer(data, body, closing):
        k = int(np.searchsorted(rows, m.start(), side="right")) - 1
        if k >= 0 and m.start() < tag_end[k] and xlsxparts.true(_text(m.group(1))):
            facts.hidden_rows.append(int(numbers[k]))


def _columns(head: bytes, facts: SheetBytes) -> None:
    """Hidden columns, as the expat scan reads <col min=.. hidden=..>."""
    found = _COLUMN.findall(head)
    if len(found) != len(_COLUMN_TAG.findall(head)):
        raise Irregular("a column entry in another form")
    hidden: dict[str, bool] = {}
    for attributes in found:
        attrs = {k.decode(): _text(v) for k, v in _ATTRIBUTE.findall(attributes)}
        try:
            letter = get_column_letter(int(attrs["min"]))
        except (KeyError, ValueError):
            raise Irregular("a column entry without a column number") from None
        hidden[letter] = xlsxparts.true(attrs.get("hidden"))
    facts.hidden_columns = [c for c, h in hidden.items() if h]


def _merged(tail: bytes, facts: SheetBytes) -> None:
    found = _MERGE.findall(tail)
    if len(found) != len(_MERGE_TAG.findall(tail)):
        raise Irregular("a merged range in another form")
    for ref in found:
        merged = _text(ref)
        try:
            merged = CellRange(merged).coord
        except (ValueError, TypeError):
            pass
        facts.merged.append(merged)


def _text(raw: bytes) -> str:
    """Attribute or element text as XML gives it (entities replaced)."""
    if b"&" not in raw:
        return raw.decode()
    try:
        return ET.fromstring(b"<x>" + raw + b"</x>").text or ""
    except ET.ParseError:
        raise Irregular("an entity that is not one") from None


def _formulas(data, tags, cells, tag_end, cell_rows, column, facts) -> None:
    """Formulas with no saved value: their text, shared formulas translated as openpyxl."""
    texts = xlsxparts.FormulaTexts()
    for position in tags.tolist():
        k = int(np.searchsorted(cells, position, side="right")) - 1
        m = _FORMULA.match(data, position)
        if k < 0 or m is None or data[tag_end[k] + 1 : position].strip():
            raise Irregular("a formula in another form")
        attrs = dict(_FORMULA_ATTRIBUTE.findall(m.group(1) or b""))
        kind, index = attrs.get(b"t"), attrs.get(b"si")
        saved = m.group(3) is not None and m.group(3).strip() != b""
        ref = data[cells[k] + 6 : data.find(b'"', cells[k] + 6)].decode()
        text = texts.text(
            _text(m.group(2) or b""),
            kind and _text(kind),
            index and _text(index),
            ref,
            needed=not saved,
        )
        if not saved:
            facts.formulas[(int(cell_rows[k]), int(column[k]))] = text
