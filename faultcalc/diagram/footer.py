"""The title block under every page: the study's title, its basis, the page and what it holds,
the notes and every caution (SAFETY.md: a page handed on alone still carries them)."""

from __future__ import annotations

from .parts import INK, MARGIN, NAME_SIZE, SIZE
from .shapes import LINE_PT, Line, Text, text_width

FOOTER_MIN_WIDTH = 6.5 * 72  # the cautions stay readable on a letter page's width


def wrapped(text: str, width: float, size: float, bold: bool = False) -> list[str]:
    lines, line = [], ""
    for word in text.split():
        trial = f"{line} {word}".strip()
        if line and text_width(trial, size, bold) > width:
            lines.append(line)
            line = word
        else:
            line = trial
    return [*lines, line] if line else lines


def footer_lines(
    width: float, system, result, notes, page_lines=()
) -> list[tuple[str, float, bool]]:
    """The title block's lines for a page ``width`` points wide (text, size, bold)."""
    from ..cautions import CAUTIONS

    width = max(width, FOOTER_MIN_WIDTH + 2 * MARGIN) - 2 * MARGIN
    title = system.settings.title or "One-line diagram"
    lines = [(t, NAME_SIZE, True) for t in wrapped(title, width, NAME_SIZE, True)]
    for text in page_lines:
        lines += [(t, SIZE, True) for t in wrapped(text, width, SIZE, True)]
    if result is not None:
        b = result.basis
        basis = (
            f"Calculated {b.calculated_at} by {b.tool_name} {b.tool_version}, method "
            f"{b.settings.method} (see the results workbook's basis); input "
            f"{b.input_name or '-'}, SHA-256 {b.input_sha256 or '-'}. Currents are the "
            "largest over the base case and the cases; X/R of the base case."
        )
    else:
        basis = "Topology only: no study figures."
    lines += [(t, SIZE, False) for t in wrapped(basis, width, SIZE)]
    for note in notes:
        lines += [(t, SIZE, False) for t in wrapped(f"Note: {note}", width, SIZE)]
    for caution in CAUTIONS:
        lines += [(t, SIZE, False) for t in wrapped(caution, width, SIZE)]
    return lines


def footer_height(lines) -> float:
    return 10 + sum(size * LINE_PT for _, size, _ in lines) + MARGIN


def add_footer(drawing, lines) -> None:
    """Put the title block ``lines`` under the drawing (which grows to hold it)."""
    drawing.width = max(drawing.width, FOOTER_MIN_WIDTH + 2 * MARGIN)
    y = drawing.height + 4
    drawing.lines.append(Line(MARGIN, y, drawing.width - MARGIN, y, 0.8, INK, owner="footer"))
    y += 6
    for text, size, bold in lines:
        drawing.texts.append(Text(MARGIN, y, text, size, bold, INK, "footer"))
        y += size * LINE_PT
    drawing.height = y + MARGIN
