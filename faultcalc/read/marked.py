"""Cells a loader marks for what their value alone does not say."""

from __future__ import annotations


class PercentCell(float):
    """A number from a cell formatted as a percentage (0.0575 shown as 5.75%)."""


class FormulaCell(str):
    """A formula cell whose value was never saved (the file was written by a program that does
    not calculate): its text is the formula."""
