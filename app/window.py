"""The main window: canvas in the middle, docked panels, menus, toolbar, status bar, settings.

Extension points for further features: :meth:`MainWindow.add_dock` (a panel, with a View menu
toggle and its place kept between sessions), :meth:`MainWindow.add_tool` (a canvas tool, with
an action in the Tools menu and toolbar) and :meth:`MainWindow.add_command` (an action in a
menu); app.panels.install puts the standard panels in through them and returns them for the
window to keep. The window holds no document state of its own: the Workbench has the document,
the undo stack and the path.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from PySide6.QtCore import Qt
from PySide6.QtGui import QAction, QActionGroup, QCloseEvent, QKeySequence
from PySide6.QtWidgets import (
    QApplication,
    QDockWidget,
    QLabel,
    QMainWindow,
    QMenu,
    QToolBar,
    QVBoxLayout,
    QWidget,
)

from portcut import assets
from portcut.engine.errors import CircuitError

from . import clipboard, dialogs, panels
from .about import show_about
from .analysis import LiveAnalysis
from .banner import SafetyBanner
from .canvas import Canvas, Look, ToolSpec
from .canvas.marks import CutMarks
from .catalog import ENTRIES, GROUPS
from .files import FileActions
from .menu_actions import choice_menu, describe, follow_step
from .panels import (
    ChecksDock,
    EquivalentDock,
    HistoryDock,
    InsightDock,
    InspectorDock,
    PaletteDock,
    SweepDock,
)
from .recovery import Recovery, left_over
from .safety import CAUTION
from .settings import GRID_STEPS, Settings
from .theme import THEMES
from .workbench import Workbench

__all__ = ["MainWindow", "SafetyBanner"]

Shortcut = str | QKeySequence.StandardKey | None


class MainWindow(QMainWindow):
    """The Portcut workbench window. ``recovery_folder``: where autosave writes (None: no
    autosave, as for screenshots)."""

    def __init__(self, settings: Settings | None = None, recovery_folder: Path | None = None,
                 parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.settings = settings if settings is not None else Settings()
        self.workbench = Workbench(parent=self)
        self.look = Look(theme=THEMES[self.settings.theme], style=self.settings.style)
        self.canvas = Canvas(self.workbench, self.look, self)
        self.canvas.scene.grid_step = self.settings.grid_step
        self.files = FileActions(self, self.workbench, self.settings)
        self.recovery_folder = recovery_folder
        self.recovery = Recovery(self.workbench, recovery_folder, parent=self) \
            if recovery_folder is not None else None
        self.actions: dict[str, QAction] = {}
        self.menus: dict[str, QMenu] = {}
        self.docks: list[QDockWidget] = []
        self.toolbar: QToolBar | None = None  # built after the panels have added their tools

        self.banner = SafetyBanner()
        central = QWidget()
        column = QVBoxLayout(central)
        column.setContentsMargins(0, 0, 0, 0)
        column.setSpacing(0)
        column.addWidget(self.banner)
        column.addWidget(self.canvas.view, 1)
        self.setCentralWidget(central)

        self._build_menus()
        installed = panels.install(self)
        self.palette_dock: PaletteDock = installed.palette
        self.inspector: InspectorDock = installed.inspector
        self.history: HistoryDock = installed.history
        self.checks_dock: ChecksDock = installed.checks
        self.analysis: LiveAnalysis = installed.analysis
        self.cut_marks: CutMarks = installed.cut_marks
        self.equivalent_dock: EquivalentDock = installed.equivalent
        self.sweep_dock: SweepDock = installed.sweep
        self.insight_dock: InsightDock = installed.insight
        self._build_toolbar()
        self._build_status()
        self._connect()
        self._restore_layout()
        self.banner.follow(self.workbench)
        self._update_title()
        if self.recovery is not None:
            self.recovery.start()

    # -- extension points ---------------------------------------------------------------------
    def add_dock(self, dock: QDockWidget, area: Qt.DockWidgetArea,
                 shortcut: str | None = None) -> None:
        """Add a panel; View > Panels gets a toggle for it. ``dock`` needs an objectName so
        that its place is kept between sessions."""
        self.addDockWidget(area, dock)
        toggle = dock.toggleViewAction()
        if shortcut:
            toggle.setShortcut(QKeySequence(shortcut))
        self._panels_menu.addAction(toggle)
        self.docks.append(dock)

    def add_tool(self, spec: ToolSpec) -> QAction:
        """Offer a canvas tool: an action in the Tools menu and on the toolbar."""
        self.canvas.register_tool(spec)
        action = self._action(f"tool_{spec.name}", spec.text,
                              lambda: self.canvas.activate_named(spec.name), spec.shortcut,
                              spec.tip, canvas_only=True)
        action.setCheckable(True)
        self._tool_group.addAction(action)
        self._tools_menu.addAction(action)
        if self.toolbar is not None:
            self.toolbar.insertAction(self._tool_anchor, action)
        return action

    def add_command(self, menu: str, name: str, text: str, slot: Callable[[], object],
                    shortcut: Shortcut = None, tip: str = "") -> QAction:
        """Offer a command in one of :attr:`menus` ("file", "edit", "view", "place", "tools",
        "help"), with ``shortcut`` working wherever the window has the focus."""
        action = self._action(name, text, slot, shortcut, tip)
        self.menus[menu].addAction(action)
        return action

    # -- building -----------------------------------------------------------------------------
    def _action(self, name: str, text: str, slot: Callable[[], object],
                shortcut: Shortcut = None, tip: str = "", canvas_only: bool = False) -> QAction:
        """An action; ``canvas_only`` shortcuts (single keys) work only while the canvas has
        focus, so typing in a panel never triggers them."""
        action = QAction(text, self)
        action.setObjectName(name)
        if isinstance(shortcut, QKeySequence.StandardKey):
            action.setShortcuts(shortcut)
        elif shortcut:
            action.setShortcut(QKeySequence(shortcut))
        describe(action, tip or text.replace("&", "").removesuffix("…"))
        if canvas_only:
            action.setShortcutContext(Qt.ShortcutContext.WidgetWithChildrenShortcut)
            self.canvas.view.addAction(action)
        action.triggered.connect(slot)
        self.actions[name] = action
        return action

    def _build_menus(self) -> None:
        a, key, c = self._action, QKeySequence.StandardKey, self.canvas
        bar = self.menuBar()

        file = self.menus["file"] = bar.addMenu("&File")
        file.addAction(a("new", "&New", self.files.new, key.New, "Start an empty sheet"))
        file.addAction(a("open", "&Open…", self.files.open_dialog, key.Open, "Open a sheet"))
        self._recent_menu = file.addMenu("Open &Recent")
        self._recent_menu.aboutToShow.connect(self._fill_recent)
        examples = file.addMenu("Open E&xample")
        for name in assets.example_names():
            examples.addAction(name.replace("_", " "),
                               lambda n=name: self.files.open_path(assets.example_path(n),
                                                                   as_copy=True))
        file.addSeparator()
        file.addAction(a("save", "&Save", self.files.save, key.Save, "Save the sheet"))
        file.addAction(a("save_as", "Save &As…", self.files.save_as, key.SaveAs,
                         "Save the sheet under another name"))
        file.addAction(a("export_svg", "&Export SVG…", self.files.export_svg, "Ctrl+E",
                         "Write the sheet as an SVG drawing"))
        file.addSeparator()
        file.addAction(a("quit", "&Quit", self.close, key.Quit, "Close the window"))

        edit = self.menus["edit"] = bar.addMenu("&Edit")
        stack = self.workbench.undo_stack
        undo = a("undo", "&Undo", stack.undo, key.Undo)
        follow_step(undo, stack.canUndoChanged, stack.undoTextChanged, stack.undoText)
        redo = a("redo", "&Redo", stack.redo, key.Redo)
        follow_step(redo, stack.canRedoChanged, stack.redoTextChanged, stack.redoText)
        edit.addActions([undo, redo])
        edit.addSeparator()
        edit.addAction(a("cut", "Cu&t", self.cut, key.Cut, "Cut the selection"))
        edit.addAction(a("copy", "&Copy", self.copy, key.Copy, "Copy the selection"))
        edit.addAction(a("paste", "&Paste", self.paste, key.Paste,
                         "Paste at the cursor"))
        edit.addAction(a("duplicate", "D&uplicate", c.duplicate, "Ctrl+D",
                         "Copy the selection next to itself"))
        edit.addAction(a("delete", "&Delete", c.delete_selection, key.Delete,
                         "Delete the selection and the wires left dangling", canvas_only=True))
        edit.addAction(a("select_all", "Select &All", c.select_all, key.SelectAll,
                         "Select everything on the sheet"))
        edit.addSeparator()
        edit.addAction(a("rotate", "&Rotate", c.rotate_selection, "R",
                         "Turn the selection (or the part being placed) a quarter turn",
                         canvas_only=True))
        edit.addAction(a("mirror", "&Mirror", c.mirror_selection, "M",
                         "Flip the selection (or the part being placed) left to right",
                         canvas_only=True))
        edit.addAction(a("edit_value", "Edit &Value", self._edit_value, "F2",
                         "Edit the selected part's value in the inspector", canvas_only=True))

        view = self.menus["view"] = bar.addMenu("&View")
        v = c.view
        view.addAction(a("zoom_in", "Zoom &In", v.zoom_in, key.ZoomIn, "Zoom in"))
        view.addAction(a("zoom_out", "Zoom &Out", v.zoom_out, key.ZoomOut, "Zoom out"))
        view.addAction(a("fit", "&Fit to Sheet", v.fit, "Home", "Show the whole drawing"))
        view.addAction(a("actual_size", "&Actual Size", v.actual_size, "Ctrl+0",
                         "Zoom to 100 %"))
        view.addSeparator()
        self._panels_menu = view.addMenu("&Panels")
        choice_menu(view, "Canvas &theme", [(t, t.title()) for t in THEMES],
                          self.settings.theme, self.set_theme)
        choice_menu(view, "&Symbols", [("iec", "IEC 60617"), ("ieee", "IEEE 315")],
                          self.settings.style, self.set_style)
        choice_menu(view, "Snap &grid", [(s, f"{s} unit{'s' * (s > 1)}")
                                               for s in GRID_STEPS],
                          self.settings.grid_step, self.set_grid)

        place = self.menus["place"] = bar.addMenu("&Place")
        for group in GROUPS:
            place.addSection(group)
            for e in ENTRIES:
                if e.group == group:
                    action = place.addAction(e.title, lambda k=e.key: c.place(k))
                    action.setToolTip(e.tip)
                    action.setStatusTip(e.tip)

        self._tools_menu = self.menus["tools"] = bar.addMenu("&Tools")
        self._tool_group = QActionGroup(self)
        self._tool_group.setExclusionPolicy(QActionGroup.ExclusionPolicy.ExclusiveOptional)
        for spec in list(c.tools.values()):
            self.add_tool(spec)

        help_menu = self.menus["help"] = bar.addMenu("&Help")
        help_menu.addAction(a("safety", "&Safety Note", lambda: self.banner.show_note(CAUTION),
                              None, "Show the electrical-safety note"))
        help_menu.addAction(a("about", "&About Portcut", lambda: show_about(self), None,
                              "What Portcut computes and its limits"))
        help_menu.addAction("About &Qt", QApplication.aboutQt)

    def _build_toolbar(self) -> None:
        bar = self.addToolBar("Main")
        bar.setObjectName("mainToolbar")
        self.toolbar = bar
        for name in ("new", "open", "save", None, "undo", "redo", None):
            bar.addAction(self.actions[name]) if name else bar.addSeparator()
        self._tool_anchor = bar.addSeparator()
        for action in self._tool_group.actions():
            bar.insertAction(self._tool_anchor, action)
        for name in ("rotate", "mirror", "delete", None, "zoom_in", "zoom_out", "fit"):
            bar.addAction(self.actions[name]) if name else bar.addSeparator()

    def _build_status(self) -> None:
        self.tool_status = QLabel()
        self.tool_status.setAccessibleName("What the tool expects next")
        self.position_label = QLabel()
        self.zoom_label = QLabel()
        status = self.statusBar()
        status.addWidget(self.tool_status, 1)
        status.addPermanentWidget(self.position_label)
        status.addPermanentWidget(self.zoom_label)

    def _connect(self) -> None:
        c = self.canvas
        c.statusChanged.connect(self.tool_status.setText)
        c.toolChanged.connect(self._on_tool)
        c.view.cursorMoved.connect(lambda p: self.position_label.setText(f"x {p[0]}, y {p[1]}"))
        c.view.zoomChanged.connect(lambda z: self.zoom_label.setText(f"{z * 100:.0f} %"))
        self.workbench.undo_stack.cleanChanged.connect(self._update_title)
        self.workbench.pathChanged.connect(self._update_title)
        self.workbench.documentReplaced.connect(lambda _: self._update_title())
        if self.recovery is not None:
            self.recovery.failed.connect(lambda m: self.statusBar().showMessage(m, 10000))
        self.tool_status.setText(c.tool.status)

    def _restore_layout(self) -> None:
        geometry, state = self.settings.window_layout()
        if geometry is None or not self.restoreGeometry(geometry):
            self.resize(1280, 820)
        if state is not None:
            self.restoreState(state)

    # -- reactions ----------------------------------------------------------------------------
    def _on_tool(self, name: str) -> None:
        action = self.actions.get(f"tool_{name}")
        if action is not None:
            action.setChecked(True)
        elif self._tool_group.checkedAction() is not None:
            self._tool_group.checkedAction().setChecked(False)

    def _update_title(self) -> None:
        self.setWindowTitle(f"{self.files.name()}[*] — Portcut")
        self.setWindowModified(self.workbench.dirty)

    def _fill_recent(self) -> None:
        menu = self._recent_menu
        menu.clear()
        paths = self.settings.recent_files
        for path in paths:
            menu.addAction(str(path), lambda p=path: self.files.open_path(p))
        if not paths:
            menu.addAction("No recent sheets").setEnabled(False)
        else:
            menu.addSeparator()
            menu.addAction("Clear list", self.settings.clear_recent)

    def _edit_value(self) -> None:
        ids = self.canvas.scene.selected_ids()
        if len(ids) == 1:
            self.canvas.request_edit(ids[0])

    # -- clipboard ----------------------------------------------------------------------------
    def copy(self) -> None:
        data = self.canvas.copy()
        if data is not None:
            clipboard.put(data)

    def cut(self) -> None:
        self.copy()
        self.canvas.delete_selection()

    def paste(self) -> None:
        if not self.canvas.paste(QApplication.clipboard().mimeData()):
            self.statusBar().showMessage("The clipboard holds no sheet elements", 4000)

    # -- settings -----------------------------------------------------------------------------
    def set_theme(self, name: str) -> None:
        self.settings.theme = name
        self.look.theme = THEMES[name]
        self._redraw()

    def set_style(self, style: str) -> None:
        self.settings.style = style
        self.look.style = style
        self.palette_dock.fill(style)
        self._redraw()

    def set_grid(self, step: int) -> None:
        self.settings.grid_step = step
        self.canvas.scene.grid_step = step
        self._redraw()

    def _redraw(self) -> None:
        self.canvas.scene.relayout()
        self.canvas.view.resetCachedContent()
        self.canvas.view.viewport().update()

    # -- recovery and closing -----------------------------------------------------------------
    def offer_recovery(self) -> bool:
        """Offer work left by a session that did not close normally; True if restored."""
        if self.recovery is None:
            return False
        for found in left_over(self.recovery.folder):
            if not dialogs.ask_restore(self, found.describe()):
                found.discard()
                continue
            try:
                doc = found.load()
            except (OSError, CircuitError) as exc:
                dialogs.show_error(self, "Cannot restore", "The recovered copy could not be "
                                   "read.", str(exc))
                found.discard()
                continue
            self.workbench.replace_document(doc, found.source)
            self.workbench.undo_stack.resetClean()  # restored work is not saved anywhere yet
            self._update_title()
            self.recovery.adopt(found)  # kept until this session has its own copy
            return True
        return False

    def closeEvent(self, event: QCloseEvent) -> None:
        if not self.files.confirm_discard():
            event.ignore()
            return
        self.settings.save_window_layout(self.saveGeometry(), self.saveState())
        if self.recovery is not None:
            self.recovery.close()
        self.banner.stop()
        event.accept()
