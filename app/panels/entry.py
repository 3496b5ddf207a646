"""A line of text that must read as a value: Enter (or leaving the field) offers the text to a
reader; a refusal turns the field into an error state that shows the reason and keeps the last
accepted text as the value; Esc puts that text back."""

from __future__ import annotations

from collections.abc import Callable

from PySide6.QtCore import QEvent, QObject, Qt, Signal
from PySide6.QtWidgets import QLabel, QLineEdit, QVBoxLayout, QWidget

from portcut.engine.drawing.palette import PALETTE
from portcut.engine.errors import CircuitError

__all__ = ["ERROR_STYLE", "CheckedEntry", "mark_error"]

#: Style of a refused entry and of error texts in the analysis panels.
ERROR_STYLE = (f'QLineEdit[error="true"] {{ border: 1px solid {PALETTE.error}; '
               f"border-radius: 2px; padding: 1px; }}"
               f'QLabel[error="true"] {{ color: {PALETTE.error}; }}')


def mark_error(widget: QWidget, error: bool) -> None:
    """Put a widget in or out of the error style of :data:`ERROR_STYLE`."""
    if widget.property("error") == error:
        return  # restyling costs a relayout of the panel
    widget.setProperty("error", error)
    widget.style().unpolish(widget)
    widget.style().polish(widget)


class CheckedEntry(QWidget):
    """``read(text)`` returns the value or raises CircuitError saying why; :attr:`accepted`
    carries (text, value) for each new text taken."""

    accepted = Signal(str, object)

    def __init__(self, read: Callable[[str], object], text: str, title: str,
                 tip: str = "") -> None:
        super().__init__()
        self.read = read
        self.value: object = None
        self.text = text
        self.edit = QLineEdit(text)
        self.edit.setAccessibleName(title)
        self.edit.setToolTip(tip)
        self.edit.installEventFilter(self)
        self.error = QLabel()
        self.error.setProperty("error", True)
        self.error.setWordWrap(True)
        self.error.hide()
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.setSpacing(2)
        layout.addWidget(self.edit)
        layout.addWidget(self.error)
        self.setStyleSheet(ERROR_STYLE)
        self.edit.editingFinished.connect(self.commit)
        self.set_text(text)

    @property
    def in_error(self) -> bool:
        return not self.error.isHidden()

    def set_text(self, text: str) -> None:
        """Show a value that came from elsewhere (the document, an undo); one that cannot be
        read (a hand-edited file) shows why."""
        self.text = text
        self.edit.setText(text)
        try:
            self.value = self.read(text)
        except CircuitError as exc:
            self._mark(str(exc))
        else:
            self._mark("")

    def commit(self) -> None:
        text = self.edit.text().strip()
        if text == self.text and not self.in_error:
            return
        try:
            value = self.read(text)
        except CircuitError as exc:
            self._mark(str(exc))
            return
        self._mark("")
        if text != self.text:
            self.value, self.text = value, text
            self.accepted.emit(text, value)

    def revert(self) -> None:
        self.edit.setText(self.text)
        self._mark("")

    def _mark(self, reason: str) -> None:
        mark_error(self.edit, bool(reason))
        self.error.setText(reason)
        self.error.setVisible(bool(reason))

    def eventFilter(self, watched: QObject, event: QEvent) -> bool:
        if (watched is self.edit and event.type() == QEvent.Type.KeyPress
                and event.key() == Qt.Key.Key_Escape):
            self.revert()
            return True
        return super().eventFilter(watched, event)
