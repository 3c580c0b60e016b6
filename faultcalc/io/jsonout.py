"""Results as JSON: the machine-readable twin of the workbook."""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

from ..results import BUS_COLUMNS, StudyResult
from .files import staged


def _number(value: Any) -> Any:
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def result_dict(result: StudyResult) -> dict[str, Any]:
    """The JSON document as Python objects."""
    b = result.basis
    s = b.settings
    buses = _records(result.buses[list(BUS_COLUMNS)])
    return {
        "tool": {"name": b.tool_name, "version": b.tool_version},
        "study": {
            "title": s.title,
            "base_mva": s.base_mva,
            "frequency_hz": s.frequency_hz,
            "prefault_pu": s.prefault_pu,
            "conductor_temp_c": s.conductor_temp_c,
            "fault_ohm": s.fault_ohm,
            "method": s.method,
            "xr_method": s.xr_method,
            "lv_tolerance_pct": s.lv_tolerance_pct,
            "end_of_fault_temp_c": s.end_of_fault_temp_c,
            "basis": b.method,
            "input": b.input_name,
            "input_sha256": b.input_sha256,
            "calculated_at": b.calculated_at,
        },
        "buses": buses,
        "warnings": list(result.warnings),
        "cautions": list(result.cautions),
        **(
            {
                "cases": [
                    {"case": name, "buses": _records(table[list(BUS_COLUMNS)])}
                    for name, table in result.cases.items()
                ],
                "envelope": _records(result.envelope),
            }
            if result.envelope is not None
            else {}
        ),
        **(
            {"contributions": _records(result.contributions)}
            if result.contributions is not None
            else {}
        ),
    }


def _records(table) -> list[dict[str, Any]]:
    out = []
    for row in table.itertuples(index=False):
        out.append(
            {k: (v if isinstance(v, str) else _number(float(v))) for k, v in row._asdict().items()}
        )
    return out


def cable_check_dict(checks, tolerance_pct: float, input_name: str, sha256: str) -> dict:
    """The JSON document of ``faultcalc check-cables``."""
    from .. import __version__
    from ..cablecheck import CHECK_COLUMNS
    from ..cautions import CAUTIONS

    fields = [f for f in CHECK_COLUMNS if f != "table_row"]
    return {
        "tool": {"name": "faultcalc", "version": __version__},
        "input": input_name,
        "input_sha256": sha256,
        "tolerance_pct": tolerance_pct,
        "cables": [{f: getattr(c, f) for f in fields} for c in checks],
        "cautions": list(CAUTIONS),
    }


def write_json_to(result: StudyResult, path: Path) -> None:
    text = json.dumps(result_dict(result), indent=2, allow_nan=False)
    path.write_text(text + "\n", encoding="utf-8")


def write_json(result: StudyResult, path: str | Path) -> None:
    """Write the results as JSON, atomically (a temporary file renamed into place)."""
    with staged(path) as (temp,):
        write_json_to(result, temp)
