"""The inspector: the selected element's fields (app/fields.py), or the sheet's title when
nothing is selected.

A field writes by pushing an undo command; a refused entry turns the field into an error state
that shows the reason, and the document keeps its old value (Esc puts the old text back). The
inspector follows the document (undo, other edits) and the selection, and ignores the echo of
its own edits.
"""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtCore import Qt
from PySide6.QtGui import QUndoCommand
from PySide6.QtWidgets import (
    QDockWidget,
    QFormLayout,
    QLabel,
    QPushButton,
    QVBoxLayout,
    QWidget,
)

from portcut.engine.errors import CircuitError
from portcut.engine.schematic import Block, Change, Document, Element, NetLabel, PlacedPart, Wire
from portcut.engine.schematic.captions import derived_caption
from portcut.engine.solve.devices import DEVICE_KINDS
from portcut.engine.solve.measured import read_csv
from portcut.engine.solve.units import parse_frequency

from .. import dialogs
from ..canvas import Canvas
from ..catalog import entry
from ..commands import ReplaceElements, SetTitle
from ..fields import Field, fields_for
from ..workbench import Workbench
from .entry import CheckedEntry
from .equivalent import block_text, expand_command
from .scrolling import scrolled
from .values import text_label

__all__ = ["FieldEditor", "InspectorDock"]

class FieldEditor(CheckedEntry):
    """One field of the element shown: a checked entry whose reader is the field's writer, so
    a refused entry shows the reason and an accepted one becomes an undo command."""

    def __init__(self, inspector: InspectorDock, field: Field, element: Element) -> None:
        self.inspector = inspector
        self.field = field
        self.element = element
        super().__init__(self._write, field.read(element), field.title, field.tip)
        self.edit.setPlaceholderText(field.unit)
        self.edit.setCursorPosition(0)  # show the start of a long text
        self.caution = QLabel()  # an unusual value taken: shown, never silent
        self.caution.setObjectName("caution")
        self.caution.setWordWrap(True)
        self.layout().addWidget(self.caution)
        self._caution()
        self.accepted.connect(self._push)

    def _caution(self) -> None:
        text = self.field.warning(self.element, self.text)
        self.caution.setText(text)
        self.caution.setVisible(bool(text))

    def _write(self, text: str) -> list:
        return self.field.write(self.inspector.workbench.doc, self.element, text)

    def show_element(self, element: Element) -> None:
        """Show the document's version of the element."""
        self.element = element
        self.set_text(self.field.read(element))
        self.edit.setCursorPosition(0)
        self._caution()

    def _push(self, text: str, new: list) -> None:
        self._caution()
        if new != [self.element]:
            self.inspector.push(self.command(self.inspector.workbench.doc, new, text))

    def command(self, doc: Document, new: list, text: str) -> QUndoCommand:
        """The undo command that puts ``new`` in the document."""
        label = getattr(self.element, "designator", None) or f"label {self.element.name}"
        return ReplaceElements(doc, new, f"Set {label} {self.field.title.lower()} to {text}")


def _describe(element: Element) -> str:
    if isinstance(element, PlacedPart):
        return f"{element.designator} · {entry(element.kind).title}"
    if isinstance(element, Block):
        return f"{element.designator} · collapsed {element.form.title()} equivalent"
    if isinstance(element, NetLabel):
        return "Ground (net gnd)" if element.style == "ground" else f"Net label {element.name}"
    if isinstance(element, Wire):
        return f"Wire · {len(element.points) - 1} segment(s)"
    return type(element).__name__


