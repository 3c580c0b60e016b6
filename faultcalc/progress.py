"""Progress on stderr for long phases, only on a terminal (quiet in pipes, files and CI).

A phase (reading, solving, writing) is a ``with phase(name):`` block. Code inside it may say
how many steps it will take (``plan``) and which one it is starting (``step``); the line then
shows a bar of the steps done, the current step and the elapsed time. Outside a phase, or when
stderr is not a terminal, ``plan`` and ``step`` do nothing.
"""

from __future__ import annotations

import contextlib
import sys
import threading
import time
from collections.abc import Iterator

SHOW_AFTER_S = 2.0
FRAMES = "|/-\\"
BAR_WIDTH = 20


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


_active: _Phase | None = None


def plan(steps: int) -> None:
    """The running phase will take ``steps`` more steps (added to those already planned)."""
    if _active is not None:
        _active.total += max(0, steps)


def step(label: str) -> None:
    """The running phase starts its next step, ``label``."""
    if _active is not None:
        _active.done += 1
        _active.label = label


@contextlib.contextmanager
def phase(name: str, stream=None) -> Iterator[None]:
    """Run the body; if it lasts longer than SHOW_AFTER_S on a terminal, show its progress,
    and the phase's duration when it ends."""
    global _active
    stream = stream or sys.stderr
    if not getattr(stream, "isatty", lambda: False)():
        yield
        return
    current = _Phase(name)
    done = threading.Event()
    shown = threading.Event()

    def draw():
        k = 0
        while not done.wait(0.2):
            if time.perf_counter() - current.start >= SHOW_AFTER_S:
                shown.set()
                stream.write(current.line(k))
                stream.flush()
                k += 1

    outer, _active = _active, current
    thread = threading.Thread(target=draw, daemon=True)
    thread.start()
    try:
        yield
    finally:
        done.set()
        thread.join()
        _active = outer
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
