"""What the screenshot scripts share: a main window with throwaway settings at a given size,
and waiting until the live analysis and the sweep view have followed the last edit."""

from __future__ import annotations

import os
from pathlib import Path

from PySide6.QtCore import QSettings
from PySide6.QtTest import QTest
from PySide6.QtWidgets import QApplication

from portcut.app.panels.sweep import FOLLOW_MS
from portcut.app.settings import Settings
from portcut.app.window import MainWindow


def window(scratch: str, size: tuple[int, int]) -> MainWindow:
    """A shown main window of ``size`` pixels whose settings live in the folder ``scratch``."""
    ini = Path(scratch) / f"{len(os.listdir(scratch))}.ini"
    win = MainWindow(Settings(QSettings(str(ini), QSettings.Format.IniFormat)))
    win.files.report = lambda *message: None
    win.resize(*size)
    win.show()
    return win


def settle(app: QApplication) -> None:
    for _ in range(6):
        app.processEvents()
    QTest.qWait(FOLLOW_MS + 100)  # the sweep view waits for edits to settle before sweeping
