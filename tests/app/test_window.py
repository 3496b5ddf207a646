"""The window around the canvas: the one-time safety note, settings kept between sessions,
extension points for more tools and panels, shortcuts and tooltips."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from PySide6.QtWidgets import QDockWidget, QLabel

from portcut.app.canvas import Tool, ToolSpec
from portcut.app.window import MainWindow


def test_safety_note_shows_once_without_blocking(window, drive):
    drive.place("voltage_source", (0, 0))
    assert not window.banner.isVisible()
    drive.click((0, 0))
    editor = window.inspector.editors["value"]
    editor.edit.setFocus()
    editor.edit.selectAll()
    QTest.keyClicks(editor.edit, "230")           # above 120 V DC (extra-low voltage limit)
    QTest.keyClick(editor.edit, Qt.Key.Key_Return)
    assert window.banner.isVisible()
    assert "local codes and licensed practice" in window.banner.label.text()
    assert "V1" in window.banner.label.text()
    window.banner.hide()                          # the user closes it
    drive.place("voltage_source", (0, 8))
    drive.click((0, 8))
    editor = window.inspector.editors["value"]
    editor.edit.selectAll()
    QTest.keyClicks(editor.edit, "400")
    QTest.keyClick(editor.edit, Qt.Key.Key_Return)
    assert not window.banner.isVisible()          # once per sheet


def test_settings_are_kept_between_sessions(qtbot, settings, tmp_path):
    first = MainWindow(settings)
    qtbot.addWidget(first)
    first.set_theme("dark")
    first.set_style("ieee")
    first.set_grid(2)
    first.history.hide()
    first.close()
    second = MainWindow(settings)
    qtbot.addWidget(second)
    assert second.look.theme.name == "dark" and second.look.style == "ieee"
    assert second.canvas.scene.grid_step == 2
    second.show()
    assert not second.history.isVisible()


def test_further_tools_and_panels_plug_in(window, drive):
    started = []

    class Probe(Tool):
        name = "probe"

        def start(self):
            started.append(self)

    action = window.add_tool(ToolSpec("probe", "&Probe", "P", "Try the probe", Probe))
    dock = QDockWidget("Extra")
    dock.setObjectName("extra")
    dock.setWidget(QLabel("extra"))
    window.add_dock(dock, Qt.DockWidgetArea.RightDockWidgetArea)
    drive.key(Qt.Key.Key_P)
    assert started and window.canvas.tool.name == "probe" and action.isChecked()
    assert dock.toggleViewAction() in window._panels_menu.actions()
    drive.key(Qt.Key.Key_Escape)
    assert window.canvas.tool.name == "select"


def test_every_shortcut_is_one_actions_and_shown_in_its_tooltip(window):
    owners: dict[str, list[str]] = {}
    toggles = {dock.objectName(): dock.toggleViewAction() for dock in window.docks}
    for name, action in [*window.actions.items(), *toggles.items()]:
        for sequence in action.shortcuts():
            owners.setdefault(sequence.toString(), []).append(name)
    assert {key: names for key, names in owners.items() if len(names) > 1} == {}
    assert "(R)" in window.actions["rotate"].toolTip()
    assert window.actions["rotate"].shortcutContext() == \
        Qt.ShortcutContext.WidgetWithChildrenShortcut
