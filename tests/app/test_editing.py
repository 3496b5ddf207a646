"""Editing on the canvas with real events: move (wires follow, nets kept), nudge, rotate,
rubber-band selection, delete (dangling wires go too), copy/paste/duplicate, and undo/redo back
to the exact document. Nets are read with engine.schematic.connectivity.extract."""

from __future__ import annotations

from itertools import pairwise

from PySide6.QtCore import Qt
from PySide6.QtGui import QKeySequence
from PySide6.QtTest import QTest
from PySide6.QtWidgets import QGraphicsEllipseItem, QToolTip
from sheets import divider, open_sheet

from portcut import assets
from portcut.engine.drawing.svg import junction_points
from portcut.engine.schematic.connectivity import extract
from portcut.engine.schematic.fileformat import dumps, loads
from portcut.engine.schematic.symbols import pin_positions
from portcut.engine.solve.circuit import GROUND

CTRL = Qt.KeyboardModifier.ControlModifier


def _snapshot(doc):
    return loads(dumps(doc))


def _partition(doc) -> set[frozenset]:
    """Which pins share a net, independent of the nets' names."""
    conn = extract(doc)
    nets: dict[str, set] = {}
    for key, net in conn.net_of_pin.items():
        nets.setdefault(net, set()).add(key)
    return {frozenset(v) for v in nets.values()}


def _open_example(window, name="rc_antialias"):
    assert window.files.open_path(assets.example_path(name), as_copy=True)
    window.canvas.view.actual_size()


def _undo(drive, times=1):
    drive.key(Qt.Key.Key_Z, CTRL, times)


def _redo(drive, times=1):
    for _ in range(times):
        drive.window.actions["redo"].trigger()


def _part_with_wires(doc):
    """A resistor with a wire end on each pin."""
    ends = {p for w in doc.wires() for p in (w.points[0], w.points[-1])}
    return next(p for p in doc.parts() if p.kind == "resistor"
                and set(pin_positions(p.kind, p.at, p.rotation, p.mirror)) <= ends)


def test_moving_a_part_drags_its_wires_and_keeps_the_nets(window, drive):
    _open_example(window)
    doc = drive.doc
    part = _part_with_wires(doc)
    before = _partition(doc)
    drive.canvas.view.centerOn(drive.canvas.scene.item(part.id))
    drive.drag(part.at, (part.at[0] + 1, part.at[1] + 3))
    moved = doc[part.id]
    assert moved.at == (part.at[0] + 1, part.at[1] + 3)
    ends = {p for w in doc.wires() for p in (w.points[0], w.points[-1])}
    assert set(pin_positions(moved.kind, moved.at, moved.rotation, moved.mirror)) <= ends
    assert _partition(doc) == before
    for wire in doc.wires():  # still orthogonal
        assert all(a[0] == b[0] or a[1] == b[1] for a, b in pairwise(wire.points))


def test_undo_and_redo_return_the_exact_document(window, drive):
    _open_example(window)
    doc = drive.doc
    start = _snapshot(doc)
    part = _part_with_wires(doc)
    drive.canvas.view.centerOn(drive.canvas.scene.item(part.id))
    drive.drag(part.at, (part.at[0], part.at[1] + 2))              # 1 move
    drive.key(Qt.Key.Key_R)                                          # 2 rotate
    drive.place("capacitor", (part.at[0] + 8, part.at[1] - 6))      # 3 place
    drive.click((part.at[0], part.at[1] + 2))
    drive.key(Qt.Key.Key_Delete)                                     # 4 delete with wires
    after = _snapshot(doc)
    assert doc != start
    _undo(drive, 4)
    assert doc == start
    _redo(drive, 4)
    assert doc == after


def test_nudges_merge_into_one_undo_step(window, drive):
    drive.place("resistor", (0, 0))
    drive.click((0, 0))
    stack = window.workbench.undo_stack
    steps = stack.count()
    drive.key(Qt.Key.Key_Right, times=3)
    drive.key(Qt.Key.Key_Down)
    assert drive.by("R1").at == (3, 1)
    assert stack.count() == steps + 1
    _undo(drive)
    assert drive.by("R1").at == (0, 0)


