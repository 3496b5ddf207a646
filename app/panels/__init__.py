"""Docked panels: part palette, inspector, undo history.

:func:`install` adds them to a main window; a further panel is a QDockWidget given to
``MainWindow.add_dock``.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from PySide6.QtCore import Qt

from .history import HistoryDock
from .inspector import FieldEditor, InspectorDock
from .palette import PaletteDock, entry_icon

if TYPE_CHECKING:
    from ..window import MainWindow

__all__ = ["FieldEditor", "HistoryDock", "InspectorDock", "PaletteDock", "entry_icon",
           "install"]


def install(window: MainWindow) -> None:
    """The standard panels: palette on the left, inspector and history on the right."""
    window.palette_dock = PaletteDock(window.canvas, window)
    window.inspector = InspectorDock(window.workbench, window.canvas, window)
    window.history = HistoryDock(window.workbench, window)
    window.add_dock(window.palette_dock, Qt.DockWidgetArea.LeftDockWidgetArea, "Ctrl+1")
    window.add_dock(window.inspector, Qt.DockWidgetArea.RightDockWidgetArea, "Ctrl+2")
    window.add_dock(window.history, Qt.DockWidgetArea.RightDockWidgetArea, "Ctrl+3")
