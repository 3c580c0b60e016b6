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

The grid comes first (``sheetgrid.py``: ``bound``, what calamine must not be given a part
without, then ``rules``), on the tags ``xmltags.py`` finds; ``scan`` then reads what the cells
hold. Anything else raises ``Irregular``: the loader then runs the expat scan
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
from .sheetgrid import Grid, bound, rules
from .xmltags import (
    MAIN,
    Irregular,
    Tags,
    digits,
    element_count,
    inside,
    key,
    mask,
    owners,
    windows,
    words,
)

__all__ = ["MAIN", "Formats", "Grid", "Irregular", "SheetBytes", "bound", "element_count"]
__all__ += ["prepare", "rules", "scan", "scan_sheet", "scan_strings"]

_STRINGS_ROOT = re.compile(rb"<sst(?=[\s>])[^>]*?\sxmlns=\"" + re.escape(MAIN) + rb'"')
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
_POWERS = 10 ** np.arange(1, 8)  # where a row number gains a digit
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
_TYPE_LENGTH = np.array([1, 1, 3, 1, 1, 1, 9])  # of each type's value (inlineStr: 9)


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


def scan_strings(data: bytes) -> tuple[int, bool]:
    """A shared-strings part: its XML elements, and whether the compiled reader reads it as
    openpyxl does, and safely (the root in the main namespace, no prefixed tag, no text with
    white space at an end and no xml:space, no _xHHHH_ escape, a stated count of strings no
    larger than the part); Irregular as element_count."""
    tags = Tags(data)
    tags.check_pairs()
    if not data.rstrip().endswith(b"</sst>"):
        raise Irregular("not closed")
    faithful = (
        _STRINGS_ROOT.search(data, 0, 4096) is not None
        and not tags.prefixed(len(data))
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


def prepare(data: bytes, max_rows: int, max_columns: int, spread_per_cell: int) -> Grid:
    """The tags and the grid of one worksheet part (``sheetgrid.bound``, then
    ``sheetgrid.rules``); Irregular for anything not plain.

    The grid rules are the expat scan's (``xlsxparts.scan_sheet``): rows in order within
    Excel's rows, cells in order within their row and column XFD, cells not spread over many
    more positions than there are cells (``spread_per_cell``). The compiled reader's dense
    grid, from the first cell to the last, is held to the same bound.
    """
    grid = bound(data, max_rows, max_columns, spread_per_cell)
    return rules(grid, max_rows, spread_per_cell)


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
    cell_tag_end = tags.ends(g.cell_index)
    cell_of = _cell_of(g)
    kinds, styles = _attributes(g, cell_tag_end, len(formats.redo))
    numeric = kinds == NUMBER
    redo = (numeric & formats.redo[styles]) | (kinds == ERROR) | (kinds == DATE)
    odd, valued = _odd_values(tags, g.span, cell_of)
    holds = np.zeros(len(cells), dtype=bool)
    holds[valued] = True
    holds[_owners(cell_of, tags.find(b"is", g.span))] = True
    facts.valued = (cell_rows[holds], column[holds])
    if np.isin(kinds[odd], (SHARED, BOOL)).any():
        raise Irregular("a shared string or boolean cell whose value is not a number")
    redo[odd[kinds[odd] == NUMBER]] = True
    redo[_trimmed_texts(tags, g.span, cell_of)] = True
    redo[_escapes(a, data, body, closing, cells)] = True
    percent = numeric & formats.percent[styles] & ~redo
    for k in np.flatnonzero(percent):
        facts.percent.append((int(cell_rows[k]), int(column[k])))
    for k in np.flatnonzero(redo):
        start = int(cells[k])
        end = int(cell_tag_end[k]) + 1
        if data[end - 2] != 47:  # not <c .../>: up to its </c>
            end = data.find(b"</c>", end) + 4
        facts.redo.append((int(cell_rows[k]), int(column[k]), int(styles[k]), data[start:end]))
    formulas = tags.lt[tags.find(b"f", g.span)]
    if len(formulas):
        _formulas(data, formulas, cells, cell_tag_end, cell_rows, column, facts)
    return facts


def scan_sheet(
    data: bytes, formats: Formats, max_rows: int, max_columns: int, spread_per_cell: int
) -> SheetBytes:
    """``prepare`` and ``scan`` in one."""
    return scan(prepare(data, max_rows, max_columns, spread_per_cell), formats)


def _cell_of(g: Grid) -> np.ndarray:
    """For every tag of the part, the index of the last cell beginning at or before it (-1
    before the first)."""
    starts = np.zeros(len(g.tags.lt), dtype=np.int32)
    starts[g.cell_index] = 1
    return np.cumsum(starts, dtype=np.int32) - 1


def _owners(cell_of: np.ndarray, index: np.ndarray) -> np.ndarray:
    """The cell each tag of ``index`` lies in (tags before the first cell dropped)."""
    k = cell_of[index]
    return k[k >= 0]


def _attributes(g: Grid, tag_end: np.ndarray, styles_known: int):
    """Type and style of every cell, from its t and s attributes."""
    found = _attributes_in_place(g, tag_end, styles_known)
    if found is not None:
        return found
    return _attributes_anywhere(g.tags.a, g.body, g.closing, g.cells, tag_end, styles_known)


def _type_codes(words: np.ndarray, a: np.ndarray, at: np.ndarray) -> np.ndarray:
    """The cell type whose value (t="...") begins at each of ``at``; Irregular for another."""
    key = words[at]  # the value's first 8 bytes
    code = np.full(len(at), -1, dtype=np.int8)
    for text, kind in _TYPES.items():
        mask = (1 << (8 * len(text))) - 1
        code[(key & np.uint64(mask)) == np.uint64(int.from_bytes(text, "little"))] = kind
    inline = key == np.uint64(int.from_bytes(b"inlineSt", "little"))
    inline &= (a[at + 8] == ord("r")) & (a[at + 9] == ord('"'))
    code[inline] = INLINE
    if (code < 0).any():
        raise Irregular("a cell type that is not one")
    return code


def _style_numbers(a: np.ndarray, at: np.ndarray, styles_known: int) -> np.ndarray:
    """The cell style whose number (s="...") begins at each of ``at``; Irregular for another."""
    values, ok = digits(a, at, 6, zero=True)
    if not ok or (values >= styles_known).any():
        raise Irregular("a style that is not one")
    return values


def _attributes_in_place(g: Grid, tag_end: np.ndarray, styles_known: int):
    """Type and style of every cell as ``_attributes_anywhere`` finds them, when every cell
    tag is <c r="A1"> followed by t and s attributes only (in either order, one space before
    each, then > or />): read in place, attribute after attribute; None for a sheet whose cell
    tags are in another form."""
    tags, columns = g.tags, g.columns
    a, words = tags.a, tags.words
    # right after the reference's closing quote: its letters and its row's digits
    at = g.cells + 6 + 1 + (columns > 26) + (columns > 702)
    at += 2 + np.searchsorted(_POWERS, g.cell_rows, side="right")
    kinds = np.zeros(len(at), dtype=np.int8)
    styles = np.zeros(len(at), dtype=np.int64)
    given = np.zeros((2, len(at)), dtype=bool)  # a t, an s attribute seen
    left = np.arange(len(at))  # the cells whose tag goes on
    for _ in range(3):
        p = at[left]
        w = words[p]  # the next 8 bytes of each
        first = w & mask(1)
        shut = (first == 62) | ((w & mask(2)) == key(b"/>"))
        if (np.where(first == 62, p, p + 1)[shut] != tag_end[left[shut]]).any():
            return None
        left, p, w = left[~shut], p[~shut], w[~shut]
        if not len(left):
            return kinds, styles
        head = w & mask(4)
        typed, styled = head == key(b' t="'), head == key(b' s="')
        if not (typed | styled).all():
            return None
        for row, chosen in ((0, typed), (1, styled)):
            if given[row, left[chosen]].any():
                raise Irregular("an attribute twice")
            given[row, left[chosen]] = True
        t, s = left[typed], left[styled]
        code = _type_codes(words, a, p[typed] + 4)
        kinds[t] = code
        at[t] = p[typed] + 5 + _TYPE_LENGTH[code]
        style = _style_numbers(a, p[styled] + 4, styles_known)
        styles[s] = style
        at[s] = p[styled] + 6 + np.searchsorted(_POWERS, style, side="right")
    return None  # more than two attributes


def _attributes_anywhere(a, body, closing, cells, tag_end, styles_known):
    """Type and style of every cell, from its t and s attributes wherever in its tag."""
    equals = np.flatnonzero(a[body:closing] == 61) + body
    letter = a[equals - 1]
    equals = equals[
        (a[equals - 2] == 32) & (a[equals + 1] == 34) & ((letter == 116) | (letter == 115))
    ]
    owner = inside(cells, tag_end + 1, equals)  # t (116) and s (115) at once
    equals, owner = equals[owner >= 0], owner[owner >= 0]
    kinds = np.zeros(len(cells), dtype=np.int8)
    styles = np.zeros(len(cells), dtype=np.int64)
    for name, store in ((116, kinds), (115, styles)):  # t, s
        chosen = a[equals - 1] == name
        at, held = equals[chosen], owner[chosen]
        if (np.diff(held) == 0).any():  # owners rise with the positions
            raise Irregular("an attribute twice")
        if name == 115:
            store[held] = _style_numbers(a, at + 2, styles_known)
        else:
            store[held] = _type_codes(words(a), a, at + 2)
    return kinds, styles


def _text_spans(tags: Tags, opening: bytes, span: tuple[int, int]):
    """The tags ``opening`` (such as <v>) of the sheet data, and where the text after each
    runs."""
    index = tags.exactly(opening, span)
    after = tags.lt[np.minimum(index + 1, len(tags.lt) - 1)]
    return index, tags.lt[index] + len(opening), after


def _odd_values(tags: Tags, span: tuple[int, int], cell_of: np.ndarray):
    """Cells whose <v> text is not a number in the form both readers read alike, and the
    cells whose <v> holds a text."""
    a = tags.a
    index = tags.find(b"v", span)
    values = tags.lt[index]
    after = a[values + 2]
    shut = (after == 47) & (a[values + 3] == 62)
    shut |= (after == 32) & (a[values + 3] == 47) & (a[values + 4] == 62)
    if not ((after == 62) | shut).all():
        raise Irregular("a value tag with attributes")
    index = index[after == 62]  # <v>, followed by its text
    starts, ends = values[after == 62] + 3, tags.lt[np.minimum(index + 1, len(tags.lt) - 1)]
    length = ends - starts
    kind = _CHARACTER[windows(a, starts, _SHORT)]  # 1 a digit, 16 a point, 64 anything else
    kind *= np.arange(_SHORT) < length[:, None]
    total = kind.sum(axis=1, dtype=np.uint16)
    digit_count, points = total % 16, (total // 16) % 4
    simple = (length <= _SHORT) & (digit_count >= 1) & (total < 64) & (points <= 1)
    other = np.flatnonzero(~simple)
    odd = [
        k
        for k, start, end in zip(
            other.tolist(), starts[other].tolist(), ends[other].tolist(), strict=True
        )
        if _NUMBER.fullmatch(tags.data, start, end) is None
    ]
    return _owners(cell_of, index[odd]), _owners(cell_of, index[length > 0])


def _trimmed_texts(tags: Tags, span: tuple[int, int], cell_of: np.ndarray) -> np.ndarray:
    """Cells whose <t> text (no xml:space) has white space at an end: calamine trims it."""
    a = tags.a
    index, starts, ends = _text_spans(tags, b"<t>", span)
    keep = (ends > starts) & (_SPACE[a[starts]] | _SPACE[a[np.maximum(ends - 1, 0)]])
    return _owners(cell_of, index[keep])


def _escapes(a, data, body, closing, cells) -> np.ndarray:
    """Cells holding an _xHHHH_ escape (read as a character by one reader, not the other)."""
    if data.find(b"_", body, closing) < 0:
        return np.zeros(0, dtype=np.int64)
    marks = np.flatnonzero(a[body:closing] == 95) + body
    found = [p for p in marks[a[marks + 1] == 120].tolist() if _ESCAPE.match(data, p)]
    return owners(np.array(found, dtype=np.int64), cells)


def _hidden_rows(data, body, closing, rows, tag_end, numbers, facts) -> None:
    # no row tag longer than <row r="N"/>: no row has a hidden attribute
    size = 1 + np.searchsorted(_POWERS, numbers, side="right")  # digits of each row number
    if ((tag_end - rows) <= size + 10).all():
        return
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
