"""Text -> a file on disk, atomically, replacing only a file that sqlstat wrote.

The rule for an existing file is the same whatever its name: it is replaced when its
content starts the way sqlstat's output of that format starts (so a nightly job can write
the same path every night, with any file name), and otherwise only with ``force``.
"""

from __future__ import annotations

import os
import re
import stat
import tempfile
from pathlib import Path

from .errors import UsageError


# How each output format of sqlstat begins (tests check every form against these).
SIGNATURES: dict[str, re.Pattern[str]] = {
    # the query as sqlstat prints it (optionally behind the view statements): WITH and a
    # quoted CTE name, e.g. WITH "assigned_units" AS (
    "sql": re.compile(r'(?:[^\n]*\bVIEW\b[^\n]*\n){0,2}WITH\s+(?:"\w+"|`\w+`|\[\w+\])\s+AS\s+\(', re.I),
    "json": re.compile(r'\{\s*"experiment"\s*:'),  # to_json's first key
    "csv": re.compile(r"experiment,metric,"),  # to_csv's header
    "table": re.compile(r"Experiment: "),  # to_text's first line
    "html": re.compile(r'<!DOCTYPE html>\s*<html lang="en"><head><meta charset="utf-8"><meta name="generator" '
                       r'content="sqlstat '),  # report_html.to_html's first bytes
    "markdown": re.compile(r"<!-- sqlstat markdown report -->"),  # report_markdown.to_markdown's first line
}
HEAD_BYTES = 4096  # how much of an existing file is read to recognise it


def written_by_sqlstat(path: Path, kind: str) -> bool:
    """True when the file at ``path`` begins like sqlstat's ``kind`` output."""
    with open(path, "rb") as fh:
        head = fh.read(HEAD_BYTES).decode("utf-8", errors="replace").lstrip("\ufeff")
    return bool(SIGNATURES[kind].match(head))


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


def write_atomic(path: str | Path, text: str, *, kind: str, force: bool = False) -> Path:
    """Write ``text`` (sqlstat's output of format ``kind``) to ``path``, atomically.

    An existing file is replaced only when sqlstat wrote it (it begins like sqlstat's
    ``kind`` output; see SIGNATURES), whatever its name, or when ``force`` is set, so a
    report never lands on a spec, a data file or someone's notes.
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
        if not force and not written_by_sqlstat(target, kind):
            raise UsageError(
                f"{named} exists and does not look like {kind} output that sqlstat wrote; refusing to "
                f"replace it (use --force to replace it anyway)"
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
