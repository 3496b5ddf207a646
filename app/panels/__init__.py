"""Docked panels: part palette, inspector, undo history, wiring checks, live equivalent, sweep,
design insight.

The window calls :func:`install`, which adds them through the window's extension points (a
:class:`PanelHost`) and returns them as :class:`Panels` for the window to keep; a further panel is
a QDockWidget given to ``MainWindow.add_dock``. The equivalent and sweep panels read the live
analysis of the current region (app.analysis), which the boundary tool draws and the canvas marks.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Protocol

from PySide6.QtCore import Qt
from PySide6.QtGui import QAction
from PySide6.QtWidgets import QDockWidget, QWidget

from ..analysis import LiveAnalysis
from ..canvas import Canvas
from ..canvas.marks import CutMarks
from ..canvas.tools import ToolSpec
from ..canvas.tools.boundary import BoundaryTool
from ..workbench import Workbench
from .checks import ChecksDock
from .equivalent import EquivalentDock
from .history import HistoryDock
from .insight import InsightDock
from .inspector import FieldEditor, InspectorDock
from .palette import PaletteDock, entry_icon
from .sweep import SweepDock

__all__ = ["ChecksDock", "EquivalentDock", "FieldEditor", "HistoryDock", "InsightDock",
           "InspectorDock", "PaletteDock", "PanelHost", "Panels", "SweepDock", "entry_icon",
           "install"]


#: The share of the window's height the sweep panel opens at: the sheet stays the main view.
SWEEP_SHARE = 0.25


class PanelHost(Protocol):
    """What the panels need of the window they go in (app.window.MainWindow is one): its
    workbench and canvas, its extension points, Qt's own dock arrangement, and the window
    itself (``window()``) as the parent of what the panels make."""

    workbench: Workbench
    canvas: Canvas

    def add_dock(self, dock: QDockWidget, area: Qt.DockWidgetArea,
                 shortcut: str | None = None) -> None: ...

    def add_tool(self, spec: ToolSpec) -> QAction: ...

    def add_command(self, menu: str, name: str, text: str, slot: Callable[[], object],
                    shortcut: str | None = None, tip: str = "") -> QAction: ...

    def tabifyDockWidget(self, first: QDockWidget, second: QDockWidget) -> None: ...

    def resizeDocks(self, docks: list[QDockWidget], sizes: list[int],
                    orientation: Qt.Orientation) -> None: ...

    def height(self) -> int: ...

    def window(self) -> QWidget: ...


@dataclass(frozen=True)
class Panels:
    """The installed panels, and the live analysis and canvas marks the reduction panels share."""

    palette: PaletteDock
    inspector: InspectorDock
    history: HistoryDock
    checks: ChecksDock
    analysis: LiveAnalysis
    cut_marks: CutMarks
    equivalent: EquivalentDock
    sweep: SweepDock
    insight: InsightDock


def install(host: PanelHost) -> Panels:
    """The standard panels: palette on the left; inspector, history, checks, equivalent and
    design insight on the right (the last four tabbed); sweep at the bottom, hidden until asked
    for. Also the live analysis, its marks on the canvas, the boundary tool and Rename Region."""
    parent = host.window()  # the panels and the live analysis belong to the window
    right = Qt.DockWidgetArea.RightDockWidgetArea
    palette = PaletteDock(host.canvas, parent)
    inspector = InspectorDock(host.workbench, host.canvas, parent)
    history = HistoryDock(host.workbench, parent)
    host.add_dock(palette, Qt.DockWidgetArea.LeftDockWidgetArea, "Ctrl+1")
    host.add_dock(inspector, right, "Ctrl+2")
    host.add_dock(history, right, "Ctrl+3")
    checks = ChecksDock(host.workbench, host.canvas, parent)
    host.add_dock(checks, right, "Ctrl+6")
    host.tabifyDockWidget(history, checks)

    live = LiveAnalysis(host.workbench, parent)
    checks.read_nets_from(live)
    cut_marks = CutMarks(host.canvas.scene, live, parent)
    host.add_tool(ToolSpec("boundary", "&Boundary", "B", "Draw a region to reduce: drag a "
                           "lasso, Ctrl+drag a rectangle, Shift+click a part (B)",
                           lambda canvas: BoundaryTool(canvas, live)))
    equivalent = EquivalentDock(host.workbench, host.canvas, live, parent)
    sweep = SweepDock(live, parent)
    host.add_dock(equivalent, right, "Ctrl+4")
    host.add_dock(sweep, Qt.DockWidgetArea.BottomDockWidgetArea, "Ctrl+5")
    insight = InsightDock(host.canvas, live, parent)
    host.add_dock(insight, right, "Ctrl+7")
    insight.temperatureChanged.connect(sweep.set_temperature)
    host.tabifyDockWidget(history, equivalent)
    host.tabifyDockWidget(equivalent, insight)
    equivalent.raise_()
    sweep.hide()
    equivalent.sweep_button.clicked.connect(lambda: _show_sweep(host, sweep))
    host.add_command("tools", "rename_region", "Re&name Region…", equivalent.start_rename,
                     "Shift+F2", "Rename the region the Equivalent panel shows")
    return Panels(palette, inspector, history, checks, live, cut_marks, equivalent, sweep,
                  insight)


def _show_sweep(host: PanelHost, dock: SweepDock) -> None:
    if dock.isHidden():
        dock.show()
        host.resizeDocks([dock], [int(host.height() * SWEEP_SHARE)], Qt.Orientation.Vertical)
    dock.raise_()
