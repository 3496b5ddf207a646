"""Message boxes the window shows, in one place so that their wording stays consistent and
tests can answer them.

Errors are shown window-modal and non-blocking (the call returns at once; the box stays until
the user closes it). Questions block until answered.
"""

from __future__ import annotations

from enum import Enum

from PySide6.QtWidgets import QFileDialog, QMessageBox, QWidget

__all__ = ["SaveChoice", "ask_readings_file", "ask_restore", "ask_save_changes", "show_error"]


class SaveChoice(Enum):
    SAVE = "save"
    DISCARD = "discard"
    CANCEL = "cancel"


def show_error(parent: QWidget, title: str, text: str, details: str = "") -> QMessageBox:
    """An error box that does not block; returns it (already open)."""
    box = QMessageBox(QMessageBox.Icon.Warning, title, text, QMessageBox.StandardButton.Ok,
                      parent)
    box.setObjectName("errorBox")
    if details:
        box.setInformativeText(details)
    box.open()
    return box


def ask_readings_file(parent: QWidget) -> str:
    """The CSV file of bench readings to import, "" when cancelled."""
    path, _ = QFileDialog.getOpenFileName(parent, "Import readings", "",
                                          "Readings (*.csv *.txt);;All files (*)")
    return path


def ask_save_changes(parent: QWidget, name: str) -> SaveChoice:
    """Save, discard or keep editing unsaved changes to ``name``."""
    buttons = (QMessageBox.StandardButton.Save | QMessageBox.StandardButton.Discard
               | QMessageBox.StandardButton.Cancel)
    answer = QMessageBox.question(parent, "Unsaved changes",
                                  f"“{name}” has changes that are not saved. Save them first?",
                                  buttons, QMessageBox.StandardButton.Save)
    return {QMessageBox.StandardButton.Save: SaveChoice.SAVE,
            QMessageBox.StandardButton.Discard: SaveChoice.DISCARD}.get(answer,
                                                                        SaveChoice.CANCEL)


def ask_restore(parent: QWidget | None, description: str) -> bool:
    """Whether to restore the work that an earlier session left in a recovery file."""
    answer = QMessageBox.question(
        parent, "Restore unsaved work?",
        f"Portcut did not close normally last time. Recovered work: {description}.\n\n"
        "Restore it? (No discards the recovered copy.)",
        QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.No,
        QMessageBox.StandardButton.Yes)
    return answer == QMessageBox.StandardButton.Yes
