"""Cell values that carry what a workbook says beside the value (a percent format, a formula).

Its own module so that the workbook loader (``read/xlsx.py``) and the cell reader
(``read/cells.py``) share them without importing each other; ``read/tables.py`` and
``read/cells.py`` re-export them.
"""

from __future__ import annotations


class PercentCell(float):
    """A number from a cell formatted as a percentage (0.0575 shown as 5.75%)."""


class FormulaCell(str):
    """A formula cell whose value was never saved (the file was written by a program that does
    not calculate): its text is the formula."""
