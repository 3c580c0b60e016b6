"""Load the cells of an .xlsx workbook: compiled reader for the values, light pass beside it.

Chosen by measurement (``benchmarks/workbook_read.py``; 50,000 buses): openpyxl's streaming
reader took 8.7 s for what python-calamine (Rust, releasing the GIL) loads in 0.35 to 0.47 s.
The careful reader's checks stay, made cheap:

1. the archive's bounds (unpacked size, compression ratio of every part), then the small parts
   by expat (``xlsxparts.open_book``: content types, workbook, relationships, styles,
   properties; located errors, no document type, the element budget); the shared strings by
   a pass over their bytes (``sheetbytes.scan_strings``), by expat when that finds them in
   another form or stating more strings than they hold;
2. each sheet the tool reads, in workbook order: what bounds calamine's dense grid, on the
   sheet's bytes (``sheetgrid.bound``: the element budget, every cell's reference first and
   within Excel's grid, the grid from the first cell to the last within the bound of the
   expat scan; calamine never sees a sheet without it, since that grid can exhaust the
   machine), then python-calamine parses it in a second thread while the rest of the light
   pass runs (``sheetgrid.rules``, the other grid rules; ``sheetbytes.scan``: merged and hidden
   cells, formulas without a saved value, percent and other formats), and each sheet calamine
   gives back is laid out for the reader (``build``) while it parses the next;
3. a sheet the light pass finds in another form, or that calamine fails on, is read as before
   (calamine's result, if any, is not used):
   the expat scan (``xlsxparts.check_sheet_part``, its messages) and openpyxl's streaming
   reader for the values. So are all sheets when the shared strings hold text the two readers
   read differently, or the parts are not where calamine looks for them.

The cells openpyxl would give differently (dates and other formats, error cells, inline text
with spaces at an end) are given by openpyxl's own cell parser from their XML, so the values
are openpyxl's (``data_only``) with one exception: whole numbers come as floats (1.0 for 1).
"""

from __future__ import annotations

import contextlib
import gc
import io
import re
import xml.etree.ElementTree as ET
import zipfile
import zlib
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import InputError, Problem
from . import sheetbytes, sheetgrid, tables, xlsxparts
from .compiled import Calamine as _Calamine
from .marked import FormulaCell, PercentCell

Rows = list[tuple[int, list[Any]]]
# where calamine looks for the workbook and its strings (its reader, not the content types)
WORKBOOK_PART = "xl/workbook.xml"
STRINGS_PART = "xl/sharedStrings.xml"
_PLAIN_FORMAT = re.compile(r"[#0?,. %]*(?:[Ee][+-][#0]+)?%?")
# built-in number formats (ECMA-376 Part 1, 18.8.30) after which both readers give the
# number itself: General, 0, 0.00, #,##0, #,##0.00, 0%, 0.00%, 0.00E+00, fractions,
# accounting without currency, ##0.0E+0
_PLAIN_BUILTIN = {0, 1, 2, 3, 4, 9, 10, 11, 12, 13, 37, 38, 39, 40, 48}
_UNPACK_ERRORS = (KeyError, zipfile.BadZipFile, zlib.error, EOFError, NotImplementedError)


def refuse(path: Path, message: str) -> InputError:
    return InputError([Problem(path.name, None, None, None, message)])


def check_workbook_bounds(path: Path, archive: zipfile.ZipFile) -> None:
    """The unpacked size of the whole workbook, and the ratio of every part, however small."""
    parts = archive.infolist()
    total = sum(p.file_size for p in parts)
    if total > tables.MAX_UNCOMPRESSED_BYTES:
        raise refuse(
            path,
            f"unpacks to {total / 2**30:.1f} GiB, more than the "
            f"{tables.MAX_UNCOMPRESSED_BYTES / 2**30:.0f} GiB this tool reads; split the "
            "workbook or use CSV files",
        )
    for p in parts:
        if p.compress_size and p.file_size / p.compress_size > tables.MAX_COMPRESSION_RATIO:
            raise refuse(
                path,
                f"part {p.filename} unpacks {p.file_size / p.compress_size:.0f} "
                "times larger than it is stored, which no real workbook does; refused "
                "as a decompression bomb",
            )


