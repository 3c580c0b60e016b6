"""The `cases` sheet: named variations of the system, each read as overrides of the base's columns.

A case's rows (element, column, value) set cells of the base input's typed columns: only the
columns it changes are copied, each value is typed by the column's own parser, and the rules
run again only on the rows it changes and the rows that hang on them (the elements connected
to a bus it changes). So a case costs what it changes, not a new reading; and it is checked by
the same rules as the base, its problems said with the case named and the element's own sheet
and row. ``in_service`` on an element sets its ``in_service`` column either way; ``in_service``
= no on a bus removes the bus and what hangs only on it, after the case is read
(``service.without_buses``), and says so. A case whose rows say ``label`` = no is left out of
the service labels' maximum (``System.in_labels`` False); it is studied all the same.
"""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np

from .. import schema
from ..errors import InputError, Problem
from . import cells, columns, names, rules
from .collect import Collector
from .references import Buses
from .service import IN_SERVICE

LABEL = "label"
SHEETS = (schema.BUSES, *schema.ELEMENT_SHEETS)


def _in_labels(name: str, said: list[tuple[int, Any]], problems: list[Problem]) -> bool:
    """Whether the case counts in the service labels: no when a row of it says label = no.
    Rows that say yes and no disagree: a problem located at the first row that differs."""
    said = [(row, value) for row, value in said if value is not None]
    if not said:
        return True
    first_row, first = said[0]
    for row, value in said[1:]:
        if value != first:
            problems.append(
                Problem(
                    "cases",
                    row,
                    LABEL,
                    value,
                    f"case '{name}' says label = {first} on cases row {first_row}; every row "
                    "of one case must agree (or be blank)",
                )
            )
            return True
    return first != "no"


class _Names:
    """Where each bus and element name that the cases sheet names is: as typed, and as
    ``names.key`` compares names (ignoring case, compatibility forms and invisible
    characters), as bus references are. The names asked for are looked for in every sheet
    at once (an Arrow hash join against the few names where the sheet's names were typed on
    the fast path); a sheet's names are folded only when a name is not found as typed."""

    def __init__(self, sheets: dict[str, columns.Typed], wanted):
        self.sheets = sheets
        wanted = sorted({w for w in wanted if w})
        self._exact = {spec.name: _rows_named(sheets[spec.name], spec, wanted) for spec in SHEETS}
        self._folded: dict[str, dict[str, int]] = {}

    def _lookup(self, spec: schema.Sheet, name: str, folded: bool) -> int | None:
        if not folded:
            return self._exact[spec.name].get(name)
        if spec.name not in self._folded:
            values = self.sheets[spec.name].values[spec.columns[0].name]
            keys = [names.key(v) if v is not None else None for v in values]
            self._folded[spec.name] = {k: i for i, k in enumerate(keys) if k is not None}
        return self._folded[spec.name].get(names.key(name))

    def _all(self, name: str, folded: bool) -> list[tuple[schema.Sheet, int]]:
        found = []
        for spec in SHEETS:
            i = self._lookup(spec, name, folded)
            if i is not None:
                found.append((spec, i))
        return found

    def find(self, name: str, column: str):
        """(sheet, row index, message) of the bus or element called ``name``. A name that is
        both a bus and an element is taken where ``column`` is a column; where it is one of
        both, the message says so."""
        found = self._all(name, False) or self._all(name, True)
        if len(found) > 1:
            fitting = [f for f in found if column in f[0].names]
            if len(fitting) == 1:
                return (*fitting[0], "")
            where = " and ".join(f"a row of '{sheet.name}'" for sheet, _ in found)
            return None, None, f"the name is {where}: rename one so that the case names one thing"
        if found:
            return (*found[0], "")
        return None, None, "no bus or element of that name"


def _rows_named(sheet: columns.Typed, spec: schema.Sheet, wanted) -> dict[str, int]:
    """The row index of each name of ``wanted`` on the sheet (the last row of a name)."""
    import pyarrow as pa
    import pyarrow.compute as pc

    values = sheet.values[spec.columns[0].name]
    array = sheet.arrow.get(spec.columns[0].name)
    if not wanted or not sheet.n:
        return {}
    if array is not None and len(array) == sheet.n:
        found = pc.index_in(array, value_set=pa.array(wanted, pa.string()))
        at = np.flatnonzero(found.is_valid().to_numpy(zero_copy_only=False))
        return {values[i]: i for i in at.tolist()}
    wanted_set = set(wanted)
    return {v: i for i, v in enumerate(values) if v in wanted_set}


def _copy_on_write(sheets, case_sheets, name: str) -> columns.Typed:
    """The case's own Typed of sheet ``name`` (value columns still shared with the base)."""
    if name not in case_sheets:
        base = sheets[name]
        case_sheets[name] = dataclasses.replace(
            base,
            values=dict(base.values),
            filled=dict(base.filled),
            ok=np.ones(base.n, bool),
            arrow={},
        )
    return case_sheets[name]


