"""The basis of a study in words (label, text): the workbook's basis sheet and the report's
basis section print the same list."""

from __future__ import annotations

from ..results import StudyResult


def basis_items(result: StudyResult) -> list[tuple[str, str]]:
    """What the study was calculated from and how, one (label, text) per line."""
    b = result.basis
    s = b.settings
    return [
        ("Input file", b.input_name),
        ("Input SHA-256", b.input_sha256),
        ("Calculated at", b.calculated_at),
        ("Tool", f"{b.tool_name} {b.tool_version}"),
        ("MVA base", f"{s.base_mva:g} MVA"),
        ("Frequency", f"{s.frequency_hz} Hz"),
        (
            "Prefault voltage",
            f"{s.prefault_pu:g} per-unit of each bus's nominal kV"
            if s.prefault_voltage == "nominal"
            else "the open-circuit (no-load) voltage at each bus, every source and machine at "
            f"{s.prefault_pu:g} per-unit behind its impedance (the prefault_pu column)",
        ),
        (
            "Fault impedance",
            f"{s.fault_ohm:g} ohm" + (" (bolted faults)" if not s.fault_ohm else ""),
        ),
        (
            "Conductor temperature",
            f"{s.conductor_temp_c:g} C for cable resistances taken from "
            "the tables; typed resistances used as typed",
        ),
        ("Calculation method", f"{s.method} (X/R for asymmetry and duty: {s.xr_method})"),
        ("Method", b.method),
        ("Warnings", f"{len(result.warnings)} (see sheet 'Warnings')"),
    ]
