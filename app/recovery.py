"""Autosave to a recovery file, and the offer to restore it after a crash.

Each session writes its unsaved work every :data:`INTERVAL_S` seconds to
``<folder>/autosave-<token>.json`` (atomically, through engine's file format) with a small
``.meta.json`` beside it (where the work came from, when it was saved), and holds
``session-<token>.lock`` while it runs. The files go when the work is saved or the window closes
normally. At the next start, recovery files whose session lock is no longer held (QLockFile
recognises a lock left by a dead process as stale) are offered for restoring, and temporaries
that a killed write left in the folder are removed. Restored files are kept, under a lock of
the session that restored them, until that session has autosaved or saved the work itself, so
a second crash before then still finds them. Stale locks of sessions that ended without any
autosave are removed too.
"""

from __future__ import annotations

import json
import uuid
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

from PySide6.QtCore import QLockFile, QObject, QTimer, Signal

from portcut.engine.errors import CircuitError
from portcut.engine.schematic import Document
from portcut.engine.schematic.atomic import remove_stale_temporaries, write_atomically
from portcut.engine.schematic.fileformat import load, save

from .workbench import Workbench

__all__ = ["INTERVAL_S", "Recovered", "Recovery", "left_over"]

INTERVAL_S = 30


@dataclass(frozen=True)
class Recovered:
    """Work that an earlier session left behind."""

    document: Path
    meta: Path
    source: Path | None
    saved_at: str
    title: str

    @property
    def token(self) -> str:
        return self.document.name.removeprefix("autosave-").removesuffix(".json")

    def describe(self) -> str:
        name = self.source.name if self.source else f"unsaved sheet “{self.title}”"
        return f"{name}, autosaved {self.saved_at}"

    def load(self) -> Document:
        """The recovered document (raises DocumentError or OSError when it cannot be read)."""
        return load(self.document)

    def discard(self) -> None:
        for p in (self.document, self.meta):
            p.unlink(missing_ok=True)


def _lock(folder: Path, token: str) -> QLockFile:
    return QLockFile(str(folder / f"session-{token}.lock"))


def _held(folder: Path, token: str) -> bool:
    """Whether session ``token`` is still running. A stale lock (its process is gone) is taken
    and released, which removes its file."""
    lock = _lock(folder, token)
    if not lock.tryLock(0):
        return True
    lock.unlock()
    return False


def left_over(folder: Path) -> list[Recovered]:
    """Recovery files of sessions that are no longer running, newest first. Stale lock files
    of ended sessions are removed on the way."""
    for lock_path in folder.glob("session-*.lock"):
        token = lock_path.name.removeprefix("session-").removesuffix(".lock")
        if not (folder / f"autosave-{token}.meta.json").exists():
            _held(folder, token)  # nothing to offer: only the stale lock to clear
    found = []
    for meta_path in folder.glob("autosave-*.meta.json"):
        token = meta_path.name.removeprefix("autosave-").removesuffix(".meta.json")
        if _held(folder, token):
            continue  # that session is still running
        try:
            meta = json.loads(meta_path.read_text(encoding="utf-8"))
            source = Path(meta["source"]) if meta.get("source") else None
            found.append(Recovered(folder / f"autosave-{token}.json", meta_path, source,
                                   str(meta.get("saved_at", "")), str(meta.get("title", ""))))
        except (OSError, ValueError, KeyError, TypeError):
            meta_path.unlink(missing_ok=True)  # a half-written note is no use to anyone
    return sorted(found, key=lambda r: r.saved_at, reverse=True)


class Recovery(QObject):
    """Autosaves the workbench's document while it has unsaved changes."""

    #: Autosave could not write; the message says why.
    failed = Signal(str)

    def __init__(self, workbench: Workbench, folder: Path, interval_s: float = INTERVAL_S,
                 parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.workbench = workbench
        self.folder = folder
        token = uuid.uuid4().hex[:12]
        self.document = folder / f"autosave-{token}.json"
        self.meta = folder / f"autosave-{token}.meta.json"
        folder.mkdir(parents=True, exist_ok=True)
        remove_stale_temporaries(folder)
        self.lock = _lock(folder, token)
        self.lock.tryLock(0)
        #: Restored work of an earlier session, held until this one has a copy of its own.
        self.adopted: list[tuple[Recovered, QLockFile]] = []
        self.timer = QTimer(self)
        self.timer.setInterval(int(interval_s * 1000))
        self.timer.timeout.connect(self.autosave)
        workbench.undo_stack.cleanChanged.connect(self._on_clean)

    def start(self) -> None:
        self.timer.start()

    def autosave(self) -> bool:
        """Write the recovery file now if there are unsaved changes; True when written."""
        if not self.workbench.dirty:
            return False
        doc = self.workbench.doc
        note = {"source": str(self.workbench.path) if self.workbench.path else None,
                "saved_at": datetime.now().strftime("%Y-%m-%d %H:%M"), "title": doc.title}
        try:
            save(doc, self.document)
            write_atomically(self.meta, json.dumps(note))
        except (OSError, CircuitError) as exc:
            self.failed.emit(f"Autosave failed: {exc}")
            return False
        self._release_adopted()
        return True

    def adopt(self, found: Recovered) -> None:
        """Keep ``found`` (just restored) until this session autosaves or saves the work, or
        closes normally; its lock is held meanwhile, so no other window offers it again."""
        lock = _lock(self.folder, found.token)
        lock.tryLock(0)
        self.adopted.append((found, lock))

    def _release_adopted(self) -> None:
        for found, lock in self.adopted:
            found.discard()
            lock.unlock()
        self.adopted.clear()

    def _on_clean(self, clean: bool) -> None:
        if clean:
            self.discard()

    def discard(self) -> None:
        """Remove this session's recovery files and those it restored (the work is saved, or
        deliberately dropped)."""
        for p in (self.document, self.meta):
            p.unlink(missing_ok=True)
        self._release_adopted()

    def close(self) -> None:
        """A normal end of the session: nothing to recover."""
        self.timer.stop()
        self.discard()
        self.lock.unlock()
