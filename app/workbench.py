"""The open document, its undo stack and its file: what the window, canvas and panels share.

Panels and the canvas follow the document through ``doc.subscribe`` and follow a replacement of
the whole document (a file opened, a new sheet) through :attr:`Workbench.documentReplaced`.
"""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import QObject, Signal
from PySide6.QtGui import QUndoCommand, QUndoStack

from portcut.engine.schematic import Document

__all__ = ["Workbench"]


class Workbench(QObject):
    """The document being edited, the undo stack that every edit goes through, and its path."""

    #: A different Document object is now the one being edited.
    documentReplaced = Signal(object)
    #: The document's file path changed (saved as, opened); None for an unsaved sheet.
    pathChanged = Signal(object)

    def __init__(self, doc: Document | None = None, path: Path | None = None,
                 parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.doc = doc if doc is not None else Document()
        self.path = path
        self.undo_stack = QUndoStack(self)

    def push(self, command: QUndoCommand) -> None:
        """Do an edit, undoably."""
        with self.doc.batch():  # a move merged into the last step, folding a link wire away,
            self.undo_stack.push(command)  # is one change with the move, not a second one

    def replace_document(self, doc: Document, path: Path | None) -> None:
        """Edit ``doc`` from now on; the undo history starts afresh and is clean."""
        self.doc = doc
        self.undo_stack.clear()
        self.set_path(path)
        self.documentReplaced.emit(doc)

    def set_path(self, path: Path | None) -> None:
        self.path = path
        self.pathChanged.emit(path)

    @property
    def dirty(self) -> bool:
        """Whether there are edits since the last open or save."""
        return not self.undo_stack.isClean()
