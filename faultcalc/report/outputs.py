"""Output files, as the command line writes them and an API caller can: checked before the
work that fills them, written whole or not at all.

The rules every output follows:

* the input is never an output (nor, for a CSV folder input, a ``.csv`` file in it);
* a file that exists is replaced only with ``overwrite``, and only if it existed when the
  files were checked: one that appears while the study runs is kept, and nothing is written;
* each output goes to a temporary file beside its target and all are renamed into place
  together once every one is finished (``report/files.py``): a failure or a stop leaves no
  partial file and no change.

For a study's results (:class:`ResultFiles`, :func:`write_results`): above BIG_OUTPUT_BUSES
buses the workbook is a summary (:meth:`faultcalc.StudyResult.summary`) and every bus goes to
``<results>-buses.csv`` beside it (:func:`bus_csv_path`). Why 5,000: a full workbook costs
about 1 ms per bus to write (10,000 buses: 11 s, most of the run), the CSV about 4
microseconds per bus, and nobody reviews thousands of buses by scrolling a workbook. A bus
CSV left beside the workbook by an earlier, larger study is a target too: replaced by a large
study, removed by a smaller one (both only with ``overwrite``), so that no CSV is left beside
a workbook it does not belong to.

This module imports the writers (openpyxl, pyarrow) only when it writes.
"""

from __future__ import annotations

import contextlib
import os
import threading
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path

from ..choices import CABLE_TOLERANCE_PCT
from ..errors import OutputError
from ..progress import Progress, reporter
from .files import same_file, staged

BIG_OUTPUT_BUSES = 5_000
# Contributions: above this many rows every row goes to ``<results>-contributions.csv`` and
# the workbook's Contributions sheet holds whole faulted buses, those of the largest fault
# currents, up to this many rows (a contribution row costs about 0.7 ms to build and save in
# the workbook, measured: 10,000 rows about 7 s, so 5,000 about 3.5 s). The report prints at most
# REPORT_CONTRIBUTION_ROWS of them (about 40 pages).
BIG_CONTRIBUTION_ROWS = 5_000
REPORT_CONTRIBUTION_ROWS = 2_000
# The workbook's One-line sheet is drawn for studies up to this many buses (about what one
# large sheet holds legibly, see faultcalc.diagram); a larger one-line is in the report.
ONE_LINE_SHEET_BUSES = 150


def bus_csv_path(output: str | Path) -> Path:
    """The companion of a results workbook that holds every bus of a large study.

    >>> bus_csv_path("out/plant-results.xlsx").as_posix()
    'out/plant-results-buses.csv'
    """
    output = Path(output)
    return output.with_name(output.stem + "-buses.csv")


def contributions_csv_path(output: str | Path) -> Path:
    """The companion of a results workbook that holds every contribution row when they are
    more than BIG_CONTRIBUTION_ROWS.

    >>> contributions_csv_path("out/plant-results.xlsx").as_posix()
    'out/plant-results-contributions.csv'
    """
    output = Path(output)
    return output.with_name(output.stem + "-contributions.csv")


def _is_input(target: Path, input_path: Path | None) -> bool:
    if input_path is None:
        return False
    return same_file(target, input_path) or (
        input_path.is_dir()
        and same_file(target.parent, input_path)
        and target.suffix.lower() == ".csv"
    )


def _check_targets(input_path: Path | None, targets: list[Path], overwrite: bool) -> list[Path]:
    """Refuse the input as an output, and existing files unless ``overwrite``.

    Returns the targets that exist now: the only ones the final placement may replace (a file
    that appears at another target while the work runs is kept, and the writing fails).
    """
    existing = []
    for target in targets:
        if _is_input(target, input_path):
            raise OutputError(f"refusing to write {target}: it is the input")
        if target.exists() and target.is_dir():
            raise OutputError(f"{target} is a folder; give a file name")
        if os.path.lexists(target) and not overwrite:
            raise OutputError(
                f"{target} exists already; add --overwrite to replace it, or choose another name"
            )
        if os.path.lexists(target):
            existing.append(target)
    return existing


