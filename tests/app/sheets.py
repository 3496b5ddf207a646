"""Sheets for the region, panel, collapse and sweep tests, and the boundary gestures.

Layouts are in grid units; the window fixture shows grid point (8, 4) in the middle of the view
at actual size, so everything here is on screen. The divider they start from is the one of
tests/drawn.py, which the engine tests draw too.
"""

from __future__ import annotations

from drawn import divider  # noqa: F401  (re-exported for the app tests)
from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from PySide6.QtWidgets import QApplication, QComboBox, QWidget

from portcut.engine.schematic import Document

#: A lasso around the source side of :func:`divider` (V1, R1, R2), drawn clockwise.
SOURCE_SIDE = [(-3, -1), (4, -1), (11, -1), (11, 4), (11, 9), (4, 9), (-3, 9), (-3, 4),
               (-3, 0)]
#: A lasso around R1 and R2 only, leaving V1 out.
WITHOUT_SOURCE = [(1, -1), (11, -1), (11, 9), (1, 9), (1, 0)]


def open_sheet(window, doc: Document) -> None:
    """Edit ``doc`` in the window, at actual size around grid point (8, 4)."""
    from portcut.app.canvas.grid import to_scene

    window.workbench.replace_document(doc, None)
    window.canvas.view.actual_size()
    window.canvas.view.centerOn(to_scene((8, 4)))
    settle()


def settle() -> None:
    """Let the zero timers (live analysis, equivalence check, sweep) run."""
    for _ in range(3):
        QApplication.processEvents()


def lasso(drive, points, modifiers=Qt.KeyboardModifier.NoModifier) -> None:
    """Drag the left button through ``points`` (grid units) with the boundary tool."""
    drive.key(Qt.Key.Key_B)
    first, *rest = points
    drive.move(first)
    QTest.mousePress(drive.viewport, Qt.MouseButton.LeftButton, modifiers, drive.at(first))
    previous = first
    for p in rest:
        for i in range(1, 4):  # a few moves per leg, as a hand makes them
            t = i / 3
            QTest.mouseMove(drive.viewport, drive.at((previous[0] + (p[0] - previous[0]) * t,
                                                      previous[1] + (p[1] - previous[1]) * t)))
        previous = p
    QTest.mouseRelease(drive.viewport, Qt.MouseButton.LeftButton, modifiers, drive.at(previous))
    settle()


def click_button(button: QWidget) -> None:
    QTest.mouseClick(button, Qt.MouseButton.LeftButton)
    settle()


def type_into(line_edit: QWidget, text: str) -> None:
    """Replace a line edit's text by typing, then press Enter."""
    line_edit.setFocus()
    QTest.keyClick(line_edit, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    QTest.keyClicks(line_edit, text)
    QTest.keyClick(line_edit, Qt.Key.Key_Return)
    settle()


def pick(box: QComboBox, data: object) -> None:
    """Choose the item of ``box`` holding ``data`` with the mouse: click the box, then the item
    in its list (once the list takes clicks: it ignores a release within a double-click
    interval of opening)."""
    QTest.mouseClick(box, Qt.MouseButton.LeftButton)
    view = box.view()
    QTest.qWait(QApplication.doubleClickInterval() + 50)
    assert view.isVisible(), "the list did not open"
    index = next(i for i in range(box.count()) if box.itemData(i) == data)
    centre = view.visualRect(box.model().index(index, 0)).center()
    QTest.mouseMove(view.viewport(), centre)
    QTest.mouseClick(view.viewport(), Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier,
                     centre)
    settle()
