"""Drawing wires with real clicks and drags, checked through the document's nets
(engine.schematic.connectivity.extract): wires that end on a pin or a wire join it; wires that
cross do not; junction dots appear where three or more conductors meet."""

from __future__ import annotations

from PySide6.QtCore import Qt

from portcut.engine.schematic.connectivity import extract


def _net(drive, designator: str, pin: int) -> str:
    return extract(drive.doc).net_of_pin[(drive.by(designator).id, pin)]


def _two_resistors(drive):
    drive.place("resistor", (0, 0))    # pins (-2, 0), (2, 0)
    drive.place("resistor", (10, 0))   # pins (8, 0), (12, 0)


def test_wire_between_pins_joins_them(drive):
    _two_resistors(drive)
    assert _net(drive, "R1", 1) != _net(drive, "R2", 0)
    drive.wire((2, 0), (8, 0))
    assert [w.points for w in drive.doc.wires()] == [((2, 0), (8, 0))]
    assert _net(drive, "R1", 1) == _net(drive, "R2", 0)
    assert _net(drive, "R1", 0) != _net(drive, "R2", 1)


def test_clicking_a_pin_ends_the_wire_and_bends_follow_the_cursor(drive):
    _two_resistors(drive)
    drive.place("resistor", (14, 6))   # pins (12, 6), (16, 6)
    drive.key(Qt.Key.Key_W)
    drive.click((2, 0))
    drive.move((5, 0))                 # leave the start sideways: horizontal first
    drive.move((5, 6))
    drive.click((5, 6))                # a bend in free space
    drive.move((12, 6))
    drive.click((12, 6))               # a pin: the wire ends and joins it
    assert drive.canvas.tool.draft is None
    (wire,) = drive.doc.wires()
    assert wire.points == ((2, 0), (5, 0), (5, 6), (12, 6))
    assert _net(drive, "R1", 1) == _net(drive, "R3", 0)


def test_vertical_departure_bends_vertically_first(drive):
    drive.place("resistor", (0, 0))
    drive.key(Qt.Key.Key_W)
    drive.click((2, 0))
    drive.move((2, 3))   # down first
    drive.move((7, 5))
    drive.double_click((7, 5))   # two clicks on one point end the wire in free space
    (wire,) = drive.doc.wires()
    assert wire.points == ((2, 0), (2, 5), (7, 5))


def test_crossing_wires_stay_apart_and_a_tee_joins(drive):
    _two_resistors(drive)
    drive.wire((2, 0), (8, 0))
    drive.place("resistor", (5, -6))
    drive.key(Qt.Key.Key_Escape)
    drive.click((5, -6))
    drive.key(Qt.Key.Key_R)            # R3 upright: pins (5, -8), (5, -4)
    drive.place("resistor", (5, 6))
    drive.click((5, 6))
    drive.key(Qt.Key.Key_R)            # R4 upright: pins (5, 4), (5, 8)
    drive.wire((5, -4), (5, 4))        # crosses the R1-R2 wire at (5, 0)
    assert _net(drive, "R3", 1) == _net(drive, "R4", 0)
    assert _net(drive, "R3", 1) != _net(drive, "R1", 1)
    assert (5, 0) not in drive.canvas.scene.dot_points()
    # a wire from R2's far pin that ends on the middle of the R1-R2 wire joins it (a tee);
    # on its way it crosses the R3-R4 wire at (5, 3) without joining it
    drive.wire((12, 0), (12, 3), (3, 3), (3, 0))
    assert _net(drive, "R2", 1) == _net(drive, "R1", 1)
    assert _net(drive, "R3", 1) != _net(drive, "R1", 1)
    assert (3, 0) in drive.canvas.scene.dot_points()


def test_drag_from_a_pin_draws_a_wire(drive):
    _two_resistors(drive)
    drive.drag((2, 0), (8, 0))
    assert [w.points for w in drive.doc.wires()] == [((2, 0), (8, 0))]
    assert drive.by("R1").at == (0, 0)  # the part did not move
    drive.drag((-2, 0), (-2, 5))        # ends in free space: a dangling lead
    assert ((-2, 0), (-2, 5)) in [w.points for w in drive.doc.wires()]


def test_escape_drops_the_wire_and_backspace_takes_back_a_bend(drive):
    drive.place("resistor", (0, 0))
    drive.key(Qt.Key.Key_W)
    drive.click((2, 0))
    drive.click((6, 0))
    drive.click((6, 4))
    drive.key(Qt.Key.Key_Backspace)    # back to (6, 0)
    drive.double_click((6, 0))
    assert [w.points for w in drive.doc.wires()] == [((2, 0), (6, 0))]
    drive.click((-2, 0))
    drive.click((-6, 0))
    drive.key(Qt.Key.Key_Escape)       # drops the wire being drawn
    assert len(drive.doc.wires()) == 1
    assert drive.canvas.tool.name == "wire"
    drive.key(Qt.Key.Key_Escape)       # nothing in progress: back to selecting
    assert drive.canvas.tool.name == "select"
