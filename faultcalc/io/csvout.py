"""Bus results as CSV, for studies too large to review row by row in a workbook.

Beyond BIG_OUTPUT_BUSES buses the results workbook holds a summary (the buses with the largest
currents and every duty finding) and every bus goes to ``<results>-buses.csv`` beside it.
Measured on the 2-core machine this is developed on: a full workbook takes about 1 ms per bus
to write (10,000 buses: 11 s, most of a study's time), the CSV about 20 microseconds per bus;
and nobody reviews thousands of buses by scrolling a workbook.
"""

from __future__ import annotations

from pathlib import Path

from ..results import BUS_COLUMNS, StudyResult

BIG_OUTPUT_BUSES = 5_000
SUMMARY_BUSES = 200


def write_bus_csv_to(result: StudyResult, path: Path) -> None:
    table = result.buses[list(BUS_COLUMNS)]
    table.to_csv(path, index=False, float_format="%.10g")
