"""The checks panel with real events: a shorted part gets a mark on the canvas and a line in the
list, a click on the line selects the part and centres it, and the marks follow edits (undo
included). A part with both ends on one node carries no current (common practice)."""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from sheets import SOURCE_SIDE, divider, lasso, open_sheet, settle

from portcut.app.canvas.marks import CheckMarksItem
from portcut.engine.schematic import PlacedPart, Wire, build_circuit, extract
from portcut.engine.schematic.checks import drawing_checks, sheet_checks


def _marks(window) -> tuple:
    items = [i for i in window.canvas.scene.items() if isinstance(i, CheckMarksItem)]
    return items[0].points if items else ()


def _with_island():
    """The divider and, beside it, R7 and R8 in a loop of their own: an island away from
    ground."""
    doc = divider()
    for designator, x in (("R7", 24), ("R8", 28)):
        doc.add(PlacedPart(doc.new_id(PlacedPart), "resistor", designator, (x, 4), 90,
                           value="1k"))
    doc.add(Wire(doc.new_id(Wire), ((24, 2), (28, 2))))
    doc.add(Wire(doc.new_id(Wire), ((24, 6), (28, 6))))
    return doc


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
    doc = _with_island()
    open_sheet(window, doc)
    dock = window.checks_dock
    qtbot.waitUntil(lambda: dock.list.count() == 1, timeout=3000)
    assert dock.list.item(0).text().startswith("Floating: ")
    assert dock.checks[0].element_id == drive.by("R7").id
    assert len(_marks(window)) == 1


def test_the_circuit_checks_follow_a_nudge_and_a_value_edit(window, drive, qtbot):
    # the circuit a check builds is kept and only its changed parts rebuilt: after a nudge
    # and a value typed, the list is what checking the sheet from scratch gives
    doc = _with_island()
    open_sheet(window, doc)
    dock = window.checks_dock
    qtbot.waitUntil(lambda: dock.list.count() == 1, timeout=3000)
    drive.click(drive.by("R8").at)
    drive.key(Qt.Key.Key_Right)  # R8 leaves the loop's wires: R7 stands shorted on its own
    editor = window.inspector.editors["value"]
    editor.edit.setFocus()
    QTest.keyClick(editor.edit, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
    QTest.keyClicks(editor.edit, "2k2")
    QTest.keyClick(editor.edit, Qt.Key.Key_Return)
    assert drive.by("R8").value == "2k2" and drive.by("R8").at == (29, 4)
    qtbot.waitUntil(lambda: not dock._timer.isActive() and not dock._circuit_timer.isActive(),
                    timeout=3000)  # the circuit checked again, once the edits paused
    assert dock.checks == sheet_checks(drive.doc, extract(drive.doc))
    assert dock._built[0] == build_circuit(drive.doc, extract(drive.doc))
    drive.key(Qt.Key.Key_Z, Qt.KeyboardModifier.ControlModifier, times=2)
    expected = sheet_checks(drive.doc, extract(drive.doc))
    assert [c.kind for c in expected] == ["floating"]
    qtbot.waitUntil(lambda: dock.checks == expected, timeout=3000)


@pytest.mark.parametrize("background", [False, True])
def test_the_checks_read_the_nets_of_the_live_analysis(window, drive, qtbot, background):
    # the drawing is checked on the nets the live analysis's answer brings, whether it ran at
    # once or in the background: a shorted part drawn along the ground rail is listed,
    # cleared once deleted and listed again on undo
    doc = divider()
    doc.add(PlacedPart(doc.new_id(PlacedPart), "resistor", "R9", (12, 6), value="1k"))
    open_sheet(window, doc)
    lasso(drive, SOURCE_SIDE)
    if background:  # the worker analyses from now on
        window.analysis.inline_parts = window.analysis.inline_ms = 0
    dock = window.checks_dock
    drive.key(Qt.Key.Key_S)
    drive.click(drive.by("R9").at)
    for key, listed in ((Qt.Key.Key_Delete, False), (Qt.Key.Key_Z, True)):
        drive.key(key, Qt.KeyboardModifier.ControlModifier if listed else
                  Qt.KeyboardModifier.NoModifier)
        qtbot.waitUntil(lambda: window.analysis.shown_generation == window.analysis.generation,
                        timeout=10000)
        qtbot.waitUntil(lambda listed=listed: any(
            c.kind == "shorted" for c in dock.checks) == listed, timeout=3000)
        assert dock._conn is window.analysis.conn  # no second extraction
        assert dock.checks[:len(dock._drawn)] == drawing_checks(drive.doc, extract(drive.doc))
