"""Progress on a terminal: a bar of the steps a phase planned, nothing when not a terminal.

Check values: the steps the test itself plans, and a study's plan against the steps it takes
(common practice (no source)).
"""

from __future__ import annotations

import contextlib
import io
import shutil
import time

import pytest

from faultcalc import progress, read_system, run_study, sample_path


class Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_bar_counts_planned_steps(monkeypatch):
    monkeypatch.setattr(progress, "SHOW_AFTER_S", 0.0)
    screen = Terminal()
    bar = progress.TerminalProgress(screen)
    with bar.phase("solving"):
        bar.plan(4)
        for label in ("one", "two", "three"):
            bar.step(label)
            time.sleep(0.45)
    text = screen.getvalue()
    assert "] 0/4 solving: one" in text and "] 2/4 solving: three" in text
    assert "3/4" not in text  # the current step is not counted as done
    assert text.endswith("s\x1b[K\n") and "  solving: " in text
    bar.step("outside a phase: no effect")


def test_quiet_when_not_a_terminal(monkeypatch):
    monkeypatch.setattr(progress, "SHOW_AFTER_S", 0.0)
    log = io.StringIO()
    bar = progress.TerminalProgress(log)
    with bar.phase("reading"):
        bar.plan(2)
        bar.step("a")
        time.sleep(0.3)
    assert log.getvalue() == ""


def test_spinner_without_a_plan(monkeypatch):
    monkeypatch.setattr(progress, "SHOW_AFTER_S", 0.0)
    screen = Terminal()
    with progress.TerminalProgress(screen).phase("writing"):
        time.sleep(0.45)
    text = screen.getvalue()
    assert "| writing" in text and "/0 " not in text and "#" not in text


class Recorder(progress.Progress):
    """A reporter of one's own: records each phase's planned and started steps."""

    def __init__(self):
        self.phases: list[dict] = []

    @contextlib.contextmanager
    def phase(self, name):
        self.phases.append({"name": name, "planned": 0, "steps": []})
        yield

    def plan(self, steps):
        self.phases[-1]["planned"] += steps

    def step(self, label):
        self.phases[-1]["steps"].append(label)


@pytest.mark.parametrize("method", ["thevenin", "iec60909"])
def test_a_study_plans_the_steps_it_takes(tmp_path, method):
    # The sample has a cases sheet; iec60909 adds a second (minimum) variant per case.
    folder = tmp_path / "plant"
    shutil.copytree(sample_path("plant_480v"), folder)
    with (folder / "study.csv").open("a", encoding="utf-8") as handle:
        handle.write(f"method,{method}\n")
    recorder = Recorder()
    system = read_system(folder, progress=recorder)
    assert system.cases  # the column-wise reader gave way (cases) to the careful one
    run_study(system, contributions="SWBD-1", progress=recorder)
    assert [p["name"] for p in recorder.phases] == ["reading the input", "solving"]
    reading, solving = recorder.phases
    assert reading["steps"][-2:] == ["loading every cell", "checking every row"]
    assert reading["planned"] >= len(reading["steps"])
    assert solving["planned"] == len(solving["steps"])
    assert solving["steps"].count("per-unit conversion") == (1 + len(system.cases)) * (
        2 if method == "iec60909" else 1
    )
    assert "contributions" in solving["steps"] and solving["steps"][-1] == "cable check"


def test_the_default_reporter_says_nothing(capsys):
    result = run_study(read_system(sample_path("plant_480v")))
    assert len(result.buses) > 0
    assert capsys.readouterr() == ("", "")
