"""Located problems in the input, and the errors that carry them."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any


@dataclass(frozen=True)
class Problem:
    """One thing wrong (or doubtful) in the input, located as the spreadsheet shows it.

    ``row`` is the spreadsheet row number (the header is row 1); ``None`` when the problem
    concerns a whole sheet or column. ``column`` is the column name, or ``None``.
    """

    sheet: str
    row: int | None
    column: str | None
    value: Any
    message: str

    def location(self) -> str:
        parts = [f"sheet '{_shown(self.sheet)}'"]
        if self.row is not None:
            parts.append(f"row {self.row}")
        if self.column is not None:
            parts.append(f"column '{_shown(self.column)}'")
        return ", ".join(parts)

    def __str__(self) -> str:
        text = f"{self.location()}: {self.message}"
        if self.value is not None and self.value != "":
            text += f" (found {_found(self.value)!r})"
        return text


def _found(value):
    """A cell's value as a message shows it: a whole number without '.0' (a workbook stores
    every number as a float; a spreadsheet shows 500, not 500.0), in a group of cells too."""
    if isinstance(value, dict):
        return {k: _found(v) for k, v in value.items()}
    if type(value) is float and value.is_integer() and abs(value) < 2**53:
        return int(value)
    return value


def _shown(name: str) -> str:
    """A sheet or column name as printed: a CSV file name or a header may hold any character,
    and control characters (a line break, a terminal escape) are shown as escapes."""
    name = str(name)
    return name if name.isprintable() else repr(name)[1:-1]


class InputError(Exception):
    """The input cannot be studied. ``problems`` lists every problem found, located."""

    def __init__(self, problems: list[Problem], warnings: tuple[str, ...] | list[str] = ()):
        self.problems = list(problems)
        self.warnings = tuple(warnings)  # doubts found before the problems stopped the reading
        count = len(self.problems)
        head = f"{count} problem{'s' if count != 1 else ''} in the input"
        super().__init__(head + ":\n" + "\n".join(f"  - {p}" for p in self.problems))


class OutputError(Exception):
    """A results file could not be written (path refused, not writable, ...)."""