class OutputFiles:
    """Files to be written, checked now, before the work that fills them.

    Parameters
    ----------
    *paths : str or Path
        The files.
    input_path : str or Path, optional
        The input they are made from: refused as an output.
    overwrite : bool, default False
        Replace files that exist now (and only those).
    on_placed : callable, optional
        Called once every file is in place (stop signals, held while the files are placed, are
        let through after it: a command line tells by it that its outputs were written).

    Raises
    ------
    OutputError
        A path is the input, exists already (without ``overwrite``) or is a folder.

    Examples
    --------
    >>> import tempfile
    >>> from faultcalc import read_system, sample_path, write_netlist
    >>> tmp = tempfile.TemporaryDirectory()
    >>> files = OutputFiles(Path(tmp.name, "fault.cir"), input_path=sample_path())  # checked
    >>> text = write_netlist(read_system(sample_path()), "SWBD-1", "slg", files)
    >>> Path(tmp.name, "fault.cir").read_text() == text
    True
    >>> tmp.cleanup()
    """

    def __init__(
        self,
        *paths: str | Path,
        input_path: str | Path | None = None,
        overwrite: bool = False,
        on_placed: Callable[[], None] | None = None,
    ):
        self.paths = [Path(p) for p in paths]
        self.input_path = None if input_path is None else Path(input_path)
        self.overwrite = overwrite
        self.on_placed = on_placed
        self._existing = _check_targets(self.input_path, self.paths, overwrite)

    def staged(self):
        """A context manager yielding one temporary path per file; on success each is moved
        to its file (replacing only the files that existed when checked)."""
        return staged(*self.paths, replace=self._existing, on_placed=self.on_placed)


def _files(output: str | Path | OutputFiles, input_path, overwrite: bool) -> OutputFiles:
    if isinstance(output, OutputFiles):
        return output
    return OutputFiles(output, input_path=input_path, overwrite=overwrite)


@dataclass(frozen=True)
class WrittenResults:
    """What :meth:`ResultFiles.write` wrote."""

    workbook: Path  # the results workbook (a summary when ``bus_csv`` is set)
    json: Path | None  # the JSON, when asked for
    report: Path | None  # the study report (PDF), when asked for
    bus_csv: Path | None  # every bus, when the study had more than ``big_above_buses``
    removed: Path | None  # a bus CSV of an earlier, larger study, removed
    big_above_buses: int  # the number of buses above which the workbook is a summary
    # every contribution row, when they were more than BIG_CONTRIBUTION_ROWS
    contributions_csv: Path | None = None
    # every companion CSV of an earlier study removed (the bus CSV first, as in ``removed``)
    removed_files: tuple[Path, ...] = ()

    @property
    def summary(self) -> bool:
        """True when the workbook is a summary and every bus is in ``bus_csv``."""
        return self.bus_csv is not None