def _own_column(sheet: columns.Typed, base: columns.Typed, column: str) -> None:
    """Give the case's sheet its own copy of a column before a cell of it is set."""
    if sheet.values[column] is base.values[column]:
        values = base.values[column]
        sheet.values[column] = values.copy() if isinstance(values, np.ndarray) else list(values)
        sheet.filled[column] = base.filled[column].copy()


def _set(sheet, base, i: int, column: schema.Column, value, found: list) -> bool:
    """Set one cell of the case: typed by the column's parser; False (with a problem in
    ``found``: (column, is problem, value, message)) when the value does not fit. Columns
    that take their blank from this one follow it."""
    _own_column(sheet, base, column.name)
    blank = cells.is_blank(value)
    target = sheet.values[column.name]
    sheet.filled[column.name][i] = not blank
    typed = column.default
    fits = True
    if blank and column.required:
        found.append((column.name, True, None, columns.required_message(column)))
        fits = False
    elif not blank:
        notes: list[str] = []
        try:
            typed = cells.parse(value, column, notes)
        except cells.CellError as exc:
            found.append((column.name, True, value, str(exc)))
            typed, fits = None, False
        found.extend((column.name, False, value, note) for note in notes)
    if isinstance(target, np.ndarray):
        target[i] = np.nan if typed is None else float(typed)
    else:
        target[i] = typed
    if blank and column.default_from:
        target[i] = sheet.values[column.default_from][i]
    for other in sheet.spec.columns:
        if other.default_from == column.name and not sheet.filled[other.name][i]:
            _own_column(sheet, base, other.name)
            sheet.values[other.name][i] = sheet.values[column.name][i]
    return fits


def _affected(sheets, case_sheets, changed: dict[str, set[int]], buses: Buses):
    """Row indices per sheet that the case's rules must look at again: the rows it changed,
    and every element connected to a bus it changed."""
    at = {name: set(rows) for name, rows in changed.items()}
    bus_rows = np.array(sorted(changed.get("buses", ())), np.int64)
    if len(bus_rows):
        for (sheet, _), positions in buses.ends.items():
            at.setdefault(sheet, set()).update(
                np.flatnonzero(np.isin(positions, bus_rows)).tolist()
            )
    for name in at:
        _copy_on_write(sheets, case_sheets, name)
    return {name: np.array(sorted(rows), np.int64) for name, rows in at.items()}


def _still_holding(base: Collector, setting: dict, at: dict, sheets) -> list[str]:
    """The base's warnings that a case leaves as they are: not about a cell it sets, nor about
    a row whose rules it runs again (those say their own)."""
    cells_set = {(name, int(sheets[name].rows[i]), column) for name, i, column in setting}
    rows_checked = {
        (name, int(row)) for name, indices in at.items() for row in sheets[name].rows[indices]
    }
    return [
        warning
        for warning, (sheet, row, column, cell) in zip(base.warnings, base.origins, strict=True)
        if sheet != "cases"  # the cases sheet's own notes are the base reading's
        and not ((sheet, row, column) in cells_set if cell else (sheet, row) in rows_checked)
    ]


def _own_table_columns(sheet: columns.Typed, base: columns.Typed) -> None:
    """The case's own copies of the columns the conductor-table rule writes (it takes R and X
    afresh for every cable the case looks at again)."""
    for column in ("r_ohm_per_kft", "x_ohm_per_kft", "impedance_source"):
        if column in sheet.values and sheet.values[column] is base.values.get(column):
            values = base.values[column]
            sheet.values[column] = values.copy() if isinstance(values, np.ndarray) else list(values)


def _spec(sheet_name: str):
    return next(s for s in SHEETS if s.name == sheet_name)


