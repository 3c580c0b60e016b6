"""Type the raw cells of a sheet, one whole column at a time.

Each column is cast on the whole array (Arrow for text, numpy for numbers): a plain number, a
clean name or a known choice is typed without Python looking at it. Only the cells that the
fast cast refuses, or whose value needs a word (spaces around a name), go through the per-cell
parser (``cells.parse``), which types what it can with a note and explains what it cannot. So
a tidy input costs whole-array work and an untidy one costs per-cell work only where it is
untidy, and every message is the per-cell parser's.

Findings (problems and notes) are collected with their row and column position and given out
in row order, column by column, as a person reads the sheet.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .. import schema
from . import cells, names
from .collect import Collector
from .raw import RawSheet, blank_cells, is_arrow

# A number as Python's float() and Arrow's cast both read it, with nothing around it.
PLAIN_NUMBER = r"^[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?$"
NUMBER_TYPES = frozenset({float, int, type(None)})
TEXT_TYPES = frozenset({str, type(None)})
# Characters a clean name never holds: the forbidden ones (names.py) and the invisible ones;
# and what free text may not hold. In RE2's syntax, from the ranges names.py states.
_RE2 = "\\x{{{:04x}}}".format
UNCLEAN_NAME = names.character_class(
    (*names.NAME_FORBIDDEN, *((ord(c), ord(c)) for c in names.INVISIBLE)), _RE2
)
UNCLEAN_TEXT = names.character_class(names.TEXT_FORBIDDEN, _RE2)


@dataclass
class Typed:
    """One sheet typed: a value column per schema column (a float array for numbers, NaN
    where blank and no default; a list otherwise, the default where blank), where each cell
    was filled, and which rows are usable (no problem of their own)."""

    spec: schema.Sheet
    rows: np.ndarray  # spreadsheet row numbers (int64)
    values: dict[str, Any]
    filled: dict[str, np.ndarray]
    ok: np.ndarray
    raw: RawSheet | None = None
    readable: bool = True  # the sheet is there with its required columns
    given: dict | None = None  # a case's cells: (column, row index) -> cell, over the raw ones
    # text columns with '' for blank, kept for the cases: column -> (values, with '')
    emptied: dict = field(default_factory=dict)
    # name columns as Arrow arrays ('' where blank), where every cell took the fast path; for
    # the base input's whole-column joins only (a case's copy has none)
    arrow: dict = field(default_factory=dict)

    @property
    def n(self) -> int:
        return len(self.rows)

    def blank_as_empty(self, column: str) -> list:
        """A text column with '' where blank (made once for the base and every case that
        leaves the column as it is)."""
        values = self.values[column]
        kept = self.emptied.get(column)
        if kept is None or kept[0] is not values:
            kept = (values, ["" if x is None else x for x in values])
            self.emptied[column] = kept
        return kept[1]

    def row_list(self) -> list[int]:
        """The row numbers as a list (made once for the base and its cases)."""
        kept = self.emptied.get("row")
        if kept is None or kept[0] is not self.rows:
            kept = (self.rows, self.rows.tolist())
            self.emptied["row"] = kept
        return kept[1]

    def raw_cell(self, column: str, i: int) -> Any:
        """The cell as the input (or the case) gave it."""
        if self.given and (column, i) in self.given:
            return self.given[(column, i)]
        return self.raw.cell(column, i) if self.raw is not None else None


def empty(spec: schema.Sheet, readable: bool = False) -> Typed:
    values = {
        c.name: np.zeros(0) if c.kind in (schema.NUMBER, schema.INTEGER) else []
        for c in spec.columns
    }
    filled = {c.name: np.zeros(0, bool) for c in spec.columns}
    return Typed(spec, np.zeros(0, np.int64), values, filled, np.zeros(0, bool), None, readable)


def type_sheet(spec: schema.Sheet, raw: RawSheet, out: Collector) -> Typed:
    """Every column of ``spec`` typed from ``raw``; problems and notes into ``out``."""
    n = raw.n
    rows = raw.row_numbers
    findings: list[tuple[int, int, bool, str, Any, str]] = []  # (i, position, problem, ...)
    values: dict[str, Any] = {}
    filled: dict[str, np.ndarray] = {}
    arrow: dict[str, Any] = {}
    bad = np.zeros(n, bool)
    for position, column in enumerate(spec.columns):
        cells_ = raw.columns.get(column.name)
        if cells_ is None:
            values[column.name], filled[column.name] = _blank_column(column, n)
            if column.required and n:
                for i in range(n):
                    findings.append(_required(i, position, column))
                bad[:] = True
            continue
        typed, was_filled, found = type_column(
            column, cells_, raw.blank.get(column.name), raw.controls, raw.text.get(column.name)
        )
        if isinstance(typed, _Texts):
            if typed.array is not None and column.kind in (schema.ID, schema.BUS_REF):
                arrow[column.name] = typed.array
            typed = typed.values
        values[column.name], filled[column.name] = typed, was_filled
        for i, problem, value, message in found:
            findings.append((i, position, problem, column.name, value, message))
            bad[i] |= problem
        if column.required:
            for i in np.flatnonzero(~was_filled).tolist():
                findings.append(_required(i, position, column))
                bad[i] = True
    for column in spec.columns:
        if column.default_from:
            fill_from(values, column.name, column.default_from)
    for k, alternative in enumerate(spec.alternatives, start=len(spec.columns)):
        for i, column_name, value, message in alternative_findings(alternative, filled, raw.cell):
            findings.append((i, k, True, column_name, value, message))
            bad[i] = True
    findings.sort(key=lambda f: (f[0], f[1]))
    for i, _, problem, column_name, value, message in findings:
        if problem:
            out.problem(spec.name, int(rows[i]), column_name, value, message)
        else:
            out.warn(spec.name, int(rows[i]), column_name, value, message, cell=True)
    return Typed(spec, rows, values, filled, ~bad, raw, arrow=arrow)


def required_message(column: schema.Column) -> str:
    """What a blank cell of a required column is told (a case's cell too)."""
    return f"a value is required: {column.expected()}"


def _required(i: int, position: int, column: schema.Column):
    return (i, position, True, column.name, None, required_message(column))


def _blank_column(column: schema.Column, n: int):
    if column.kind in (schema.NUMBER, schema.INTEGER):
        default = math.nan if column.default is None else float(column.default)
        return np.full(n, default), np.zeros(n, bool)
    return [column.default] * n, np.zeros(n, bool)


def type_column(
    column: schema.Column, raw_cells, blank=None, controls: bool = True, text=None
) -> tuple[Any, np.ndarray, list]:
    """(typed values, filled, findings [(index, is problem, cell, message)]) of one column.
    ``blank``: which cells are blank, when the loader knows; ``controls`` False: the loader
    found no control character other than tab and line ends; ``text``: the cells as an Arrow
    string array, when the loader made one (``RawSheet.text``)."""
    if column.kind in (schema.NUMBER, schema.INTEGER):
        return _numbers(column, raw_cells, blank, text)
    if column.kind == schema.CHOICE:
        return _choices(column, raw_cells, blank, text)
    return _texts(column, raw_cells, controls, text)


def _as_arrow(raw_cells, text=None):
    """An Arrow string array of a column that holds only text (None as ''), else None
    (``text``, the loader's, when it made one)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    if is_arrow(raw_cells):
        if raw_cells.type != pa.string():  # a loader's column of another type (all blank)
            return pc.fill_null(raw_cells.cast(pa.string()), "")
        return raw_cells
    if text is not None:
        return text
    if not set(map(type, raw_cells)) <= TEXT_TYPES:
        return None
    return pc.fill_null(pa.array(raw_cells, pa.string()), "")


def _slow(column: schema.Column, raw_cells, at, typed, found) -> None:
    """The per-cell parser on the cells at ``at``: typed values into ``typed`` (a list or an
    array, None / NaN where refused), notes and problems into ``found``."""
    for i in at:
        cell = raw_cells[i] if isinstance(raw_cells, list) else raw_cells[i].as_py()
        notes: list[str] = []
        try:
            typed[i] = cells.parse(cell, column, notes)
        except cells.CellError as exc:
            typed[i] = math.nan if isinstance(typed, np.ndarray) else None
            found.append((i, True, cell, str(exc)))
            continue
        found.extend((i, False, cell, note) for note in notes)


def _numbers(column: schema.Column, raw_cells, blank=None, text=None):
    import pyarrow as pa
    import pyarrow.compute as pc

    n = len(raw_cells)
    found: list = []
    array = None
    if not is_arrow(raw_cells) and set(map(type, raw_cells)) <= NUMBER_TYPES:
        x = np.array(raw_cells, dtype=float)  # None -> NaN
        blank = np.isnan(x)
        plain = ~blank
    else:
        array = _as_arrow(raw_cells, text)
        if array is not None:
            blank = blank_cells(array) if blank is None else blank
            null = pa.scalar(None, pa.string())
            try:  # every cell a number Arrow reads (as Python's float() does) or empty
                as_number = pc.cast(pc.if_else(pc.equal(array, ""), null, array), pa.float64())
                plain = ~blank
            except (pa.ArrowInvalid, pa.ArrowNotImplementedError):  # some other text
                text_number = pc.match_substring_regex(array, PLAIN_NUMBER)
                as_number = pc.cast(pc.if_else(text_number, array, null), pa.float64())
                plain = text_number.to_numpy(zero_copy_only=False).astype(bool)
            x = as_number.to_numpy(zero_copy_only=False).astype(float, copy=True)
        else:  # text and numbers mixed (a workbook): the numbers are plain
            blank = blank_cells(raw_cells) if blank is None else blank
            x = np.full(n, math.nan)
            plain = np.zeros(n, bool)
            for i, v in enumerate(raw_cells):
                if type(v) is float or type(v) is int:
                    x[i] = v
                    plain[i] = True
    plain &= cells.within(column, x)
    slow = np.flatnonzero(~blank & ~plain)
    x[~plain] = math.nan
    if len(slow):
        _slow(column, raw_cells, slow.tolist(), x, found)
    if column.default is not None:
        x[blank] = float(column.default)
    return x, ~blank, found


def _choices(column: schema.Column, raw_cells, blank=None, text=None):
    import pyarrow.compute as pc

    found: list = []
    array = _as_arrow(raw_cells, text)
    if array is None:  # not only text: cell by cell
        blank = blank_cells(raw_cells) if blank is None else blank
        typed: list = [column.default] * len(raw_cells)
        _slow(column, raw_cells, np.flatnonzero(~blank).tolist(), typed, found)
        return typed, ~blank, found
    encoded = array.dictionary_encode()
    uniques = encoded.dictionary.to_pylist()
    codes = encoded.indices.to_numpy(zero_copy_only=False)
    mapped: list[Any] = []
    refused: dict[int, str] = {}
    blank_codes = []
    for code, text in enumerate(uniques):
        if cells.is_blank(text):
            mapped.append(column.default)
            blank_codes.append(code)
            continue
        try:
            mapped.append(cells.parse(text, column))
        except cells.CellError as exc:
            mapped.append(None)
            refused[code] = str(exc)
    table = np.empty(len(mapped), dtype=object)
    table[:] = mapped
    typed = table[codes].tolist()
    if refused:
        for i in np.flatnonzero(np.isin(codes, list(refused))).tolist():
            found.append((i, True, uniques[codes[i]], refused[int(codes[i])]))
    blank = np.isin(codes, blank_codes) if blank_codes else np.zeros(len(codes), bool)
    del pc
    return typed, ~blank, found


@dataclass
class _Texts:
    values: list
    array: Any  # the stripped Arrow array, when no cell needed the per-cell parser


def _texts(column: schema.Column, raw_cells, controls: bool = True, text=None):
    """Texts stripped (blank -> the default), a note for each one with spaces around it, a
    problem for each that is no valid name (or free text)."""
    import pyarrow.compute as pc

    found: list = []
    n = len(raw_cells)
    array = _as_arrow(raw_cells, text)
    if array is None:  # numbers or other cells among the text: those cell by cell
        kinds = list(map(type, raw_cells))
        text_at = [i for i, t in enumerate(kinds) if t is str or t is type(None)]
        import pyarrow as pa

        only = [raw_cells[i] if kinds[i] is str else "" for i in range(n)]
        array = pc.fill_null(pa.array(only, pa.string()), "")
        other = sorted(set(range(n)) - set(text_at))
    else:
        other = []
    ascii_ = pc.string_is_ascii(array)
    name = column.kind in (schema.ID, schema.BUS_REF)
    if controls:
        unclean = pc.match_substring_regex(array, UNCLEAN_NAME if name else UNCLEAN_TEXT)
    elif name:  # only tab and line ends can be there, and a name holds none of them
        unclean = pc.match_substring_regex(array, "[\t\n\r]")
    else:
        unclean = pc.equal(ascii_, False)
    slow_mask = pc.or_(pc.invert(ascii_), unclean).to_numpy(zero_copy_only=False).astype(bool)
    stripped = pc.ascii_trim_whitespace(array)
    filled = pc.not_equal(stripped, "").to_numpy(zero_copy_only=False).astype(bool)
    changed = pc.not_equal(stripped, array).to_numpy(zero_copy_only=False).astype(bool)
    texts = stripped.to_pylist()
    for i in np.flatnonzero(changed & filled & ~slow_mask).tolist():
        found.append((i, False, array[i].as_py(), cells.SPACES_NOTE))
    slow = sorted(set(np.flatnonzero(slow_mask).tolist()) | set(other))
    if slow:
        for i in slow:  # blank as Python says (str.isspace), from the cell as given
            cell = raw_cells[i] if isinstance(raw_cells, list) else array[i].as_py()
            filled[i] = not cells.is_blank(cell)
        _slow(column, raw_cells, [i for i in slow if filled[i]], texts, found)
        found.sort(key=lambda f: f[0])
    if not filled.all():
        default = column.default
        texts = [t if f else default for t, f in zip(texts, filled.tolist(), strict=True)]
    return _Texts(texts, None if slow else stripped), filled, found


def fill_from(values: dict[str, Any], name: str, source: str, at=None) -> None:
    """Blank cells of column ``name`` take the value of column ``source`` (rows ``at``, or
    all)."""
    target, origin = values[name], values[source]
    if isinstance(target, np.ndarray):
        blank = np.isnan(target)
        if at is not None:
            keep = np.zeros(len(target), bool)
            keep[at] = True
            blank &= keep
        target[blank] = np.asarray(origin, dtype=float)[blank]
    else:
        rows = range(len(target)) if at is None else at
        for i in rows:
            if target[i] is None:
                target[i] = origin[i]


def alternative_findings(alternative: schema.Alternative, filled, cell, at=None):
    """(index, column, value, message) of each row (among ``at``) that does not give exactly
    one of the alternative's groups in full; ``cell(column, index)`` is a raw cell."""
    n = len(next(iter(filled.values()))) if filled else 0
    rows = np.arange(n) if at is None else np.asarray(at, dtype=np.int64)
    used_groups = []
    complete = []
    for group in alternative.groups:
        any_filled = np.zeros(len(rows), bool)
        all_filled = np.ones(len(rows), bool)
        for c in group:
            any_filled |= filled[c][rows]
            all_filled &= filled[c][rows]
        used_groups.append(any_filled)
        complete.append(all_filled)
    used = np.sum(used_groups, axis=0) if used_groups else np.zeros(len(rows))
    label = ", ".join(c for g in alternative.groups for c in g)
    wrong = (used > 1) | (used == 0) & alternative.required
    for g, (any_filled, all_filled) in enumerate(zip(used_groups, complete, strict=True)):
        wrong |= (used == 1) & any_filled & ~all_filled
        del g
    found = []
    for k in np.flatnonzero(wrong).tolist():
        i = int(rows[k])
        if used[k] > 1:
            groups = [g for g, u in zip(alternative.groups, used_groups, strict=True) if u[k]]
            value = {c: cell(c, i) for g in groups for c in g if filled[c][i]}
            found.append((i, label, value, f"give {alternative.describe()}, not more than one"))
        elif used[k] == 0:
            found.append((i, label, None, f"give {alternative.describe()}"))
        else:
            group = next(g for g, u in zip(alternative.groups, used_groups, strict=True) if u[k])
            c = next(c for c in group if not filled[c][i])
            others = [o for o in group if o != c]
            found.append(
                (i, c, None, f"a value is required here because {', '.join(others)} is given")
            )
    return found
