"""The inspector in both directions: typing lands in the document (values read as SI prefixes
and IEC 60062 codes), a refused entry shows the reason and keeps the old value, and document
changes (undo, renames) show in the fields."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtTest import QTest

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
    assert drive.by("K1").value == "0.9"
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
