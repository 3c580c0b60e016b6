"""Progress on stderr for long phases, only on a terminal (quiet in pipes, files and CI)."""

from __future__ import annotations

import contextlib
import sys
import threading
import time
from collections.abc import Iterator

SHOW_AFTER_S = 2.0
FRAMES = "|/-\\"


@contextlib.contextmanager
def phase(name: str, stream=None) -> Iterator[None]:
    """Run the body; if it lasts longer than SHOW_AFTER_S on a terminal, show a running
    indicator with the elapsed time, and the phase's duration when it ends."""
    stream = stream or sys.stderr
    if not getattr(stream, "isatty", lambda: False)():
        yield
        return
    start = time.perf_counter()
    done = threading.Event()
    shown = threading.Event()

    def spin():
        k = 0
        while not done.wait(0.2):
            elapsed = time.perf_counter() - start
            if elapsed >= SHOW_AFTER_S:
                shown.set()
                stream.write(f"\r{FRAMES[k % 4]} {name} ... {elapsed:5.1f} s")
                stream.flush()
                k += 1

    thread = threading.Thread(target=spin, daemon=True)
    thread.start()
    try:
        yield
    finally:
        done.set()
        thread.join()
        if shown.is_set():
            stream.write(f"\r  {name}: {time.perf_counter() - start:.1f} s{' ' * 10}\n")
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
