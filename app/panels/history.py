"""The undo history: every step, the current one marked; clicking a step goes back (or forward)
to it."""

from __future__ import annotations

from PySide6.QtWidgets import QDockWidget, QUndoView, QWidget

from ..workbench import Workbench

__all__ = ["HistoryDock"]


class HistoryDock(QDockWidget):
    def __init__(self, workbench: Workbench, parent: QWidget | None = None) -> None:
        super().__init__("History", parent)
        self.setObjectName("history")
        self.view = QUndoView(workbench.undo_stack)
        self.view.setEmptyLabel("Sheet as opened")
        self.view.setAccessibleName("Undo history")
        self.setWidget(self.view)