class ResultFiles:
    """The files of one study's results, checked when made (before the study runs, so that a
    refused name costs nothing) and written once by :meth:`write`.

    Parameters
    ----------
    output : str or Path
        The results workbook (``.xlsx``); ``<output>-buses.csv`` beside it holds every bus of
        a study of more than BIG_OUTPUT_BUSES buses, and ``<output>-contributions.csv`` every
        contribution row when they are more than BIG_CONTRIBUTION_ROWS.
    json_path : str or Path, optional
        Also write the results as JSON.
    report_path : str or Path, optional
        Also write the study report (``.pdf``): title page, cautions, basis, the one-line
        diagram, the tables and the service labels (:meth:`write` then needs the system).
    input_path : str or Path, optional
        The study's input: refused as an output.
    overwrite : bool, default False
        Replace files that exist now (and only those); without it an existing workbook, JSON
        or companion CSV is refused.
    on_placed : callable, optional
        Called once every file is in place (see :class:`OutputFiles`).

    Raises
    ------
    OutputError
        A path is the input, exists already (without ``overwrite``) or is a folder; the JSON
        is the workbook or a companion CSV.
    """

    def __init__(
        self,
        output: str | Path,
        json_path: str | Path | None = None,
        *,
        report_path: str | Path | None = None,
        input_path: str | Path | None = None,
        overwrite: bool = False,
        on_placed: Callable[[], None] | None = None,
    ):
        self.on_placed = on_placed
        self.output = Path(output)
        self.json_path = None if json_path is None else Path(json_path)
        self.report_path = None if report_path is None else Path(report_path)
        if self.report_path is not None and self.report_path.suffix.lower() != ".pdf":
            raise OutputError(f"the report is written as .pdf; got {self.report_path.name}")
        self.input_path = None if input_path is None else Path(input_path)
        self.overwrite = overwrite
        self.bus_csv = bus_csv_path(self.output)
        self.contributions_csv = contributions_csv_path(self.output)
        for companion, what in ((self.bus_csv, "bus"), (self.contributions_csv, "contributions")):
            if self.json_path is not None and same_file(self.json_path, companion):
                raise OutputError(
                    f"the JSON file cannot be {companion.name}: that name is for the {what} CSV"
                )
        # A companion CSV left by an earlier run is a target too: replaced by a large study,
        # removed by a smaller one, so that none is left beside a workbook it does not belong
        # to.
        self._companion = [c for c in (self.bus_csv, self.contributions_csv) if os.path.lexists(c)]
        named = [t for t in (self.output, self.json_path, self.report_path) if t]
        self._existing = _check_targets(self.input_path, named + self._companion, overwrite)
        for i, one in enumerate(named):
            for other in named[i + 1 :] + self._companion:
                if same_file(one, other):
                    raise OutputError(
                        f"{one.name} is named for two outputs: the results workbook, the JSON "
                        "and the report must be different files"
                    )

    def write(self, result, *, system=None, progress: Progress | None = None) -> WrittenResults:
        """Write ``result`` (a :class:`faultcalc.StudyResult`): the workbook, the JSON and the
        report if asked for, and for a large study the bus CSV; all or none.

        ``system`` is the studied :class:`faultcalc.System`: the report draws its one-line
        (required with a report). ``progress`` is told the phase "writing the results" and
        its steps.
        """
        from .csvout import write_bus_csv_to, write_contributions_csv_to
        from .jsonout import write_json_to
        from .workbook import write_workbook_to

        if self.report_path is not None and system is None:
            raise ValueError("a report draws the one-line: give the studied system")
        big_above = BIG_OUTPUT_BUSES
        big = len(result.buses) > big_above
        many = (
            result.contributions is not None and len(result.contributions) > BIG_CONTRIBUTION_ROWS
        )
        targets = [self.output] + [t for t in (self.json_path, self.report_path) if t]
        written = [t for t, on in ((self.bus_csv, big), (self.contributions_csv, many)) if on]
        if written:
            _check_targets(self.input_path, written, self.overwrite)
            targets += written
        stale = [c for c in self._companion if c not in written]
        progress = reporter(progress)
        with (
            progress.phase("writing the results"),
            staged(
                *targets, replace=self._existing, remove=stale, on_placed=self.on_placed
            ) as temps,
        ):
            one_line = system is not None and len(result.buses) <= ONE_LINE_SHEET_BUSES
            progress.plan(len(targets) + one_line)
            stop = threading.Event()

            def companions() -> None:  # the large CSVs: Arrow and the disk let go of the
                if big:  # interpreter, so they are written beside the workbook, not after
                    write_bus_csv_to(result, temps[targets.index(self.bus_csv)], stop)
                if many and not stop.is_set():
                    write_contributions_csv_to(
                        result, temps[targets.index(self.contributions_csv)], stop
                    )

            # a failure on either side is raised here, after both have stopped (the CSVs
            # are told to), and staged() then removes every temporary file
            with ThreadPoolExecutor(1) as beside, _stopping(stop):
                csvs = beside.submit(companions) if big or many else None
                sheets = _sheets(system, result) if self.report_path is not None else None
                picture = None
                if one_line:
                    progress.step("one-line")
                    picture = _png(sheets or _sheets(system, result))
                progress.step("workbook" + (" (summary)" if big else ""))
                write_workbook_to(
                    result,
                    temps[0],
                    summary_of=self.bus_csv.name if big else None,
                    diagram_png=picture,
                    contributions_in=self.contributions_csv.name if many else None,
                )
                _failed_early(csvs)
                if self.json_path:
                    progress.step("JSON")
                    write_json_to(result, temps[1])
                    _failed_early(csvs)
                if self.report_path:
                    from .pdf import write_report_to

                    progress.step("report")
                    write_report_to(
                        result,
                        temps[targets.index(self.report_path)],
                        sheets=sheets,
                        summary_of=self.bus_csv.name if big else None,
                        contributions_in=self.contributions_csv.name if many else None,
                    )
                if big:
                    progress.step("every bus as CSV")
                if many:
                    progress.step("every contribution as CSV")
                if csvs is not None:
                    csvs.result()
        return WrittenResults(
            workbook=self.output,
            json=self.json_path,
            report=self.report_path,
            bus_csv=self.bus_csv if big else None,
            removed=self.bus_csv if self.bus_csv in stale else None,
            big_above_buses=big_above,
            contributions_csv=self.contributions_csv if many else None,
            removed_files=tuple(stale),
        )


