"""Progress on a terminal: a bar of the steps a phase planned, nothing when not a terminal.

Check values: the steps the test itself plans (common practice (no source)).
"""

from __future__ import annotations

import io
import time

from faultcalc import progress


class Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_bar_counts_planned_steps(monkeypatch):
    monkeypatch.setattr(progress, "SHOW_AFTER_S", 0.0)
    screen = Terminal()
    with progress.phase("solving", screen):
        progress.plan(4)
        for label in ("one", "two", "three"):
            progress.step(label)
            time.sleep(0.45)
    text = screen.getvalue()
    assert "] 0/4 solving: one" in text and "] 2/4 solving: three" in text
    assert "3/4" not in text  # the current step is not counted as done
    assert text.endswith("s\x1b[K\n") and "  solving: " in text
    progress.step("outside a phase: no effect")


def test_quiet_when_not_a_terminal(monkeypatch):
    monkeypatch.setattr(progress, "SHOW_AFTER_S", 0.0)
    log = io.StringIO()
    with progress.phase("reading", log):
        progress.plan(2)
        progress.step("a")
        time.sleep(0.3)
    assert log.getvalue() == ""


def test_spinner_without_a_plan(monkeypatch):
    monkeypatch.setattr(progress, "SHOW_AFTER_S", 0.0)
    screen = Terminal()
    with progress.phase("writing", screen):
        time.sleep(0.45)
    text = screen.getvalue()
    assert "| writing" in text and "/0 " not in text and "#" not in text
