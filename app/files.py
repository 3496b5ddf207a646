"""File handling for the window: new, open, save, save as, export SVG, recent files and the
unsaved-changes prompt.

A failed open shows the loader's message and leaves the open document as it was; saving goes
through engine's atomic save; every failure is reported in a dialog, never as a traceback.
"""

from __future__ import annotations

import os
from pathlib import Path

from PySide6.QtCore import QObject, Signal
from PySide6.QtWidgets import QFileDialog, QWidget

from portcut.engine.drawing.svg import document_svg
from portcut.engine.errors import CircuitError
from portcut.engine.schematic import Document
from portcut.engine.schematic.atomic import write_atomically
from portcut.engine.schematic.fileformat import load, save

from . import dialogs
from .settings import Settings
from .workbench import Workbench

__all__ = ["SHEET_FILTER", "SHEET_SUFFIX", "FileActions"]

#: The file type of our own for sheets; any .json sheet still opens.
SHEET_SUFFIX = ".portcut.json"
SHEET_FILTER = "Portcut schematic (*.portcut.json);;JSON files (*.json);;All files (*)"


class FileActions(QObject):
    """The File menu's work, over a workbench."""

    recentChanged = Signal()

    def __init__(self, window: QWidget, workbench: Workbench, settings: Settings) -> None:
        super().__init__(window)
        self.window = window
        self.workbench = workbench
        self.settings = settings
        #: The reason the last open, save or export failed.
        self.last_error = ""
        #: Shows a failure to the user (a non-blocking box; replaced where nobody watches).
        self.report = dialogs.show_error

    def _failed(self, exc: Exception, title: str, what: str) -> bool:
        """Report a failed file operation (what happened, and the reason); returns False."""
        self.last_error = _reason(exc)
        self.report(self.window, title, what, self.last_error)
        return False

    def name(self) -> str:
        path = self.workbench.path
        return path.name if path else self.workbench.doc.title

    def _stem(self) -> str:
        """The sheet's name without its file type, to name a saved or exported copy."""
        return self.name().removesuffix(SHEET_SUFFIX).removesuffix(".json")

    def _folder(self) -> str:
        path = self.workbench.path or next(iter(self.settings.recent_files), None)
        return str(path.parent) if path else ""

    def confirm_discard(self) -> bool:
        """True when the current document may be replaced (saved, discarded or clean)."""
        if not self.workbench.dirty:
            return True
        choice = dialogs.ask_save_changes(self.window, self.name())
        if choice is dialogs.SaveChoice.SAVE:
            return self.save()
        return choice is dialogs.SaveChoice.DISCARD

    def new(self) -> bool:
        if not self.confirm_discard():
            return False
        self.workbench.replace_document(Document(), None)
        return True

    def open_dialog(self) -> bool:
        if not self.confirm_discard():
            return False
        path, _ = QFileDialog.getOpenFileName(self.window, "Open sheet", self._folder(),
                                              SHEET_FILTER)
        return bool(path) and self.open_path(Path(path), confirmed=True)

    def open_path(self, path: Path, *, confirmed: bool = False, as_copy: bool = False) -> bool:
        """Open ``path``; ``as_copy`` (a bundled example) leaves the sheet without a file, so
        Save asks where to put it. On failure the open document stays as it was."""
        if not confirmed and not self.confirm_discard():
            return False
        try:
            doc = load(path)
        except (CircuitError, OSError) as exc:
            return self._failed(exc, "Cannot open sheet", f"“{path.name}” could not be opened; "
                                "the sheet you had open is unchanged.")
        self.workbench.replace_document(doc, None if as_copy else path)
        if not as_copy:
            self.settings.add_recent(path)
            self.recentChanged.emit()
        return True

    def save(self) -> bool:
        path = self.workbench.path
        return self.save_as() if path is None else self.save_to(path)

    def save_as(self) -> bool:
        start = os.path.join(self._folder(), f"{self._stem()}{SHEET_SUFFIX}")
        path, _ = QFileDialog.getSaveFileName(self.window, "Save sheet as", start, SHEET_FILTER)
        if not path:
            return False
        path = Path(path)
        return self.save_to(path if path.suffix else path.with_name(path.name + SHEET_SUFFIX))

    def save_to(self, path: Path) -> bool:
        try:
            save(self.workbench.doc, path)
        except (CircuitError, OSError) as exc:
            return self._failed(exc, "Cannot save sheet", f"“{path.name}” was not written; any "
                                "earlier version of it is unchanged.")
        self.workbench.undo_stack.setClean()
        self.workbench.set_path(path)
        self.settings.add_recent(path)
        self.recentChanged.emit()
        return True

    def export_svg(self) -> bool:
        start = os.path.join(self._folder(), f"{self._stem()}.svg")
        path, _ = QFileDialog.getSaveFileName(self.window, "Export SVG", start,
                                              "SVG drawings (*.svg)")
        return bool(path) and self.export_svg_to(Path(path))

    def export_svg_to(self, path: Path) -> bool:
        try:
            write_atomically(path, document_svg(self.workbench.doc, style=self.settings.style))
        except (CircuitError, OSError) as exc:
            return self._failed(exc, "Cannot export SVG", f"“{path.name}” was not written.")
        return True


def _reason(exc: Exception) -> str:
    """A one-line reason for a failed file operation."""
    if isinstance(exc, OSError) and exc.strerror:
        return f"{exc.strerror}: {exc.filename}" if exc.filename else exc.strerror
    return str(exc)
