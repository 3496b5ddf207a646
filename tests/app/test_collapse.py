"""Collapse and expand from the panel with real clicks: the exact document comes back (expand,
undo), redo collapses again, the block shows its values and the frequency and follows it, a
block reduces again inside a new region, and File > Export SVG writes the sheet as shown."""

from __future__ import annotations

import math
from pathlib import Path

import pytest
from PySide6.QtCore import QRectF, Qt
from PySide6.QtGui import QColor, QImage, QPainter
from PySide6.QtSvg import QSvgRenderer
from PySide6.QtWidgets import QFileDialog
from sheets import SOURCE_SIDE, click_button, divider, lasso, open_sheet, settle, type_into

from portcut.app.canvas.grid import UNIT
from portcut.engine.drawing.palette import PALETTE
from portcut.engine.schematic import Region
from portcut.engine.schematic.fileformat import dumps, loads
from portcut.engine.schematic.reduction import collapse_region
from portcut.engine.schematic.symbols import STROKE_WIDTH
from portcut.engine.solve.units import format_complex

CTRL = Qt.KeyboardModifier.ControlModifier


def _snapshot(doc):
    return loads(dumps(doc))


def _collapsed(window, drive, doc):
    """Open ``doc``, draw the source side and collapse it with the panel's button."""
    open_sheet(window, doc)
    lasso(drive, SOURCE_SIDE)
    before = _snapshot(drive.doc)
    click_button(window.equivalent_dock.collapse_button)
    (block,) = drive.doc.blocks()
    return before, block


def test_collapse_then_expand_gives_back_the_exact_document(window, drive):
    before, block = _collapsed(window, drive, divider())
    doc = drive.doc
    assert not doc.regions() and doc.by_designator("R1") is None
    panel = window.equivalent_dock
    assert window.canvas.scene.selected_ids() == [block.id]
    # the selected block stands in for the region: its values, frequency and form are shown
    # (divider closed form: Voc = 10 V * 3k / (1k + 3k) = 7.5 V, Z = 1k || 3k = 750 Ω)
    assert panel.message.isVisible() and "No region yet" not in panel.message.text()
    assert "EQ1" in panel.message.text() and "Thevenin form" in panel.message.text()
    assert panel.values.isVisible() and panel.values.text("voc", "rectangular") == "7.5 V"
    assert panel.values.text("z", "rectangular") == "750 Ω"
    assert "at DC" in panel.port.text()
    assert panel.expand_button.isEnabled() and panel.expand_button.text() == "Expand EQ1"
    click_button(panel.expand_button)
    assert drive.doc == before
    # the restored region is the one shown again
    assert window.analysis.region_id == doc.regions()[0].id and window.analysis.analysis.ok


def test_with_several_blocks_the_panel_shows_the_one_selected(window, drive):
    doc = divider()
    for names in (("V1", "R1", "R2"), ("RL",)):
        members = frozenset(p.id for p in doc.parts() if p.designator in names)
        region = Region(doc.new_id(Region), " ".join(names), members, ())
        doc.add(region)
        collapse_region(doc, region.id).apply(doc)
    open_sheet(window, doc)
    panel = window.equivalent_dock
    assert "Select a collapsed block" in panel.message.text()
    first, second = doc.blocks()
    drive.key(Qt.Key.Key_S)
    drive.click(first.at)
    assert window.canvas.scene.selected_ids() == [first.id]
    settle()
    # divider closed form: Voc = 10 V * 3k / (1k + 3k) = 7.5 V
    assert first.designator in panel.message.text()
    assert panel.values.text("voc", "rectangular") == "7.5 V"
    drive.click(second.at)
    settle()
    # a lone resistor seen across its pins: no source, Z = 2 kΩ (common practice)
    assert second.designator in panel.message.text()
    assert panel.values.text("z", "rectangular") == "2 kΩ"


def test_a_shown_block_follows_the_analysis_frequency(window, drive):
    _collapsed(window, drive, divider())
    panel = window.equivalent_dock
    type_into(panel.frequency.edit, "1k")
    assert "at 1 kHz" in panel.port.text() and "at 1 kHz" in panel.message.text()
    assert "at 1 kHz" in window.inspector.details.text()
    assert panel.values.text("z", "rectangular") == "750 Ω"  # resistive: the same at 1 kHz


def test_the_inspector_shows_a_selected_block_and_expands_it(window, drive):
    before, _ = _collapsed(window, drive, divider())
    inspector = window.inspector
    # divider closed form, as above: Voc = 7.5 V, Z = 750 Ω at DC
    assert "Voc = 7.5 V, Z = 750 Ω at DC" in inspector.details.text()
    assert inspector.expand_button.isVisible()
    assert inspector.expand_button.text() == "Expand EQ1"
    click_button(inspector.expand_button)
    assert drive.doc == before


def test_a_click_inside_the_frame_selects_the_block_and_marks_the_frame(window, drive):
    _, block = _collapsed(window, drive, divider())
    window.canvas.scene.clearSelection()
    x, y = block.at
    drive.key(Qt.Key.Key_S)  # the select tool, after the boundary tool's lasso
    drive.click((x - 3.0, y + 2.6))  # inside the dashed frame, away from every stroke
    assert window.canvas.scene.selected_ids() == [block.id]
    item = window.canvas.scene.item(block.id)
    frame = item.mapRectToScene(item._dash.path().boundingRect())
    mark = item.mapRectToScene(item._frame)
    # the selection mark is the frame grown by half a stroke, nothing else
    pad = STROKE_WIDTH * UNIT / 2
    assert mark == frame.adjusted(-pad, -pad, pad, pad)
    assert item.mapRectToScene(item.boundingRect()).contains(mark)


