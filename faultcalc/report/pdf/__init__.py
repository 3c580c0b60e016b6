"""The study report as PDF: what a study computed laid out for print, computing nothing itself.

Data flow: ``sections`` (a StudyResult -> reportlab flowables: the title page, the cautions,
the basis, the tables, the labels), ``pages`` (the page templates: portrait for text,
landscape for wide tables, a page of its own size for each one-line sheet; the header, and a
footer with "page N of M"), ``sheets`` (the one-line pages drawn by faultcalc.diagram, placed
on the report's pages they were given). Fonts (``fonts``) are DejaVu Sans, shipped with
matplotlib, embedded.
"""

from __future__ import annotations

from .build import write_report_to

__all__ = ["write_report_to"]
