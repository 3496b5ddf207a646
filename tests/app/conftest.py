"""Fixtures for the desktop tests: a main window on throwaway settings and recovery folder, and
a :class:`Driver` that works the canvas with real mouse and key events on the view's viewport.

Qt runs offscreen (tests/conftest.py). Blocking questions (unsaved changes, restore) are
answered by patching app.dialogs; error boxes are non-blocking and closed by the tests.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from PySide6.QtCore import QPoint, QSettings, QStandardPaths, Qt
from PySide6.QtTest import QTest
from PySide6.QtWidgets import QMessageBox

from portcut.app import dialogs
from portcut.app.canvas.grid import to_scene
from portcut.app.settings import Settings
from portcut.app.window import MainWindow

QStandardPaths.setTestModeEnabled(True)


class Driver:
    """Mouse and keyboard on the canvas viewport, in grid coordinates."""

    def __init__(self, window: MainWindow) -> None:
        self.window = window
        self.canvas = window.canvas
        self.view = window.canvas.view
        self.viewport = self.view.viewport()

    @property
    def doc(self):
        return self.window.workbench.doc

    def at(self, p: tuple[float, float]) -> QPoint:
        return self.view.mapFromScene(to_scene(p))

    def move(self, p) -> None:
        """Move the pointer to ``p``. Qt sends no move event when the pointer is already
        there (an earlier test may have left it there), so it comes from one pixel aside."""
        target = self.at(p)
        QTest.mouseMove(self.viewport, target + QPoint(1, 1))
        QTest.mouseMove(self.viewport, target)

    def click(self, p, modifiers=Qt.KeyboardModifier.NoModifier) -> None:
        self.move(p)
        QTest.mouseClick(self.viewport, Qt.MouseButton.LeftButton, modifiers, self.at(p))

    def double_click(self, p) -> None:
        """As a platform delivers it: press, release, double-click, release."""
        self.click(p)
        QTest.mouseDClick(self.viewport, Qt.MouseButton.LeftButton,
                          Qt.KeyboardModifier.NoModifier, self.at(p))

    def drag(self, a, b, steps: int = 4, button=Qt.MouseButton.LeftButton,
             modifiers=Qt.KeyboardModifier.NoModifier) -> None:
        self.move(a)
        QTest.mousePress(self.viewport, button, modifiers, self.at(a))
        for i in range(1, steps + 1):
            t = i / steps
            QTest.mouseMove(self.viewport, self.at((a[0] + (b[0] - a[0]) * t,
                                                    a[1] + (b[1] - a[1]) * t)))
        QTest.mouseRelease(self.viewport, button, modifiers, self.at(b))

    def key(self, key, modifiers=Qt.KeyboardModifier.NoModifier, times: int = 1) -> None:
        """Keys go where the platform sends them: to the focused widget, the view."""
        self.view.setFocus()
        for _ in range(times):
            QTest.keyClick(self.view, key, modifiers)

    def place(self, key: str, at) -> None:
        """Pick ``key`` in the palette with a real click, then click the sheet at ``at``."""
        palette = self.window.palette_dock.list
        item = self.window.palette_dock.item_for(key)
        QTest.mouseClick(palette.viewport(), Qt.MouseButton.LeftButton,
                         Qt.KeyboardModifier.NoModifier, palette.visualItemRect(item).center())
        self.click(at)
        self.key(Qt.Key.Key_Escape)

    def wire(self, *points) -> None:
        """Draw a wire with the wire tool through ``points`` (clicks at each)."""
        self.key(Qt.Key.Key_W)
        for p in points:
            self.click(p)
        self.key(Qt.Key.Key_Escape)
        self.key(Qt.Key.Key_Escape)

    def by(self, designator: str):
        return self.doc.by_designator(designator)


@pytest.fixture(autouse=True)
def _answers(monkeypatch):
    """Unless a test says otherwise: discard unsaved changes, do not restore."""
    monkeypatch.setattr(dialogs, "ask_save_changes", lambda *a: dialogs.SaveChoice.DISCARD)
    monkeypatch.setattr(dialogs, "ask_restore", lambda *a: False)


@pytest.fixture
def settings(tmp_path: Path) -> Settings:
    return Settings(QSettings(str(tmp_path / "settings.ini"), QSettings.Format.IniFormat))


@pytest.fixture
def window(qtbot, settings, tmp_path: Path) -> MainWindow:
    w = MainWindow(settings, recovery_folder=tmp_path / "recovery")
    qtbot.addWidget(w)
    w.resize(1200, 800)
    w.show()
    qtbot.waitExposed(w)
    w.canvas.view.actual_size()
    w.canvas.view.centerOn(to_scene((8, 4)))
    return w


@pytest.fixture
def drive(window) -> Driver:
    return Driver(window)


@pytest.fixture
def close_error_box(window):
    """A function that closes the open error box (there must be one) and returns its text."""
    return lambda: _close_error_box(window)


def _close_error_box(window: MainWindow) -> str:
    boxes = [b for b in window.findChildren(QMessageBox) if b.isVisible()]
    assert boxes, "expected an error box"
    box = boxes[-1]
    text = f"{box.text()}\n{box.informativeText()}"
    box.close()
    return text