@dataclass
class Table:
    """One sheet's cells: row 1's, then the rows below with their spreadsheet row numbers
    (rows with no cell left out). ``header`` is None for a sheet with no row at all."""

    header: list[Any] | None
    numbers: np.ndarray  # int64, one per line
    lines: list[list[Any]]

    @classmethod
    def of_rows(cls, rows: Rows) -> Table:
        """From (row number, cells) with row 1 first."""
        if not rows:
            return cls(None, np.zeros(0, np.int64), [])
        numbers = np.array([number for number, _ in rows[1:]], dtype=np.int64)
        return cls(rows[0][1], numbers, [cells for _, cells in rows[1:]])

    def rows(self) -> Rows:
        if self.header is None:
            return []
        return [(1, self.header), *zip(self.numbers.tolist(), self.lines, strict=True)]


def load_workbook_rows(path: str | Path, notes: list[str]) -> dict[str, Rows | None]:
    """Per sheet (name stripped, lower case, workbook order) its (spreadsheet row number, cell
    values) with row 1 first, or None for a sheet named but not read (the tool does not read
    it); what loading notices goes to ``notes``. InputError when the file cannot be read."""
    return load_workbook(path, notes, lambda name, table: table.rows())


def load_workbook(path: str | Path, notes: list[str], build, data: bytes | None = None):
    """Per sheet (name stripped, lower case, workbook order) ``build(name, table)`` of its
    ``Table``, or None for a sheet named but not read (the tool does not read it); what
    loading notices goes to ``notes``. InputError when the file cannot be read.

    ``build`` runs as each sheet is loaded, while calamine parses the next; ``data``: the
    file's bytes, when the caller has read them already.
    """
    path = Path(path)
    data = path.read_bytes() if data is None else data
    try:
        archive = zipfile.ZipFile(io.BytesIO(data))
    except (zipfile.BadZipFile, OSError, ValueError) as exc:
        raise refuse(path, f"cannot be read as an .xlsx workbook ({exc})") from None
    with archive:
        check_workbook_bounds(path, archive)
        size = len(data)
        elements = max(tables.MIN_XML_ELEMENTS, tables.MAX_XML_ELEMENTS_PER_BYTE * size)
        budget = xlsxparts.Budget(elements, size)
        strings = _Strings()
        try:
            book = xlsxparts.open_book(archive, tables.READ_SHEETS, budget, strings.check)
            loader = _Loader(path, data, archive, book, budget, strings.faithful)
            with _collector_paused():
                return loader.run(notes, build)
        except xlsxparts.Refused as exc:
            raise refuse(path, f"cannot be read as an .xlsx workbook: {exc}") from None


@contextlib.contextmanager
def _collector_paused():
    """The cyclic garbage collector held off while the cells are loaded: calamine makes a list
    per row, and each collection it sets off holds the interpreter while the light pass waits
    (measured: 0.49 s against 0.41 s at 50,000 buses). Loading makes no reference cycles;
    memory is freed as before, by reference counts."""
    enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if enabled:
            gc.enable()


class _Strings:
    """The shared-strings check: a pass over the bytes, expat when they are in another form."""

    def __init__(self):
        self.faithful = True  # calamine reads them as openpyxl does

    def check(self, archive: zipfile.ZipFile, part: str, budget: xlsxparts.Budget) -> None:
        try:
            count, self.faithful = sheetbytes.scan_strings(archive.read(part))
            if count > budget.left:
                raise sheetbytes.Irregular("over the budget")
        except (sheetbytes.Irregular, *_UNPACK_ERRORS, RuntimeError):
            self.faithful = False
            xlsxparts.check_strings_part(archive, part, budget)  # its message, or accepted
            return
        budget.left -= count


@dataclass
class _Styles:
    formats: sheetbytes.Formats
    codes: list[str]  # openpyxl's number format of each cell style
    dates: set[int]
    durations: set[int]


