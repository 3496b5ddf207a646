"""Picking on a dense sheet with real events: a double-click on a part's body opens that part,
never the neighbour whose caption lies close by; a caption picks its own part where no body is
under the pointer; a dragged caption stays where it is dropped."""

from __future__ import annotations

import pytest
from dense_sheets import ladder
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QGraphicsSimpleTextItem
from sheets import open_sheet

from portcut import assets
from portcut.app.canvas.grid import UNIT
from portcut.engine.schematic import load, save
from portcut.engine.schematic.symbols import placed_bounds

CTRL = Qt.KeyboardModifier.ControlModifier


def _body_centre(part) -> tuple[float, float]:
    x0, y0, x1, y1 = placed_bounds(part.kind, part.at, part.rotation, part.mirror)
    return ((x0 + x1) / 2, (y0 + y1) / 2)


@pytest.mark.parametrize("pitch", [4, 5, 6])
def test_double_click_on_each_body_opens_that_part(window, drive, pitch: int) -> None:
    open_sheet(window, ladder(pitch, cells=4))
    for part in window.workbench.doc.parts():
        drive.double_click(_body_centre(part))
        assert window.inspector.heading.text().startswith(f"{part.designator} ·"), part


def test_a_caption_picks_its_own_part_off_every_body(window, drive) -> None:
    open_sheet(window, ladder(6, cells=3))
    scene = window.canvas.scene
    placement = scene.look.placement
    for part in window.workbench.doc.parts():
        box = placement.captions[part.id]["designator"].box
        drive.click(((box[0] + box[2]) / 2, (box[1] + box[3]) / 2))
        assert scene.selected_ids() == [part.id]


def test_a_body_wins_over_a_neighbours_caption_dragged_onto_it(window, drive) -> None:
    doc = ladder(6, cells=2)
    r1 = doc["r0"]
    # R2's value pinned over the lower half of R1's body (R2 sits 6 grid units to the right)
    doc.replace_fields("r1", captions=(("value", -6.0, 0.6),))
    open_sheet(window, doc)
    placed = window.canvas.scene.look.placement.captions["r1"]["value"].box
    assert placed[0] < _body_centre(r1)[0] < placed[2]
    drive.double_click(_body_centre(r1))
    assert window.inspector.heading.text().startswith("R1 ·")
    assert placed[1] < 0.35 < placed[3]  # over the resistor's box, 0.35 below its axis
    drive.click((_body_centre(r1)[0], placed[3] - 0.1))  # the caption, below R1's body
    assert window.canvas.scene.selected_ids() == ["r1"]


def test_a_dragged_caption_stays_where_dropped_is_saved_and_undoes(window, drive, tmp_path):
    open_sheet(window, ladder(6, cells=2))
    scene = window.canvas.scene
    before = scene.look.placement.captions["r0"]["designator"]
    x0, y0, x1, y1 = before.box
    start = ((x0 + x1) / 2, (y0 + y1) / 2)
    drive.drag(start, (start[0], start[1] - 3))
    part = drive.by("R1")
    assert [role for role, _, _ in part.captions] == ["designator"]
    after = scene.look.placement.captions["r0"]["designator"]
    assert after.box[1] == pytest.approx(y0 - 3, abs=0.1)  # moved up 3 grid units, kept there
    path = tmp_path / "dragged.json"
    save(window.workbench.doc, path)
    assert load(path).by_designator("R1").captions == part.captions
    drive.key(Qt.Key.Key_Z, CTRL)
    assert drive.by("R1").captions == ()
    assert scene.look.placement.captions["r0"]["designator"] == before


@pytest.mark.parametrize("name", ["audio_crossover", "opamp_stage_output"])
def test_canvas_captions_lie_inside_the_boxes_the_drawing_check_measures(window, name) -> None:
    window.files.open_path(assets.example_path(name), as_copy=True)
    scene = window.canvas.scene
    for part in window.workbench.doc.parts():
        item = scene.item(part.id)
        boxes = {c.lines[0]: c.box for c in scene.look.placement.captions[part.id].values()}
        for child in item.childItems():
            if isinstance(child, QGraphicsSimpleTextItem) and child.isVisible():
                ink = child.mapRectToScene(child.boundingRect())
                x0, y0, x1, y1 = boxes[child.text()]
                # the drawn advance is no wider than the estimate (common practice: the check
                # may only err on the side of reporting a collision)
                assert x0 * UNIT - 1 <= ink.left() and ink.right() <= x1 * UNIT + 1, child.text()
                centre = ink.center().y() / UNIT
                assert y0 - 0.3 <= centre <= y1 + 0.3, child.text()
