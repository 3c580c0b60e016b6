"""Regenerate the input reference in README.md from the schema: python scripts/update_readme.py"""

from pathlib import Path

from faultcalc.schema.docs import replace_reference

README = Path(__file__).resolve().parents[1] / "README.md"

if __name__ == "__main__":
    README.write_text(replace_reference(README.read_text(encoding="utf-8")), encoding="utf-8")
    print("README.md input reference updated")
