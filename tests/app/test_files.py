"""Files from the window: save and reopen to the same document, a corrupt file refused with the
loader's message while the open sheet stays as it was, the unsaved-changes prompt, recent
files, autosave recovery after a crash, and the SVG export rendered by Qt's SVG renderer."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest
from PySide6.QtCore import Qt
from PySide6.QtGui import QColor, QImage, QPainter
from PySide6.QtSvg import QSvgRenderer

from portcut import assets
from portcut.app import dialogs
from portcut.app.recovery import left_over
from portcut.app.window import MainWindow
from portcut.engine.errors import DocumentError
from portcut.engine.schematic.fileformat import dumps, load, loads


def _draw(drive) -> None:
    drive.place("voltage_source", (0, 0))
    drive.place("resistor", (8, 0))
    drive.wire((2, 0), (6, 0))


def test_save_and_reopen_give_the_same_document(window, drive, tmp_path: Path):
    _draw(drive)
    path = tmp_path / "sheet.json"
    assert window.files.save_to(path)
    assert not window.workbench.dirty and window.workbench.path == path
    drawn = loads(dumps(drive.doc))
    assert window.files.new()
    assert len(drive.doc) == 0
    assert window.files.open_path(path)
    assert drive.doc == drawn
    assert window.settings.recent_files[0] == path.resolve()
    assert window.windowTitle().startswith("sheet.json")


def test_corrupt_file_is_refused_and_the_sheet_kept(window, drive, close_error_box,
                                                   tmp_path: Path):
    _draw(drive)
    before = loads(dumps(drive.doc))
    bad = tmp_path / "bad.json"
    text = dumps(before)
    assert '"kind": "voltage_source"' in text
    bad.write_text(text.replace('"kind": "voltage_source"', '"kind": "flux_source"'),
                   encoding="utf-8")
    with pytest.raises(DocumentError, match=r"parts\[\d+\]\.kind") as loader:
        load(bad)
    assert not window.files.open_path(bad, confirmed=True)
    message = close_error_box()
    assert str(loader.value) in message
    assert drive.doc == before and window.workbench.path is None
    truncated = tmp_path / "cut.json"
    truncated.write_text(dumps(before)[:40], encoding="utf-8")
    assert not window.files.open_path(truncated, confirmed=True)
    assert "cut.json" in close_error_box()
    assert drive.doc == before


def test_unsaved_changes_prompt(window, drive, monkeypatch, tmp_path: Path):
    _draw(drive)
    asked = []
    monkeypatch.setattr(dialogs, "ask_save_changes",
                        lambda parent, name: asked.append(name) or dialogs.SaveChoice.CANCEL)
    assert not window.files.new()                     # cancelled: nothing changes
    assert asked and len(drive.doc.parts()) == 2
    assert not window.close()
    target = tmp_path / "kept.json"
    monkeypatch.setattr(dialogs, "ask_save_changes", lambda *a: dialogs.SaveChoice.SAVE)
    monkeypatch.setattr(window.files, "save_as", lambda: window.files.save_to(target))
    assert window.files.open_path(assets.example_path(), as_copy=True)
    assert target.exists() and len(load(target).parts()) == 2


def _crash(window: MainWindow) -> None:
    """The process "dies": its locks are gone, its files stay."""
    window.recovery.lock.unlock()
    for _, lock in window.recovery.adopted:
        lock.unlock()
    window.recovery = None


def test_autosave_is_offered_back_after_a_crash(qtbot, settings, tmp_path: Path, monkeypatch):
    folder = tmp_path / "recovery"
    first = MainWindow(settings, recovery_folder=folder)
    qtbot.addWidget(first)
    first.files.open_path(assets.example_path("rc_antialias"), as_copy=True)
    first.canvas.select_all()
    first.canvas.move_selection((3, 0))
    assert first.recovery.autosave()
    lost = loads(dumps(first.workbench.doc))
    _crash(first)
    monkeypatch.setattr(dialogs, "ask_restore", lambda parent, what: "autosaved" in what)
    second = MainWindow(settings, recovery_folder=folder)
    qtbot.addWidget(second)
    assert second.offer_recovery()
    assert second.workbench.doc == lost and second.workbench.dirty
    assert left_over(folder) == []    # the recovered copy was taken over
    assert len(list(folder.glob("autosave-*.json"))) == 2   # but kept: the document and its note
    assert second.recovery.autosave()   # and the restored work is autosaved again
    assert sorted(p.name for p in folder.glob("autosave-*.json")) == sorted(
        [second.recovery.document.name, second.recovery.meta.name])
    second.files.save_to(tmp_path / "saved.json")     # saved: nothing left to recover
    assert not second.recovery.document.exists()


def test_restored_work_survives_a_second_crash_before_it_is_autosaved(
        qtbot, settings, tmp_path: Path, monkeypatch):
    folder = tmp_path / "recovery"
    first = MainWindow(settings, recovery_folder=folder)
    qtbot.addWidget(first)
    first.files.open_path(assets.example_path("rc_antialias"), as_copy=True)
    first.canvas.select_all()
    first.canvas.move_selection((3, 0))
    assert first.recovery.autosave()
    lost = loads(dumps(first.workbench.doc))
    _crash(first)
    monkeypatch.setattr(dialogs, "ask_restore", lambda parent, what: True)
    second = MainWindow(settings, recovery_folder=folder)
    qtbot.addWidget(second)
    assert second.offer_recovery()
    _crash(second)                    # before any autosave of the restored sheet
    third = MainWindow(settings, recovery_folder=folder)
    qtbot.addWidget(third)
    assert third.offer_recovery()
    assert third.workbench.doc == lost
    third.close()                     # a normal end: nothing is left to offer
    assert list(folder.glob("autosave-*")) == []


def test_a_killed_autosave_leaves_nothing_at_the_next_start(qtbot, settings, tmp_path: Path):
    folder = tmp_path / "recovery"
    folder.mkdir()
    stale = folder / ".autosave-0123456789ab.json.00000000abcd.tmp"  # a write that was killed
    stale.write_text("{", encoding="utf-8")
    w = MainWindow(settings, recovery_folder=folder)
    qtbot.addWidget(w)
    assert not stale.exists()


def test_a_clean_close_leaves_nothing_to_recover(qtbot, settings, tmp_path: Path):
    folder = tmp_path / "recovery"
    w = MainWindow(settings, recovery_folder=folder)
    qtbot.addWidget(w)
    w.canvas.place("resistor")
    w.canvas.tool.press(w.canvas.event_at(w.canvas.view.mapToScene(0, 0),
                                          Qt.MouseButton.LeftButton))
    assert w.recovery.autosave()
    w.close()
    again = MainWindow(settings, recovery_folder=folder)
    qtbot.addWidget(again)
    assert not again.offer_recovery()


def test_a_killed_session_leaves_no_stale_lock_behind(tmp_path: Path):
    # a session killed before its first autosave: only its lock file is left on disk
    folder = tmp_path / "recovery"
    folder.mkdir()
    lock = folder / "session-deadbeef0001.lock"
    code = ("import os, sys; from PySide6.QtCore import QLockFile; "
            "held = QLockFile(sys.argv[1]); assert held.tryLock(0); os._exit(0)")
    subprocess.run([sys.executable, "-c", code, str(lock)], check=True, timeout=60)
    assert lock.exists()  # the process ended without releasing it
    assert left_over(folder) == []
    assert not lock.exists()


def test_svg_export_renders_with_qt(window, tmp_path: Path):
    assert window.files.open_path(assets.example_path(), as_copy=True)
    out = tmp_path / "demo.svg"
    assert window.files.export_svg_to(out)
    renderer = QSvgRenderer(str(out))
    assert renderer.isValid()
    size = renderer.defaultSize()
    assert size.width() > 100 and size.height() > 100
    image = QImage(size, QImage.Format.Format_ARGB32)
    image.fill(QColor("white"))
    painter = QPainter(image)
    renderer.render(painter)
    painter.end()
    # count pixels far from the paper colour: strokes and text
    ink = sum(1 for y in range(0, image.height(), 2) for x in range(0, image.width(), 2)
              if QColor(image.pixel(x, y)).lightness() < 120)
    assert ink > 200


def test_save_as_gives_a_name_without_a_type_our_own_sheet_type(window, drive, tmp_path,
                                                                 monkeypatch):
    from PySide6.QtWidgets import QFileDialog

    from portcut.app.files import SHEET_FILTER

    offered = []

    def answer(parent, caption, start, filters):
        offered.append(filters)
        return str(tmp_path / "bridge"), ""

    monkeypatch.setattr(QFileDialog, "getSaveFileName", answer)
    _draw(drive)
    assert window.files.save_as()
    assert (tmp_path / "bridge.portcut.json").exists()
    assert offered == [SHEET_FILTER] and "(*.portcut.json)" in SHEET_FILTER.split(";;")[0]
    assert window.files.open_path(tmp_path / "bridge.portcut.json")
