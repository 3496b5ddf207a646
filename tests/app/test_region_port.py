"""Choosing a region's port by hand in the equivalent panel, with real mouse and keyboard
events: the + and − boxes list the region's nets, a choice is one undo step, the numbers and
the canvas marks follow it, a chosen net that an edit takes away is named with the way back to
the automatic port, and a renamed label carries the port along. Numbers are checked against
closed forms named beside each check."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import Qt
from sheets import SOURCE_SIDE, click_button, divider, lasso, open_sheet, pick, settle, type_into

from portcut.engine.schematic import extract
from portcut.engine.schematic.connectivity import block_equivalent

CTRL = Qt.KeyboardModifier.ControlModifier
#: A lasso around the whole divider, load RL included: it meets the rest at no net at all.
EVERYTHING = [(-3, -1), (19, -1), (19, 9), (-3, 9), (-3, 0)]


def _items(box) -> list[str]:
    return [box.itemText(i) for i in range(box.count())]


def _port(window):
    return window.analysis.analysis.equivalent.port


def _marks(window) -> set[tuple[str, str, tuple[float, float]]]:
    return {(m.role, m.net, m.at) for m in window.cut_marks.items()[1].marks}


def test_the_boxes_list_the_regions_nets_and_show_the_automatic_port(window, drive):
    open_sheet(window, divider())
    lasso(drive, SOURCE_SIDE)
    boxes = window.equivalent_dock.port_boxes
    assert _items(boxes["plus"]) == ["automatic (out)", "ground", "R1.a", "out"]
    assert _items(boxes["minus"]) == ["automatic (ground)", "ground", "R1.a", "out"]
    assert boxes["plus"].currentIndex() == 0 and boxes["plus"].isEnabled()


def test_a_whole_circuit_region_is_seen_at_the_port_picked_by_hand(window, drive):
    open_sheet(window, divider())
    lasso(drive, EVERYTHING)
    panel = window.equivalent_dock
    assert not window.analysis.analysis.ok and "0 nets" in panel.message.text()
    assert not panel.automatic_button.isVisible()  # nothing chosen yet to go back from
    pick(panel.port_boxes["plus"], "out")
    (region,) = drive.doc.regions()
    assert region.port == ("out", "gnd")  # minus completed with ground
    assert drive.window.workbench.undo_stack.undoText() == "Port of “Region 1”: + out, − ground"
    # common practice (voltage divider, sources zeroed for Z): R2 || RL = 3k || 2k = 1.2 kΩ,
    # Voc = 10 V * 1.2k / (1k + 1.2k), Z = R1 || R2 || RL = 1k || 1.2k
    eq = window.analysis.analysis.equivalent
    assert eq.voc == pytest.approx(10 * 1.2e3 / 2.2e3, rel=1e-12)
    assert eq.z == pytest.approx(1e3 * 1.2e3 / 2.2e3, rel=1e-12)
    assert panel.values.text("voc", "rectangular") == "5.455 V"
    assert panel.port_boxes["plus"].currentText() == "out"
    assert panel.port_boxes["minus"].currentText() == "ground"
    assert panel.check.text().startswith("Reduced circuit matches")
    # no wire of either net crosses the outline: each mark sits on a region pin on its net,
    # the one nearest the outline
    assert _marks(window) == {("plus", "out", (6.0, 2.0)), ("minus", "gnd", (0.0, 6.0))}
    # nothing outside uses net out, so there is nothing for a block to join
    click_button(panel.collapse_button)
    assert not drive.doc.blocks()
    assert "the port's plus net out is used only inside the region" in panel.notice.text()
    drive.key(Qt.Key.Key_Z, CTRL)
    settle()
    assert drive.doc.regions()[0].port is None and not window.analysis.analysis.ok


def test_picking_the_other_sides_net_exchanges_them_and_swap_keeps_the_choice(window, drive):
    open_sheet(window, divider())
    lasso(drive, SOURCE_SIDE)
    panel = window.equivalent_dock
    pick(panel.port_boxes["minus"], "out")
    # common practice: seen the other way round, Voc and Isc change sign, Z does not
    assert drive.doc.regions()[0].port == ("gnd", "out") == _port(window)
    assert window.analysis.analysis.equivalent.voc == pytest.approx(-7.5, rel=1e-12)
    assert panel.values.text("voc", "polar") == "7.5 V ∠ 180°"
    # the top wire (net out) crosses the outline at (11, 2), the ground wire at (11, 6)
    assert _marks(window) == {("plus", "gnd", (11.0, 6.0)), ("minus", "out", (11.0, 2.0))}
    assert window.analysis.sweep(np.array([1.0, 1e3])).port == ("gnd", "out")
    click_button(panel.swap_button)
    assert drive.doc.regions()[0].port == ("out", "gnd") and not drive.doc.regions()[0].swap
    assert window.analysis.analysis.equivalent.voc == pytest.approx(7.5, rel=1e-12)
    pick(panel.port_boxes["plus"], None)  # automatic again
    assert drive.doc.regions()[0].port is None and _port(window) == ("out", "gnd")
    assert panel.port_boxes["plus"].currentText() == "automatic (out)"
    for expected in (("out", "gnd"), ("gnd", "out"), None):  # each choice was one undo step
        drive.key(Qt.Key.Key_Z, CTRL)
        settle()
        assert drive.doc.regions()[0].port == expected


def test_a_chosen_net_that_an_edit_takes_away_is_named_with_the_way_back(window, drive):
    open_sheet(window, divider())
    lasso(drive, SOURCE_SIDE)
    panel = window.equivalent_dock
    pick(panel.port_boxes["plus"], "gnd")
    assert drive.doc.regions()[0].port == ("gnd", "out")
    drive.key(Qt.Key.Key_S)
    drive.click((12, 2))  # the label "out" on the top wire
    assert window.canvas.scene.selected_ids() == [next(
        lab.id for lab in drive.doc.labels() if lab.name == "out")]
    drive.key(Qt.Key.Key_Delete)
    settle()
    # the net is still drawn, but it is now named after its lowest pin: "out" is gone
    analysis = window.analysis.analysis
    assert not analysis.ok
    assert "minus net out is no longer a net of the region" in panel.message.text()
    assert panel.port_boxes["minus"].currentText() == "out (gone)"
    assert panel.automatic_button.isVisible()
    click_button(panel.automatic_button)
    assert drive.doc.regions()[0].port is None
    assert window.analysis.analysis.ok and _port(window) == ("R1.b", "gnd")
    assert not panel.automatic_button.isVisible()
    for _ in range(2):  # back to the chosen port, then the label back: valid again
        drive.key(Qt.Key.Key_Z, CTRL)
        settle()
    assert drive.doc.regions()[0].port == ("gnd", "out") and _port(window) == ("gnd", "out")


def test_renaming_the_label_carries_the_chosen_port_along(window, drive):
    open_sheet(window, divider())
    lasso(drive, SOURCE_SIDE)
    pick(window.equivalent_dock.port_boxes["plus"], "gnd")
    drive.key(Qt.Key.Key_S)
    drive.click((12, 2))
    type_into(window.inspector.editors["name"].edit, "vout")
    assert drive.doc.regions()[0].port == ("gnd", "vout")
    assert window.analysis.analysis.ok and _port(window) == ("gnd", "vout")
    drive.key(Qt.Key.Key_Z, CTRL)  # one step: the label and the port together
    settle()
    assert drive.doc.regions()[0].port == ("gnd", "out")
    assert any(lab.name == "out" for lab in drive.doc.labels())


def test_a_region_with_a_chosen_port_collapses_with_that_polarity(window, drive):
    open_sheet(window, divider())
    lasso(drive, SOURCE_SIDE)
    panel = window.equivalent_dock
    pick(panel.port_boxes["plus"], "gnd")
    click_button(panel.collapse_button)
    (block,) = drive.doc.blocks()
    conn = extract(drive.doc)
    assert (conn.net_of_pin[block.id, 0], conn.net_of_pin[block.id, 1]) == ("gnd", "out")
    # common practice (voltage divider): 10 V * 3k / 4k = 7.5 V behind 1k || 3k = 750 Ω,
    # here with plus on ground
    eq = block_equivalent(block)
    assert eq.voc == pytest.approx(-7.5, rel=1e-12) and eq.z == pytest.approx(750, rel=1e-12)
    assert "Voc = -7.5 V" in window.canvas.scene.item(block.id).captions()
    click_button(panel.expand_button)
    assert drive.doc.regions()[0].port == ("gnd", "out")
    assert _port(window) == ("gnd", "out")


def test_the_boxes_follow_an_edit_that_changes_the_regions_nets(window, drive):
    # the boxes are filled again only when what they list changes: a value typed keeps them,
    # a label deleted (its net is named after its lowest pin then) renews them
    open_sheet(window, divider())
    lasso(drive, SOURCE_SIDE)
    boxes = window.equivalent_dock.port_boxes
    drive.key(Qt.Key.Key_S)
    drive.click(drive.by("R1").at)
    type_into(window.inspector.editors["value"].edit, "2k")
    assert drive.by("R1").value == "2k"
    assert _items(boxes["plus"]) == ["automatic (out)", "ground", "R1.a", "out"]
    drive.click((12, 2))  # the label "out" on the top wire
    drive.key(Qt.Key.Key_Delete)
    settle()
    assert _items(boxes["plus"]) == ["automatic (R1.b)", "ground", "R1.a", "R1.b"]
    assert _items(boxes["minus"]) == ["automatic (ground)", "ground", "R1.a", "R1.b"]
    drive.key(Qt.Key.Key_Z, CTRL)
    settle()
    assert _items(boxes["minus"]) == ["automatic (ground)", "ground", "R1.a", "out"]