class InspectorDock(QDockWidget):
    """Edits the single selected element, or the sheet when nothing is selected."""

    def __init__(self, workbench: Workbench, canvas: Canvas,
                 parent: QWidget | None = None) -> None:
        super().__init__("Inspector", parent)
        self.setObjectName("inspector")
        self.workbench = workbench
        self.canvas = canvas
        self.editors: dict[str, FieldEditor] = {}
        self._shown: str | None = None  # id of the element shown, "" for the sheet
        self._pushing = False
        body = QWidget()
        self.heading = QLabel()
        font = self.heading.font()
        font.setBold(True)
        self.heading.setFont(font)
        self.heading.setWordWrap(True)
        # selectable under the pointer only: a nudge rewrites "At (x, y)" at every step
        self.details = text_label()
        self.expand_button = QPushButton("Expand")
        self.expand_button.clicked.connect(self.expand)
        self.expand_button.hide()
        # a device part's small-signal values, worked out from what was entered (read-only)
        self.derived = text_label()
        self.derived.setObjectName("derived")
        self.form = QFormLayout()
        outer = QVBoxLayout(body)
        outer.addWidget(self.heading)
        outer.addLayout(self.form)
        outer.addWidget(self.derived)
        self.import_readings = QPushButton("Import readings (CSV)…")
        self.import_readings.setToolTip("Fill the Readings field from a CSV file of load "
                                        "ohms, volts (a header line is skipped)")
        self.import_readings.clicked.connect(self._import_readings)
        outer.addWidget(self.import_readings)
        outer.addWidget(self.details)
        outer.addWidget(self.expand_button)
        outer.addStretch(1)
        # the inspector grows to show a part's fields, scrolling beyond half the window: the
        # panels tabbed below keep room for their first lines
        self.setWidget(scrolled(body, grow_share=0.55))
        self._unsubscribe = workbench.doc.subscribe(self._on_change)
        workbench.documentReplaced.connect(self._on_document)
        canvas.selectionChanged.connect(self.show_selection)
        canvas.editRequested.connect(self.focus_value)
        self.show_selection([])

    # -- following the document and the selection ---------------------------------------------
    def _on_document(self, doc: Document) -> None:
        self._unsubscribe()
        self._unsubscribe = doc.subscribe(self._on_change)
        self.show_selection([], force=True)

    def _on_change(self, change: Change) -> None:
        if self._pushing:
            return
        shown = self._shown
        if shown == "" and (change.added or change.removed):
            self.details.setText(self._sheet_summary())
        doc = self.workbench.doc
        if shown and change.analysis and shown in doc and isinstance(doc[shown], Block):
            self.show_selection([shown], force=True)  # its values follow the frequency
        if shown == "" and change.title:
            self.editors["title"].show_element(_TitleRecord(self.workbench.doc.title))
        elif shown and (shown in change.updated or shown in change.removed):
            self.show_selection(self.canvas.scene.selected_ids(), force=True)

    def closeEvent(self, event) -> None:
        self._unsubscribe()
        super().closeEvent(event)

    def push(self, command) -> None:
        self._pushing = True
        try:
            self.workbench.push(command)
        finally:
            self._pushing = False
        self._refresh_shown()

    def _refresh_shown(self) -> None:
        doc = self.workbench.doc
        if self._shown and self._shown in doc:
            element = doc[self._shown]
            for editor in self.editors.values():
                editor.show_element(element)
            self._show_derived(element)

    def _show_derived(self, element: Element | None) -> None:
        if isinstance(element, PlacedPart) and element.kind in DEVICE_KINDS:
            self.derived.setText("Derived (read-only):\n" + derived_caption(element))
            self.derived.show()
        else:
            self.derived.clear()
            self.derived.hide()
        measured = isinstance(element, PlacedPart) and element.kind == "measured_source"
        self.import_readings.setVisible(measured)

    def _import_readings(self) -> None:
        """Read a CSV of readings into the shown measured source's Readings field (one undo
        step); a file that cannot be read leaves the part as it was and says why."""
        editor = self.editors.get("param:table")
        path = dialogs.ask_readings_file(self)
        if editor is None or not path:
            return
        try:
            pairs = read_csv(path)
        except CircuitError as e:
            dialogs.show_error(self, "Import readings", str(e))
            return
        text = "; ".join(f"{'open' if load == float('inf') else f'{load:g}'}, {volts:g}"
                         for load, volts in pairs)
        editor.edit.setText(text)
        editor.commit()  # as if typed: checked, then one undoable edit

    def _sheet_summary(self) -> str:
        doc = self.workbench.doc
        parts, wires = len(doc.parts()), len(doc.wires())
        return (f"{parts} part{'s' * (parts != 1)}, {wires} wire{'s' * (wires != 1)}. "
                "Select an element to edit it.")

    def show_selection(self, ids: list[str], force: bool = False) -> None:
        doc = self.workbench.doc
        ids = [i for i in ids if i in doc]
        target = ids[0] if len(ids) == 1 else ("" if not ids else None)
        if target == self._shown and not force and target is not None:
            return
        if target and target == self._shown and self._show_new_version(doc[target]):
            return
        self._clear()
        self._shown = target
        self._show_derived(doc[target] if target else None)
        if target is None:
            self.heading.setText(f"{len(ids)} elements selected")
            self.details.setText("Select one element to edit it.")
        elif target == "":
            self.heading.setText("Sheet")
            self._add_editor(_TITLE, _TitleRecord(doc.title))
            self.details.setText(self._sheet_summary())
        else:
            element = doc[target]
            self.heading.setText(_describe(element))
            for field in fields_for(element):
                self._add_editor(field, element)
            self.details.setText(self._placement(element))
            if isinstance(element, Block):
                self._show_block(element)

    def _show_new_version(self, element: Element) -> bool:
        """Show a new version of the element shown (moved, a value typed, undone) in the editors
        already there, where it has the same fields; False where it has not. Rebuilding them
        would cost a relayout of the panel on every nudge."""
        if [editor.field for editor in self.editors.values()] != fields_for(element):
            return False
        self.heading.setText(_describe(element))
        for editor in self.editors.values():
            editor.show_element(element)
        self._show_derived(element)
        self.details.setText(self._placement(element))
        self.expand_button.hide()
        if isinstance(element, Block):
            self._show_block(element)
        return True

    def _show_block(self, block: Block) -> None:
        """A block's form and values at the analysis frequency, and Expand."""
        try:
            lines = block_text(block, parse_frequency(self.workbench.doc.analysis.freq))
        except CircuitError as exc:
            lines = [str(exc)]
        self.details.setText("\n".join((*lines, self._placement(block))))
        self.expand_button.setText(f"Expand {block.designator}")
        self.expand_button.setToolTip(f"Put the parts {block.designator} stands for back "
                                      "exactly")
        self.expand_button.show()

    def expand(self) -> None:
        """Expand the block shown; a refusal says why in the details."""
        doc = self.workbench.doc
        block = doc[self._shown] if self._shown and self._shown in doc else None
        if not isinstance(block, Block):
            return
        try:
            command = expand_command(doc, block)
        except CircuitError as exc:
            self.details.setText(str(exc)[0].upper() + str(exc)[1:])
            return
        self.workbench.push(command)

    def _placement(self, element: Element) -> str:
        at = getattr(element, "at", None)
        if at is None:
            return ""
        turn = getattr(element, "rotation", 0)
        mirrored = ", mirrored" if getattr(element, "mirror", False) else ""
        return f"At ({at[0]}, {at[1]}), turned {turn}°{mirrored}. R rotates, M mirrors."

    def _add_editor(self, field: Field, element: object) -> None:
        editor = (_TitleEditor if field is _TITLE else FieldEditor)(self, field, element)
        self.editors[field.name] = editor
        label = QLabel(field.title + (f" ({field.unit})" if field.unit else ""))
        label.setBuddy(editor.edit)
        self.form.addRow(label, editor)

    def _clear(self) -> None:
        self.expand_button.hide()
        while self.form.rowCount():
            self.form.removeRow(0)
        self.editors.clear()

    def focus_value(self, element_id: str) -> None:
        """Show the element and put the cursor in its value (or first) field."""
        self.show_selection([element_id])
        self.show()
        self.raise_()
        editor = self.editors.get("value") or next(iter(self.editors.values()), None)
        if editor is not None:
            editor.edit.setFocus(Qt.FocusReason.OtherFocusReason)
            editor.edit.selectAll()


@dataclass(frozen=True)
class _TitleRecord:
    """The document's title, shown in the inspector as an element with a title field."""

    title: str
    id: str = ""


class _TitleEditor(FieldEditor):
    def command(self, doc: Document, new: list, text: str) -> QUndoCommand:
        return SetTitle(doc, new[0].title)


def _write_title(doc: Document, sheet: _TitleRecord, text: str) -> list[_TitleRecord]:
    return [_TitleRecord(text.strip())]


_TITLE = Field("title", "Title", "The sheet's title, shown on exports", _write_title)
