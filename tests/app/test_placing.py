"""Placing every kind from the palette with real clicks; rotating and mirroring while placing
and afterwards; designators stay unique."""

from __future__ import annotations

from PySide6.QtCore import Qt

from portcut.app.catalog import ENTRIES
from portcut.engine.schematic import Junction, NetLabel, PlacedPart
from portcut.engine.schematic.symbols import pin_positions


def test_every_entry_places_where_clicked(drive):
    spots = {}
    for i, entry in enumerate(ENTRIES):
        at = (4 * (i % 5), 8 * (i // 5))
        drive.place(entry.key, at)
        spots[entry.key] = at
    doc = drive.doc
    placed = {e.kind if isinstance(e, PlacedPart) else
              (e.style if isinstance(e, NetLabel) else "junction"): e for e in doc}
    assert set(placed) == set(spots)
    for key, element in placed.items():
        assert element.at == spots[key]
    designators = [p.designator for p in doc.parts()]
    assert len(designators) == len(set(designators))
    assert placed["ground"].name == "gnd"
    assert isinstance(placed["junction"], Junction)


def test_designators_count_up_per_prefix(drive):
    for x in (0, 6, 12):
        drive.place("resistor", (x, 0))
    drive.place("vcvs", (0, 8))
    drive.place("cccs", (8, 8))
    assert sorted(p.designator for p in drive.doc.parts()) == ["DS1", "DS2", "R1", "R2", "R3"]


def test_preview_follows_the_snapped_cursor_and_rotates(drive):
    drive.canvas.place("resistor")
    drive.move((3.3, 1.8))
    tool = drive.canvas.tool
    assert tool.proto.at == (3, 2)
    assert tool.item.isVisible()
    drive.key(Qt.Key.Key_R)
    drive.key(Qt.Key.Key_M)
    drive.click((3.3, 1.8))
    part = drive.by("R1")
    # a quarter turn, then a flip left to right on screen: the symbol's own mirror and a
    # quarter turn the other way (its first pin stays on top)
    assert (part.at, part.rotation, part.mirror) == ((3, 2), 270, True)
    assert pin_positions("resistor", part.at, 270, True)[0] == (3, 0)
    drive.click((10, 2))  # the next one keeps the orientation
    assert (drive.by("R2").rotation, drive.by("R2").mirror) == (270, True)


def test_rotate_and_mirror_after_placing(drive):
    drive.place("current_source", (0, 0))
    part = drive.by("I1")
    drive.click((0, 0))
    drive.key(Qt.Key.Key_R)
    turned = drive.by("I1")
    assert turned.rotation == 90 and turned.at == part.at
    # pins turned with it: the first pin (-2, 0) goes to (0, -2) under a clockwise quarter turn
    assert pin_positions("current_source", turned.at, 90) == ((0, -2), (0, 2))
    drive.key(Qt.Key.Key_M)
    flipped = drive.by("I1")
    assert (flipped.rotation, flipped.mirror) == (270, True)


def test_drag_from_palette_drops_a_part(drive):
    from PySide6.QtCore import QMimeData, QPointF
    from PySide6.QtGui import QDragEnterEvent, QDragMoveEvent, QDropEvent
    from PySide6.QtWidgets import QApplication

    from portcut.app.canvas import ENTRY_MIME

    data = QMimeData()
    data.setData(ENTRY_MIME, b"capacitor")
    at = QPointF(drive.at((6, 2)))
    viewport = drive.viewport
    action = Qt.DropAction.CopyAction
    none = Qt.KeyboardModifier.NoModifier
    # Qt's drag enter/move events take an integer point, the drop a real one
    for event in (QDragEnterEvent(at.toPoint(), action, data, Qt.MouseButton.LeftButton, none),
                  QDragMoveEvent(at.toPoint(), action, data, Qt.MouseButton.LeftButton, none),
                  QDropEvent(at, action, data, Qt.MouseButton.LeftButton, none)):
        QApplication.sendEvent(viewport, event)
    part = drive.by("C1")
    assert part is not None and part.at == (6, 2)
    assert drive.canvas.tool.name == "select"  # a drop places one part
