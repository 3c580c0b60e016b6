"""Check the XML parts of a workbook with expat, and note what the cell values do not say.

The careful scan of the workbook loader (``read/xlsx.py``): the small parts (content types,
workbook, relationships, styles, properties) always, a shared-strings or worksheet part when
the light pass over its bytes (``read/sheetbytes.py``) finds it in another form than the usual
one, and every part when ``survey`` is called. Each part is read by expat (C code, a Python call
per element), so that:

* malformed XML is an input error naming the part (and its sheet), the line and the column;
* a document type declaration, the route of entity-expansion attacks, is refused in any part;
* the work is bounded before it starts: at most ``max_elements`` XML elements in all the parts
  read, rows and columns within Excel's grid, and cells not spread over many more positions
  than there are cells (the reader fills the gaps of a row);
* rows and cells are in order (the streaming reader would drop one that is not, silently);
* only the sheets the tool reads are parsed: the others are only named, from workbook.xml;
* what the streaming reader does not report is collected on the way: cells holding a formula
  and no saved value, merged cells, hidden rows and columns.

Which parts are read, and how sheet references and relationship targets resolve, follows
openpyxl's reader (``openpyxl.reader.excel``), which reads the values of a sheet in another form
than the usual one, so that the parts checked are the parts parsed.
"""

from __future__ import annotations

import posixpath
import re
import zipfile
import zlib
from collections.abc import Container
from dataclasses import dataclass, field
from xml.parsers import expat

from openpyxl.formula.translate import Translator
from openpyxl.utils.cell import coordinate_to_tuple, get_column_letter
from openpyxl.worksheet.cell_range import CellRange
from openpyxl.xml.constants import (
    ARC_CONTENT_TYPES,
    ARC_CORE,
    ARC_CUSTOM,
    ARC_STYLE,
    ARC_WORKBOOK,
    CONTYPES_NS,
    PKG_REL_NS,
    REL_NS,
    SHARED_STRINGS,
    SHEET_MAIN_NS,
    XLSM,
    XLSX,
    XLTM,
    XLTX,
)

# Excel's sheet is 1,048,576 rows by 16,384 columns (Microsoft, "Excel specifications and
# limits"); no spreadsheet program writes a cell outside it.
MAX_ROWS = 1_048_576
MAX_COLUMNS = 16_384
# The reader fills every row from column A to its last cell, so a row holding one cell in
# column XFD costs 16,384 positions. Allowed per sheet: one whole column's worth, plus this
# many positions per cell (common practice (no source): a table with a note far to its right
# stays well inside it).
SPREAD_PER_CELL = 8
TRANSLATED_FORMULAS = 1_000  # shared formulas translated for messages, per sheet
_PLAIN_TARGET = re.compile(r"(?:/xl/)?worksheets/[^/]+\.xml")

_WORKBOOK_TYPES = (XLTM, XLTX, XLSM, XLSX)  # openpyxl.reader.excel._find_workbook_part's order
_ROW = f"{SHEET_MAIN_NS} row"
_CELL = f"{SHEET_MAIN_NS} c"
_COLUMN_NUMBERS = {get_column_letter(k): k for k in range(1, MAX_COLUMNS + 1)}  # A .. XFD
_FORMULA = f"{SHEET_MAIN_NS} f"
_VALUE = f"{SHEET_MAIN_NS} v"
_MERGE = f"{SHEET_MAIN_NS} mergeCell"
_COLUMN = f"{SHEET_MAIN_NS} col"
_SHEETS = f"{SHEET_MAIN_NS} sheets"
_SHEET = f"{SHEET_MAIN_NS} sheet"
_RELATIONSHIP = f"{PKG_REL_NS} Relationship"
_OVERRIDE = f"{CONTYPES_NS} Override"
_DEFAULT = f"{CONTYPES_NS} Default"
_SHEET_RID = f"{REL_NS} id"
_WORKBOOK_PR = f"{SHEET_MAIN_NS} workbookPr"