def test_undo_and_redo_of_a_collapse(window, drive):
    before, _ = _collapsed(window, drive, divider())
    after = _snapshot(drive.doc)
    drive.key(Qt.Key.Key_Z, CTRL)
    settle()
    assert drive.doc == before
    assert window.analysis.analysis.ok  # the region is back and analysed
    window.actions["redo"].trigger()
    settle()
    assert drive.doc == after
    drive.key(Qt.Key.Key_Z, CTRL)
    settle()
    assert drive.doc == before


def test_the_block_shows_its_values_and_follows_the_frequency(window, drive):
    _, block = _collapsed(window, drive, divider(second="capacitor", second_value="100n"))
    item = window.canvas.scene.item(block.id)
    # at DC the capacitor is open: 10 V behind R1 = 1 kΩ
    assert {"Voc = 10 V", "Z = 1 kΩ", "at DC"} <= set(item.captions())
    type_into(window.equivalent_dock.frequency.edit, "1k")
    # common practice (RC low-pass seen from the capacitor): Z = R / (1 + jωRC)
    z = 1e3 / (1 + 1j * 2 * math.pi * 1e3 * 1e3 * 100e-9)
    captions = set(window.canvas.scene.item(block.id).captions())
    assert "at 1 kHz" in captions
    assert f"Z = {format_complex(z, 'Ω')}" in captions


def test_a_block_reduces_again_inside_a_new_region(window, drive):
    # V1 and R1 collapse to 10 V behind 1 kΩ; the block with R2 = 3 kΩ must then show the same
    # equivalent as the three parts did (common practice: reducing in two steps changes nothing)
    open_sheet(window, divider())
    lasso(drive, [(-3, -1), (7, -1), (7, 9), (-3, 9), (-3, 0)])  # V1 and R1
    assert window.analysis.analysis.equivalent.z == pytest.approx(1000.0, rel=1e-12)
    click_button(window.equivalent_dock.collapse_button)
    (block,) = drive.doc.blocks()
    lasso(drive, SOURCE_SIDE)
    region = drive.doc.regions()[0]
    assert block.id in region.members
    eq = window.analysis.analysis.equivalent
    assert eq.voc == pytest.approx(7.5, rel=1e-12)
    assert eq.z == pytest.approx(750.0, rel=1e-12)
    # expanding the inner block keeps the outer region whole: it now names V1 and R1 again
    window.canvas.scene.select_ids([block.id])
    click_button(window.equivalent_dock.expand_button)
    outer = next(r for r in drive.doc.regions() if r.id == region.id)
    assert outer.members == {drive.by(d).id for d in ("V1", "R1", "R2")}
    window.analysis.set_region(outer.id)
    settle()
    assert window.analysis.analysis.equivalent.voc == pytest.approx(7.5, rel=1e-12)


def test_an_invalid_cut_cannot_be_collapsed(window, drive):
    open_sheet(window, divider())
    lasso(drive, [(1, -1), (11, -1), (11, 9), (1, 9), (1, 0)])  # R1 and R2 without V1
    assert not window.equivalent_dock.collapse_button.isEnabled()


def _ink_pixels(image: QImage) -> int:
    paper = QColor(PALETTE.paper).rgb()
    return sum(1 for y in range(0, image.height(), 2) for x in range(0, image.width(), 2)
               if image.pixel(x, y) != paper)


def test_export_svg_writes_the_reduced_sheet(window, drive, monkeypatch, tmp_path: Path):
    _collapsed(window, drive, divider())
    out = tmp_path / "reduced.svg"
    monkeypatch.setattr(QFileDialog, "getSaveFileName", lambda *a, **k: (str(out), ""))
    drive.key(Qt.Key.Key_E, CTRL)  # File > Export SVG
    text = out.read_text(encoding="utf-8")
    assert "Voc = 7.5 V" in text and "Z = 750 Ω" in text  # the block, as drawn
    assert "R1" not in text
    renderer = QSvgRenderer(str(out))
    assert renderer.isValid()
    image = QImage(400, 300, QImage.Format.Format_RGB32)
    image.fill(QColor(PALETTE.paper))
    painter = QPainter(image)
    renderer.render(painter, QRectF(0, 0, 400, 300))
    painter.end()
    assert _ink_pixels(image) > 200
    assert not list(tmp_path.glob("*.partial"))


def test_a_region_holding_a_block_follows_the_frequency(window, drive):
    # the block's drawn values hold at one frequency; the live analysis of a region around it
    # must take the block's contents at the new frequency
    _, block = _collapsed(window, drive, divider(second="capacitor", second_value="100n"))
    window.canvas.scene.select_ids([])
    drive.key(Qt.Key.Key_B)
    drive.click(block.at, Qt.KeyboardModifier.ShiftModifier)  # a region of the block alone
    settle()
    type_into(window.equivalent_dock.frequency.edit, "1k")
    # common practice (RC low-pass seen from the capacitor): Z = R / (1 + jωRC)
    z = 1e3 / (1 + 1j * 2 * math.pi * 1e3 * 1e3 * 100e-9)
    assert window.analysis.analysis.equivalent.z == pytest.approx(z, rel=1e-12)
    assert window.equivalent_dock.values.text("z", "rectangular") == format_complex(z, "Ω")
