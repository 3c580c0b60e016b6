"""Redraw the README's pictures from the bundled invented samples:
python scripts/make_pictures.py"""

from pathlib import Path

from faultcalc import read_system, run_study, sample_path, write_diagram

IMAGES = Path(__file__).resolve().parents[1] / "docs" / "images"

if __name__ == "__main__":
    IMAGES.mkdir(parents=True, exist_ok=True)
    system = read_system(sample_path("double_ended_480v"))
    target = IMAGES / "one-line-double-ended-480v.png"
    write_diagram(system, run_study(system), target, overwrite=True)
    print(f"{target} drawn")
