"""Device parts in the editor: placed from the palette with real clicks, their bias fields typed
into the inspector, the derived small-signal values read back (gm = I_C / V_T, rπ = β / gm,
ro = V_A / I_C; MOSFET gm = 2 I_D / V_ov, ro = 1 / (λ I_D): common practice), and an edit
undone."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from sheets import click_button, type_into

from portcut.app import dialogs

CTRL = Qt.KeyboardModifier.ControlModifier


def _type(editor, text: str) -> None:
    type_into(editor.edit, text)


def test_transistor_bias_fields_give_derived_values(window, drive):
    drive.place("bjt", (0, 0))
    q = drive.by("Q1")
    assert q.kind == "bjt"
    drive.click((0, 0))
    editors = window.inspector.editors
    _type(editors["param:ic"], "2m")
    _type(editors["param:beta"], "150")
    _type(editors["param:va"], "60")
    assert dict(drive.by("Q1").params) == {"ic": "2m", "beta": "150", "va": "60",
                                           "temp_k": "300"}
    derived = window.inspector.derived.text()
    # V_T(300 K) = 25.85 mV: gm = 2 mA / V_T = 77.36 mS, rπ = 150 / gm = 1.939 kΩ, ro = 30 kΩ
    assert "gm = 77.36 mS" in derived
    assert "rπ = 1.939 kΩ" in derived
    assert "ro = 30 kΩ" in derived
    caption = drive.canvas.scene.item(q.id).captions()
    assert any("I_C = 2 mA" in line for line in caption)


def test_typing_a_small_signal_value_switches_the_form(window, drive):
    drive.place("bjt", (0, 0))
    drive.click((0, 0))
    editors = window.inspector.editors
    _type(editors["param:gm"], "40m")
    # a direct entry clears the bias point, so the part holds one form; rπ is still missing
    assert dict(drive.by("Q1").params) == {"gm": "40m"}
    assert "missing input resistance rπ" in window.inspector.derived.text()
    _type(editors["param:rpi"], "2k5")
    assert "β = 100" in window.inspector.derived.text()
    QTest.keyClick(drive.viewport, Qt.Key.Key_Z, CTRL)
    assert dict(drive.by("Q1").params) == {"gm": "40m"}


def test_bad_bias_entry_is_refused_with_the_field_named(window, drive):
    drive.place("mosfet", (0, 0))
    drive.click((0, 0))
    editor = window.inspector.editors["param:vov"]
    _type(editor, "-0.2")
    assert editor.in_error and "Q1 overdrive V_ov" in editor.error.text()
    assert dict(drive.by("Q1").params)["vov"] == "200m"
    _type(window.inspector.editors["param:id"], "500u")
    # gm = 2 · 0.5 mA / 0.2 V = 5 mS, ro = 1 / (0.02 · 0.5 mA) = 100 kΩ
    derived = window.inspector.derived.text()
    assert "gm = 5 mS" in derived and "ro = 100 kΩ" in derived


def test_finite_opamp_shows_its_pole(window, drive):
    drive.place("opamp_finite", (0, 0))
    drive.click((0, 0))
    _type(window.inspector.editors["param:gbw"], "10M")
    # one pole at GBW / A0 = 10 MHz / 100 k = 100 Hz
    assert "pole = 100 Hz" in window.inspector.derived.text()


def test_measured_source_from_typed_readings(window, drive):
    drive.place("measured_source", (0, 0))
    drive.click((0, 0))
    editors = window.inspector.editors
    # two-point form first: R = R_L (Voc / V_L - 1) = 1 kΩ (5 / 4.5 - 1) = 111.1 Ω
    assert "R = 111.1 Ω" in window.inspector.derived.text()
    _type(editors["param:table"], "open, 6; 100, 3; 50, 2")
    # V = Voc - R I through (0 A, 6 V), (30 mA, 3 V), (40 mA, 2 V) exactly: Voc = 6 V, R = 100 Ω
    assert dict(drive.by("MS1").params) == {"table": "open, 6; 100, 3; 50, 2"}
    derived = window.inspector.derived.text()
    assert "Voc = 6 V" in derived and "R = 100 Ω" in derived
    caption = drive.canvas.scene.item(drive.by("MS1").id).captions()
    assert any("fitted to 3 readings" in line for line in caption)


def test_measured_source_readings_imported_from_csv(window, drive, tmp_path, monkeypatch):
    path = tmp_path / "bench.csv"
    path.write_text("load,volts\nopen,6\n100,3\n50,2\n", encoding="utf-8")
    monkeypatch.setattr(dialogs, "ask_readings_file", lambda *a: str(path))
    drive.place("measured_source", (0, 0))
    drive.click((0, 0))
    click_button(window.inspector.import_readings)
    # the exact line through (0 A, 6 V), (30 mA, 3 V), (40 mA, 2 V): Voc = 6 V, R = 100 Ω
    assert dict(drive.by("MS1").params) == {"table": "open, 6; 100, 3; 50, 2"}
    assert "R = 100 Ω" in window.inspector.derived.text()
    QTest.keyClick(drive.viewport, Qt.Key.Key_Z, CTRL)
    assert dict(drive.by("MS1").params) == {"voc": "5", "rl": "1k", "vl": "4.5"}
