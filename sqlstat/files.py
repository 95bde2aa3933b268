"""Text -> a file on disk, atomically, without clobbering a file of another kind."""

from __future__ import annotations

import os
import stat
import tempfile
from pathlib import Path

from .errors import UsageError


def _resolve_target(target: Path) -> Path:
    """The file that will really be written: a symbolic link is followed to its target.

    Writing through the link keeps the link (people point ``latest.sql`` at a shared file);
    the kind check then applies to the real file, so a ``.sql`` link to a spec is refused.
    A dangling link is refused: it would create a file somewhere the user did not name.
    """
    if not target.is_symlink():
        return target
    real = Path(os.path.realpath(target))
    if not real.exists():
        raise UsageError(f"{target} is a symbolic link to {real}, which does not exist; refusing to create it")
    return real


def write_atomic(path: str | Path, text: str, *, kinds: tuple[str, ...], force: bool = False) -> Path:
    """Write ``text`` to ``path`` through a temporary file and a rename.

    An existing file is replaced only when its suffix is one of ``kinds`` (say ``.sql``
    when writing SQL) or ``force`` is set, so a report never lands on a spec or data file.
    Folders, devices and pipes are never replaced, even with ``force``. If anything fails
    before the rename, the old file is untouched and the temporary file is removed.
    """
    named = Path(path)
    target = _resolve_target(named)
    if target.is_dir():
        raise UsageError(f"{named} is a folder; give a file name")
    if target.exists():
        if not stat.S_ISREG(target.stat().st_mode):
            raise UsageError(f"{named} is not a regular file (a device or pipe); give a file name")
        if not force and target.suffix.lower() not in kinds:
            raise UsageError(
                f"{named} exists and is not a {'/'.join(kinds)} file; refusing to overwrite it "
                f"(use --force to replace it anyway)"
            )
    parent = target.parent if str(target.parent) else Path(".")
    if not parent.is_dir():
        raise UsageError(f"folder {parent} does not exist")
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=parent)
    except OSError as err:
        raise UsageError(f"cannot write in {parent}: {err.strerror or err}") from None
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        if target.exists():
            # Keep the old file's permissions: mkstemp creates 0600 files.
            os.chmod(tmp, stat.S_IMODE(target.stat().st_mode))
        else:
            os.chmod(tmp, 0o666 & ~_umask())
        os.replace(tmp, target)
    except BaseException as err:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        if isinstance(err, OSError):
            raise UsageError(f"cannot write {named}: {err.strerror or err}") from None
        raise
    return target


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask
