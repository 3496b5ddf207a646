"""The document's analysis settings as controls: the frequency, the form shown (Thevenin or
Norton) and the phasor basis of the power figures. They show the settings the document holds
and change them only through a SetAnalysis undo command."""

from __future__ import annotations

from dataclasses import replace

from PySide6.QtCore import QObject
from PySide6.QtWidgets import QButtonGroup, QComboBox, QFormLayout, QHBoxLayout, QRadioButton

from portcut.engine.schematic import Document
from portcut.engine.solve.mna import describe_freq
from portcut.engine.solve.units import parse_frequency

from ..commands import SetAnalysis
from ..workbench import Workbench
from .entry import CheckedEntry

__all__ = ["AnalysisControls"]


class AnalysisControls(QObject):
    """The frequency entry, the two form buttons and the basis box over ``workbench``'s
    document; :meth:`add_rows` lays them out, :meth:`show_settings` re-reads the document."""

    def __init__(self, workbench: Workbench, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.workbench = workbench
        self.frequency = CheckedEntry(parse_frequency, "DC", "Analysis frequency",
                                      "DC, or a frequency with SI prefixes: 50, 1k, 2.4 GHz")
        self.frequency.accepted.connect(self._set_frequency)
        self.thevenin = QRadioButton("Thevenin")
        self.norton = QRadioButton("Norton")
        self.form_group = QButtonGroup(self)
        for button in (self.thevenin, self.norton):
            self.form_group.addButton(button)
            button.toggled.connect(self._set_form)
        self.basis = QComboBox()
        self.basis.addItem("peak phasors", "peak")
        self.basis.addItem("rms phasors", "rms")
        self.basis.setAccessibleName("Phasor basis")
        self.basis.activated.connect(self._set_basis)

    @property
    def doc(self) -> Document:
        return self.workbench.doc

    def add_rows(self, layout: QFormLayout) -> None:
        """The Frequency, Form and Power rows."""
        layout.addRow("Frequency", self.frequency)
        forms = QHBoxLayout()
        forms.addWidget(self.thevenin)
        forms.addWidget(self.norton)
        forms.addStretch(1)
        layout.addRow("Form", forms)
        layout.addRow("Power", self.basis)

    def show_settings(self) -> None:
        """Show the document's settings; a refused frequency stays in the entry, with its
        reason, until the document's frequency changes."""
        a = self.doc.analysis
        if a.freq != self.frequency.text or not self.frequency.in_error:
            self.frequency.set_text(a.freq)
        for button, form in ((self.thevenin, "thevenin"), (self.norton, "norton")):
            button.blockSignals(True)
            button.setChecked(a.form == form)
            button.blockSignals(False)
        self.basis.setCurrentIndex(self.basis.findData(a.basis))

    def _set_analysis(self, text: str, **changes: str) -> None:
        new = replace(self.doc.analysis, **changes)
        if new != self.doc.analysis:
            self.workbench.push(SetAnalysis(self.doc, new, text))

    def _set_frequency(self, text: str, hz: float) -> None:
        shown = "DC" if hz == 0 and text.upper() == "DC" else text
        self._set_analysis(f"Analyse at {describe_freq(hz)}", freq=shown)

    def _set_form(self, checked: bool) -> None:
        if checked:
            form = "thevenin" if self.thevenin.isChecked() else "norton"
            self._set_analysis(f"Show the {form.title()} form", form=form)

    def _set_basis(self, index: int) -> None:
        basis = self.basis.itemData(index)
        self._set_analysis(f"Read phasors as {basis} values", basis=basis)
