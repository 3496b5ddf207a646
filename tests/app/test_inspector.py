"""The inspector in both directions: typing lands in the document (values read as SI prefixes
and IEC 60062 codes), a refused entry shows the reason and keeps the old value, and document
changes (undo, renames) show in the fields; a short inspector scrolls rather than stretch the
window or lay texts over its buttons."""

from __future__ import annotations

from itertools import pairwise

import pytest
from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from sheets import click_button, settle

from portcut import assets
from portcut.app.canvas.grid import to_scene
from portcut.app.fields import fields_for
from portcut.app.panels.inspector import _TITLE, _TitleRecord
from portcut.app.region_edits import renamed
from portcut.engine.errors import DocumentError
from portcut.engine.schematic import NetLabel, PlacedPart, Region

CTRL = Qt.KeyboardModifier.ControlModifier


def _type(editor, text: str) -> None:
    edit = editor.edit
    edit.setFocus()
    edit.selectAll()
    QTest.keyClicks(edit, text)
    QTest.keyClick(edit, Qt.Key.Key_Return)


def test_good_value_lands_in_the_document(window, drive):
    drive.place("resistor", (0, 0))
    drive.double_click((0, 0))                       # opens the value for editing
    editor = window.inspector.editors["value"]
    assert editor.edit.hasFocus()
    _type(editor, "4k7")                             # IEC 60062: 4k7 = 4.7 kΩ
    assert drive.by("R1").value == "4k7"
    assert not editor.in_error
    assert "4.7 kΩ" in drive.canvas.scene.item(drive.by("R1").id).captions()


def test_bad_value_shows_the_reason_and_keeps_the_old_one(window, drive):
    drive.place("capacitor", (0, 0))
    drive.click((0, 0))
    editor = window.inspector.editors["value"]
    _type(editor, "4.7 banana")
    assert drive.by("C1").value == "100n"
    assert editor.in_error and editor.error.isVisible()
    assert "C1 capacitance" in editor.error.text() and "4.7 banana" in editor.error.text()
    assert editor.edit.property("error") is True
    QTest.keyClick(editor.edit, Qt.Key.Key_Escape)   # back to the document's value
    assert editor.edit.text() == "100n" and not editor.in_error
    _type(editor, "4n7")                             # IEC 60062: 4n7 = 4.7 nF
    assert drive.by("C1").value == "4n7" and not editor.in_error


def test_a_value_in_another_fields_unit_is_refused_naming_the_unit(window, drive):
    # SI (BIPM SI Brochure): resistance is in Ω; 10 µF is a capacitance, 10 mA a current.
    drive.place("resistor", (0, 0))
    drive.click((0, 0))
    editor = window.inspector.editors["value"]
    for typed, unit in (("10uF", "F"), ("10 mA", "A")):
        _type(editor, typed)
        assert drive.by("R1").value == "1k"
        assert editor.in_error and "R1 resistance" in editor.error.text()
        assert f"is in {unit}, but this field takes a value in Ω" in editor.error.text()
    _type(editor, "4.7 kohm")                        # its own unit is taken (ohm for Ω)
    assert drive.by("R1").value == "4.7 kohm" and not editor.in_error


def test_an_unusual_magnitude_is_taken_with_a_visible_warning(window, drive):
    drive.place("capacitor", (0, 0))
    drive.click((0, 0))
    editor = window.inspector.editors["value"]
    assert not editor.caution.isVisible()
    _type(editor, "10F")                             # 10 F: a prefix forgotten, most likely
    assert drive.by("C1").value == "10F" and not editor.in_error
    assert editor.caution.isVisible() and "unusually large" in editor.caution.text()
    _type(editor, "10u")
    assert drive.by("C1").value == "10u" and not editor.caution.isVisible()


