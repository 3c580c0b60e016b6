"""Progress reporters: where a long read, study or write says which step it is at.

The library never writes to the terminal by itself. ``read_system``, ``run_study`` and
``write_results`` take an optional ``progress`` reporter and call it: each opens a phase
(``with progress.phase(name):``) and, inside it, says how many steps it will take (``plan``)
and which one it is starting (``step``). The default, :data:`QUIET`, does nothing;
:class:`TerminalProgress`, which the command line passes, shows a bar of the steps done, the
current step and the elapsed time on stderr for a phase longer than SHOW_AFTER_S, and the
phase's duration when it ends, only when stderr is a terminal (quiet in pipes, files and CI).
Outside a phase, ``plan`` and ``step`` do nothing.

Examples
--------
>>> import io
>>> bar = TerminalProgress(io.StringIO())  # not a terminal: draws nothing
>>> with bar.phase("solving"):
...     bar.plan(2)
...     bar.step("one")
>>> QUIET.step("nothing happens")
"""

from __future__ import annotations

import contextlib
import sys
import threading
import time
from collections.abc import Iterator
from contextlib import AbstractContextManager

SHOW_AFTER_S = 2.0
FRAMES = "|/-\\"
BAR_WIDTH = 20


class Progress:
    """A reporter that reports nothing: the base of every reporter and the API's default.

    A reporter of one's own (a log, a GUI) subclasses it and overrides ``phase``, ``plan``
    and ``step``.
    """

    def phase(self, name: str) -> AbstractContextManager[None]:
        """A context manager around a phase called ``name`` (reading, solving, writing)."""
        return contextlib.nullcontext()

    def plan(self, steps: int) -> None:
        """The running phase will take ``steps`` more steps (added to those already planned)."""

    def step(self, label: str) -> None:
        """The running phase starts its next step, ``label``."""


QUIET = Progress()  # holds no state: one instance serves every caller


def reporter(progress: Progress | None) -> Progress:
    """``progress``, or QUIET when None."""
    return QUIET if progress is None else progress


class _Phase:
    def __init__(self, name: str):
        self.name = name
        self.total = 0
        self.done = -1  # steps started so far minus one: the current step is not done
        self.label = ""
        self.start = time.perf_counter()

    def line(self, frame: int) -> str:
        elapsed = time.perf_counter() - self.start
        label = f": {self.label}" if self.label else ""
        if self.total:
            done = max(0, min(self.done, self.total))
            filled = round(BAR_WIDTH * done / self.total)
            bar = "[" + "#" * filled + "-" * (BAR_WIDTH - filled) + f"] {done}/{self.total} "
        else:
            bar = FRAMES[frame % 4] + " "
        return f"\r{bar}{self.name}{label} {elapsed:5.1f} s\033[K"


class TerminalProgress(Progress):
    """A bar on ``stream`` (default: sys.stderr when the phase starts) for a phase longer than
    ``show_after_s`` (default SHOW_AFTER_S), drawn only when the stream is a terminal."""

    def __init__(self, stream=None, show_after_s: float | None = None):
        self.stream = stream
        self.show_after_s = show_after_s
        self._active: _Phase | None = None

    def plan(self, steps: int) -> None:
        if self._active is not None:
            self._active.total += max(0, steps)

    def step(self, label: str) -> None:
        if self._active is not None:
            self._active.done += 1
            self._active.label = label

    @contextlib.contextmanager
    def phase(self, name: str) -> Iterator[None]:
        """Run the body; if it lasts longer than the delay on a terminal, show its progress,
        and the phase's duration when it ends."""
        stream = self.stream or sys.stderr
        if not getattr(stream, "isatty", lambda: False)():
            yield
            return
        after_s = SHOW_AFTER_S if self.show_after_s is None else self.show_after_s
        current = _Phase(name)
        done = threading.Event()
        shown = threading.Event()

        def draw():
            k = 0
            while not done.wait(0.2):
                if time.perf_counter() - current.start >= after_s:
                    shown.set()
                    stream.write(current.line(k))
                    stream.flush()
                    k += 1

        outer, self._active = self._active, current
        thread = threading.Thread(target=draw, daemon=True)
        thread.start()
        try:
            yield
        finally:
            done.set()
            thread.join()
            self._active = outer
            if shown.is_set():
                took = time.perf_counter() - current.start
                stream.write(f"\r  {name}: {took:.1f} s\033[K\n")
                stream.flush()


@contextlib.contextmanager
def without_gc() -> Iterator[None]:
    """Pause Python's cyclic garbage collector for a phase that builds millions of small
    objects (it found no cycles to free there and cost about a quarter of the reading time)."""
    import gc

    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()
