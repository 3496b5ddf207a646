"""The live equivalent panel in both directions: document edits (a value typed in the inspector,
the frequency, the region's polarity) show in its numbers without being asked for, and its own
fields and buttons land in the document as undoable edits. Numbers are checked against closed
forms named beside each check."""

from __future__ import annotations

import cmath
import math
from dataclasses import replace

import pytest
from PySide6.QtCore import QPoint, Qt
from PySide6.QtTest import QTest
from sheets import SOURCE_SIDE, click_button, divider, lasso, open_sheet, settle, type_into

from portcut.app.commands import AddElements, MoveElements, ReplaceElements, SetAnalysis
from portcut.engine.schematic import Analysis, PlacedPart, Wire, build_circuit, extract
from portcut.engine.solve.units import format_complex, format_eng, parse_frequency

CTRL = Qt.KeyboardModifier.ControlModifier


def _plain(label) -> str:
    """A label's text with the non-breaking spaces that keep values whole read as spaces."""
    return label.text().replace("\u00a0", " ")


def _drawn(window, drive, doc):
    open_sheet(window, doc)
    lasso(drive, SOURCE_SIDE)
    assert window.analysis.analysis.ok, window.analysis.analysis.message
    return window.equivalent_dock


def test_a_value_typed_in_the_inspector_updates_the_numbers(window, drive):
    panel = _drawn(window, drive, divider())
    drive.key(Qt.Key.Key_S)
    drive.click(drive.by("R2").at)
    type_into(window.inspector.editors["value"].edit, "1k")
    assert drive.by("R2").value == "1k"
    # common practice (voltage divider): R1 = R2 = 1 kΩ: Vth = 10 V / 2 = 5 V, Zth = 500 Ω
    assert panel.values.text("voc", "rectangular") == "5 V"
    assert panel.values.text("z", "polar") == "500 Ω ∠ 0°"
    drive.key(Qt.Key.Key_Z, CTRL)  # undo the value: the panel follows back
    settle()
    assert panel.values.text("voc", "rectangular") == "7.5 V"


def test_an_edit_outside_the_region_keeps_the_numbers_and_rechecks(window, drive):
    panel = _drawn(window, drive, divider())
    drive.key(Qt.Key.Key_S)
    drive.click(drive.by("RL").at)
    type_into(window.inspector.editors["value"].edit, "47")
    assert panel.values.text("z", "rectangular") == "750 Ω"
    assert panel.check.text().startswith("Reduced circuit matches")


def test_the_frequency_field_changes_a_capacitor_regions_z(window, drive):
    panel = _drawn(window, drive, divider(second="capacitor", second_value="100n"))
    # at DC the capacitor is open: Zth = R1 = 1 kΩ and Voc = 10 V
    assert panel.values.text("z", "rectangular") == "1 kΩ"
    type_into(panel.frequency.edit, "1k")
    assert drive.doc.analysis.freq == "1k"
    # common practice (RC low-pass seen from the capacitor): Z = R / (1 + jωRC),
    # Voc = V / (1 + jωRC)
    w = 2 * math.pi * 1e3
    z = 1e3 / (1 + 1j * w * 1e3 * 100e-9)
    voc = 10 / (1 + 1j * w * 1e3 * 100e-9)
    eq = window.analysis.analysis.equivalent
    assert eq.z == pytest.approx(z, rel=1e-12)
    assert eq.voc == pytest.approx(voc, rel=1e-12)
    assert panel.values.text("z", "rectangular") == format_complex(z, "Ω")
    assert "1 kHz" in _plain(panel.port)
    # the series R + C with that impedance at 1 kHz: R = Re z, C = -1 / (ω Im z)
    assert format_eng(z.real, "Ω", 4) in _plain(panel.realisation)
    assert format_eng(-1 / (w * z.imag), "F", 4) in _plain(panel.realisation)
    drive.key(Qt.Key.Key_Z, CTRL)
    settle()
    assert drive.doc.analysis.freq == "DC" and panel.frequency.edit.text() == "DC"
    assert panel.values.text("z", "rectangular") == "1 kΩ"


def test_a_bad_frequency_shows_why_and_keeps_the_old_one(window, drive):
    panel = _drawn(window, drive, divider())
    steps = window.workbench.undo_stack.count()
    type_into(panel.frequency.edit, "1 kHzz")
    assert drive.doc.analysis.freq == "DC"
    assert panel.frequency.in_error and panel.frequency.edit.property("error") is True
    assert "frequency" in panel.frequency.error.text() and "1 kHzz" in panel.frequency.error.text()
    type_into(panel.frequency.edit, "-5")
    assert "0 or more" in panel.frequency.error.text()
    QTest.keyClick(panel.frequency.edit, Qt.Key.Key_Escape)
    assert panel.frequency.edit.text() == "DC" and not panel.frequency.in_error
    assert window.workbench.undo_stack.count() == steps  # a refused value is no edit


