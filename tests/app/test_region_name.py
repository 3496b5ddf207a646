"""Renaming a region from the equivalent panel with real keyboard events: the name lands in the
document as one undo step and shows in the region list and on the canvas, an empty or taken
name is refused under the field with the document unchanged, Shift+F2 gets there from the
canvas, and the name and a chosen port are what Save writes."""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from sheets import SOURCE_SIDE, divider, lasso, open_sheet, pick, settle, type_into

from portcut.engine.schematic.fileformat import load

CTRL = Qt.KeyboardModifier.ControlModifier
SHIFT = Qt.KeyboardModifier.ShiftModifier


def _drawn(window, drive):
    open_sheet(window, divider())
    lasso(drive, SOURCE_SIDE)
    return window.equivalent_dock


def _canvas_name(window, region) -> str:
    return window.canvas.scene.item(region.id)._name.text()


def test_a_name_typed_in_the_panel_renames_the_region(window, drive):
    panel = _drawn(window, drive)
    assert panel.name.edit.text() == "Region 1"
    type_into(panel.name.edit, "  source side ")
    (region,) = drive.doc.regions()
    assert region.name == "source side"
    assert panel.region_box.currentText() == "source side"
    assert _canvas_name(window, region) == "source side"
    assert window.workbench.undo_stack.undoText() == \
        "Rename region “Region 1” to “source side”"
    drive.key(Qt.Key.Key_Z, CTRL)
    settle()
    (region,) = drive.doc.regions()
    assert region.name == "Region 1" and panel.name.edit.text() == "Region 1"
    assert _canvas_name(window, region) == "Region 1"


def test_an_empty_or_taken_name_is_refused_and_the_region_keeps_its_own(window, drive):
    panel = _drawn(window, drive)
    lasso(drive, [(13, -1), (19, -1), (19, 9), (13, 9), (13, 0)])  # RL alone: "Region 2"
    assert panel.name.edit.text() == "Region 2"
    depth = window.workbench.undo_stack.count()
    type_into(panel.name.edit, "   ")
    assert panel.name.in_error and "enter a name" in panel.name.error.text()
    type_into(panel.name.edit, "Region 1")
    assert panel.name.in_error
    assert "another region is already called “Region 1”" in panel.name.error.text()
    assert panel.name.edit.property("error") is True
    assert sorted(r.name for r in drive.doc.regions()) == ["Region 1", "Region 2"]
    assert window.workbench.undo_stack.count() == depth
    QTest.keyClick(panel.name.edit, Qt.Key.Key_Escape)
    assert panel.name.edit.text() == "Region 2" and not panel.name.in_error


def test_shift_f2_on_the_canvas_goes_to_the_name(window, drive):
    panel = _drawn(window, drive)
    drive.key(Qt.Key.Key_F2, SHIFT)
    assert panel.name.edit.hasFocus() and panel.name.edit.selectedText() == "Region 1"
    QTest.keyClicks(panel.name.edit, "divider")
    QTest.keyClick(panel.name.edit, Qt.Key.Key_Return)
    settle()
    assert drive.doc.regions()[0].name == "divider"


def test_the_name_and_a_chosen_port_are_saved_in_the_file(window, drive, tmp_path: Path):
    panel = _drawn(window, drive)
    type_into(panel.name.edit, "source side")
    pick(panel.port_boxes["plus"], "gnd")
    path = tmp_path / "named.json"
    assert window.files.save_to(path)
    (region,) = load(path).regions()
    assert (region.name, region.port) == ("source side", ("gnd", "out"))
    assert '"version": 3' in path.read_text(encoding="utf-8")