class Refused(Exception):
    """A workbook part that is not read; ``str()`` says which part and why."""


@dataclass
class SheetFacts:
    """One worksheet of workbook.xml, and what its part says beyond cell values."""

    name: str  # as the workbook names it
    part: str  # its zip member
    state: str  # visible, hidden or veryHidden
    read: bool  # a sheet the tool reads (only these are parsed)
    formulas: dict[tuple[int, int], str] = field(default_factory=dict)  # no saved value
    merged: list[str] = field(default_factory=list)
    hidden_rows: list[int] = field(default_factory=list)
    hidden_columns: list[str] = field(default_factory=list)
    # its relationship's target names a part in xl/worksheets/ as every reader resolves it
    plain_target: bool = False


@dataclass
class Survey:
    sheets: list[SheetFacts]  # every worksheet, in workbook order
    skipped: set[str]  # parts of the sheets not read: the reader must not open them


class Budget:
    """The XML elements left to read in all the parts of a workbook."""

    def __init__(self, elements: int, file_bytes: int):
        self.left = self.total = elements
        self.file_bytes = file_bytes

    def spend(self) -> None:
        self.left -= 1
        if self.left < 0:
            raise Refused(
                f"its parts hold more than {self.total:,} XML elements for the "
                f"{self.file_bytes:,} bytes of the file, which no workbook saved by a "
                "spreadsheet program does; refused as a decompression bomb"
            )


def _parse(archive: zipfile.ZipFile, part: str, label: str, start, end=None, setup=None) -> None:
    """Run expat over one part with these handlers; every failure is Refused naming ``label``."""
    parser = expat.ParserCreate(namespace_separator=" ")
    parser.buffer_text = True

    def no_dtd(*_args):
        raise Refused(
            f"{label} declares a document type (DTD), which no workbook part does; refused "
            "(the route of entity-expansion attacks)"
        )

    parser.StartDoctypeDeclHandler = no_dtd
    parser.EntityDeclHandler = no_dtd
    parser.StartElementHandler = start
    if end is not None:
        parser.EndElementHandler = end
    if setup is not None:
        setup(parser)
    try:
        with archive.open(part) as source:
            parser.ParseFile(source)
    except expat.ExpatError as exc:
        raise Refused(
            f"{label} is not well-formed XML ({expat.ErrorString(exc.code)} at line "
            f"{exc.lineno}, column {exc.offset + 1})"
        ) from None
    except (zipfile.BadZipFile, zlib.error, EOFError, NotImplementedError, RuntimeError) as exc:
        raise Refused(f"{label} cannot be unpacked ({exc})") from None
    except KeyError:
        raise Refused(f"{label} is missing from the file") from None


def _plain(archive: zipfile.ZipFile, part: str, budget: Budget) -> None:
    def start(name, attrs):
        budget.spend()

    _parse(archive, part, f"part {part}", start)


def _collect(
    archive: zipfile.ZipFile, part: str, budget: Budget, paths: set[tuple[str, ...]]
) -> list[tuple[str, dict]]:
    """(tag, attributes) of the elements at one of ``paths`` below the root, in file order."""
    found: list[tuple[str, dict]] = []
    stack: list[str] = []
    longest = max(len(p) for p in paths) + 1

    def start(name, attrs):
        budget.spend()
        stack.append(name)
        if len(stack) <= longest and tuple(stack[1:]) in paths:
            found.append((name, attrs))

    def end(name):
        stack.pop()

    _parse(archive, part, f"part {part}", start, end)
    return found


def _relationships(archive: zipfile.ZipFile, part: str, budget: Budget) -> dict[str, dict]:
    """Id -> {Target (resolved as openpyxl's get_dependents does), Type, TargetMode}."""
    folder = posixpath.dirname(part)
    parent = posixpath.split(folder)[0]
    rels: dict[str, dict] = {}
    for _, attrs in _collect(archive, part, budget, {(_RELATIONSHIP,)}):
        target = attrs.get("Target", "")
        if attrs.get("TargetMode") != "External":
            target = (
                target[1:]
                if target.startswith("/")
                else posixpath.normpath(posixpath.join(parent, target))
            )
        rels[attrs.get("Id", "")] = {**attrs, "Target": target, "Raw": attrs.get("Target", "")}
    return rels


