"""The checks panel with real events: a shorted part gets a mark on the canvas and a line in the
list, a click on the line selects the part and centres it, and the marks follow edits (undo
included). A part with both ends on one node carries no current (common practice)."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from sheets import divider, open_sheet, settle

from app.canvas.marks import CheckMarksItem
from engine.schematic import PlacedPart


def _marks(window) -> tuple:
    items = [i for i in window.canvas.scene.items() if isinstance(i, CheckMarksItem)]
    return items[0].points if items else ()


def test_a_shorted_part_is_marked_listed_and_selected_from_its_line(window, drive):
    doc = divider()
    # R9 lies along the top wire: both its pins are taps on net "out"
    doc.add(PlacedPart(doc.new_id(PlacedPart), "resistor", "R9", (12, 2), value="1k"))
    open_sheet(window, doc)
    settle()
    dock = window.checks_dock
    dock.show()
    dock.raise_()
    settle()
    lines = [dock.list.item(i).text() for i in range(dock.list.count())]
    assert len(lines) == 1 and lines[0].startswith("Shorted: R9 has both pins on net")
    r9 = drive.by("R9")
    assert _marks(window) == (dock.checks[0].at,)
    drive.canvas.view.centerOn(0, 0)
    list_view = dock.list
    rect = list_view.visualItemRect(list_view.item(0))
    QTest.mouseClick(list_view.viewport(), Qt.MouseButton.LeftButton,
                     Qt.KeyboardModifier.NoModifier, rect.center())
    assert drive.canvas.scene.selected_ids() == [r9.id]
    centre = drive.view.mapToScene(drive.viewport.rect().center())
    body = drive.canvas.scene.item(r9.id).sceneBoundingRect()
    assert abs(centre.x() - body.center().x()) < body.width()
    # marks follow edits: deleting R9 clears them, undo brings them back
    drive.key(Qt.Key.Key_Delete)
    settle()
    assert dock.list.count() == 0 and _marks(window) == ()
    drive.key(Qt.Key.Key_Z, Qt.KeyboardModifier.ControlModifier)
    settle()
    assert dock.list.count() == 1 and _marks(window) == (dock.checks[0].at,)
