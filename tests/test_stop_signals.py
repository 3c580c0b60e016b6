"""SIGTERM and SIGHUP stop a study the way Ctrl-C does: no temporary file, no output.

`faultcalc study` runs in a subprocess through a small wrapper that holds one step (solving,
or writing once the first results are in their temporary files) until the test has sent its
signal. Expected exit statuses: 128 + the signal's number, the shell's convention for a
process stopped by a signal (common practice (no source)); Ctrl-C keeps click's "Aborted!",
status 1.
"""

from __future__ import annotations

import signal
import subprocess
import sys
import time

import pytest

from faultcalc import sample_path

pytestmark = pytest.mark.skipif(
    not hasattr(signal, "SIGHUP"), reason="SIGTERM/SIGHUP delivery is POSIX"
)

WRAPPER = """
import signal, sys, time
from pathlib import Path
import faultcalc
import faultcalc.cli as cli
import faultcalc.report.workbook as workbook

ready, go, step = Path(sys.argv[1]), Path(sys.argv[2]), sys.argv[3]
# Start as from a terminal whatever the test runner inherited (a background job ignores
# SIGINT; nohup ignores SIGHUP), unless the test asks to keep SIGHUP ignored.
signal.signal(signal.SIGINT, signal.default_int_handler)
signal.signal(signal.SIGTERM, signal.SIG_DFL)
signal.signal(signal.SIGHUP, signal.SIG_IGN if step.endswith("nohup") else signal.SIG_DFL)

def held(real):
    def step_then_wait(*args, **kwargs):
        out = real(*args, **kwargs)
        ready.write_text("ready")
        deadline = time.monotonic() + 60
        while not go.exists() and time.monotonic() < deadline:
            time.sleep(0.02)
        return out
    return step_then_wait

if step.startswith("solving"):
    faultcalc.run_study = held(faultcalc.run_study)
else:
    workbook.write_workbook_to = held(workbook.write_workbook_to)
sys.argv = ["faultcalc", *sys.argv[4:]]
cli.main()
"""


def _start(tmp_path, step):
    script = tmp_path / "wrapper.py"
    script.write_text(WRAPPER)
    out = tmp_path / "out"
    out.mkdir()
    ready, go = tmp_path / "ready", tmp_path / "go"
    args = [sys.executable, str(script), str(ready), str(go), step, "study", str(sample_path())]
    args += ["-o", str(out / "r.xlsx"), "--json", str(out / "r.json")]
    process = subprocess.Popen(args, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 60
    while not ready.exists():
        if process.poll() is not None or time.monotonic() > deadline:
            process.kill()
            pytest.fail(f"the study did not reach its step: {process.communicate()}")
        time.sleep(0.02)
    return process, out, go


@pytest.mark.parametrize(
    "step, signum, status, message",
    [
        ("writing", signal.SIGTERM, 143, "stopped by SIGTERM; nothing was written"),
        ("solving", signal.SIGTERM, 143, "stopped by SIGTERM; nothing was written"),
        ("writing", signal.SIGHUP, 129, "stopped by SIGHUP; nothing was written"),
        ("writing", signal.SIGINT, 1, "Aborted!"),
    ],
)
def test_a_stopped_study_leaves_nothing(tmp_path, step, signum, status, message):
    process, out, _ = _start(tmp_path, step)
    if step == "writing":  # the workbook is in its temporary file: the study is mid-write
        assert [p.suffix for p in out.iterdir()] == [".part", ".part"]
    process.send_signal(signum)
    stdout, stderr = process.communicate(timeout=60)
    assert process.returncode == status, (stdout, stderr)
    assert message in stderr and "Traceback" not in stderr
    assert list(out.iterdir()) == []  # no output, no temporary file


def test_an_ignored_hangup_is_left_ignored(tmp_path):
    # Under nohup SIGHUP is ignored: the study goes on and finishes.
    process, out, go = _start(tmp_path, "writing-nohup")
    process.send_signal(signal.SIGHUP)
    time.sleep(0.2)
    go.write_text("go")
    stdout, stderr = process.communicate(timeout=60)
    assert process.returncode == 0, (stdout, stderr)
    assert sorted(p.name for p in out.iterdir()) == ["r.json", "r.xlsx"]