def check_part(archive: zipfile.ZipFile, part: str, budget: Budget) -> None:
    """Any part read by expat: well-formed, no document type, within the budget."""
    _plain(archive, part, budget)


def rels_path(part: str) -> str:
    """The relationships part of a part."""
    return _rels_path(part)


def _rels_path(part: str) -> str:
    folder, name = posixpath.split(part)
    return posixpath.join(folder, "_rels", f"{name}.rels")


@dataclass
class Book:
    """A workbook's small parts checked: its worksheets, and where its shared strings are."""

    sheets: list[SheetFacts]  # every worksheet, in workbook order (none scanned yet)
    skipped: set[str]  # parts of the sheets not read: the reader must not open them
    workbook: str  # the workbook part
    strings: str | None  # the shared-strings part
    date1904: bool  # dates count from 1904 (workbookPr date1904)


def survey(
    archive: zipfile.ZipFile, read_names: Container[str], max_elements: int, file_bytes: int
) -> Survey:
    """Check every part the reader will parse; a Survey, or Refused naming the part.

    ``read_names`` are the sheet names (stripped, lower case) the tool reads; at most
    ``max_elements`` XML elements are read in all (``file_bytes`` is for the message).
    """
    budget = Budget(max_elements, file_bytes)
    book = open_book(archive, read_names, budget)
    for facts in book.sheets:
        if facts.read:
            check_sheet_part(archive, facts, budget)
    return Survey(book.sheets, book.skipped)


def check_strings_part(archive: zipfile.ZipFile, part: str, budget: Budget) -> None:
    """A shared-strings part read by expat (well-formed, no document type, within budget)."""
    _plain(archive, part, budget)


def check_sheet_part(archive: zipfile.ZipFile, facts: SheetFacts, budget: Budget) -> None:
    """A worksheet read by expat, its relationships part first: its facts, or Refused."""
    if _rels_path(facts.part) in archive.NameToInfo:
        _plain(archive, _rels_path(facts.part), budget)
    scan_sheet(archive, facts, budget)


def open_book(
    archive: zipfile.ZipFile, read_names: Container[str], budget: Budget, strings=None
) -> Book:
    """Check the parts read before any worksheet, in openpyxl's order, and find the sheets.

    ``strings(archive, part, budget)`` checks the shared-strings part (by default
    ``check_strings_part``).
    """
    members = set(archive.namelist())
    types = _collect(archive, ARC_CONTENT_TYPES, budget, {(_OVERRIDE,), (_DEFAULT,)})
    overrides = [a for tag, a in types if tag == _OVERRIDE]
    defaults = [a for tag, a in types if tag == _DEFAULT]
    workbook = next(
        (
            a.get("PartName", "")[1:]
            for kind in _WORKBOOK_TYPES
            for a in overrides
            if a.get("ContentType") == kind
        ),
        None,
    )
    if workbook is None:
        if not {a.get("ContentType") for a in defaults} & set(_WORKBOOK_TYPES):
            raise Refused(f"part {ARC_CONTENT_TYPES} names no workbook part")
        workbook = ARC_WORKBOOK
    found = _collect(archive, workbook, budget, {(_SHEETS, _SHEET), (_WORKBOOK_PR,)})
    entries = [(tag, a) for tag, a in found if tag == _SHEET]
    date1904 = any(true(a.get("date1904")) for tag, a in found if tag == _WORKBOOK_PR)
    rels = _relationships(archive, _rels_path(workbook), budget)
    rels_raw = {rid: rel.get("Raw", "") for rid, rel in rels.items()}
    part_of_strings = next(
        (a.get("PartName", "")[1:] for a in overrides if a.get("ContentType") == SHARED_STRINGS),
        None,
    )
    if part_of_strings is not None:
        (strings or check_strings_part)(archive, part_of_strings, budget)
    for part in (ARC_STYLE, ARC_CORE, ARC_CUSTOM):
        if part in members:
            _plain(archive, part, budget)
    sheets: list[SheetFacts] = []
    skipped: set[str] = set()
    kept: set[str] = set()
    for _, attrs in entries:
        rid = attrs.get(_SHEET_RID)
        if not rid:  # openpyxl passes such an entry over
            continue
        name = attrs.get("name", "")
        if rid not in rels:
            raise Refused(
                f"sheet '{name}' refers to relationship {rid}, which "
                f"{_rels_path(workbook)} does not hold"
            )
        rel = rels[rid]
        target = rel["Target"]
        if target not in members:
            continue
        chart = "chartsheet" in rel.get("Type", "")
        read = not chart and name.strip().lower() in read_names
        (kept if read else skipped).add(target)
        if not chart:
            facts = SheetFacts(name, target, attrs.get("state") or "visible", read)
            raw = rels_raw[rid]
            facts.plain_target = _PLAIN_TARGET.fullmatch(raw) is not None and (
                target == "xl/" + raw.removeprefix("/xl/")
            )
            sheets.append(facts)
    return Book(sheets, skipped - kept, workbook, part_of_strings, date1904)


