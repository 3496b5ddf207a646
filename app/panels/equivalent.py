"""The live equivalent panel: the current region's Thevenin and Norton equivalents as the user
edits, the analysis settings, and the region's own controls (its name, its port: automatic or
plus and minus chosen from its nets) and commands (swap polarity, collapse, expand, remove).

It reads the numbers from app.analysis.LiveAnalysis and writes only through undo commands; for
an invalid cut it shows the reason in plain words (the canvas highlights what is named). The
dock keeps the layout; the sentences come from engine.schematic.wording (the command line
prints the same), the controls from analysis_controls.py and port_controls.py, the values
table from values.py and the region and block texts from region_texts.py.
"""

from __future__ import annotations

import html
from dataclasses import replace

from PySide6.QtCore import Qt
from PySide6.QtWidgets import (
    QComboBox,
    QDockWidget,
    QFormLayout,
    QHBoxLayout,
    QPushButton,
    QVBoxLayout,
    QWidget,
)

from portcut.engine.errors import CircuitError
from portcut.engine.schematic import Block, Change, Document, Region
from portcut.engine.schematic.connectivity import block_equivalent, extract
from portcut.engine.schematic.reduction import RegionAnalysis, collapse_region
from portcut.engine.schematic.wording import (
    MATCH_RTOL,
    equivalence_text,
    forms_text,
    power_text,
    realisation_text,
)
from portcut.engine.solve.equivalent import EquivalenceReport, Equivalent
from portcut.engine.solve.mna import describe_freq
from portcut.engine.solve.units import parse_frequency

from ..analysis import LiveAnalysis
from ..canvas import Canvas
from ..commands import RemoveElements, ReplaceElements, edit_command
from ..region_edits import net_shown, renamed
from ..workbench import Workbench
from .analysis_controls import AnalysisControls
from .entry import ERROR_STYLE, CheckedEntry, mark_error
from .port_controls import PortControls
from .region_texts import block_text, boundary_text, expand_command
from .scrolling import scrolled
from .values import ValuesTable, keep_values, text_label

__all__ = ["EquivalentDock", "block_text", "boundary_text", "expand_command", "keep_values"]

_NO_REGION = ("No region yet. Choose Tools > Boundary (B) and drag a lasso around the parts to "
              "reduce; their Thevenin and Norton equivalents appear here as you edit.")
_PICK_BLOCK = ("Select a collapsed block to see its values and expand it, or choose Tools > "
               "Boundary (B) and drag a lasso around parts to reduce them.")


# -- widgets --------------------------------------------------------------------------------------
def _button(text: str, tip: str, slot=None) -> QPushButton:
    button = QPushButton(text)
    button.setToolTip(tip)
    if slot is not None:
        button.clicked.connect(slot)
    return button