def test_delete_takes_the_wires_left_dangling(drive):
    for x in (0, 10, 20):
        drive.place("resistor", (x, 0))
    drive.wire((2, 0), (8, 0))            # R1 - R2
    drive.wire((12, 0), (18, 0))          # R2 - R3
    drive.place("ground", (5, 6))
    drive.wire((5, 0), (5, 6))            # a tee off the R1-R2 wire down to ground
    start = _snapshot(drive.doc)
    drive.click((20, 0))
    drive.key(Qt.Key.Key_Delete)          # R3 goes, and the R2-R3 wire with it
    assert drive.by("R3") is None
    assert ((12, 0), (18, 0)) not in [w.points for w in drive.doc.wires()]
    drive.click((0, 0))
    drive.key(Qt.Key.Key_Delete)          # the R1-R2 wire still joins R2 and the tee: it stays
    assert ((2, 0), (8, 0)) in [w.points for w in drive.doc.wires()]
    _undo(drive, 2)
    assert drive.doc == start


def test_rubber_band_inside_and_touching(drive):
    drive.place("resistor", (0, 0))
    drive.place("resistor", (10, 0))
    drive.wire((2, 0), (8, 0))
    scene = drive.canvas.scene
    drive.drag((-4, -3), (4, 3))          # rightwards: what lies inside
    assert scene.selected_ids() == [drive.by("R1").id]
    drive.drag((6, 3), (5, -3))           # leftwards: what the box touches (the wire only)
    assert scene.selected_ids() == [w.id for w in drive.doc.wires()]
    drive.drag((14, 4), (-4, -4))
    assert len(scene.selected_ids()) == 3


def test_copy_paste_and_duplicate_make_fresh_parts(window, drive):
    drive.place("resistor", (0, 0))
    drive.place("resistor", (10, 0))
    drive.wire((2, 0), (8, 0))
    drive.key(Qt.Key.Key_A, CTRL)
    drive.key(Qt.Key.Key_C, CTRL)
    drive.move((5, 10))
    drive.key(Qt.Key.Key_V, CTRL)
    doc = drive.doc
    assert sorted(p.designator for p in doc.parts()) == ["R1", "R2", "R3", "R4"]
    assert len(doc.wires()) == 2
    conn = extract(doc)
    assert conn.net_of_pin[(drive.by("R3").id, 1)] == conn.net_of_pin[(drive.by("R4").id, 0)]
    assert conn.net_of_pin[(drive.by("R3").id, 1)] != conn.net_of_pin[(drive.by("R1").id, 1)]
    assert drive.by("R3").at[1] == 10   # centred on the cursor
    drive.click((0, 0))
    drive.key(Qt.Key.Key_D, CTRL)
    assert drive.by("R5").at == (2, 2)
    assert window.actions["paste"].shortcut() == QKeySequence(QKeySequence.StandardKey.Paste)


def test_cut_removes_and_paste_brings_back(window, drive):
    drive.place("inductor", (0, 0))
    drive.click((0, 0))
    drive.key(Qt.Key.Key_X, CTRL)
    assert drive.doc.parts() == []
    drive.move((0, 0))
    drive.key(Qt.Key.Key_V, CTRL)
    (part,) = drive.doc.parts()
    assert (part.kind, part.at) == ("inductor", (0, 0))


def test_canvas_dots_match_the_svg_writers_rule_on_every_example(window, drive):
    for name in assets.example_names():
        _open_example(window, name)
        doc = drive.doc
        explicit = {j.at for j in doc.junctions()}
        assert drive.canvas.scene.dot_points() == set(junction_points(doc)) - explicit, name
    # and still after edits, which update the dots incrementally
    _open_example(window, "strain_gauge_bridge")
    doc = drive.doc
    explicit = {j.at for j in doc.junctions()}
    part = _part_with_wires(doc)
    drive.canvas.view.centerOn(drive.canvas.scene.item(part.id))
    drive.drag(part.at, (part.at[0] + 2, part.at[1] + 1))
    drive.key(Qt.Key.Key_R)
    drive.key(Qt.Key.Key_Delete)
    assert drive.canvas.scene.dot_points() == set(junction_points(doc)) - explicit


