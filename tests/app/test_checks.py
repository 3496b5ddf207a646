"""The checks panel with real events: a shorted part gets a mark on the canvas and a line in the
list, a click on the line selects the part and centres it, and the marks follow edits (undo
included). A part with both ends on one node carries no current (common practice)."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from sheets import divider, open_sheet, settle

from portcut.app.canvas.marks import CheckMarksItem
from portcut.engine.schematic import PlacedPart, Wire


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


def test_a_floating_island_is_listed_once_the_edits_pause(window, drive, qtbot):
    # R7 and R8 form a loop of their own, joined to nothing else: an island with no path to
    # ground, whose potential nodal analysis cannot fix (common practice)
    doc = divider()
    for designator, x in (("R7", 24), ("R8", 28)):
        doc.add(PlacedPart(doc.new_id(PlacedPart), "resistor", designator, (x, 4), 90,
                           value="1k"))
    doc.add(Wire(doc.new_id(Wire), ((24, 2), (28, 2))))
    doc.add(Wire(doc.new_id(Wire), ((24, 6), (28, 6))))
    open_sheet(window, doc)
    dock = window.checks_dock
    qtbot.waitUntil(lambda: dock.list.count() == 1, timeout=3000)
    assert dock.list.item(0).text().startswith("Floating: ")
    assert dock.checks[0].element_id == drive.by("R7").id
    assert len(_marks(window)) == 1
