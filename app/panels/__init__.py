"""Docked panels: part palette, inspector, undo history, wiring checks, live equivalent, sweep,
design insight.

:func:`install` adds them to a main window; a further panel is a QDockWidget given to
``MainWindow.add_dock``. The equivalent and sweep panels read the live analysis of the current
region (app.analysis), which the boundary tool draws and the canvas marks.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from PySide6.QtCore import Qt

from ..analysis import LiveAnalysis
from ..canvas.marks import CutMarks
from ..canvas.tools import ToolSpec
from ..canvas.tools.boundary import BoundaryTool
from .checks import ChecksDock
from .equivalent import EquivalentDock
from .history import HistoryDock
from .insight import InsightDock
from .inspector import FieldEditor, InspectorDock
from .palette import PaletteDock, entry_icon
from .sweep import SweepDock

if TYPE_CHECKING:
    from ..window import MainWindow

__all__ = ["ChecksDock", "EquivalentDock", "FieldEditor", "HistoryDock", "InsightDock",
           "InspectorDock", "PaletteDock", "SweepDock", "entry_icon", "install"]


#: The share of the window's height the sweep panel opens at: the sheet stays the main view.
SWEEP_SHARE = 0.25


def install(window: MainWindow) -> None:
    """The standard panels: palette on the left, inspector, history and checks on the
    right."""
    window.palette_dock = PaletteDock(window.canvas, window)
    window.inspector = InspectorDock(window.workbench, window.canvas, window)
    window.history = HistoryDock(window.workbench, window)
    window.add_dock(window.palette_dock, Qt.DockWidgetArea.LeftDockWidgetArea, "Ctrl+1")
    window.add_dock(window.inspector, Qt.DockWidgetArea.RightDockWidgetArea, "Ctrl+2")
    window.add_dock(window.history, Qt.DockWidgetArea.RightDockWidgetArea, "Ctrl+3")
    window.checks_dock = ChecksDock(window.workbench, window.canvas, window)
    window.add_dock(window.checks_dock, Qt.DockWidgetArea.RightDockWidgetArea, "Ctrl+6")
    window.tabifyDockWidget(window.history, window.checks_dock)
    install_reduction(window)


def install_reduction(window: MainWindow) -> None:
    """The live analysis, its marks on the canvas, the boundary tool, and the equivalent
    (tabbed with the history) and sweep (bottom, hidden until asked for) panels."""
    live = window.analysis = LiveAnalysis(window.workbench, window)
    window.cut_marks = CutMarks(window.canvas.scene, live, window)
    window.add_tool(ToolSpec("boundary", "&Boundary", "B", "Draw a region to reduce: drag a "
                             "lasso, Ctrl+drag a rectangle, Shift+click a part (B)",
                             lambda canvas: BoundaryTool(canvas, live)))
    window.equivalent_dock = EquivalentDock(window.workbench, window.canvas, live, window)
    window.sweep_dock = SweepDock(live, window)
    window.add_dock(window.equivalent_dock, Qt.DockWidgetArea.RightDockWidgetArea, "Ctrl+4")
    window.add_dock(window.sweep_dock, Qt.DockWidgetArea.BottomDockWidgetArea, "Ctrl+5")
    window.insight_dock = InsightDock(window.canvas, live, window)
    window.add_dock(window.insight_dock, Qt.DockWidgetArea.RightDockWidgetArea, "Ctrl+7")
    window.insight_dock.temperatureChanged.connect(window.sweep_dock.set_temperature)
    window.tabifyDockWidget(window.history, window.equivalent_dock)
    window.tabifyDockWidget(window.equivalent_dock, window.insight_dock)
    window.equivalent_dock.raise_()
    window.sweep_dock.hide()
    window.equivalent_dock.sweep_button.clicked.connect(lambda: _show_sweep(window))
    window.add_command("tools", "rename_region", "Re&name Region…",
                       window.equivalent_dock.start_rename, "Shift+F2",
                       "Rename the region the Equivalent panel shows")


def _show_sweep(window: MainWindow) -> None:
    dock = window.sweep_dock
    if dock.isHidden():
        dock.show()
        window.resizeDocks([dock], [int(window.height() * SWEEP_SHARE)], Qt.Orientation.Vertical)
    dock.raise_()
