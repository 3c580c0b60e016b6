"""Start-up: the command line is built without the heavy libraries, which come when a
command runs (the figures are in benchmarks/startup.py, not in a timed test).

Check value: the list of libraries that take most of the import time, measured with
``python -X importtime -c "import faultcalc.cli"`` before the change (common practice (no
source)).
"""

from __future__ import annotations

import subprocess
import sys

HEAVY = ("numpy", "pandas", "scipy", "openpyxl", "pyarrow")

PROBE = """
import sys
from click.testing import CliRunner
import faultcalc.cli as cli
for args in (["--help"], ["--version"], ["study", "--help"], ["check-cables", "--help"],
             ["netlist", "--help"], ["template", "--help"], ["demo", "--help"]):
    assert CliRunner().invoke(cli.main, args).exit_code == 0, args
print(" ".join(sorted({m.split(".")[0] for m in sys.modules} & set(sys.argv[1:]))))
"""


def _imported(*code_args):
    run = subprocess.run(
        [sys.executable, "-c", *code_args, *HEAVY], capture_output=True, text=True, check=True
    )
    return run.stdout.split()


def test_help_and_version_import_no_heavy_library():
    assert _imported(PROBE) == []


def test_a_study_imports_them():
    probe = PROBE.replace(
        'print(" ".join',
        "from faultcalc import run_study, sample_path, read_system\n"
        "run_study(read_system(sample_path()))\n"
        'print(" ".join',
    )
    assert {"numpy", "pandas", "scipy"} <= set(_imported(probe))  # the probe sees them
