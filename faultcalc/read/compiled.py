"""python-calamine in a thread of its own, for the workbook loader (``read/xlsx.py``).

The loader submits each sheet once the light pass has bounded its grid and takes the results
in turn; calamine (Rust) releases the GIL while it parses, so the rest of the light pass runs
beside it. Any failure, a Rust panic included, is the sheet's result: the loader then reads
that sheet the careful way.
"""

from __future__ import annotations

import io
import threading
from queue import SimpleQueue
from typing import Any


class Calamine(threading.Thread):
    """python-calamine in a thread of its own: the sheets submitted, parsed in turn (a sheet
    dropped before its turn, or any left when the loader stops, is not parsed)."""

    def __init__(self, data: bytes):
        super().__init__(daemon=True)
        self.data = data
        self.jobs: SimpleQueue[str | None] = SimpleQueue()
        self.results: dict[str, Any] = {}
        self.ready: dict[str, threading.Event] = {}
        self.dropped: set[str] = set()
        self.stopping = False

    def submit(self, name: str) -> None:
        self.ready[name] = threading.Event()
        self.jobs.put(name)

    def run(self) -> None:
        book = failure = None
        try:
            from python_calamine import CalamineWorkbook

            book = CalamineWorkbook.from_filelike(io.BytesIO(self.data))
            names = book.sheet_names
        except BaseException as exc:  # noqa: BLE001 - a Rust panic is a BaseException
            failure = exc
        while (name := self.jobs.get()) is not None:
            if self.stopping or name in self.dropped:
                continue
            try:
                if failure is not None:
                    raise failure
                if names.count(name) != 1:
                    raise LookupError(f"{names.count(name)} sheets named {name!r}")
                sheet = book.get_sheet_by_name(name)
                self.results[name] = (sheet.start, sheet.to_python())
            except BaseException as exc:  # noqa: BLE001 - any failure: the careful reader
                self.results[name] = exc
            self.ready[name].set()
        if book is not None:
            book.close()

    def done(self, name: str) -> bool:
        return self.ready[name].is_set()

    def result(self, name: str):
        self.ready[name].wait()
        return self.results.pop(name)

    def drop(self, name: str) -> None:
        """The sheet's values are not wanted (it is read the careful way)."""
        self.dropped.add(name)

    def stop(self) -> None:
        self.stopping = True  # only the sheet being parsed is waited for
        self.jobs.put(None)
        self.join()