def test_thevenin_norton_toggle_is_an_undoable_setting(window, drive):
    panel = _drawn(window, drive, divider())
    assert panel.forms.text().startswith("Thevenin")
    QTest.mouseClick(panel.norton, Qt.MouseButton.LeftButton)
    settle()
    assert drive.doc.analysis.form == "norton"
    assert panel.forms.text().startswith("Norton: Isc in parallel with Z")
    drive.key(Qt.Key.Key_Z, CTRL)
    settle()
    assert drive.doc.analysis.form == "thevenin" and panel.thevenin.isChecked()


def test_matched_load_power_at_dc_and_in_peak_and_rms(window, drive):
    panel = _drawn(window, drive, divider())
    # common practice (maximum power transfer): at DC a matched load takes Voc^2 / (4 R), in
    # either basis: 7.5^2 / (4 * 750) = 18.75 mW. Above DC P = |Voc|^2 / (8 Re Z) for peak
    # phasors and |Voc|^2 / (4 Re Z) for rms ones (a resistive divider: the same Voc and Z).
    assert "Matched load 750 Ω takes 18.75 mW" in _plain(panel.power)
    assert "(DC)" in _plain(panel.power) and "phasors" not in _plain(panel.power)
    type_into(panel.frequency.edit, "1k")
    assert "Matched load 750 Ω takes 9.375 mW" in _plain(panel.power)
    assert "peak phasors" in _plain(panel.power)
    panel.basis.setFocus()
    QTest.keyClick(panel.basis, Qt.Key.Key_Down)
    settle()
    assert drive.doc.analysis.basis == "rms"
    assert "Matched load 750 Ω takes 18.75 mW" in _plain(panel.power)
    assert "rms phasors" in _plain(panel.power)


def test_swap_reverses_the_port_and_the_sign(window, drive):
    panel = _drawn(window, drive, divider())
    click_button(panel.swap_button)
    eq = window.analysis.analysis.equivalent
    # common practice: seen the other way round, Voc and Isc change sign, Z does not
    assert eq.port == ("gnd", "out")
    assert eq.voc == pytest.approx(-7.5, rel=1e-12)
    assert panel.values.text("voc", "polar") == "7.5 V ∠ 180°"
    assert panel.values.text("z", "rectangular") == "750 Ω"
    drive.key(Qt.Key.Key_Z, CTRL)
    settle()
    assert window.analysis.analysis.equivalent.port == ("out", "gnd")


def test_an_ideal_current_source_has_no_thevenin_form_and_says_why(window, drive):
    doc = divider()
    source = doc.by_designator("V1")
    doc.remove(source.id)
    # pins: from at the bottom (ground), to at the top: 2 mA pushed up into the top wire
    doc.add(PlacedPart(doc.new_id(PlacedPart), "current_source", "I1", (0, 4), 270,
                       value="2m"))
    open_sheet(window, doc)
    lasso(drive, [(-3, -1), (1.5, -1), (1.5, 9), (-3, 9), (-3, 0)])  # around I1 alone
    panel = window.equivalent_dock
    eq = window.analysis.analysis.equivalent
    # common practice: an ideal current source has infinite impedance, so only a Norton form
    assert not eq.has_thevenin and eq.has_norton
    assert eq.isc == pytest.approx(2e-3, rel=1e-12)
    assert cmath.isinf(eq.z)
    assert "No Thevenin form: Z is infinite" in panel.forms.text()
    assert panel.values.text("voc", "rectangular") == "undefined"
    assert panel.values.text("isc", "rectangular") == "2 mA"
    assert panel.values.text("z", "rectangular") == "∞ Ω"
    assert "No series R, L or C realises Z" in _plain(panel.realisation)
    assert "no finite maximum" in _plain(panel.power).lower()


def test_the_equivalence_line_for_the_load_as_drawn(window, drive):
    panel = _drawn(window, drive, divider())
    text = panel.check.text()
    assert text.startswith("Reduced circuit matches for the load as drawn")
    assert panel.check.property("error") is False


def test_choosing_a_region_in_the_list(window, drive):
    panel = _drawn(window, drive, divider())
    first = window.analysis.region_id
    lasso(drive, [(13, -1), (19, -1), (19, 9), (13, 9), (13, 0)])  # RL alone
    assert window.analysis.region_id != first
    assert panel.region_box.count() == 2
    panel.region_box.setFocus()
    QTest.keyClick(panel.region_box, Qt.Key.Key_Up)
    settle()
    assert window.analysis.region_id == first
    assert panel.values.text("z", "rectangular") == "750 Ω"


def test_remove_region_is_undoable(window, drive):
    panel = _drawn(window, drive, divider())
    click_button(panel.remove_button)
    assert not drive.doc.regions()
    assert "No region yet" in panel.message.text()
    drive.key(Qt.Key.Key_Z, CTRL)
    settle()
    assert len(drive.doc.regions()) == 1 and window.analysis.analysis.ok


