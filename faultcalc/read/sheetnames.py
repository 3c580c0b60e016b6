"""Which known sheet an unknown sheet name was probably meant as.

A sheet named `transformer`, `Motors` or `cabels` holds rows the study would otherwise leave
out: the reader refuses it, naming the sheet meant (``reader.unknown_sheets``), and the workbook
loader parses such sheets so that their header row can be looked at (other unknown sheets are
never opened).
"""

from __future__ import annotations

import difflib

from .. import schema

# Other names engineers give a sheet (our own list): an unknown sheet named so is the known one.
SYNONYMS = {
    "study": ("settings", "setting", "setup", "options"),
    "buses": ("busses", "nodes", "bus_list"),
    "sources": ("utility", "utilities", "supply", "supplies", "grid"),
    "transformers": ("xfmr", "xfmrs", "xfmers", "trafo", "trafos", "tx"),
    "cables": ("feeders", "feeder", "conductors", "conductor", "lines", "wires"),
    "impedances": ("reactors", "reactor", "busway", "busways", "ties", "tie"),
    "machines": ("motors", "motor", "generators", "generator", "gens", "rotating"),
    "grounding_transformers": (
        "grounding",
        "grounding_banks",
        "grounding_bank",
        "zigzag",
        "zigzags",
        "zig_zag",
        "grounding_transformer",
    ),
    "three_winding_transformers": (
        "three_winding",
        "three_windings",
        "3_winding",
        "3_winding_transformers",
        "3w_transformers",
        "autotransformers",
        "autotransformer",
        "auto_transformers",
        "three_winding_transformer",
    ),
    "inverters": (
        "inverter",
        "ibr",
        "ibrs",
        "pv",
        "solar",
        "batteries",
        "battery",
        "bess",
        "converters",
        "converter",
    ),
    "cases": ("scenarios", "scenario", "variants", "variations"),
}
KNOWN = tuple(s.name for s in schema.SHEETS)


def meant_by_name(name: str) -> str | None:
    """The known sheet ``name`` is close to (capitals, singular or plural, a small edit, a usual
    other name), or None."""
    key = "_".join(name.strip().lower().replace("-", " ").replace("_", " ").split())
    meant = None
    for sheet in KNOWN:
        singular = sheet[:-2] if sheet.endswith("es") else sheet[:-1]
        forms = {sheet, singular, sheet.rstrip("s"), sheet + "s"} | set(SYNONYMS[sheet])
        if key in forms or key.rstrip("s") in forms:
            meant = sheet
    if meant is None:
        near = difflib.get_close_matches(key, KNOWN, n=1, cutoff=0.75)
        meant = near[0] if near else None
    return meant


class ReadSheets:
    """The sheet names (stripped, lower case) a workbook loader parses: the known sheets and
    the names close to one."""

    def __contains__(self, name: object) -> bool:
        return isinstance(name, str) and (name in KNOWN or meant_by_name(name) is not None)