def _styles(archive: zipfile.ZipFile) -> _Styles:
    """The cell styles as openpyxl reads them (styles.xml, already checked by expat)."""
    from openpyxl.styles.numbers import BUILTIN_FORMATS, BUILTIN_FORMATS_MAX_SIZE
    from openpyxl.styles.stylesheet import Stylesheet
    from openpyxl.xml.constants import ARC_STYLE
    from openpyxl.xml.functions import fromstring

    codes, dates, durations, plain = ["General"], set(), set(), [True]
    if ARC_STYLE in archive.NameToInfo:
        sheet = Stylesheet.from_tree(fromstring(archive.read(ARC_STYLE)))
        if sheet.cell_styles:
            custom = sheet.custom_formats
            codes, plain = [], []
            for style in sheet.cell_styles:
                number = style.numFmtId
                if number < BUILTIN_FORMATS_MAX_SIZE:
                    codes.append(BUILTIN_FORMATS.get(number, "General"))
                    plain.append(number in _PLAIN_BUILTIN)
                else:
                    code = sheet.number_formats[number - BUILTIN_FORMATS_MAX_SIZE]
                    codes.append(code)
                    plain.append(_PLAIN_FORMAT.fullmatch(code) is not None)
            dates, durations = sheet.date_formats, sheet.timedelta_formats
            del custom
    percent = np.array(["%" in code for code in codes], dtype=bool)
    redo = ~np.array(plain, dtype=bool)
    redo[list(dates | durations)] = True
    return _Styles(sheetbytes.Formats(percent, redo), codes, set(dates), set(durations))


