"""Small input rows for tests (invented data)."""

from __future__ import annotations


def transformer(**changes) -> dict:
    """A 1000 kVA 12.47/0.48 kV 5.75 % X/R 5 D-YN transformer row from bus HV to bus LV."""
    row = {
        "transformer": "T",
        "hv_bus": "HV",
        "lv_bus": "LV",
        "kva": 1000,
        "hv_kv": 12.47,
        "lv_kv": 0.48,
        "z_pct": 5.75,
        "xr": 5,
        "hv_winding": "D",
        "lv_winding": "YN",
    }
    row.update(changes)
    return row
