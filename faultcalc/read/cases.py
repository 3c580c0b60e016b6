"""The `cases` sheet: named variations of the system, each validated as a whole System.

Each case starts from the base input's raw sheets and applies its overrides (one row each:
element, column, value). ``in_service`` on an element sets its ``in_service`` column either way;
``in_service`` = no on a bus removes the bus and what hangs only on it, after the case is read
(``service.without_buses``), and says so. The result is read by the
same validation as the base, so a case's bad value is reported like any other, with the case
named and the cases row that caused it. A case whose rows say ``label`` = no is left out of the
service labels' maximum (``System.in_labels`` False); it is studied all the same.
"""

from __future__ import annotations

import copy
import dataclasses
from typing import Any

from .. import schema
from ..errors import InputError, Problem
from . import cells
from .service import IN_SERVICE
from .tables import RawInput

LABEL = "label"


def _in_labels(name: str, records, problems: list[Problem]) -> bool:
    """Whether the case counts in the service labels: no when a row of it says label = no.
    Rows that say yes and no disagree: a problem located at the first row that differs."""
    said = [(r.row, r.values.get(LABEL)) for r in records if r.values.get(LABEL) is not None]
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


def _find(raw: RawInput, name: str, column: str):
    """(sheet, index in its rows, message) of the element or bus called ``name`` (matched as
    typed, else ignoring case, as bus references are). A name that is both a bus and an element
    is taken where ``column`` is a column; where it is one of both, the message says so."""
    found = []
    for match in (lambda text: text == name, lambda text: text.casefold() == name.casefold()):
        for sheet in (schema.BUSES, *schema.ELEMENT_SHEETS):
            table = raw.sheets.get(sheet.name)
            if table is None:
                continue
            key = sheet.columns[0].name
            for i, (_, values) in enumerate(table.rows):
                if not cells.is_blank(values.get(key)) and match(
                    cells.as_text(values[key]).strip()
                ):
                    found.append((sheet, i))
        if found:
            break
    if len(found) > 1:
        fitting = [f for f in found if column in f[0].names]
        if len(fitting) == 1:
            return (*fitting[0], "")
        where = " and ".join(f"a row of '{sheet.name}'" for sheet, _ in found)
        return None, None, f"the name is {where}: rename one so that the case names one thing"
    if found:
        return (*found[0], "")
    return None, None, "no bus or element of that name"


def read_cases(raw: RawInput, records, read_tables) -> tuple[tuple[str, Any], ...]:
    """Every case as (name, System), in order of first appearance on the cases sheet."""
    if not records:
        return ()
    problems: list[Problem] = []
    order: list[str] = []
    overrides: dict[str, list] = {}
    for record in records:
        if not record.ok:
            continue
        name = record.values["case"].strip()
        if name.lower() == "base":
            problems.append(
                Problem(
                    "cases",
                    record.row,
                    "case",
                    name,
                    "'base' names the system as entered; choose another name",
                )
            )
            continue
        if name not in overrides:
            order.append(name)
            overrides[name] = []
        overrides[name].append(record)
    systems = []
    for name in order:
        in_labels = _in_labels(name, overrides[name], problems)
        case_raw = copy.deepcopy(raw)
        case_raw.sheets.pop("cases", None)
        case_raw.problems = []
        for record in overrides[name]:
            element = record.values["element"].strip()
            column = record.values["column"].strip().lower()
            value = record.values.get("value")
            sheet, index, message = _find(case_raw, element, column)
            if sheet is None:
                problems.append(Problem("cases", record.row, "element", element, message))
                continue
            if column == IN_SERVICE:
                text = (value or "").strip().lower()
                if text not in ("yes", "no"):
                    problems.append(
                        Problem("cases", record.row, "value", value, "in_service takes yes or no")
                    )
                    continue
                value = text  # the in_service column, set like any other
            if column not in sheet.names or column == sheet.columns[0].name:
                problems.append(
                    Problem(
                        "cases",
                        record.row,
                        "column",
                        column,
                        f"not a column of the '{sheet.name}' sheet that a case can change; "
                        f"columns are {', '.join(n for n in sheet.names[1:] if n != IN_SERVICE)}"
                        f", or {IN_SERVICE}",
                    )
                )
                continue
            table = case_raw.sheets[sheet.name]
            number, values = table.rows[index]
            values = dict(values)
            values[column] = value
            table.rows[index] = (number, values)
            if column not in table.headers:
                table.headers.append(column)
        try:
            system = read_tables(case_raw, with_cases=False)
        except InputError as exc:
            for p in exc.problems:
                problems.append(
                    Problem(p.sheet, p.row, p.column, p.value, f"in case '{name}': {p.message}")
                )
            continue
        if not in_labels:
            system = dataclasses.replace(system, in_labels=False)
        systems.append((name, system))
    if problems:
        raise InputError(problems)
    return tuple(systems)
