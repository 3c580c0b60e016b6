"""Turn one raw cell into a typed value, or say exactly what is wrong with it."""

from __future__ import annotations

import datetime as _dt
import math
from typing import Any

from . import schema


class CellError(ValueError):
    """A cell's value does not fit its column; the message says what was expected."""


def is_blank(value: Any) -> bool:
    return value is None or (isinstance(value, str) and value.strip() == "")


def as_text(value: Any) -> str:
    """Text of a cell; a whole number typed into a name cell reads as '12', not '12.0'."""
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value).strip()


def as_number(value: Any, column: schema.Column) -> float:
    expected = column.expected()
    if isinstance(value, bool):
        raise CellError(f"expected {expected}, not TRUE/FALSE")
    if isinstance(value, (_dt.date, _dt.time, _dt.datetime, _dt.timedelta)):
        raise CellError(
            f"expected {expected}, but the cell holds a date or time; format the cell as a number"
        )
    if isinstance(value, (int, float)):
        number = float(value)
    else:
        text = str(value).strip()
        try:
            number = float(text)
        except ValueError:
            raise CellError(f"expected {expected}") from None
    if not math.isfinite(number):
        raise CellError(f"expected {expected}, a finite value")
    if column.kind == schema.INTEGER and not number.is_integer():
        raise CellError(f"expected {expected}")
    bound = column.bound
    if (
        (bound == schema.POSITIVE and number <= 0)
        or (bound == schema.NON_NEGATIVE and number < 0)
        or (bound == schema.AT_LEAST_ONE and number < 1)
    ):
        raise CellError(f"expected {expected}")
    return number


def as_choice(value: Any, column: schema.Column) -> str:
    text = as_text(value)
    for choice in column.choices:
        if text.lower() == choice.lower():
            return choice
    raise CellError(f"expected {column.expected()}")


def parse(value: Any, column: schema.Column) -> Any:
    """Typed value of a non-blank cell for ``column``; raises CellError."""
    if column.kind in (schema.NUMBER, schema.INTEGER):
        number = as_number(value, column)
        return int(number) if column.kind == schema.INTEGER else number
    if column.kind == schema.CHOICE:
        return as_choice(value, column)
    return as_text(value)
