"""A worked example of every input sheet: an invented 480 V plant small enough to read on the
template's guide sheet (never written as rows on the sheets themselves). Together the rows make
a complete input that the tool reads and studies (tests/test_template_print.py)."""

from __future__ import annotations

EXAMPLE_TITLE = "Example plant (invented)"

# sheet name -> its example rows (column -> value; a column left out is left blank)
EXAMPLES: dict[str, list[dict]] = {
    "study": [
        {"setting": "title", "value": EXAMPLE_TITLE},
        {"setting": "frequency_hz", "value": 60, "note": "60 Hz system"},
    ],
    "buses": [
        {"bus": "UTIL-13.8", "kv": 13.8, "description": "Utility point of delivery"},
        {
            "bus": "SWBD-1",
            "kv": 0.48,
            "description": "Main switchboard",
            "device": "lvpcb",
            "rating_ka": 65,
            "service": "yes",
        },
        {
            "bus": "MCC-1",
            "kv": 0.48,
            "description": "Motor control centre",
            "device": "mccb",
            "rating_ka": 35,
        },
    ],
    "sources": [
        {"source": "UTILITY", "bus": "UTIL-13.8", "sc_mva": 500, "xr": 15, "slg_ka": 18},
    ],
    "transformers": [
        {
            "transformer": "TX-1",
            "hv_bus": "UTIL-13.8",
            "lv_bus": "SWBD-1",
            "kva": 1500,
            "hv_kv": 13.8,
            "lv_kv": 0.48,
            "z_pct": 5.75,
            "xr": 6.5,
            "hv_winding": "D",
            "lv_winding": "YN",
            "lv_neutral_ohm": 0,
        },
    ],
    "cables": [
        {
            "cable": "F-MCC1",
            "from_bus": "SWBD-1",
            "to_bus": "MCC-1",
            "length_ft": 180,
            "sets": 2,
            "size": "500",
            "material": "cu",
            "raceway": "steel",
            "r0_ohm_per_kft": 0.081,
            "x0_ohm_per_kft": 0.144,
        },
    ],
    "impedances": [
        {
            "element": "BYPASS-1",
            "from_bus": "SWBD-1",
            "to_bus": "MCC-1",
            "r_ohm": 0.002,
            "x_ohm": 0.004,
            "r0_ohm": 0.006,
            "x0_ohm": 0.012,
            "in_service": "no",
        },
    ],
    "machines": [
        {
            "machine": "P-101",
            "bus": "MCC-1",
            "kind": "induction_motor",
            "hp": 200,
            "kv": 0.46,
            "xd_pct": 16.7,
            "xr": 8,
        },
        {
            "machine": "FANS",
            "bus": "MCC-1",
            "kind": "induction_motor",
            "hp": 25,
            "kv": 0.46,
            "xd_pct": 16.7,
            "xr": 4,
            "count": 6,
        },
    ],
    "grounding_transformers": [
        {
            "grounding_transformer": "ZZ-1",
            "bus": "UTIL-13.8",
            "kind": "zigzag",
            "z0_ohm": 4.0,
            "xr": 10,
            "neutral_ohm": 0,
            "in_service": "no",
        },
    ],
    "three_winding_transformers": [
        {
            "transformer": "XF-3W",
            "h_bus": "UTIL-13.8",
            "h_kva": 1500,
            "h_kv": 13.8,
            "h_winding": "YN",
            "m_bus": "SWBD-1",
            "m_kva": 1500,
            "m_kv": 0.48,
            "m_winding": "YN",
            "l_winding": "D",
            "hm_z_pct": 5.75,
            "hm_kva": 1500,
            "hm_xr": 6,
            "hl_z_pct": 8,
            "hl_kva": 500,
            "hl_xr": 5,
            "ml_z_pct": 6,
            "ml_kva": 500,
            "ml_xr": 4,
            "in_service": "no",
        },
    ],
    "inverters": [
        {
            "inverter": "PV-1",
            "bus": "SWBD-1",
            "kva": 250,
            "kv": 0.48,
            "count": 2,
            "current_limit_pu": 1.2,
            "behaviour": "positive",
            "cease_below_pu": 0.5,
            "in_service": "no",
        },
    ],
    "cases": [
        {"case": "utility minimum", "element": "UTILITY", "column": "sc_mva", "value": 250},
        {"case": "utility minimum", "element": "UTILITY", "column": "slg_ka", "value": 9},
    ],
}
