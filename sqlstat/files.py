"""Text -> a file on disk, atomically, without clobbering a file of another kind."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from .errors import UsageError


def write_atomic(path: str | Path, text: str, *, kinds: tuple[str, ...], force: bool = False) -> Path:
    """Write ``text`` to ``path`` through a temporary file and a rename.

    An existing file is replaced only when its suffix is one of ``kinds`` (say ``.sql``
    when writing SQL) or ``force`` is set, so a report never lands on a spec or data file.
    """
    target = Path(path)
    if target.is_dir():
        raise UsageError(f"{target} is a folder; give a file name")
    if target.exists() and not force and target.suffix.lower() not in kinds:
        raise UsageError(
            f"{target} exists and is not a {'/'.join(kinds)} file; refusing to overwrite it "
            f"(use --force to replace it anyway)"
        )
    parent = target.parent if str(target.parent) else Path(".")
    if not parent.is_dir():
        raise UsageError(f"folder {parent} does not exist")
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    return target