def _failed_early(csvs) -> None:
    """Raise the CSVs' error now if they have already failed (no need to write the rest)."""
    if csvs is not None and csvs.done() and csvs.exception() is not None:
        csvs.result()


@contextlib.contextmanager
def _stopping(stop: threading.Event):
    """Set ``stop`` when the body raises (an error or an interrupt), then raise on."""
    try:
        yield
    except BaseException:
        stop.set()
        raise


def _sheets(system, result) -> list:
    """The one-line diagram's pages (faultcalc.diagram Drawings)."""
    from ..diagram import draw_pages

    return draw_pages(system, result)


def _png(sheets) -> bytes | None:
    """The one-line as PNG bytes for the workbook's One-line sheet: only when it is one sheet
    (a diagram split over pages is read in the report or the diagram's own PDF)."""
    import tempfile

    from ..diagram import save

    if len(sheets) != 1:
        return None
    with tempfile.TemporaryDirectory(prefix="faultcalc-one-line-") as tmp:
        path = Path(tmp, "one-line.png")
        save(sheets[0], path)
        return path.read_bytes()


def write_results(
    result,
    output: str | Path,
    json_path: str | Path | None = None,
    *,
    report_path: str | Path | None = None,
    system=None,
    overwrite: bool = False,
    input_path: str | Path | None = None,
    progress: Progress | None = None,
) -> WrittenResults:
    """Write a study's results as ``faultcalc study`` does: the workbook, the JSON if asked
    for and, above BIG_OUTPUT_BUSES buses, a summary workbook with every bus in
    ``<output>-buses.csv`` (and above BIG_CONTRIBUTION_ROWS contribution rows, every one in
    ``<output>-contributions.csv``); all or none, atomically.

    The same as ``ResultFiles(output, json_path, ...).write(result, progress=progress)``;
    make the :class:`ResultFiles` before the study to have the names refused before it runs.

    Parameters
    ----------
    result : StudyResult
        As returned by :func:`faultcalc.run_study`.
    output, json_path, report_path, overwrite, input_path
        As for :class:`ResultFiles`.
    system : System, optional
        The studied system: required with ``report_path`` (the report draws its one-line).
    progress : Progress, optional
        Told the phase "writing the results" and its steps (default: nothing is reported).

    Returns
    -------
    WrittenResults
        The files written, the companion CSVs of a large study and the stale ones removed.

    Raises
    ------
    OutputError
        A path refused (see :class:`ResultFiles`), or a file that appeared at a target
        meanwhile; nothing is written then.

    Examples
    --------
    >>> import tempfile
    >>> from faultcalc import read_system, run_study, sample_path
    >>> tmp = tempfile.TemporaryDirectory()
    >>> folder = Path(tmp.name)
    >>> result = run_study(read_system(sample_path()))
    >>> written = write_results(result, folder / "r.xlsx", folder / "r.json")
    >>> written.summary, sorted(p.name for p in folder.iterdir())
    (False, ['r.json', 'r.xlsx'])
    >>> tmp.cleanup()
    """
    files = ResultFiles(
        output, json_path, report_path=report_path, input_path=input_path, overwrite=overwrite
    )
    return files.write(result, system=system, progress=progress)


def write_netlist(
    system,
    bus: str | None,
    fault: str | None,
    output: str | Path | OutputFiles,
    *,
    overwrite: bool = False,
    input_path: str | Path | None = None,
) -> str:
    """Write the phase-domain SPICE netlist of ``system`` with a ``fault`` at ``bus`` (both
    None: the unfaulted network), atomically; returns its text.

    ``output`` is the file, or the :class:`OutputFiles` checked before ``system`` was read;
    ``overwrite`` and ``input_path`` as for :class:`OutputFiles`.
    """
    from ..netlist import build_netlist

    files = _files(output, input_path, overwrite)
    text = build_netlist(system, bus, fault)
    with files.staged() as (temp,):
        temp.write_text(text, encoding="utf-8")
    return text