class _Loader:
    def __init__(self, path, data, archive, book: xlsxparts.Book, budget, faithful: bool):
        self.path, self.data, self.archive, self.book, self.budget = (
            path,
            data,
            archive,
            book,
            budget,
        )
        self.styles = _styles(archive)
        members = archive.NameToInfo
        strings_seen = book.strings == STRINGS_PART or (
            book.strings is None and STRINGS_PART not in members
        )
        self.calamine_reads = book.workbook == WORKBOOK_PART and strings_seen and faithful
        self.light: dict[str, sheetbytes.SheetBytes] = {}  # sheets calamine parses
        self.careful: list[xlsxparts.SheetFacts] = []  # sheets openpyxl reads

    def run(self, notes: list[str], build) -> dict[str, Any]:
        read = [f for f in self.book.sheets if f.read]
        names = [f.name for f in self.book.sheets]
        worker = _Calamine(self.data) if self.calamine_reads and read else None
        if worker is not None:
            worker.start()
        tables: dict[str, Any] = {}
        grids: dict[str, sheetgrid.Grid] = {}
        tried: set[str] = set()
        try:
            # in workbook order, what bounds calamine's grid, each sheet given to calamine as
            # soon as that has passed (the smaller part of the light pass)
            for facts in read:
                if worker is None or not facts.plain_target or names.count(facts.name) != 1:
                    continue
                tried.add(facts.name)
                grid = self._bound(facts)
                if grid is None:
                    continue
                if grid.elements > self.budget.left:
                    break  # this sheet and the next are read by expat, in turn
                self.budget.left -= grid.elements
                grids[facts.name] = grid
                worker.submit(facts.name)
            # in workbook order, the rest of the light pass while calamine parses; each
            # sheet calamine has given back is taken in turn
            for k, facts in enumerate(read):
                grid = grids.get(facts.name)
                if grid is not None:
                    try:
                        self.light[facts.name] = self._scan(facts, grid)
                        self._settle(worker, tables, read[: k + 1], build, wait=False)
                        continue
                    except sheetbytes.Irregular:
                        del grids[facts.name]
                        worker.drop(facts.name)
                        self.budget.left += grid.elements  # read again, by expat
                self._settle(worker, tables, read[:k], build)
                self._careful(facts, scanned_rels=facts.name in tried)
            self._settle(worker, tables, read, build)
        finally:
            if worker is not None:
                worker.stop()
        for name, rows in self._openpyxl_rows().items():
            tables[name] = build(name.strip().lower(), Table.of_rows(rows))
        sheets: dict[str, Any] = {}
        for facts in self.book.sheets:
            name = facts.name.strip().lower()
            if not facts.read:
                sheets[name] = None
                continue
            _notes(name, facts, notes)
            sheets[name] = tables[facts.name]
        return sheets

    def _bound(self, facts: xlsxparts.SheetFacts) -> sheetgrid.Grid | None:
        """One sheet's relationships by expat, then what bounds calamine's grid on its bytes
        (``sheetgrid.bound``), or None."""
        rels = xlsxparts.rels_path(facts.part)
        if rels in self.archive.NameToInfo:
            xlsxparts.check_part(self.archive, rels, self.budget)
        try:
            return sheetgrid.bound(
                self.archive.read(facts.part),
                xlsxparts.MAX_ROWS,
                xlsxparts.MAX_COLUMNS,
                xlsxparts.SPREAD_PER_CELL,
            )
        except (sheetbytes.Irregular, *_UNPACK_ERRORS, RuntimeError):
            return None

    def _scan(self, facts: xlsxparts.SheetFacts, grid: sheetgrid.Grid) -> sheetbytes.SheetBytes:
        """The rest of the light pass: the grid rules, then what the cells hold."""
        sheetgrid.rules(grid, xlsxparts.MAX_ROWS, xlsxparts.SPREAD_PER_CELL)
        light = sheetbytes.scan(grid, self.styles.formats)
        facts.formulas, facts.merged = light.formulas, light.merged
        facts.hidden_rows, facts.hidden_columns = light.hidden_rows, light.hidden_columns
        return light

    def _careful(self, facts: xlsxparts.SheetFacts, scanned_rels: bool = False) -> None:
        """The expat scan of one sheet (Refused, or its facts), openpyxl for its values."""
        facts.formulas, facts.merged, facts.hidden_rows, facts.hidden_columns = {}, [], [], []
        if scanned_rels:
            xlsxparts.scan_sheet(self.archive, facts, self.budget)
        else:
            xlsxparts.check_sheet_part(self.archive, facts, self.budget)
        self.careful.append(facts)

    def _settle(self, worker, tables: dict[str, Any], sheets, build, wait: bool = True) -> None:
        """Take calamine's results for these sheets, in order (without ``wait``, only those
        it has given back, up to the first it has not); one it failed on goes to the careful
        reader."""
        for facts in sheets:
            light = self.light.get(facts.name)
            if light is None:
                continue
            if not wait and not worker.done(facts.name):
                return
            del self.light[facts.name]
            result = worker.result(facts.name)
            try:
                if isinstance(result, BaseException):
                    raise sheetbytes.Irregular(f"calamine: {type(result).__name__}")
                table = self._grid_table(facts, light, *result)
            except sheetbytes.Irregular:
                self.budget.left += light.elements  # read again, by expat
                self._careful(facts, scanned_rels=True)
                continue
            tables[facts.name] = build(facts.name.strip().lower(), table)

    def _grid_table(self, facts, light: sheetbytes.SheetBytes, start, grid) -> Table:
        """calamine's grid as rows from column A, with what the light pass found laid over:
        the values openpyxl's cell parser gives, percent formats, formulas without a value."""
        top, left = start if start is not None else (0, 0)
        table = grid
        for k in _rows_with_gaps(light, top, left, grid):
            table[k] = [None if v == "" else v for v in table[k]]
        if left:
            pad = [None] * left
            table = [pad + row for row in table]
        extra: dict[int, list[Any]] = {}

        def cells(r: int, c: int) -> list[Any]:
            k = r - top - 1
            found = table[k] if 0 <= k < len(table) else extra.setdefault(r, [])
            if len(found) < c:
                found.extend([None] * (c - len(found)))
            return found

        for (r, c), value in self._redo(facts, light).items():
            cells(r, c)[c - 1] = value
        for r, c in light.percent:
            row = cells(r, c)
            value = row[c - 1]
            if isinstance(value, (int, float)) and not isinstance(value, bool):
                row[c - 1] = PercentCell(value)
        for (r, c), text in light.formulas.items():
            row = cells(r, c)
            if row[c - 1] is None:
                row[c - 1] = FormulaCell(text)
        if extra:  # cells beyond calamine's grid (a formula without a value): rows in order
            rows = list(zip(range(top + 1, top + 1 + len(table)), table, strict=True))
            rows = sorted(rows + list(extra.items()))
            if rows[0][0] != 1:
                rows.insert(0, (1, []))
            return Table.of_rows(rows)
        if not table:
            return Table(None, np.zeros(0, np.int64), [])
        if top:  # row 1 holds no cell
            return Table([], np.arange(top + 1, top + 1 + len(table)), table)
        return Table(table[0], np.arange(2, 1 + len(table)), table[1:])

    def _redo(self, facts, light: sheetbytes.SheetBytes) -> dict[tuple[int, int], Any]:
        """The values of the cells openpyxl reads differently, by openpyxl's cell parser."""
        if not light.redo:
            return {}
        from openpyxl.utils.datetime import CALENDAR_MAC_1904, WINDOWS_EPOCH
        from openpyxl.worksheet._reader import WorkSheetParser

        styles = self.styles
        parser = WorkSheetParser(
            None,
            [],
            data_only=True,
            epoch=CALENDAR_MAC_1904 if self.book.date1904 else WINDOWS_EPOCH,
            date_formats=styles.dates,
            timedelta_formats=styles.durations,
        )
        values = {}
        for r, c, style, xml in light.redo:
            try:
                element = ET.fromstring(b'<c xmlns="' + sheetbytes.MAIN + b'"' + xml[2:])
            except ET.ParseError:
                raise sheetbytes.Irregular("a cell that is not XML alone") from None
            try:
                value = parser.parse_cell(element)["value"]
            except Exception as exc:  # noqa: BLE001 - as openpyxl failed on it before
                raise refuse(
                    self.path,
                    f"cannot be read as an .xlsx workbook: sheet '{facts.name}' (part "
                    f"{facts.part}): {type(exc).__name__}: {exc}",
                ) from None
            if (
                isinstance(value, (int, float))
                and not isinstance(value, bool)
                and "%" in styles.codes[style]
            ):
                value = PercentCell(value)
            values[(r, c)] = value
        return values

    def _openpyxl_rows(self) -> dict[str, Rows]:
        """The sheets read the careful way: openpyxl's streaming reader, as before."""
        if not self.careful:
            return {}
        import openpyxl
        from openpyxl.reader.excel import ExcelReader

        path = self.path
        if not openpyxl.DEFUSEDXML or openpyxl.LXML:
            raise refuse(
                path,
                "the hardened XML parser is not in use (install defusedxml and do not "
                "set OPENPYXL_DEFUSEDXML=False or OPENPYXL_LXML=True); the workbook was "
                "not opened",
            )
        wanted = {f.part for f in self.careful}
        others = {f.part for f in self.book.sheets if f.part not in wanted} | self.book.skipped
        try:
            reader = ExcelReader(io.BytesIO(self.data), read_only=True, data_only=True)
            reader.keep_links = False
            # only the sheets read here are opened (openpyxl passes over a sheet whose part is
            # not among its valid files)
            reader.valid_files = [n for n in reader.valid_files if n not in others]
            reader.read()
        except Exception as exc:  # noqa: BLE001 - any failure to parse is a located input error
            raise refuse(
                path, f"cannot be read as an .xlsx workbook ({type(exc).__name__}: {exc})"
            ) from None
        rows: dict[str, Rows] = {}
        streamed = iter(reader.wb.worksheets)
        try:
            for facts in self.book.sheets:
                if facts.part not in wanted:
                    continue
                ws = next(streamed, None)  # the reader must open the part that was checked
                if ws is None or (ws.title, getattr(ws, "_worksheet_path", facts.part)) != (
                    facts.name,
                    facts.part,
                ):
                    raise refuse(
                        path,
                        f"cannot be read as an .xlsx workbook (sheet '{facts.name}' not found)",
                    )
                try:
                    rows[facts.name] = _sheet_rows(ws, facts.formulas)
                except Exception as exc:  # noqa: BLE001 - any failure to parse is located
                    raise refuse(
                        path,
                        f"cannot be read as an .xlsx workbook: sheet '{facts.name}' (part "
                        f"{facts.part}): {type(exc).__name__}: {exc}",
                    ) from None
        finally:
            reader.wb.close()
        return rows


def _rows_with_gaps(light: sheetbytes.SheetBytes, top: int, left: int, grid) -> list[int]:
    """The rows of calamine's grid that hold an empty position ("" for openpyxl's None): from
    the cells the light pass saw holding a value; every row if one lies outside the grid."""
    if not grid:
        return []
    height, width = len(grid), len(grid[0])
    rows, columns = light.valued
    rows, columns = rows - top - 1, columns - left - 1
    if len(rows) and (
        rows.min() < 0 or rows.max() >= height or columns.min() < 0 or columns.max() >= width
    ):
        return list(range(height))
    filled = np.bincount(rows, minlength=height)
    return np.flatnonzero(filled < width).tolist()


def _sheet_rows(ws, formulas: dict[tuple[int, int], str]) -> Rows:
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


def _notes(name: str, facts: xlsxparts.SheetFacts, notes: list[str]) -> None:
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
