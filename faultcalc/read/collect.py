"""Where the reader puts what it finds: problems (the input cannot be studied) and warnings."""

from __future__ import annotations

from typing import Any

from ..errors import Problem


class Collector:
    def __init__(self) -> None:
        self.problems: list[Problem] = []
        self.warnings: list[str] = []
        # where each warning came from: (sheet, row, column, said of the cell itself)
        self.origins: list[tuple[str, int | None, str | None, bool]] = []

    def problem(self, sheet: str, row: int | None, column: str | None, value: Any, message: str):
        self.problems.append(Problem(sheet, row, column, value, message))

    def warn(
        self,
        sheet: str,
        row: int | None,
        column: str | None,
        value: Any,
        message: str,
        cell: bool = False,
    ):
        """A warning; ``cell``: it is about the cell's own text (a note of its typing), not
        about the row among others."""
        self.warnings.append(str(Problem(sheet, row, column, value, message)))
        self.origins.append((sheet, row, column, cell))
