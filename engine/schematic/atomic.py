"""Atomic file writing: a crash or a full disk never leaves half a file where a whole one was.

A write goes through ``.<name>.<12 hex digits>.tmp`` beside the target, locked (POSIX
``flock``) while it is written. A process killed mid-write leaves its temporary behind; the next
write to the same target, or :func:`remove_stale_temporaries` over a folder, removes those no
live writer holds.
"""

from __future__ import annotations

import os
import re
import secrets
import shutil
import time
from contextlib import suppress
from pathlib import Path

try:
    import fcntl
except ImportError:  # not POSIX: an open file cannot be removed there, and age decides
    fcntl = None  # type: ignore[assignment]

__all__ = ["STALE_AGE_S", "remove_stale_temporaries", "write_atomically"]

#: Where no lock tells a live writer from a dead one, a temporary this old (seconds) is stale.
STALE_AGE_S = 3600.0
_TEMPORARY = re.compile(r"\.(?P<target>.+)\.[0-9a-f]{12}\.tmp")


def write_atomically(path: str | os.PathLike[str], data: bytes | str) -> None:
    """Write ``data`` (text is encoded as UTF-8) to ``path`` all at once.

    The bytes go to a new file beside the target, are flushed and fsynced, and the new file is
    renamed over the target, so any failure leaves the old file whole and no temporary file
    behind. Through a symlink, the file it points at is replaced; an existing file's mode is
    kept. Raises OSError naming ``path``.
    """
    raw = data.encode("utf-8") if isinstance(data, str) else data
    target = Path(os.path.realpath(path))
    temporary = target.with_name(f".{target.name}.{secrets.token_hex(6)}.tmp")
    remove_stale_temporaries(target.parent, target.name)
    try:
        fd = os.open(temporary, os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0),
                     0o666)
        try:
            if fcntl is not None:  # held until the rename: a cleanup then leaves this file be
                fcntl.flock(fd, fcntl.LOCK_EX)
            with os.fdopen(fd, "wb", closefd=False) as f:
                f.write(raw)
                f.flush()
                os.fsync(f.fileno())
            if target.exists():
                shutil.copymode(target, temporary)
            os.replace(temporary, target)
        finally:
            os.close(fd)
            with suppress(OSError):
                os.unlink(temporary)
    except OSError as e:
        raise OSError(e.errno, e.strerror or str(e), os.fspath(path)) from None
    with suppress(OSError):  # the new file is in place; this only hastens the rename to disk
        _sync_folder(target.parent)


def remove_stale_temporaries(folder: str | os.PathLike[str], name: str | None = None) -> int:
    """Remove the temporaries that killed writes left in ``folder`` (those of the target called
    ``name``, or of any target); a temporary a live write holds is kept. Returns how many went;
    a file that cannot be removed is left alone."""
    removed = 0
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return 0
    for entry in entries:
        found = _TEMPORARY.fullmatch(entry.name)
        if found is None or (name is not None and found["target"] != name):
            continue
        with suppress(OSError):
            removed += _remove_if_abandoned(Path(entry.path))
    return removed


def _remove_if_abandoned(temporary: Path) -> bool:
    if fcntl is None:
        if time.time() - temporary.stat().st_mtime < STALE_AGE_S:
            return False
        temporary.unlink()
        return True
    fd = os.open(temporary, os.O_RDONLY)
    try:
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            return False  # a live write holds it
        temporary.unlink()
        return True
    finally:
        os.close(fd)


def _sync_folder(folder: Path) -> None:
    """Make the rename itself durable (POSIX; other systems have no directory handles)."""
    if hasattr(os, "O_DIRECTORY"):
        fd = os.open(folder, os.O_RDONLY | os.O_DIRECTORY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)