def test_tolerance_is_kept_and_captioned(window, drive):
    # IEC 60062 tolerance letters (from memory): F is ±1 %, J ±5 %.
    drive.place("resistor", (0, 0))
    drive.click((0, 0))
    editor = window.inspector.editors["tolerance"]
    _type(editor, "F")
    assert drive.by("R1").tolerance == "F" and not editor.in_error
    assert any("±1 %" in c for c in drive.canvas.scene.item(drive.by("R1").id).captions())
    _type(editor, "7 percent")
    assert editor.in_error and "tolerance" in editor.error.text()
    assert drive.by("R1").tolerance == "F"
    QTest.keyClick(editor.edit, Qt.Key.Key_Escape)
    _type(editor, "J")
    assert drive.by("R1").tolerance == "J"
    drive.key(Qt.Key.Key_Z, CTRL)  # every edit is undoable
    assert drive.by("R1").tolerance == "F"


def test_coupling_coefficient_beyond_one_is_refused(window, drive):
    drive.place("coupling", (0, 0))
    drive.click((0, 0))
    editor = window.inspector.editors["value"]
    _type(editor, "1.2")
    assert drive.by("CP1").value == "0.9"
    assert "|k| ≤ 1" in editor.error.text()


def test_duplicate_designator_is_refused_and_rename_follows_references(window, drive):
    drive.place("resistor", (0, 0))
    drive.place("resistor", (8, 0))
    drive.place("ccvs", (0, 8))
    drive.click((0, 8))
    control = window.inspector.editors["control"]
    _type(control, "R9")
    assert "no part 'R9'" in control.error.text()
    _type(control, "R2")
    assert drive.by("DS1").control == "R2"
    drive.click((8, 0))
    designator = window.inspector.editors["designator"]
    _type(designator, "R1")
    assert "already used" in designator.error.text()
    _type(designator, "RSENSE")
    assert drive.by("RSENSE") is not None and drive.by("DS1").control == "RSENSE"


def test_document_changes_show_in_the_fields(window, drive):
    drive.place("voltage_source", (0, 0))
    drive.click((0, 0))
    value = window.inspector.editors["value"]
    _type(value, "12")
    _type(window.inspector.editors["phase_deg"], "30")
    assert drive.by("V1").phase_deg == "30"
    drive.key(Qt.Key.Key_Z, CTRL)
    assert window.inspector.editors["phase_deg"].edit.text() == ""
    drive.key(Qt.Key.Key_Z, CTRL)
    assert window.inspector.editors["value"].edit.text() == "5"


def test_sheet_title_when_nothing_is_selected(window, drive):
    drive.click((30, 30))
    title = window.inspector.editors["title"]
    _type(title, "Bridge readout")
    assert drive.doc.title == "Bridge readout"
    drive.key(Qt.Key.Key_Z, CTRL)
    assert drive.doc.title == "Untitled" and title.edit.text() == "Untitled"


def test_canvas_keys_do_not_fire_while_typing(window, drive):
    drive.place("resistor", (0, 0))
    drive.click((0, 0))
    editor = window.inspector.editors["designator"]
    editor.edit.setFocus()
    QTest.keyClicks(editor.edit, "RM")           # R and M are canvas shortcuts
    QTest.keyClick(editor.edit, Qt.Key.Key_Delete)
    part = drive.by("R1")
    assert (part.rotation, part.mirror) == (0, False)
    assert editor.edit.text() != ""


def test_sheet_summary_follows_parts_added_and_undone(window, drive):
    drive.place("resistor", (0, 0))
    drive.place("capacitor", (0, 6))
    drive.canvas.scene.select_ids([])
    details = window.inspector.details
    assert details.text().startswith("2 parts, 0 wires")
    window.workbench.undo_stack.undo()               # the capacitor goes, nothing selected
    assert details.text().startswith("1 part, 0 wires")


@pytest.mark.parametrize("char", ["\udfff", "\x00", "\x1f", "\ufffe", "\n"],
                         ids=lambda c: f"U+{ord(c):04X}")