def _whole(text: str) -> int | None:
    """A row number as openpyxl reads it (an integer, or a float with no fraction)."""
    try:
        return int(text)
    except ValueError:
        pass
    try:
        value = float(text)
    except ValueError:
        return None
    return int(value) if value.is_integer() else None


def true(value: str | None) -> bool:
    """openpyxl's reading of an XML boolean attribute (anything but false, f, 0 or empty)."""
    return value is not None and value not in ("false", "f", "0", "")


def _cell_reference(ref: str) -> tuple[int, int] | None:
    """(row, column) of a cell reference as openpyxl reads it; None if it cannot."""
    try:
        return coordinate_to_tuple(ref)
    except Exception:  # noqa: BLE001 - openpyxl raises several kinds for a bad reference
        return None


class FormulaTexts:
    """A sheet's formula texts as openpyxl gives them: a shared formula's cells take the text
    of its first cell, translated to their place (the first TRANSLATED_FORMULAS of a sheet)."""

    def __init__(self):
        self.masters: dict[str, tuple[str, str]] = {}  # shared formula si -> (text, origin)
        self.translated = 0

    def text(self, raw: str, kind: str | None, index: str | None, ref: str | None, needed=True):
        """The text of one formula cell (``raw``, its formula element's text); ``needed``
        False when it serves no message (no translation is made, but it is counted)."""
        text = "=" + raw.strip()
        if kind == "shared":  # as openpyxl's parse_formula
            if index in self.masters:
                origin_text, origin = self.masters[index]
                text = origin_text
                if ref and self.translated < TRANSLATED_FORMULAS:
                    self.translated += 1
                    if needed:
                        try:
                            text = Translator(origin_text, origin).translate_formula(ref)
                        except Exception:  # noqa: BLE001 - the text serves a message only
                            pass
            elif text != "=" and ref:
                self.masters[index] = (text, ref)
        return text


