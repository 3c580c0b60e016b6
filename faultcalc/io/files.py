"""Write results so that a failed or interrupted run leaves no partial file behind."""

from __future__ import annotations

import contextlib
import os
import tempfile
from collections.abc import Iterator
from pathlib import Path

from ..errors import OutputError


def same_file(a: str | Path, b: str | Path) -> bool:
    a, b = Path(a), Path(b)
    try:
        return a.resolve() == b.resolve() or (a.exists() and b.exists() and os.path.samefile(a, b))
    except OSError:
        return False


@contextlib.contextmanager
def staged(*paths: str | Path) -> Iterator[list[Path]]:
    """Yield temporary paths beside each target; rename them all into place on success.

    If the body raises, every temporary file is removed and no target is touched.
    """
    targets = [Path(p) for p in paths]
    temps: list[Path] = []
    try:
        for target in targets:
            folder = target.parent if str(target.parent) else Path(".")
            if not folder.is_dir():
                raise OutputError(f"cannot write {target}: the folder {folder} does not exist")
            try:
                handle, name = tempfile.mkstemp(
                    prefix=f".{target.name}.", suffix=".part", dir=folder
                )
            except OSError as exc:
                raise OutputError(f"cannot write in {folder}: {exc.strerror}") from None
            os.close(handle)
            temps.append(Path(name))
        yield temps
        umask = os.umask(0)
        os.umask(umask)
        for temp in temps:
            os.chmod(temp, 0o666 & ~umask)  # mkstemp makes 0600; results are ordinary files
        for temp, target in zip(temps, targets, strict=True):
            try:
                os.replace(temp, target)
            except OSError as exc:
                raise OutputError(f"cannot write {target}: {exc.strerror}") from None
    finally:
        for temp in temps:
            with contextlib.suppress(FileNotFoundError):
                temp.unlink()
