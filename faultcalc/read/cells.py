"""Turn one raw cell into a typed value, or say exactly what is wrong with it.

Lenient where the meaning is unambiguous, each leniency reported as a note (a warning): a
thousands separator ("1,500"), a percent sign in a % column ("5.75%"), the column's own unit
typed after the number ("200 ft"), a percentage-formatted cell in a % column, spaces around a
name. Anything ambiguous is an error that says what was expected.
"""

from __future__ import annotations

import datetime as _dt
import math
import re
from typing import Any

import numpy as np

from .. import schema
from . import names
from .marked import FormulaCell, PercentCell
from .raw import is_blank  # noqa: F401 - used as cells.is_blank


class CellError(ValueError):
    """A cell's value does not fit its column; the message says what was expected."""


# Unit words accepted after a number, by column unit (lower case).
UNIT_WORDS = {
    "ft": ("ft", "feet", "foot", "'"),
    "m": ("m", "meter", "metre", "meters", "metres"),
    "kv": ("kv",),
    "kva": ("kva",),
    "mva": ("mva",),
    "ka": ("ka",),
    "%": ("%", "pct", "percent"),
    "ohm": ("ohm", "ohms", "\u03a9"),
    "ohm/1000 ft": ("ohm/1000 ft", "ohm/kft", "ohms/1000 ft", "ohm/1000ft"),
    "ohm/km": ("ohm/km", "ohms/km"),
    "hz": ("hz",),
    "c": ("c", "\u00b0c", "degc"),
    "hp": ("hp",),
    "pu": ("pu", "p.u."),
    "r/min": ("rpm", "r/min"),
}
_NUMBER = re.compile(r"^([+-]?(?:\d[\d,]*\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*)$")
_THOUSANDS = re.compile(r"^[+-]?\d{1,3}(?:,\d{3})+(?:\.\d+)?$")
# No input of a short-circuit study is this large or this small (other than exactly 0).
MAX_MAGNITUDE = 1e9
MIN_MAGNITUDE = 1e-9
SPACES_NOTE = "spaces around the text removed"
FORMULA_MESSAGE = (
    "the cell holds a formula whose value was never saved; open the file in a "
    "spreadsheet program and save it, so that the values are stored"
)


def as_text(value: Any, notes: list[str] | None = None) -> str:
    """Text of a cell; a whole number typed into a name cell reads as '12', not '12.0'."""
    if isinstance(value, FormulaCell):
        raise CellError(FORMULA_MESSAGE)
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    raw = str(value)
    text = raw.strip()
    if notes is not None and text != raw:
        notes.append(SPACES_NOTE)
    return text


def _text_number(text: str, column: schema.Column, notes: list[str] | None) -> float:
    expected = column.expected()
    cleaned = text.replace("\u00a0", " ").replace("\u2212", "-").strip()
    m = _NUMBER.match(cleaned)
    if not m:
        raise CellError(f"expected {expected}")
    number_text, unit_text = m.group(1), m.group(2).strip()
    if "," in number_text:
        if _THOUSANDS.match(number_text):
            if notes is not None:
                notes.append(
                    f"read {number_text!r} as {number_text.replace(',', '')} (a "
                    "thousands separator)"
                )
            number_text = number_text.replace(",", "")
        else:
            raise CellError(
                f"expected {expected}; the comma is ambiguous: use a point for "
                "decimals (0.75) and no thousands separator"
            )
    if unit_text:
        unit = column.unit.lower()
        if unit and unit_text.lower() in UNIT_WORDS.get(unit, (unit,)):
            if notes is not None:
                notes.append(
                    f"unit {unit_text!r} after the number removed (the column is in {column.unit})"
                )
        else:
            hint = ""
            if column.name == "length_ft" and unit_text.lower() in UNIT_WORDS["m"]:
                hint = "; put metres in length_m"
            elif column.name == "length_m" and unit_text.lower() in UNIT_WORDS["ft"]:
                hint = "; put feet in length_ft"
            raise CellError(
                f"expected {expected}; {unit_text!r} after the number is not this "
                f"column's unit{hint}"
            )
    try:
        return float(number_text)
    except ValueError:
        raise CellError(f"expected {expected}") from None


