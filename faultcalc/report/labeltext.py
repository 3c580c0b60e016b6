"""The words of a service-equipment label (NFPA 70 110.24 asks for the maximum available fault
current and the date it was calculated): one list of lines that the workbook's label sheet and
the report's label page both print, in a layout of our own."""

from __future__ import annotations

from dataclasses import dataclass

from ..results import StudyResult
from .words import FAULT_WORDS, case_words


@dataclass(frozen=True)
class Line:
    text: str  # "" for a blank line
    size_pt: float
    bold: bool = False


def label_lines(result: StudyResult, bus: str) -> list[Line]:
    """The label of service bus ``bus``, line by line."""
    label = result.labels[result.labels.bus == bus].iloc[0]
    left_out = result.label_cases_left_out
    counted = len(result.cases) - len(left_out)
    over = (
        f" over the base case and {counted} study case(s)"
        if counted
        else (" in the base case" if result.cases else "")
    )
    b = result.basis
    lines = [
        Line("SERVICE EQUIPMENT", 16, True),
        Line("Maximum available fault current", 14, True),
        Line(f"{label.label_ka:.1f} kA", 40, True)
        if label.label_ka == label.label_ka
        else Line("not computed", 40, True),
        Line(
            "symmetrical RMS, the largest of three-phase, line-to-ground, line-to-line and double "
            "line-to-ground faults" + over,
            10,
        ),
        Line(
            f"Set by a {FAULT_WORDS[label.label_fault]} fault in {case_words(label.label_case)}."
            if label.label_fault
            else "The inverter iteration did not converge for a fault here: no figure to mark "
            "(see the study's warnings).",
            11,
            True,
        ),
    ]
    if left_out:
        lines.append(
            Line(
                "Left out of this figure (temporary set-ups, label = no on the cases sheet): "
                + ", ".join(f"'{c}'" for c in left_out),
                10,
            )
        )
    lines += [
        Line("", 11),
        Line(f"Equipment: {bus}  {label.description}", 12),
        Line(f"Nominal voltage: {label.kv * 1000:g} V", 12),
        Line(f"Date of calculation: {b.calculated_at[:10]}", 12, True),
        Line(f"Study: {b.settings.title or 'short-circuit study'}", 10),
        Line(
            f"Calculated with {b.tool_name} {b.tool_version} from {b.input_name} (SHA-256 "
            f"{b.input_sha256[:16]}...)",
            9,
        ),
        Line("", 11),
        Line(
            "Re-mark this equipment whenever a modification of the electrical system changes the "
            "available fault current (NFPA 70, 110.24(B)).",
            11,
            True,
        ),
        Line(
            "Confirm the source data with the serving utility. For review by a qualified "
            "engineer; the local code and the authority having jurisdiction govern.",
            9,
        ),
        Line("", 11),
        Line("Checked by: ______________________   Date: ____________", 11),
    ]
    return lines
