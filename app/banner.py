"""The safety note across the top of the canvas: shown once per opened sheet, when a source above
extra-low voltage appears; the user can close it and it never blocks."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QFrame, QHBoxLayout, QLabel, QToolButton

from portcut.engine.schematic import Change, Document

from .safety import CAUTION, above_extra_low_voltage
from .workbench import Workbench

__all__ = ["SafetyBanner"]


class SafetyBanner(QFrame):
    """A note the user can close; :meth:`follow` shows the caution once per opened sheet."""

    def __init__(self) -> None:
        super().__init__()
        self.setObjectName("safetyBanner")
        self.setFrameShape(QFrame.Shape.StyledPanel)
        self.label = QLabel()
        self.label.setWordWrap(True)
        self.label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        close = QToolButton()
        close.setText("✕")
        close.setAutoRaise(True)
        close.setToolTip("Close this note")
        close.setAccessibleName("Close safety note")
        close.clicked.connect(self.hide)
        layout = QHBoxLayout(self)
        layout.setContentsMargins(10, 6, 6, 6)
        layout.addWidget(QLabel("⚠"))
        layout.addWidget(self.label, 1)
        layout.addWidget(close, 0, Qt.AlignmentFlag.AlignTop)
        self.hide()
        self._doc: Document | None = None
        self._noted = False
        self._unsubscribe = lambda: None

    def show_note(self, text: str) -> None:
        self.label.setText(text)
        self.show()

    def follow(self, workbench: Workbench) -> None:
        """Watch the workbench's document, and each one that replaces it, for high voltages."""
        workbench.documentReplaced.connect(self._on_document)
        self._on_document(workbench.doc)

    def stop(self) -> None:
        """Stop watching (the window is closing)."""
        self._unsubscribe()

    def _on_document(self, doc: Document) -> None:
        self._unsubscribe()
        self._doc = doc
        self._unsubscribe = doc.subscribe(self._check)
        self._noted = False
        self.hide()
        self._check(None)

    def _check(self, change: Change | None) -> None:
        """The caution, once per opened sheet, when a source above extra-low voltage appears."""
        if self._noted:
            return
        doc = self._doc
        if change is None or change.analysis:
            high = above_extra_low_voltage(doc)
        else:
            high = above_extra_low_voltage(doc, [doc[i] for i in change.added | change.updated
                                                 if i in doc])
        if high:
            self._noted = True
            self.show_note(f"{CAUTION} ({', '.join(high)})")
