"""The README's input reference, generated from the schema so that the two cannot drift."""

from __future__ import annotations

from .. import schema
from .template import column_help, sheet_rules

START = (
    "<!-- input-reference:start (generated from faultcalc/schema/__init__.py; "
    "run python scripts/update_readme.py) -->"
)
END = "<!-- input-reference:end -->"


def _escape(text: str) -> str:
    return text.replace("|", "\\|")


def input_reference_markdown() -> str:
    lines = []
    for sheet in schema.SHEETS:
        required = "required sheet" if sheet.required else "optional sheet"
        lines.append(f"#### `{sheet.name}` ({required})")
        lines.append("")
        lines.append(sheet.help + " " + " ".join(sheet_rules(sheet)))
        lines.append("")
        entries = sheet.columns
        lines.append("| column | unit | meaning |")
        lines.append("| --- | --- | --- |")
        for column in entries:
            lines.append(
                f"| `{column.name}` | {column.unit or ''} | {_escape(column_help(column))} |"
            )
        lines.append("")
        if sheet is schema.STUDY:
            lines.append("Settings:")
            lines.append("")
            lines.append("| setting | unit | meaning |")
            lines.append("| --- | --- | --- |")
            for s in schema.SETTINGS:
                lines.append(f"| `{s.name}` | {s.unit or ''} | {_escape(column_help(s))} |")
            lines.append("")
    return "\n".join([START, "", *lines, END])


def replace_reference(readme: str) -> str:
    """README text with the generated block put between its markers."""
    head, _, rest = readme.partition(START)
    _, _, tail = rest.partition(END)
    if not rest:
        raise ValueError("README has no input-reference markers")
    return head + input_reference_markdown() + tail