def within(column: schema.Column, x: np.ndarray) -> np.ndarray:
    """Where the numbers ``x`` are what ``column`` takes: finite, 0 or between MIN_MAGNITUDE
    and MAX_MAGNITUDE in size, within the column's bound, whole for an integer column. The one
    statement of these rules: whole columns are checked with it, and ``as_number`` explains
    with it why a cell is refused."""
    with np.errstate(invalid="ignore"):
        size = np.abs(x)
        ok = np.isfinite(x) & (((size >= MIN_MAGNITUDE) & (size <= MAX_MAGNITUDE)) | (x == 0))
        bound = column.bound
        if bound == schema.POSITIVE:
            ok &= x > 0
        elif bound == schema.NON_NEGATIVE:
            ok &= x >= 0
        elif bound in (schema.AT_LEAST_ONE, schema.AT_LEAST_ONE_NUMBER):
            ok &= x >= 1
        if column.kind == schema.INTEGER:
            ok &= x == np.round(x)
    return ok


def _plain(value: Any, column: schema.Column) -> float | None:
    """A plain number (an int or float, or text Python's float() reads) that ``column``
    takes, or None to take the careful path."""
    if type(value) is str:
        try:
            number = float(value)
        except ValueError:
            return None
    elif type(value) in (int, float):
        number = float(value)
    else:
        return None
    return number if within(column, np.array([number]))[0] else None


def as_number(value: Any, column: schema.Column, notes: list[str] | None = None) -> float:
    number = _plain(value, column)
    if number is not None:
        return number
    expected = column.expected()
    if isinstance(value, FormulaCell):
        raise CellError(FORMULA_MESSAGE)
    if isinstance(value, bool):
        raise CellError(f"expected {expected}, not TRUE/FALSE")
    if isinstance(value, (_dt.date, _dt.time, _dt.datetime, _dt.timedelta)):
        raise CellError(
            f"expected {expected}, but the cell holds a date or time; format the cell as a number"
        )
    if isinstance(value, PercentCell):
        if column.unit != "%":
            raise CellError(
                f"expected {expected}, but the cell is formatted as a percentage "
                f"(it shows {float(value) * 100:g}%)"
            )
        number = float(value) * 100.0
        if notes is not None:
            notes.append(f"percentage-formatted cell read as {number:g} %")
    elif isinstance(value, (int, float)):
        number = float(value)
    else:
        number = _text_number(str(value), column, notes)
    if within(column, np.array([number]))[0]:
        return number
    if not math.isfinite(number):
        raise CellError(f"expected {expected}, a finite value")
    if abs(number) > MAX_MAGNITUDE or 0 < abs(number) < MIN_MAGNITUDE:
        raise CellError(
            f"expected {expected}; {number:g} is outside {MIN_MAGNITUDE:g} to "
            f"{MAX_MAGNITUDE:g}, where every real value of this tool's inputs lies"
        )
    raise CellError(f"expected {expected}")  # the bound, or not whole in an integer column


def as_choice(value: Any, column: schema.Column) -> str:
    text = as_text(value)
    for choice in column.choices:
        if text.lower() == choice.lower():
            return choice
    raise CellError(f"expected {column.expected()}")


def parse(value: Any, column: schema.Column, notes: list[str] | None = None) -> Any:
    """Typed value of a non-blank cell for ``column``; raises CellError; leniencies go to
    ``notes``."""
    if column.kind in (schema.NUMBER, schema.INTEGER):
        number = as_number(value, column, notes)
        return int(number) if column.kind == schema.INTEGER else number
    if column.kind == schema.CHOICE:
        if isinstance(value, float) and value.is_integer():
            value = int(value)
        return as_choice(value, column)
    text = as_text(value, notes)
    problem = (
        names.name_problem(text)
        if column.kind in (schema.ID, schema.BUS_REF)
        else names.text_problem(text)
    )
    if problem:
        raise CellError(problem)
    return text