def test_text_no_file_can_store_is_refused_in_every_field(window, drive, char):
    # Qt's own strings cannot carry a lone surrogate (typing drops it), but text reaches the
    # fields from Python too; a lone surrogate has no UTF-8 encoding (Unicode 15, 3.9 D92;
    # from memory); XML 1.0 section 2.2 (from memory) allows no control character but tab,
    # line feed and carriage return, and a one-line field holds no line break
    doc = drive.doc
    for i, kind in enumerate(("resistor", "voltage_source", "ccvs", "coupling")):
        doc.add(PlacedPart(f"p{i}", kind, f"X{i}", (10 * i, 0), value="1"))
    doc.add(NetLabel("n1", "out", (0, 20)))
    doc.add(Region("r1", "stage", frozenset({"p0"})))
    elements = [*doc.parts(), *doc.labels(), _TitleRecord(doc.title)]
    before = [*doc]
    for element in elements:
        for field in (_TITLE,) if isinstance(element, _TitleRecord) else fields_for(element):
            try:
                field.write(doc, element, f"ab{char}")
            except DocumentError as e:
                assert f"character 3 is U+{ord(char):04X}" in str(e), (field.name, str(e))
            else:
                raise AssertionError(f"{field.name} took {char!r}")
    try:
        renamed(doc, doc["r1"], f"st{char}age")
    except DocumentError as e:
        assert str(e).startswith(f"region name: character 3 is U+{ord(char):04X}")
    else:
        raise AssertionError(f"a region name took {char!r}")
    assert [*doc] == before


def test_a_moved_part_shows_its_new_place_and_keeps_its_fields(window, drive):
    drive.place("resistor", (0, 0))
    drive.click((0, 0))
    value = window.inspector.editors["value"]
    _type(value, "2k2")
    _type(window.inspector.editors["value"], "x")  # refused: the field says why
    assert value.in_error
    drive.canvas.view.setFocus()
    drive.key(Qt.Key.Key_Right)
    at = drive.by("R1").at
    assert window.inspector.details.text().startswith(f"At ({at[0]}, {at[1]}), turned 0°")
    assert window.inspector.editors["value"] is value  # the same editors, the new version
    assert value.edit.text() == "2k2" and not value.in_error
    assert value.element is drive.by("R1")
    drive.key(Qt.Key.Key_R)  # turned: still the same fields
    assert "turned 90°" in window.inspector.details.text()
    drive.key(Qt.Key.Key_Z, CTRL, times=2)  # the move and turn (one step), the value
    assert value.edit.text() == "1k" and value.element is drive.by("R1")
    assert window.inspector.details.text().startswith("At (0, 0), turned 0°")
    assert [e.field for e in window.inspector.editors.values()] == fields_for(drive.by("R1"))


def _open_example(window, name: str) -> None:
    assert window.files.open_path(assets.example_path(name), as_copy=True)
    window.analysis.finish()


def _clear_of_each_other(widgets) -> bool:
    """Each widget as tall as its text needs at its width, and none over the next one."""
    tall = all(w.height() >= w.heightForWidth(w.width()) for w in widgets
               if w.hasHeightForWidth())
    return tall and all(a.geometry().bottom() < b.geometry().top()
                        for a, b in pairwise(widgets))


def test_a_short_inspector_scrolls_instead_of_stretching_the_window(window, drive):
    window.resize(1024, 640)
    _open_example(window, "ce_stage_output")
    q1 = drive.by("Q1")
    window.canvas.view.centerOn(to_scene(q1.at))
    drive.click(q1.at)
    settle()
    inspector = window.inspector
    assert inspector.heading.text().startswith("Q1")
    assert window.height() == 640  # the transistor's dozen fields do not push it taller
    scroll = inspector.widget()
    assert scroll.verticalScrollBar().maximum() > 0
    last = inspector.details
    scroll.ensureWidgetVisible(last)  # what does not fit is a scroll away
    settle()
    assert last.visibleRegion().boundingRect().height() == last.height()


def test_a_blocks_details_stand_clear_of_its_expand_button(window, drive):
    window.resize(1400, 860)
    _open_example(window, "audio_crossover")  # a long region name: the details wrap
    click_button(window.equivalent_dock.collapse_button)
    block = drive.doc.blocks()[0]
    window.canvas.view.centerOn(to_scene(block.at))
    drive.click(block.at)
    settle()
    inspector = window.inspector
    assert inspector.expand_button.isVisible()
    assert _clear_of_each_other([inspector.details, inspector.expand_button])