def test_the_region_list_is_filled_again_only_for_regions_and_blocks(window, drive,
                                                                     monkeypatch):
    panel = _drawn(window, drive, divider())
    fills = []
    fill = panel._fill_regions
    monkeypatch.setattr(panel, "_fill_regions", lambda: fills.append(1) or fill())
    drive.key(Qt.Key.Key_S)
    at = drive.by("RL").at
    links = []
    drive.doc.subscribe(lambda change: links.extend(change.removed))
    drive.drag(at, (at[0] + 1, at[1]))  # its wires follow: link wires come ...
    assert drive.by("RL").at == (at[0] + 1, at[1])
    drive.drag((at[0] + 1, at[1]), at)  # ... and are folded away again
    settle()
    assert links and all(i not in drive.doc for i in links)
    assert drive.by("RL").at == at and not fills  # the lists did not change
    click_button(panel.remove_button)
    assert fills and panel.region_box.count() == 0
    drive.key(Qt.Key.Key_Z, CTRL)
    settle()
    assert panel.region_box.count() == 1


def test_the_kept_circuit_stays_the_one_a_fresh_build_gives(window, drive):
    # the live analysis patches its circuit after value edits instead of rebuilding: after
    # each kind of edit it must equal a build from scratch
    _drawn(window, drive, divider())
    doc, live = drive.doc, window.analysis

    def fresh():
        return build_circuit(doc, extract(doc), parse_frequency(doc.analysis.freq))

    source = doc.by_designator("V1")
    edits = [
        ReplaceElements(doc, [replace(doc.by_designator("R2"), value="4k7")], "value"),
        ReplaceElements(doc, [replace(source, value="2", phase_deg="30")], "phase"),
        SetAnalysis(doc, Analysis(freq="50"), "frequency"),
        ReplaceElements(doc, [replace(doc.by_designator("RL"), value="10")], "outside"),
        AddElements(doc, [Wire(doc.new_id(Wire), ((16, 6), (16, 9), (20, 9)))], "wire"),
        ReplaceElements(doc, [replace(doc.by_designator("R1"), value="33")], "value again"),
    ]
    def push(command) -> None:
        window.workbench.push(command)
        settle()
        assert live.analysis.circuit == fresh(), command.text()

    for command in edits:
        push(command)
    # moves: RL one step left keeps its pins on the wires, so the circuit is kept as it is; R2
    # one step up leaves both its nets, and back down rejoins them
    kept, rl, r2 = live.analysis.circuit, doc.by_designator("RL"), doc.by_designator("R2")
    push(MoveElements(doc, [rl.id], [replace(rl, at=(15, 4))], "kept connections"))
    assert live.analysis.circuit is kept
    push(MoveElements(doc, [r2.id], [replace(r2, at=(8, 3))], "rewired"))
    push(MoveElements(doc, [r2.id], [r2], "rejoined"))
    eq = live.analysis.equivalent
    # common practice (voltage divider with a phasor source): Voc = V R2 / (R1 + R2)
    v = cmath.rect(2, math.radians(30))
    assert eq.voc == pytest.approx(v * 4700 / (33 + 4700), rel=1e-12)
    assert eq.z == pytest.approx(33 * 4700 / (33 + 4700), rel=1e-12)


def test_the_numbers_can_be_selected_with_the_mouse(window, drive, qtbot):
    # a value cell is selectable while the pointer is over it and keeps a selection made
    # there once the pointer leaves; elsewhere it is a plain label (no text document to lay
    # out again at every edit)
    panel = _drawn(window, drive, divider())
    cell = panel.values.cells["z", "rectangular"]
    selectable = Qt.TextInteractionFlag.TextSelectableByMouse
    assert not cell.textInteractionFlags() & selectable
    left = QPoint(1, cell.height() // 2)
    right = cell.rect().center()
    QTest.mouseMove(cell, left)
    qtbot.waitUntil(lambda: bool(cell.textInteractionFlags() & selectable), timeout=3000)
    QTest.mousePress(cell, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, left)
    QTest.mouseMove(cell, right)
    QTest.mouseRelease(cell, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, right)
    assert cell.selectedText()  # part of "750 Ω"
    QTest.mouseMove(panel.values.names[0], panel.values.names[0].rect().center())
    qtbot.waitUntil(lambda: cell.underMouse() is False, timeout=3000)
    assert cell.textInteractionFlags() & selectable and cell.selectedText()
    other = panel.values.cells["voc", "rectangular"]
    QTest.mouseMove(other, other.rect().center())
    QTest.mouseMove(panel.values.names[0], panel.values.names[0].rect().center())
    qtbot.waitUntil(lambda: not other.underMouse(), timeout=3000)
    assert not other.textInteractionFlags() & selectable
