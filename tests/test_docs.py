"""The README's input reference is the one generated from the schema."""

from pathlib import Path

from faultcalc.schema.docs import input_reference_markdown

REPO = Path(__file__).resolve().parents[1]


def test_readme_input_reference_is_current():
    readme = (REPO / "README.md").read_text(encoding="utf-8")
    assert input_reference_markdown() in readme, "run python scripts/update_readme.py"


def test_readme_starts_with_the_job_and_the_two_commands():
    readme = (REPO / "README.md").read_text(encoding="utf-8")
    head = readme[:3000]
    assert "Electrical engineers" in head
    assert head.index("make demo") < head.index("make test")
