"""Many studies at once: a folder or a list of inputs, each its own study and outputs, and one
summary table across them (#17 item 5).

Each input (a workbook, or a folder of CSV sheets) is read, studied and written by
:func:`study_one` in a worker process of a Dask cluster: a local one on this machine's cores by
default, or the cluster whose scheduler address is given. A failure of one input (bad input,
an output refused, a worker lost) is its row of the summary; the others go on. Nothing here
computes: each study is :func:`faultcalc.run_study`, each output :func:`faultcalc.write_results`.
"""

from __future__ import annotations

import time
import traceback
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field
from pathlib import Path

# The columns of the summary, one row per input, in the order the inputs were given.
SUMMARY_COLUMNS = (
    "input",  # the input's path as given
    "status",  # ok, or failed
    "buses",  # buses studied (blank when failed)
    "max_ka",  # largest available fault current at any bus, any fault type, any case
    "max_bus",  # where
    "over_rating",  # devices whose duty exceeds their rating in any case
    "warnings",  # warnings of the input and the study
    "results",  # the results workbook written
    "seconds",  # time of this input's read, study and writing, in its worker
    "message",  # why it failed (the located problems), or blank
)
SUMMARY_NAME = "fleet-summary.csv"


def inputs_in(paths: Iterable[str | Path]) -> list[Path]:
    """The inputs named by ``paths``: a workbook, a folder of CSV sheets (it holds
    ``buses.csv``), or a folder of such inputs (its ``.xlsx`` files and CSV folders, in name
    order).

    >>> inputs_in([])
    []
    """
    found: list[Path] = []
    for given in paths:
        path = Path(given)
        if path.is_dir() and not (path / "buses.csv").exists():
            found += sorted(
                p
                for p in path.iterdir()
                if (p.suffix.lower() == ".xlsx" and not p.name.startswith("~$"))
                or (p.is_dir() and (p / "buses.csv").exists())
            )
        else:
            found.append(path)
    return found


def _neutral(text):
    """Text that a spreadsheet would take for a formula, with the bus CSV's text prefix."""
    from .report.csvout import FORMULA_STARTS, TEXT_PREFIX

    return TEXT_PREFIX + text if isinstance(text, str) and text.startswith(FORMULA_STARTS) else text


def _output_stem(path: Path, taken: set[str]) -> str:
    """A results name for this input, different from every other input's."""
    stem = path.stem if path.suffix else path.name
    name, k = stem, 2
    while name.lower() in taken:
        name, k = f"{stem}-{k}", k + 1
    taken.add(name.lower())
    return name


def study_one(input_path: str, output: str, json_path: str | None, overwrite: bool) -> dict:
    """Read, study and write one input; its summary row (never raises: a failure is a row)."""
    start = time.perf_counter()
    row = dict.fromkeys(SUMMARY_COLUMNS, "")
    row.update(input=input_path, status="failed")
    try:
        from . import ResultFiles, read_system, run_study
        from .errors import InputError, OutputError

        files = ResultFiles(output, json_path, input_path=input_path, overwrite=overwrite)
        system = read_system(input_path)
        result = run_study(system)
        files.write(result)
        top = result.maximum.sort_values("max_ka", ascending=False).iloc[0]
        row.update(
            status="ok",
            buses=len(result.buses),
            max_ka=float(top["max_ka"]),
            max_bus=str(top["bus"]),
            over_rating=len(result.over_rating()),
            warnings=len(result.warnings),
            results=output,
        )
    except (InputError, OutputError) as exc:
        row["message"] = str(exc)
    except Exception as exc:  # noqa: BLE001 - one input's failure must not stop the others
        last = traceback.extract_tb(exc.__traceback__)[-1]
        row["message"] = (
            f"internal error {type(exc).__name__}: {exc} (at {Path(last.filename).name} line "
            f"{last.lineno}); please report it with the input"
        )
    row["seconds"] = round(time.perf_counter() - start, 3)
    return row


@dataclass
class FleetResult:
    """The summary of a fleet run (a pandas DataFrame of SUMMARY_COLUMNS) and where it is."""

    summary: object
    summary_path: Path
    failed: int = 0
    seconds: float = 0.0
    workers: int = 0
    rows: list = field(default_factory=list)


def run_fleet(
    paths: Iterable[str | Path],
    out_dir: str | Path,
    *,
    json: bool = False,
    overwrite: bool = False,
    workers: int | None = None,
    scheduler: str | None = None,
    on_done: Callable[[dict], None] | None = None,
) -> FleetResult:
    """Study every input of ``paths`` (see :func:`inputs_in`) into ``out_dir``, in parallel.

    Each input gets ``<out_dir>/<name>-results.xlsx`` (and ``.json`` with ``json``; above
    5,000 buses the summary workbook and its bus CSV, as ``faultcalc study`` writes them), and
    ``<out_dir>/fleet-summary.csv`` one row per input (SUMMARY_COLUMNS).

    Parameters
    ----------
    workers : int, optional
        Worker processes of the local Dask cluster (default: one per core).
    scheduler : str, optional
        The address of a running Dask scheduler (``tcp://host:8786``) to run on instead.
    on_done : callable, optional
        Called with each input's summary row as it finishes (progress).

    Raises
    ------
    ValueError
        No input found.
    """
    import os

    import pandas as pd
    from dask.distributed import Client, LocalCluster, as_completed

    from .report.files import staged

    inputs = inputs_in(paths)
    if not inputs:
        raise ValueError("no input found: give workbooks, CSV folders or folders of them")
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    taken: set[str] = set()
    jobs = []
    for path in inputs:
        stem = _output_stem(path, taken)
        jobs.append(
            (
                str(path),
                str(out / f"{stem}-results.xlsx"),
                str(out / f"{stem}-results.json") if json else None,
                overwrite,
            )
        )
    start = time.perf_counter()
    if scheduler:
        client, cluster = Client(scheduler), None
    else:
        n = workers or os.cpu_count() or 1
        cluster = LocalCluster(
            n_workers=n, threads_per_worker=1, processes=True, dashboard_address=None
        )
        client = Client(cluster)
    rows: dict[int, dict] = {}
    try:
        n_workers = len(client.scheduler_info()["workers"])
        futures = [client.submit(study_one, *job, pure=False) for job in jobs]
        index = {f.key: k for k, f in enumerate(futures)}
        for future in as_completed(futures):
            k = index[future.key]
            try:
                row = future.result()
            except Exception as exc:  # noqa: BLE001 - a worker lost: this input's row
                row = dict.fromkeys(SUMMARY_COLUMNS, "")
                row.update(input=jobs[k][0], status="failed", message=f"worker failed: {exc}")
            rows[k] = row
            if on_done is not None:
                on_done(row)
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
    table = pd.DataFrame([rows[k] for k in range(len(jobs))], columns=list(SUMMARY_COLUMNS))
    summary_path = out / SUMMARY_NAME
    written = table.copy()
    for column in ("input", "max_bus", "results", "message"):  # text from names never acts
        written[column] = [_neutral(v) for v in written[column]]
    with staged(summary_path) as (temp,):
        written.to_csv(temp, index=False)
    return FleetResult(
        table,
        summary_path,
        failed=int((table["status"] != "ok").sum()),
        seconds=time.perf_counter() - start,
        workers=n_workers,
        rows=[rows[k] for k in range(len(jobs))],
    )
