"""Atomic file writing: a crash or a full disk never leaves half a file where a whole one was."""

from __future__ import annotations

import os
import secrets
import shutil
from contextlib import suppress
from pathlib import Path

__all__ = ["write_atomically"]


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
    try:
        fd = os.open(temporary, os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0),
                     0o666)
        try:
            with os.fdopen(fd, "wb") as f:
                f.write(raw)
                f.flush()
                os.fsync(f.fileno())
            if target.exists():
                shutil.copymode(target, temporary)
            os.replace(temporary, target)
        finally:
            with suppress(OSError):
                os.unlink(temporary)
    except OSError as e:
        raise OSError(e.errno, e.strerror or str(e), os.fspath(path)) from None
    with suppress(OSError):  # the new file is in place; this only hastens the rename to disk
        _sync_folder(target.parent)


def _sync_folder(folder: Path) -> None:
    """Make the rename itself durable (POSIX; other systems have no directory handles)."""
    if hasattr(os, "O_DIRECTORY"):
        fd = os.open(folder, os.O_RDONLY | os.O_DIRECTORY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)