def test_the_canvas_follows_batches_that_undo_their_own_steps(window, drive):
    """A batch is told as its net effect, so views never look up an element that is gone."""
    from portcut.engine.schematic import Junction

    drive.place("resistor", (0, 0))
    doc = drive.doc
    (part,) = doc.parts()
    with doc.batch():
        doc.replace_fields(part.id, value="2k2")
        doc.remove(part.id)
    with doc.batch():
        doc.add(Junction("j9", (6, 6)))
        doc.remove("j9")
    assert len(doc) == 0
    assert window.canvas.scene.item(part.id) is None and window.canvas.scene.item("j9") is None


def test_a_replacement_inside_a_composite_restores_what_it_found_when_it_ran(window):
    """The replacement is built before its sibling adds the element it replaces; one undo
    takes both away and one redo puts the replaced version back."""
    from dataclasses import replace

    from portcut.app.commands import AddElements, DocumentCommand, ReplaceElements
    from portcut.engine.schematic import PlacedPart

    doc = window.workbench.doc
    part = PlacedPart("p77", "resistor", "R77", (0, 0), value="1k")
    parent = DocumentCommand(doc, "Add and set")
    AddElements(doc, [part], "Add", parent)
    ReplaceElements(doc, [replace(part, value="2k2")], "Set value", parent)
    window.workbench.push(parent)
    assert doc["p77"].value == "2k2"
    window.workbench.undo_stack.undo()
    assert "p77" not in doc
    window.workbench.undo_stack.redo()
    assert doc["p77"].value == "2k2"


def test_dragging_a_part_with_taps_keeps_its_nets_in_one_undo_step(window, drive):
    # R2 of the divider has both pins in the middle of wires (taps)
    open_sheet(window, divider())
    doc = drive.doc
    start, before = _snapshot(doc), _partition(doc)
    steps = window.workbench.undo_stack.count()
    drive.drag((8, 4), (11, 5))
    assert drive.by("R2").at == (11, 5)
    assert _partition(doc) == before
    assert window.workbench.undo_stack.count() == steps + 1
    _undo(drive)
    assert doc == start


def test_a_drag_that_would_join_nets_says_so_before_the_drop(window, drive, qtbot):
    # lifting R2 by its length drops its lower pin onto the "out" wire, so ground joins "out"
    open_sheet(window, divider())
    doc = drive.doc
    view = drive.viewport
    drive.move((8, 4))
    QTest.mousePress(view, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier,
                     drive.at((8, 4)))
    for y in (3.5, 2, 0):
        QTest.mouseMove(view, drive.at((8, y)))
    # the pointer rests: the drop's joins are worked out
    qtbot.waitUntil(lambda: "joins" in window.canvas.tool.status, timeout=2000)
    status = window.canvas.tool.status
    assert f"joins nets {GROUND} and out" in status
    assert f"joins nets {GROUND} and out" in QToolTip.text()
    rings = [i for i in drive.canvas.scene.items() if isinstance(i, QGraphicsEllipseItem)]
    assert rings
    QTest.mouseRelease(view, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier,
                       drive.at((8, 0)))
    assert not [i for i in drive.canvas.scene.items() if isinstance(i, QGraphicsEllipseItem)]
    conn = extract(doc)
    r2 = drive.by("R2")
    assert conn.net_of_pin[(r2.id, 0)] == conn.net_of_pin[(r2.id, 1)]  # dropped as shown


def test_nudging_a_tapped_part_away_and_back_leaves_no_stray_link(window, drive):
    open_sheet(window, divider())
    doc = drive.doc
    start = _snapshot(doc)
    drive.click((8, 4))
    drive.key(Qt.Key.Key_Down)                     # off the wires: links hold the taps
    assert len(doc.wires()) == len(start.wires()) + 2
    changes = []
    unsubscribe = doc.subscribe(changes.append)
    drive.key(Qt.Key.Key_Up)                       # back: the links fold away
    unsubscribe()
    assert doc == start
    # one change tells the listeners of the move and of the links gone with it
    (change,) = changes
    assert change.updated == {drive.by("R2").id} and len(change.removed) == 2
    drive.key(Qt.Key.Key_Left)                     # along the wires: the taps slide, no link
    assert len(doc.wires()) == len(start.wires())