class EquivalentDock(QDockWidget):
    """The dock; ``live`` supplies the analysis, ``workbench`` takes the edits."""

    def __init__(self, workbench: Workbench, canvas: Canvas, live: LiveAnalysis,
                 parent: QWidget | None = None) -> None:
        super().__init__("Equivalent", parent)
        self.setObjectName("equivalentDock")
        self.workbench = workbench
        self.canvas = canvas
        self.live = live

        self.region_box = QComboBox()
        self.region_box.setAccessibleName("Region shown")
        self.region_box.activated.connect(self._choose_region)
        self.name = CheckedEntry(self._read_name, "", "Region name",
                                 "The region's name, unique on the sheet (Shift+F2)")
        self.name.accepted.connect(self._rename)
        self.ports = PortControls(workbench, live, self._region, self)
        self.ports.refused.connect(self._refuse)
        self.port_boxes, self.automatic_button = self.ports.boxes, self.ports.automatic_button
        self.port = text_label()
        self.settings = AnalysisControls(workbench, self)
        self.frequency, self.basis = self.settings.frequency, self.settings.basis
        self.thevenin, self.norton = self.settings.thevenin, self.settings.norton
        self.message = text_label()
        self.values = ValuesTable()
        self.forms = text_label(plain=True)
        self.realisation = text_label(plain=True)
        self.power = text_label(plain=True)
        self.check = text_label(plain=True)
        self.notice = text_label()
        self.swap_button = _button("Swap + / −", "Exchange the port's plus and minus nets",
                                   self.swap)
        self.collapse_button = _button("Collapse", "Replace the region by its equivalent block",
                                       self.collapse)
        self.expand_button = _button("Expand", "", self.expand)
        self.remove_button = _button("Remove region", "Forget the region (the parts stay)",
                                     self.remove_region)
        self.sweep_button = _button("Sweep…", "Show the region's Z and Voc over frequency")
        self._listed: set[str] = set()  # the ids of the regions and blocks the lists show
        self._build()

        live.analysed.connect(self.show_analysis)
        live.checked.connect(self.show_check)
        live.updating.connect(self.show_updating)
        live.currentChanged.connect(lambda _: self._fill_regions())
        canvas.selectionChanged.connect(lambda _: self._on_selection())
        live.documentChanged.connect(self._on_change)
        workbench.documentReplaced.connect(lambda _: self._show_document())
        self._show_document()

    def _build(self) -> None:
        settings = QFormLayout()
        settings.addRow("Region", self.region_box)
        settings.addRow("Name", self.name)
        self.ports.add_rows(settings)
        self.settings.add_rows(settings)
        row1, row2 = QHBoxLayout(), QHBoxLayout()
        row1.addWidget(self.swap_button)
        row1.addWidget(self.sweep_button)
        row1.addWidget(self.remove_button)
        row2.addWidget(self.collapse_button)
        row2.addWidget(self.expand_button)
        body = QWidget()
        column = QVBoxLayout(body)
        column.addLayout(settings)
        for widget in (self.port, self.message, self.automatic_button, self.values, self.forms,
                       self.realisation, self.power, self.check, self.notice):
            column.addWidget(widget)
        column.addStretch(1)
        body.setStyleSheet(ERROR_STYLE)
        # the commands stay below the scrolled texts, always in sight
        outer = QWidget()
        frame = QVBoxLayout(outer)
        frame.setContentsMargins(0, 0, 0, 0)
        frame.addWidget(scrolled(body), 1)
        buttons = QVBoxLayout()
        buttons.setContentsMargins(9, 0, 9, 6)
        buttons.addLayout(row1)
        buttons.addLayout(row2)
        frame.addLayout(buttons)
        self.setWidget(outer)

    @property
    def doc(self) -> Document:
        return self.workbench.doc

    # -- following ----------------------------------------------------------------------------
    def _show_document(self) -> None:
        self.settings.show_settings()
        self._fill_regions()
        self._update_expand()

    def _on_change(self, change: Change) -> None:
        if change.analysis:
            self.settings.show_settings()
        doc = self.doc
        # the lists shown change only with regions and blocks (a value edit or a move touches
        # neither; a link wire folded away by a move is removed, but was never listed)
        if any(i in self._listed for i in change.removed) or any(
                i in doc and isinstance(doc[i], Region | Block)
                for i in change.added | change.updated):
            self._fill_regions()
            self._update_expand()

    def _on_selection(self) -> None:
        self._update_expand()
        self._show_idle_block()

    def _show_idle_block(self) -> None:
        """With no region shown, the selected (or only) block's equivalent stands in."""
        if self.live.region_id is None or self._region() is None:
            self.show_analysis(None)

    def _fill_regions(self) -> None:
        regions = self.doc.regions()
        self._listed = {r.id for r in regions} | {b.id for b in self.doc.blocks()}
        box = self.region_box
        box.blockSignals(True)
        box.clear()
        for region in regions:
            box.addItem(region.name, region.id)
        box.setCurrentIndex(box.findData(self.live.region_id))
        box.blockSignals(False)
        box.setEnabled(box.count() > 0)
        region = self._region()
        self.name.setEnabled(region is not None)
        shown = region.name if region is not None else ""
        if shown != self.name.text or not self.name.in_error:
            self.name.set_text(shown)

    def _choose_region(self, index: int) -> None:
        self.live.set_region(self.region_box.itemData(index))

    # -- showing ------------------------------------------------------------------------------
    def show_analysis(self, analysis: RegionAnalysis | None) -> None:
        self.notice.clear()
        self.ports.show_port(analysis)
        ok = analysis is not None and analysis.ok
        for widget in (self.forms, self.realisation, self.power, self.check):
            widget.setVisible(ok)
        self.port.setVisible(ok)
        self.values.setVisible(analysis is not None)
        self.swap_button.setEnabled(ok)
        self.sweep_button.setEnabled(ok)
        self.collapse_button.setEnabled(ok)
        self.remove_button.setEnabled(analysis is not None)
        if analysis is None:
            mark_error(self.message, False)
            self.message.show()
            block = self._block()
            if block is None or not self._show_block(block):
                self.message.setText(_PICK_BLOCK if self.doc.blocks() else _NO_REGION)
                self.values.show_equivalent(None)
            return
        if not analysis.ok:
            lines = [analysis.message[0].upper() + analysis.message[1:], *boundary_text(analysis)]
            self.message.setText("<br>".join(html.escape(line) for line in lines))
            mark_error(self.message, True)
            self.message.show()
            self.values.show_equivalent(None)
            return
        eq = analysis.equivalent
        self.message.hide()
        plus, minus = eq.port
        self.port.setText(f"Port <b>{net_shown(plus)}</b> (+) / <b>{net_shown(minus)}</b> (−) at "
                          f"{keep_values(describe_freq(eq.freq))}")
        self._show_results(eq, self.doc.analysis.form)
        self.check.setEnabled(False)  # greyed until the check of these numbers arrives

    def _show_block(self, block: Block) -> bool:
        """The block's values, port, forms, realisation and power at the analysis frequency,
        with Expand at hand; False (nothing shown) where the frequency cannot be read."""
        try:
            freq = parse_frequency(self.doc.analysis.freq)
        except CircuitError:
            return False
        self.message.setText("<br>".join(html.escape(line) for line in (
            *block_text(block, freq), f"Expand {block.designator} puts its parts back.")))
        try:
            eq = block_equivalent(block, freq)
        except CircuitError:
            self.values.show_equivalent(None)
            return True
        conn = extract(self.doc)  # no region is followed, so the live one is not kept up
        if (block.id, 0) in conn.net_of_pin:
            plus, minus = conn.net_of_pin[block.id, 0], conn.net_of_pin[block.id, 1]
            self.port.setText(f"{block.designator} port <b>{plus}</b> (+) / <b>{minus}</b> (−) "
                              f"at {describe_freq(freq)}")
            self.port.show()
        self._show_results(eq, block.form)
        for widget in (self.values, self.forms, self.realisation, self.power):
            widget.show()
        return True

    def _show_results(self, eq: Equivalent, form: str) -> None:
        """The values, the forms (``form`` first), Z as series parts and the matched load."""
        self.values.show_equivalent(eq)
        self.forms.setText("\n".join(forms_text(eq, form)))
        self.realisation.setText(keep_values(realisation_text(eq)))
        self.power.setText(keep_values(power_text(eq, self.doc.analysis.basis)))

    def show_updating(self, on: bool) -> None:
        """The numbers shown lag behind the document (greyed, and the title says so)."""
        self.setWindowTitle("Equivalent (updating…)" if on else "Equivalent")
        self.values.setEnabled(not on)

    def show_check(self, result: EquivalenceReport | str) -> None:
        self.check.setEnabled(True)
        if isinstance(result, EquivalenceReport):
            self.check.setText(keep_values(equivalence_text(result)))
            mark_error(self.check, not result.within(MATCH_RTOL))
        else:
            self.check.setText(f"No equivalence check: {result}")
            mark_error(self.check, False)

    def _update_expand(self) -> None:
        block = self._block()
        self.expand_button.setEnabled(block is not None)
        self.expand_button.setText(f"Expand {block.designator}" if block else "Expand")
        self.expand_button.setToolTip(
            f"Put the parts {block.designator} stands for back exactly" if block else
            "Select a collapsed block to expand it" if self.doc.blocks() else
            "Collapse a region first: its block can be expanded again")

    def _block(self) -> Block | None:
        """The block to expand: the selected one, or the sheet's only one."""
        doc = self.doc
        chosen = [doc[i] for i in self.canvas.scene.selected_ids() if i in doc]
        blocks = [e for e in chosen if isinstance(e, Block)] or doc.blocks()
        return blocks[0] if len(blocks) == 1 else None

    # -- region commands ----------------------------------------------------------------------
    def _region(self) -> Region | None:
        rid = self.live.region_id
        region = self.doc[rid] if rid is not None and rid in self.doc else None
        return region if isinstance(region, Region) else None

    def swap(self) -> None:
        region = self._region()
        if region is None:
            return
        new = replace(region, swap=not region.swap) if region.port is None else \
            replace(region, port=region.port[::-1])
        self.workbench.push(ReplaceElements(self.doc, [new], f"Swap the port of “{region.name}”"))

    def _read_name(self, text: str) -> Region | None:
        region = self._region()
        return None if region is None else renamed(self.doc, region, text)

    def _rename(self, text: str, new: Region | None) -> None:
        region = self._region()
        if new is not None and region is not None and new != region:
            self.workbench.push(ReplaceElements(self.doc, [new], f"Rename region “{region.name}” "
                                                             f"to “{new.name}”"))

    def start_rename(self) -> None:
        """Show the panel with the shown region's name ready to type over."""
        self.show()
        self.raise_()
        if self._region() is not None:
            self.name.edit.setFocus(Qt.FocusReason.ShortcutFocusReason)
            self.name.edit.selectAll()

    def remove_region(self) -> None:
        region = self._region()
        if region is not None:
            self.workbench.push(RemoveElements(self.doc, [region.id],
                                               f"Remove region “{region.name}”"))

    def collapse(self) -> None:
        region = self._region()
        if region is None:
            return
        try:
            edit = collapse_region(self.doc, region.id, self.doc.analysis.form)
        except CircuitError as exc:
            self._refuse(str(exc))
            return
        block = next(e for e in edit.added if isinstance(e, Block))
        self.workbench.push(edit_command(self.doc, edit, f"Collapse “{region.name}” into "
                                                         f"{block.designator}"))
        self.canvas.scene.select_ids([block.id])

    def expand(self) -> None:
        block = self._block()
        if block is None:
            return
        try:
            command = expand_command(self.doc, block)
        except CircuitError as exc:
            self._refuse(str(exc))
            return
        self.workbench.push(command)
        self.live.set_region(block.region.id)

    def _refuse(self, reason: str) -> None:
        self.notice.setText(reason[0].upper() + reason[1:])
        mark_error(self.notice, True)