def scan_sheet(archive: zipfile.ZipFile, facts: SheetFacts, budget: Budget) -> None:
    """Check one worksheet part and collect its facts, as openpyxl's WorkSheetParser reads it.

    Only start tags are handled (this runs on every element of every sheet read): a row ends
    where the next begins; the text of a formula or value runs until the next tag (whitespace
    between tags is stripped). The schema orders a cell's formula before its value; openpyxl
    takes the first value's text, and an empty one (openpyxl writes <v/>) as no value.
    """
    label = f"sheet '{facts.name}' (part {facts.part})"
    parser = None
    left = budget.left
    row = column = cells = spread = 0  # openpyxl's row counter, the open row's last column
    row_text = ""
    ref = None  # reference of the open cell
    formula: list[str] | None = None  # the open cell's formula text, value text
    value: list[str] | None = None
    formula_type = formula_index = None
    has_value = collecting = False
    texts = FormulaTexts()
    hidden_columns: dict[str, bool] = {}

    def refuse(message: str):
        raise Refused(f"{label}: {message}")

    def close_cell():
        saved = has_value or (value is not None and "".join(value).strip())
        text = texts.text("".join(formula), formula_type, formula_index, ref, needed=not saved)
        if not saved:
            facts.formulas[(row, column)] = text

    def start(name, attrs):
        nonlocal left, row, column, row_text, cells, spread, ref, formula, value, formula_type
        nonlocal formula_index, has_value, collecting
        left -= 1
        if left < 0:
            budget.left = 0
            budget.spend()
        if collecting:
            parser.CharacterDataHandler = None
            collecting = False
        if name == _CELL:
            if formula is not None:
                close_cell()
            cells += 1
            ref = attrs.get("r")
            if ref:
                letters = ref.rstrip("0123456789")
                number = _COLUMN_NUMBERS.get(letters)
                if number is None or ref[len(letters) :] != row_text:  # not the usual form
                    where = _cell_reference(ref)
                    if where is None:
                        refuse(f"{ref!r} in row {row} is not a cell reference")
                    if where[0] != row:
                        refuse(f"cell {ref} is written inside row {row}")
                    number = where[1]
                if number <= column:
                    refuse(
                        f"cell {ref} comes after column {get_column_letter(column)} of its "
                        "row: cells out of order, which a spreadsheet program never writes; "
                        "open the file in one and save it"
                    )
                column = number
            else:
                if not row:
                    refuse("a cell outside any row")
                column += 1
            if column > MAX_COLUMNS:
                refuse(f"a cell beyond column XFD (Excel's last) in row {row}")
            formula = value = None
            has_value = False
        elif name == _VALUE:
            if formula is None or value is not None:
                has_value = True
            else:
                value = []
                collecting = True
                parser.CharacterDataHandler = value.append
        elif name == _ROW:
            if formula is not None:
                close_cell()
                formula = None
            spread += column
            text = attrs.get("r")
            number = row + 1 if text is None else _whole(text)
            if number is None:
                refuse(f"row number {text!r} is not a whole number")
            if number < 1 or number > MAX_ROWS:
                refuse(f"row number {number} is outside Excel's rows 1 to {MAX_ROWS:,}")
            if number <= row:
                refuse(
                    f"row {number} comes after row {row}: rows out of order, which a "
                    "spreadsheet program never writes; open the file in one and save it"
                )
            row, column, row_text = number, 0, str(number)
            if true(attrs.get("hidden")):
                facts.hidden_rows.append(number)
        elif name == _FORMULA:
            if formula is None:
                formula = []
                formula_type, formula_index = attrs.get("t"), attrs.get("si")
                collecting = True
                parser.CharacterDataHandler = formula.append
        elif name == _MERGE:
            merged = attrs.get("ref", "")
            try:
                merged = CellRange(merged).coord
            except (ValueError, TypeError):
                pass
            facts.merged.append(merged)
        elif name == _COLUMN:
            try:
                letter = get_column_letter(int(attrs["min"]))
            except (KeyError, ValueError):
                refuse(f"a column entry with min={attrs.get('min')!r}, not a column number")
            hidden_columns[letter] = true(attrs.get("hidden"))

    def setup(p):
        nonlocal parser
        parser = p

    _parse(archive, facts.part, label, start, setup=setup)
    if formula is not None:
        close_cell()
    spread += column
    budget.left = left
    facts.hidden_columns = [c for c, hidden in hidden_columns.items() if hidden]
    if spread > MAX_ROWS + SPREAD_PER_CELL * cells:
        refuse(
            f"its {cells:,} cells are spread over {spread:,} positions, which no table "
            "needs; refused (delete the stray cells far from the table)"
        )
