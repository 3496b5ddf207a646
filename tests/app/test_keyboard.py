"""Every tool without a mouse: the palette by keys, placing and wiring with the keyboard cursor,
stepping through elements, nudging, rotating, deleting, box-selecting, zooming and panning."""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt
from PySide6.QtTest import QTest

from portcut.engine.schematic.connectivity import extract

SHIFT = Qt.KeyboardModifier.ShiftModifier
CTRL = Qt.KeyboardModifier.ControlModifier


def _palette_pick(window, key: str) -> None:
    palette = window.palette_dock.list
    palette.setFocus()
    palette.setCurrentItem(window.palette_dock.item_for(key))
    QTest.keyClick(palette, Qt.Key.Key_Return)


def test_place_and_wire_with_keys_only(window, drive):
    _palette_pick(window, "resistor")
    assert drive.canvas.tool.name == "place" and drive.view.hasFocus()
    drive.key(Qt.Key.Key_Return)                          # R1 at the cursor, (0, 0)
    drive.key(Qt.Key.Key_Right, SHIFT, 2)                 # ten units right
    drive.key(Qt.Key.Key_Return)                          # R2 at (10, 0)
    drive.key(Qt.Key.Key_Escape)
    assert [p.at for p in drive.doc.parts()] == [(0, 0), (10, 0)]
    drive.key(Qt.Key.Key_W)
    drive.key(Qt.Key.Key_Left, times=8)                   # from (10, 0) to (2, 0)
    drive.key(Qt.Key.Key_Return)                          # start at R1's second pin
    drive.key(Qt.Key.Key_Right, times=6)
    drive.key(Qt.Key.Key_Return)                          # R2's first pin: joined, ended
    assert [w.points for w in drive.doc.wires()] == [((2, 0), (8, 0))]
    conn = extract(drive.doc)
    assert conn.net_of_pin[(drive.by("R1").id, 1)] == conn.net_of_pin[(drive.by("R2").id, 0)]


def test_step_nudge_rotate_delete_and_edit_with_keys(window, drive):
    drive.place("resistor", (0, 0))
    drive.place("capacitor", (10, 0))
    drive.key(Qt.Key.Key_Escape)
    drive.key(Qt.Key.Key_Tab)                             # reading order: R1 first
    scene = drive.canvas.scene
    assert scene.selected_ids() == [drive.by("R1").id]
    drive.key(Qt.Key.Key_Tab)
    assert scene.selected_ids() == [drive.by("C1").id]
    drive.key(Qt.Key.Key_Down, times=2)
    drive.key(Qt.Key.Key_R)
    c1 = drive.by("C1")
    assert (c1.at, c1.rotation) == ((10, 2), 90)
    drive.key(Qt.Key.Key_F2)
    assert window.inspector.editors["value"].edit.hasFocus()
    drive.key(Qt.Key.Key_Backtab)
    drive.key(Qt.Key.Key_Delete)
    assert drive.by("R1") is None


def test_box_select_with_keys(drive):
    drive.place("resistor", (0, 0))
    drive.place("resistor", (10, 0))
    drive.key(Qt.Key.Key_Escape)
    drive.view.set_cursor((-4, -3))
    drive.key(Qt.Key.Key_Return)                          # empty sheet: a box starts
    drive.key(Qt.Key.Key_Right, times=8)
    drive.key(Qt.Key.Key_Down, times=6)
    drive.key(Qt.Key.Key_Return)                          # and closes
    assert drive.canvas.scene.selected_ids() == [drive.by("R1").id]


def test_zoom_pan_and_fit_with_keys(window, drive):
    view = drive.view
    start = view.zoom()
    drive.key(Qt.Key.Key_Plus)
    assert view.zoom() > start
    window.actions["zoom_out"].trigger()
    window.actions["zoom_out"].trigger()
    assert view.zoom() < start
    bar = view.horizontalScrollBar()
    before = bar.value()
    drive.key(Qt.Key.Key_Right, CTRL)
    assert bar.value() > before
    drive.place("resistor", (0, 0))
    drive.place("resistor", (60, 30))
    drive.key(Qt.Key.Key_Home)                            # fit to sheet
    shown = view.mapToScene(view.viewport().rect()).boundingRect()
    drawing = drive.canvas.scene.drawing_rect()
    assert shown.contains(drawing)
    drive.key(Qt.Key.Key_0, CTRL)                         # 100 %
    assert view.zoom() == pytest.approx(1.0)
