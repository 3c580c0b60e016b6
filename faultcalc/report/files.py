"""Write results so that a failed or interrupted run leaves no partial file behind."""

from __future__ import annotations

import contextlib
import errno
import glob
import os
import shutil
import signal
import tempfile
from collections.abc import Callable, Iterable, Iterator
from pathlib import Path

from ..errors import OutputError

# os.link fails with these where the file system has no hard links (FAT, exFAT, some network
# shares); a new file is then placed by reserving its name first (see _place_new).
_NO_HARD_LINKS = {errno.EPERM, errno.EXDEV, errno.EMLINK, errno.ENOSYS, errno.EOPNOTSUPP}
_NO_HARD_LINKS.add(getattr(errno, "ENOTSUP", errno.EOPNOTSUPP))


def same_file(a: str | Path, b: str | Path) -> bool:
    a, b = Path(a), Path(b)
    try:
        return a.resolve() == b.resolve() or (a.exists() and b.exists() and os.path.samefile(a, b))
    except OSError:
        return False


def _temporary(target: Path) -> Path:
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise OutputError(f"cannot write {target}: the folder {folder} does not exist")
    try:
        handle, name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=folder)
    except OSError as exc:
        raise OutputError(f"cannot write in {folder}: {exc.strerror}") from None
    os.close(handle)
    return Path(name)


def remove_leftovers(targets) -> list[Path]:
    """Remove the temporary files that writes of ``targets`` left beside them (a process
    killed while it wrote, such as a fleet's worker stopped with its cluster); the files
    removed. Only this module's own names (``_temporary``) are touched."""
    removed = []
    for target in map(Path, targets):
        folder = target.parent if str(target.parent) else Path(".")
        for leftover in folder.glob(f".{glob.escape(target.name)}.*.part"):
            try:
                leftover.unlink()
                removed.append(leftover)
            except OSError:
                pass
    return removed


def _appeared(target: Path) -> OutputError:
    return OutputError(
        f"{target} was created by something else while this ran; it was left as it is and "
        "nothing was written. Run again (with --overwrite to replace it), or choose another name"
    )


def _place_new(temp: Path, target: Path, placed: list[Path]) -> None:
    """Put ``temp`` at ``target`` only if nothing is there; never replace a file."""
    try:
        os.link(temp, target)  # fails if the name is taken, atomically
        placed.append(target)
        return
    except FileExistsError:
        raise _appeared(target) from None
    except OSError as exc:
        if exc.errno not in _NO_HARD_LINKS:
            raise OutputError(f"cannot write {target}: {exc.strerror}") from None
    try:  # no hard links here: reserve the name, then rename the finished file over it
        os.close(os.open(target, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600))
    except FileExistsError:
        raise _appeared(target) from None
    except OSError as exc:
        raise OutputError(f"cannot write {target}: {exc.strerror}") from None
    placed.append(target)
    try:
        os.replace(temp, target)
    except OSError as exc:
        raise OutputError(f"cannot write {target}: {exc.strerror}") from None


@contextlib.contextmanager
def _signals_held() -> Iterator[None]:
    """Hold the stop signals (where the platform can) while the outputs are placed."""
    names = ("SIGTERM", "SIGHUP", "SIGINT")
    held = {getattr(signal, n) for n in names if hasattr(signal, n)}
    if not hasattr(signal, "pthread_sigmask"):
        yield
        return
    before = signal.pthread_sigmask(signal.SIG_BLOCK, held)
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, before)


def _backup(path: Path) -> Path:
    """A second name for the file at ``path`` (a hard link, else a copy), to put it back."""
    hold = _temporary(path)
    try:
        hold.unlink()
        os.link(path, hold)
    except OSError:
        try:
            shutil.copy2(path, hold)
        except OSError as exc:
            with contextlib.suppress(OSError):
                hold.unlink()
            raise OutputError(f"cannot replace {path}: {exc.strerror}") from None
    return hold


def _place(
    temps: list[Path],
    targets: list[Path],
    replace: set[Path] | None,
    remove: list[Path],
    on_placed: Callable[[], None] | None = None,
) -> None:
    """Move every finished temporary file to its target, or change nothing at all.

    A file to be replaced keeps a second name until all are placed, and a file to be removed is
    set aside; new targets are placed only where no file is. If anything fails, the files
    placed so far are taken back and every earlier output is put back as it was, together.
    Targets in ``replace`` (all when it is None) are renamed over whatever is there.
    ``on_placed`` is called once every file is in place.
    """
    placed: list[Path] = []
    replaced: list[tuple[Path, Path]] = []
    kept: dict[Path, Path] = {}
    aside: list[tuple[Path, Path]] = []
    pairs = list(zip(temps, targets, strict=True))
    new = [(t, p) for t, p in pairs if replace is not None and p not in replace]
    over = [(t, p) for t, p in pairs if replace is None or p in replace]
    try:
        for _, target in over:
            if os.path.lexists(target) and not target.is_dir():
                kept[target] = _backup(target)
        for path in remove:
            if os.path.lexists(path):
                hold = _temporary(path)
                try:
                    os.replace(path, hold)
                except OSError as exc:
                    hold.unlink()
                    raise OutputError(f"cannot remove {path}: {exc.strerror}") from None
                aside.append((path, hold))
        for temp, target in new:
            _place_new(temp, target, placed)
        for temp, target in over:
            try:
                os.replace(temp, target)
            except OSError as exc:
                raise OutputError(f"cannot write {target}: {exc.strerror}") from None
            if target in kept:
                replaced.append((target, kept[target]))
            else:
                placed.append(target)
        if on_placed is not None:
            on_placed()
    except BaseException:
        for target in placed:
            with contextlib.suppress(OSError):
                target.unlink()
        for path, hold in [*replaced, *aside]:
            with contextlib.suppress(OSError):
                os.replace(hold, path)
        raise
    finally:
        for hold in kept.values():
            with contextlib.suppress(OSError):
                hold.unlink()
    for _, hold in aside:
        with contextlib.suppress(OSError):
            hold.unlink()


@contextlib.contextmanager
def staged(
    *paths: str | Path,
    replace: Iterable[str | Path] | None = None,
    remove: Iterable[str | Path] = (),
    on_placed: Callable[[], None] | None = None,
) -> Iterator[list[Path]]:
    """Yield temporary paths beside each target; move them all into place on success.

    If the body raises (or the process is interrupted), every temporary file is removed and no
    target is touched. ``replace`` names the targets that may be replaced (by default all, as
    an API caller asks); any other target is placed only where no file is, so a file that
    appeared there meanwhile is kept and the whole placement is an OutputError. ``remove``
    names files removed along with the placement (a companion output left by an earlier run);
    they are put back if the placement fails. SIGTERM, SIGHUP and SIGINT are held while the
    files are placed (all of them or none), and ``on_placed`` is called before a held one is
    let through.
    """
    targets = [Path(p) for p in paths]
    allowed = None if replace is None else {Path(p) for p in replace}
    temps: list[Path] = []
    try:
        for target in targets:
            temps.append(_temporary(target))
        yield temps
        umask = os.umask(0)
        os.umask(umask)
        for temp in temps:
            os.chmod(temp, 0o666 & ~umask)  # mkstemp makes 0600; results are ordinary files
        with _signals_held():  # on_placed runs before a held signal is let through
            _place(temps, targets, allowed, [Path(p) for p in remove], on_placed)
    finally:
        for temp in temps:
            with contextlib.suppress(FileNotFoundError):
                temp.unlink()
