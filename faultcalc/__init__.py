"""faultcalc: available short-circuit current and Thevenin impedance at every bus.

Public API::

    system = read_system("plant.xlsx")      # or a folder of <sheet>.csv files
    result = run_study(system)              # result.buses, result.warnings, result.cautions
    write_workbook(result, "results.xlsx")
    write_json(result, "results.json")

Bad input raises :class:`InputError`, whose ``problems`` each carry ``sheet``, ``row``,
``column``, ``value`` and ``message``.
"""

from __future__ import annotations

import os
from pathlib import Path

# openpyxl parses with the hardened defusedxml parser when it is installed (a dependency), and
# with lxml, which it does not harden, when that is installed: keep it off for reading.
os.environ.setdefault("OPENPYXL_LXML", "False")

from ._version import __version__
from .errors import InputError, OutputError, Problem
from .io.jsonout import write_json
from .io.reader import read_system
from .io.template import write_template
from .io.workbook import write_workbook
from .model import System
from .results import StudyResult
from .study import run_study

SAMPLES = ("plant_480v", "double_ended_480v")


def sample_path(name: str = "plant_480v") -> Path:
    """Folder of a bundled sample system (invented scenarios, for demonstration only)."""
    if name not in SAMPLES:
        raise KeyError(f"no sample named {name!r}; samples are {', '.join(SAMPLES)}")
    return Path(__file__).parent / "samples" / name


__all__ = [
    "InputError",
    "OutputError",
    "Problem",
    "StudyResult",
    "System",
    "__version__",
    "read_system",
    "run_study",
    "sample_path",
    "write_json",
    "write_template",
    "write_workbook",
]