def write_diagram(
    system,
    result,
    output: str | Path | OutputFiles,
    *,
    overwrite: bool = False,
    input_path: str | Path | None = None,
):
    """Write the one-line diagram of ``system``, annotated with ``result`` (a StudyResult, or
    None for the topology alone), atomically, as .svg, .pdf or .png by the file's suffix;
    returns the pages drawn (:func:`faultcalc.diagram.draw_pages`: their shapes and sizes).

    A diagram of several pages is one PDF, a page per drawing; as SVG or PNG the first page
    goes to the file named and each other page beside it as ``<stem>-p<page><suffix>``
    (``faultcalc.diagram.render.page_path``), all placed together or none. Those other pages
    are checked when the diagram is written (an existing one needs ``overwrite``); with
    ``overwrite``, pages beyond the last that an earlier, longer diagram left are removed.

    ``output`` is the file, or the :class:`OutputFiles` checked before ``system`` was read;
    ``overwrite`` and ``input_path`` as for :class:`OutputFiles`.
    """
    from ..diagram import FORMATS, draw_pages, save, save_pages
    from ..diagram.render import page_path, stale_pages

    files = _files(output, input_path, overwrite)
    (path,) = files.paths
    suffix = path.suffix.lower()
    if suffix not in FORMATS:
        raise OutputError(f"a diagram is written as {', '.join(FORMATS)}; got {path.name}")
    drawings = draw_pages(system, result)
    if suffix == ".pdf":
        with files.staged() as (temp,):
            save_pages(drawings, temp)
        return drawings
    others = [page_path(path, k) for k in range(2, len(drawings) + 1)]
    checked = OutputFiles(*others, input_path=files.input_path, overwrite=files.overwrite)
    remove = stale_pages(path, len(drawings)) if files.overwrite else []
    with staged(
        path,
        *others,
        replace=[*files._existing, *checked._existing],
        remove=remove,
        on_placed=files.on_placed,
    ) as temps:
        for drawing, temp in zip(drawings, temps, strict=True):
            save(drawing, temp, suffix)
    return drawings


def write_cable_checks(
    checks,
    output: str | Path | OutputFiles,
    *,
    system,
    tolerance_pct: float = CABLE_TOLERANCE_PCT,
    overwrite: bool = False,
    input_path: str | Path | None = None,
) -> None:
    """Write the findings of :func:`faultcalc.check_cables` as JSON, atomically.

    ``system`` and ``tolerance_pct`` are those the checks were made with (the document names
    the input, its SHA-256 and the tolerance). ``output`` is the file, or the
    :class:`OutputFiles` checked before ``system`` was read; ``overwrite`` and ``input_path``
    as for :class:`OutputFiles`.

    Examples
    --------
    >>> import json, tempfile
    >>> from faultcalc import check_cables, read_system, sample_path
    >>> system = read_system(sample_path())
    >>> tmp = tempfile.TemporaryDirectory()
    >>> path = Path(tmp.name, "cables.json")
    >>> write_cable_checks(check_cables(system), path, system=system)
    >>> len(json.loads(path.read_text())["cables"])
    3
    >>> tmp.cleanup()
    """
    import json

    from .jsonout import cable_check_dict

    files = _files(output, input_path, overwrite)
    with files.staged() as (temp,):
        doc = cable_check_dict(checks, tolerance_pct, system.input_name, system.input_sha256)
        temp.write_text(json.dumps(doc, indent=2, allow_nan=False) + "\n", encoding="utf-8")


def write_template(path: str | Path, *, overwrite: bool = True) -> None:
    """Write a blank input workbook with every sheet, column, help text and list validation,
    atomically.

    Parameters
    ----------
    path : str or Path
        The workbook to write.
    overwrite : bool, default True
        Replace a file that exists (as this function always did); False refuses it.

    Raises
    ------
    OutputError
        ``path`` is a folder, or exists and ``overwrite`` is False.
    """
    from ..schema.template import build_template

    path = Path(path)
    if path.is_dir():
        raise OutputError(f"{path} is a folder; give a file name")
    exists = os.path.lexists(path)
    if exists and not overwrite:
        raise OutputError(
            f"{path} exists already; add --overwrite to replace it, or choose another name"
        )
    with staged(path, replace=[path] if exists else []) as (temp,):
        build_template().save(temp)
