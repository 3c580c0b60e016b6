"""Redraw the README's pictures from the bundled invented samples:
python scripts/make_pictures.py

The report page is found with pypdf (the test extra) and rendered with poppler's pdftoppm
(apt-get install poppler-utils), tools for this script only; faultcalc itself needs neither.
"""

import subprocess
import tempfile
from pathlib import Path

from pypdf import PdfReader

from faultcalc import read_system, run_study, sample_path, write_diagram, write_results

IMAGES = Path(__file__).resolve().parents[1] / "docs" / "images"
REPORT_PAGE = "Maximum available, kA"  # the report page pictured: the summary table


def report_page(system, result, target: Path) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        written = write_results(
            result, Path(tmp, "r.xlsx"), report_path=Path(tmp, "r.pdf"), system=system
        )
        pages = PdfReader(written.report).pages
        number = next(
            i
            for i, p in enumerate(pages, start=1)
            if REPORT_PAGE in " ".join(p.extract_text().split())
        )
        stem = Path(tmp, "page")
        subprocess.run(
            [
                "pdftoppm",
                "-png",
                "-r",
                "80",
                "-f",
                str(number),
                "-l",
                str(number),
                "-singlefile",
                written.report,
                stem,
            ],
            check=True,
        )
        target.write_bytes(stem.with_suffix(".png").read_bytes())


if __name__ == "__main__":
    IMAGES.mkdir(parents=True, exist_ok=True)
    system = read_system(sample_path("double_ended_480v"))
    result = run_study(system)
    target = IMAGES / "one-line-double-ended-480v.png"
    write_diagram(system, result, target, overwrite=True)
    print(f"{target} drawn")
    system = read_system(sample_path("plant_480v"))  # its cases and near-rating devices
    target = IMAGES / "report-page-plant-480v.png"
    report_page(system, run_study(system), target)
    print(f"{target} drawn")
