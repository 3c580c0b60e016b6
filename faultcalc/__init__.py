"""faultcalc: available short-circuit current and Thevenin impedance at every bus.

Public API::

    system = read_system("plant.xlsx")      # or a folder of <sheet>.csv files
    result = run_study(system)              # result.buses, result.warnings, result.cautions
    write_results(result, "results.xlsx", "results.json")   # as `faultcalc study` writes them
    write_workbook(result, "results.xlsx")  # or one file at a time
    write_json(result, "results.json")

``read_system``, ``run_study`` and ``write_results`` take ``progress=`` (a :class:`Progress`;
``TerminalProgress()`` draws a bar on stderr); by default they report nothing. Also:
:func:`check_cables` and :func:`write_cable_checks`, :func:`write_netlist`,
:func:`write_template`, :class:`ResultFiles` and :class:`OutputFiles` (output names checked
before the work), :func:`contribution_bus_names`, :func:`sample_path`, :func:`run_fleet` and
:func:`inputs_in` (many studies at once).

Bad input raises :class:`InputError`, whose ``problems`` each carry ``sheet``, ``row``,
``column``, ``value`` and ``message``; an output that cannot be written, :class:`OutputError`.

The names that need numpy, pandas, scipy, openpyxl or pyarrow are imported on first use
(PEP 562), so that importing faultcalc, and ``faultcalc --help``, is quick.
"""

from __future__ import annotations

import importlib
import importlib.util
import os
from pathlib import Path

# openpyxl parses with the hardened defusedxml parser when it is installed (a dependency), and
# with lxml, which it does not harden, when that is installed: keep it off for reading.
os.environ.setdefault("OPENPYXL_LXML", "False")

from ._version import __version__
from .choices import CABLE_TOLERANCE_PCT, FAULT_TYPES, SAMPLES
from .errors import InputError, OutputError, Problem
from .progress import QUIET, Progress, TerminalProgress

# Public name -> the module that defines it, imported when the name is first asked for.
_LAZY = {
    "read_system": "faultcalc.read.reader",
    "run_study": "faultcalc.study",
    "contribution_bus_names": "faultcalc.study",
    "System": "faultcalc.model",
    "StudyResult": "faultcalc.results",
    "write_workbook": "faultcalc.report.workbook",
    "write_json": "faultcalc.report.jsonout",
    "check_cables": "faultcalc.conductors.cablecheck",
    "CableCheck": "faultcalc.conductors.cablecheck",
    "BIG_OUTPUT_BUSES": "faultcalc.report.outputs",
    "OutputFiles": "faultcalc.report.outputs",
    "ResultFiles": "faultcalc.report.outputs",
    "WrittenResults": "faultcalc.report.outputs",
    "bus_csv_path": "faultcalc.report.outputs",
    "write_cable_checks": "faultcalc.report.outputs",
    "write_diagram": "faultcalc.report.outputs",
    "write_netlist": "faultcalc.report.outputs",
    "write_results": "faultcalc.report.outputs",
    "write_template": "faultcalc.report.outputs",
    "run_fleet": "faultcalc.fleet",
    "inputs_in": "faultcalc.fleet",
}


def __getattr__(name: str):
    """A public name on first use (PEP 562), or a submodule (``faultcalc.study``) imported on
    first use as an earlier, eager ``__init__`` had it imported."""
    if name in _LAZY:
        value = getattr(importlib.import_module(_LAZY[name]), name)
    elif not name.startswith("_") and importlib.util.find_spec(f"{__name__}.{name}"):
        value = importlib.import_module(f"{__name__}.{name}")
    else:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_LAZY))


def sample_path(name: str = "plant_480v") -> Path:
    """Folder of a bundled sample system (invented scenarios, for demonstration only)."""
    if name not in SAMPLES:
        raise KeyError(f"no sample named {name!r}; samples are {', '.join(SAMPLES)}")
    return Path(__file__).parent / "samples" / name


__all__ = [
    "BIG_OUTPUT_BUSES",
    "CABLE_TOLERANCE_PCT",
    "FAULT_TYPES",
    "QUIET",
    "SAMPLES",
    "CableCheck",
    "InputError",
    "OutputError",
    "OutputFiles",
    "Problem",
    "Progress",
    "ResultFiles",
    "StudyResult",
    "System",
    "TerminalProgress",
    "WrittenResults",
    "__version__",
    "bus_csv_path",
    "check_cables",
    "contribution_bus_names",
    "inputs_in",
    "read_system",
    "run_fleet",
    "run_study",
    "sample_path",
    "write_cable_checks",
    "write_diagram",
    "write_json",
    "write_netlist",
    "write_results",
    "write_template",
    "write_workbook",
]
