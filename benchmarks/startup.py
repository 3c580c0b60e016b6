"""Start-up benchmark: how long the command line takes to answer before any work.

Each command runs in a fresh Python process, the best of --runs (default 5) wall-clock runs
(the machine's noise is a large share of a sub-second figure):

  bare click       python -c "import click": the floor for any click program
  --help           faultcalc --help
  --version        faultcalc --version
  study --help     faultcalc study --help
  import API       python -c "import faultcalc": the package without its heavy names
  import engine    python -c "from faultcalc import run_study, read_system" and a first
                   use of both names (numpy, pandas, scipy, openpyxl and pyarrow imported)

The commands run as ``python -c "from faultcalc.cli import main; main()" ARGS``, the console
script's own code. ``--source DIR`` times the package in DIR instead of the installed one:
Python then starts with -S (no site processing, so an editable install's import hook does not
take over) and DIR and this interpreter's site-packages on PYTHONPATH. To compare two
checkouts, give --source for both (for example an earlier commit exported with ``git archive``):

    python benchmarks/startup.py
    git archive HEAD~5 faultcalc | tar -x -C /tmp/before
    python benchmarks/startup.py --source /tmp/before; python benchmarks/startup.py --source .
"""

from __future__ import annotations

import argparse
import os
import site
import subprocess
import sys
import tempfile
import time

CLI = "from faultcalc.cli import main; main()"
CASES = (
    ("bare click", ["-c", "import click"]),
    ("--help", ["-c", CLI, "--help"]),
    ("--version", ["-c", CLI, "--version"]),
    ("study --help", ["-c", CLI, "study", "--help"]),
    ("import API", ["-c", "import faultcalc"]),
    (
        "import engine",
        ["-c", "from faultcalc import read_system, run_study; read_system.__doc__, run_study"],
    ),
)


def best_of(python: list[str], args: list[str], runs: int, env: dict[str, str], cwd) -> float:
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        subprocess.run([*python, *args], env=env, cwd=cwd, check=True, stdout=subprocess.DEVNULL)
        times.append(time.perf_counter() - start)
    return min(times)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--runs", type=int, default=5)
    parser.add_argument("--source", help="a folder holding another faultcalc package to time")
    options = parser.parse_args()
    env = dict(os.environ)
    python = [sys.executable]
    if options.source:
        python.append("-S")
        paths = [os.path.abspath(options.source), *site.getsitepackages()]
        env["PYTHONPATH"] = os.pathsep.join(paths)
    cwd = tempfile.mkdtemp()  # empty: ``python -c`` puts the working folder first on sys.path
    where = subprocess.run(
        [*python, "-c", "import faultcalc; print(faultcalc.__file__)"],
        env=env,
        cwd=cwd,
        check=True,
        capture_output=True,
        text=True,
    ).stdout.strip()
    print(f"faultcalc from {where}; best of {options.runs} runs, wall clock")
    for name, args in CASES:
        print(f"  {name:<14} {best_of(python, args, options.runs, env, cwd):6.3f} s")
    os.rmdir(cwd)


if __name__ == "__main__":
    main()