def read_cases(
    sheets: dict[str, columns.Typed], buses: Buses, settings, raw=None, base=None, records=None
):
    """Every case as (name, System), in order of first appearance on the cases sheet. Each
    case's warnings are those of the base (``base``, a Collector) that still hold, and those
    of what the case changes. ``records``: the base's Records by sheet, shared by the cases
    that leave a sheet as it is."""
    from .reader import in_service, system_of, with_doubts

    table = sheets["cases"]
    if not table.n:
        return ()
    problems: list[Problem] = []
    order: list[str] = []
    overrides: dict[str, list[int]] = {}
    for i in range(table.n):
        if not table.ok[i]:
            continue
        name = table.values["case"][i].strip()
        if name.lower() == "base":
            problems.append(
                Problem(
                    "cases",
                    int(table.rows[i]),
                    "case",
                    name,
                    "'base' names the system as entered; choose another name",
                )
            )
            continue
        if name not in overrides:
            order.append(name)
            overrides[name] = []
        overrides[name].append(i)
    named = {table.values["element"][i].strip() for i in range(table.n) if table.ok[i]}
    where = _Names(sheets, named)
    systems = []
    for name in order:
        rows = overrides[name]
        in_labels = _in_labels(
            name, [(int(table.rows[i]), table.values[LABEL][i]) for i in rows], problems
        )
        out = Collector()
        case_sheets: dict[str, columns.Typed] = {}
        changed: dict[str, set[int]] = {}
        findings: list[tuple] = []  # the cells the case sets: typing and alternatives
        setting: dict[tuple[str, int, str], Any] = {}  # (sheet, row index, column) -> cell
        for i in rows:
            row = int(table.rows[i])
            element = table.values["element"][i].strip()
            column = table.values["column"][i].strip().lower()
            value = table.values["value"][i]  # as text
            cell = table.raw_cell("value", i)  # as the sheet holds it (a percent format kept)
            spec, index, message = where.find(element, column)
            if spec is None:
                problems.append(Problem("cases", row, "element", element, message))
                continue
            if column == IN_SERVICE:
                text = (value or "").strip().lower()
                if text not in ("yes", "no"):
                    problems.append(
                        Problem("cases", row, "value", value, "in_service takes yes or no")
                    )
                    continue
                cell = text  # the in_service column, set like any other
            if column not in spec.names or column == spec.columns[0].name:
                problems.append(
                    Problem(
                        "cases",
                        row,
                        "column",
                        column,
                        f"not a column of the '{spec.name}' sheet that a case can change; "
                        f"columns are {', '.join(n for n in spec.names[1:] if n != IN_SERVICE)}"
                        f", or {IN_SERVICE}",
                    )
                )
                continue
            setting[(spec.name, index, column)] = cell  # a cell set twice: the last row's
        for (sheet_name, index, column), value in setting.items():
            spec = next(s for s in SHEETS if s.name == sheet_name)
            sheet = _copy_on_write(sheets, case_sheets, sheet_name)
            found: list = []
            if not _set(sheet, sheets[sheet_name], index, spec.column(column), value, found):
                sheet.ok[index] = False
            position = spec.names.index(column)
            for column_name, problem, cell, message in found:
                findings.append((sheet_name, index, position, problem, column_name, cell, message))
            if sheet.given is None:
                sheet.given = {}
            sheet.given[(column, index)] = value
            changed.setdefault(sheet_name, set()).add(index)
        at = _affected(sheets, case_sheets, changed, buses)
        for sheet_name, indices in at.items():
            sheet = case_sheets[sheet_name]
            for k, alternative in enumerate(sheet.spec.alternatives, start=len(sheet.spec.columns)):
                found = columns.alternative_findings(
                    alternative, sheet.filled, sheet.raw_cell, indices
                )
                for i, column_name, cell, message in found:
                    findings.append((sheet_name, i, k, True, column_name, cell, message))
                    sheet.ok[i] = False
        order_of = {spec.name: k for k, spec in enumerate(SHEETS)}
        findings.sort(key=lambda f: (order_of[f[0]], f[1], f[2]))
        for sheet_name, i, _, problem, column_name, cell, message in findings:
            row = int(case_sheets[sheet_name].rows[i])
            (out.problem if problem else out.warn)(sheet_name, row, column_name, cell, message)
        if "cables" in at:
            _own_table_columns(case_sheets["cables"], sheets["cables"])
        merged = {**sheets, **case_sheets}
        case_buses = rules.check(merged, settings, out, at=at, buses=buses)
        if base is not None:
            out.warnings[:0] = _still_holding(base, setting, at, merged)
        if not out.problems:
            try:
                system = system_of(
                    merged,
                    case_buses,
                    settings,
                    {k: v for k, v in (records or {}).items() if k not in case_sheets},
                    input_name=getattr(raw, "display_name", ""),
                    input_sha256=getattr(raw, "sha256", ""),
                    warnings=tuple(dict.fromkeys(out.warnings)),  # the base's said once
                )
                system = with_doubts(in_service(system))
            except InputError as exc:
                out.problems.extend(exc.problems)
        if out.problems:
            for p in out.problems:
                problems.append(
                    Problem(p.sheet, p.row, p.column, p.value, f"in case '{name}': {p.message}")
                )
            continue
        said = tuple(
            f"{sheets[sheet_name].values[_spec(sheet_name).columns[0].name][index]} "
            f"({sheet_name}): {column} = {value}"
            for (sheet_name, index, column), value in setting.items()
        )
        system = dataclasses.replace(system, in_labels=in_labels, changes=said)
        systems.append((name, system))
    if problems:
        raise InputError(problems)
    return tuple(systems)
