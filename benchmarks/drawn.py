"""What the drawn outputs cost: the one-line's sheets and the study report, on the synthetic
radial networks of generate.py (invented data: every bus at 13.8 kV, motors on a tenth).

    python benchmarks/drawn.py [--sizes 150 2000]

Prints, per size: the study, the diagram's layout (draw_pages) and its PDF, the report, and
their page counts. No target in an issue; the figures go in the notes.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from generate import generate  # noqa: E402

from faultcalc import read_system, run_study  # noqa: E402
from faultcalc.diagram import draw_pages, save_pages  # noqa: E402
from faultcalc.report.pdf import write_report_to  # noqa: E402


def timed(action):
    start = time.perf_counter()
    value = action()
    return value, time.perf_counter() - start


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", type=int, nargs="+", default=[150, 2000])
    args = parser.parse_args()
    print("buses  study s  layout s  sheets  diagram PDF s  report s  report pages")
    for n in args.sizes:
        with tempfile.TemporaryDirectory() as tmp:
            folder = generate(n, Path(tmp, "net"))
            system = read_system(folder)
            result, study_s = timed(lambda system=system: run_study(system))
            pages, layout_s = timed(lambda system=system, result=result: draw_pages(system, result))
            _, pdf_s = timed(lambda pages=pages, tmp=tmp: save_pages(pages, Path(tmp, "d.pdf")))
            report = Path(tmp, "r.pdf")
            count, report_s = timed(
                lambda result=result, pages=pages, report=report: write_report_to(
                    result, report, sheets=pages
                )
            )
            print(
                f"{n:>5}  {study_s:7.2f}  {layout_s:8.2f}  {len(pages):6d}  {pdf_s:13.2f}  "
                f"{report_s:8.2f}  {count:12d}"
            )


if __name__ == "__main__":
    main()
