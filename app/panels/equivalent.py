"""The live equivalent panel: the current region's Thevenin and Norton equivalents as the user
edits, the analysis settings, and the region's own controls (its name, its port: automatic or
plus and minus chosen from its nets) and commands (swap polarity, collapse, expand, remove).

It reads the numbers from app.analysis.LiveAnalysis and writes only through undo commands; for
an invalid cut it shows the reason in plain words (the canvas highlights what is named).
"""

from __future__ import annotations

import html
import re
from dataclasses import replace

from PySide6.QtCore import Qt
from PySide6.QtGui import QUndoCommand
from PySide6.QtWidgets import (
    QButtonGroup,
    QComboBox,
    QDockWidget,
    QFormLayout,
    QFrame,
    QGridLayout,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QRadioButton,
    QScrollArea,
    QVBoxLayout,
    QWidget,
)

from portcut.engine.errors import CircuitError
from portcut.engine.schematic import Block, Change, Document, Region
from portcut.engine.schematic.captions import block_caption, drawn_form
from portcut.engine.schematic.connectivity import block_equivalent, extract
from portcut.engine.schematic.ports import region_nets
from portcut.engine.schematic.reduction import RegionAnalysis, collapse_region, expand_block
from portcut.engine.solve.equivalent import EquivalenceReport, Equivalent
from portcut.engine.solve.mna import describe_freq
from portcut.engine.solve.units import format_complex, format_eng, parse_frequency

from ..analysis import LiveAnalysis
from ..canvas import Canvas
from ..commands import RemoveElements, ReplaceElements, SetAnalysis, edit_command
from ..region_edits import ROLES, net_shown, port_text, renamed, with_port_net
from ..workbench import Workbench
from .entry import ERROR_STYLE, CheckedEntry, mark_error

__all__ = ["EquivalentDock", "block_text", "boundary_text", "equivalence_text", "expand_command",
           "forms_text", "keep_values", "power_text", "realisation_text"]

#: Relative deviation below which the reduced circuit counts as reproducing the original.
MATCH_RTOL = 1e-9
_NO_REGION = ("No region yet. Choose Tools > Boundary (B) and drag a lasso around the parts to "
              "reduce; their Thevenin and Norton equivalents appear here as you edit.")
_PICK_BLOCK = ("Select a collapsed block to see its values and expand it, or choose Tools > "
               "Boundary (B) and drag a lasso around parts to reduce them.")


# -- texts ----------------------------------------------------------------------------------------
def _names(names: list[str], most: int = 6) -> str:
    if not names:
        return "nothing"
    shown = ", ".join(names[:most])
    return shown if len(names) <= most else f"{shown} and {len(names) - most} more"


def boundary_text(analysis: RegionAnalysis) -> list[str]:
    """For each net a refused cut names, the parts on it inside and outside the region (a
    collapsed block by its designator), so the user sees which part to take in or leave out."""
    if analysis.circuit is None:
        return []
    lines = []
    for net in sorted(analysis.bad_nets):
        sides: tuple[set[str], set[str]] = (set(), set())
        for part in analysis.circuit:
            if net in part.nets:
                # a block's parts and a device's members by their designator
                sides[part.name not in analysis.part_names].add(
                    part.name.split(".")[0].split(":")[0])
        inside, outside = (sorted(side) for side in sides)
        lines.append(f"On {net}: {_names(inside)} inside, {_names(outside)} outside")
    return lines


def block_text(block: Block, freq: float) -> list[str]:
    """What a collapsed block stands for: the region it replaced, the form drawn and its values
    at ``freq`` hertz (as the canvas captions them), or why it has none."""
    try:
        eq = block_equivalent(block, freq)
    except CircuitError as exc:
        return [f"{block.designator} has no equivalent: {exc}"]
    form = drawn_form(eq, block.form)
    source, z, at = block_caption(eq, form, freq)
    return [f"{block.designator} stands for the collapsed region “{block.region.name}”, "
            f"drawn in {form.title()} form.", f"{source}, {z} {at}."]


def expand_command(doc: Document, block: Block) -> QUndoCommand:
    """The undo command that puts the parts ``block`` stands for back exactly (raises
    CircuitError saying why it cannot)."""
    return edit_command(doc, expand_block(doc, block.id), f"Expand {block.designator}")


def forms_text(eq: Equivalent, form: str) -> list[str]:
    """Which forms exist, and why one does not; the chosen ``form`` first."""
    thevenin = ("Thevenin: Voc in series with Z" if eq.has_thevenin else
                "No Thevenin form: Z is infinite (an ideal current source or an open circuit "
                "at the port)")
    norton = ("Norton: Isc in parallel with Z" if eq.has_norton else
              "No Norton form: Z is zero (an ideal voltage source or a short across the port)")
    return [thevenin, norton] if form == "thevenin" else [norton, thevenin]


def realisation_text(eq: Equivalent) -> str:
    """The series R + L or R + C that has impedance z at the analysis frequency."""
    at = describe_freq(eq.freq)
    try:
        r = eq.realisation()
    except CircuitError as exc:
        return f"No series R, L or C realises Z: {exc}"
    text = f"Z at {at} = {r.parts_text()}"
    if r.resistance < 0:
        text += " (a negative resistance: the region is active)"
    return text


def power_text(eq: Equivalent, basis: str) -> str:
    """The conjugate-matched load and the power it takes, in ``basis`` ("peak" or "rms")."""
    p = eq.max_power(basis)
    if p.reason:
        return p.reason[0].upper() + p.reason[1:]
    return (f"Matched load {format_complex(p.load, 'Ω')} takes {format_eng(p.power, 'W', 4)}; "
            f"the best resistor, {format_eng(p.resistive_load, 'Ω', 4)}, takes "
            f"{format_eng(p.resistive_power, 'W', 4)} ({p.described()})")


def _agreement(relative: float) -> str:
    return "agree exactly" if relative == 0 else f"agree within {relative:.1e} (relative)"


def equivalence_text(report: EquivalenceReport) -> str:
    """The one-line check: the reduced circuit against the original, from outside."""
    worst = f", worst at net {report.worst_net}" if report.worst_net and report.voltage_rel \
        else ""
    verdict = "Reduced circuit matches" if report.within(MATCH_RTOL) else "Reduced circuit DIFFERS"
    return (f"{verdict} for the load as drawn: outside voltages "
            f"{_agreement(report.voltage_rel)}{worst}; port current "
            f"{_agreement(report.current_rel)}")


#: A space between a number and its unit (with any SI prefix), the spaces around the j of a
#: complex value's imaginary part and around a phasor's angle sign: none may break a line.
_VALUE_SPACES = re.compile(
    r"(?<=\d) (?=[yzafpnµumkMGTPE]?(?:Ω|V|A|W|H|F|Hz|S)(?!\w))|(?<=[-+−]) (?=j )|(?<=j) (?=\d)"
    r"| (?=∠)|(?<=∠) ")


def keep_values(text: str) -> str:
    """``text`` with non-breaking spaces inside every value ("114.6 µW", "- j 450.5 mV",
    "846.8 mV ∠ -32.14°"), so a line breaks only between values and words."""
    # a line may still break after a hyphen-minus before a no-break space (UAX #14, LB12a):
    # a word joiner (U+2060) holds the sign to its j
    return _VALUE_SPACES.sub("\u00a0", text).replace("-\u00a0j", "-\u2060\u00a0j")


# -- widgets --------------------------------------------------------------------------------------
def _label(text: str = "", selectable: bool = True) -> QLabel:
    label = QLabel(text)
    label.setWordWrap(True)
    if selectable:
        label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
    return label


def _button(text: str, tip: str, slot=None) -> QPushButton:
    button = QPushButton(text)
    button.setToolTip(tip)
    if slot is not None:
        button.clicked.connect(slot)
    return button


class ValuesTable(QWidget):
    """Voc, Isc and Z, each in rectangular and polar form, with units: side by side where the
    panel is wide enough for both, else the polar form under the rectangular one."""

    ROWS = (("voc", "Voc"), ("isc", "Isc"), ("z", "Z"))
    FORMS = ("rectangular", "polar")

    def __init__(self) -> None:
        super().__init__()
        self.grid = grid = QGridLayout(self)
        grid.setContentsMargins(0, 0, 0, 0)
        grid.setHorizontalSpacing(12)
        self.heads = [QLabel(title) for title in self.FORMS]
        for head in self.heads:
            head.setEnabled(False)
        self.names: list[QLabel] = []
        self.cells: dict[tuple[str, str], QLabel] = {}
        for key, title in self.ROWS:
            self.names.append(QLabel(f"<b>{title}</b>"))
            for form in self.FORMS:
                cell = _label()
                cell.setAccessibleName(f"{title} {form}")
                self.cells[key, form] = cell
        self.stacked: bool | None = None
        self._arrange(False)

    def _arrange(self, stacked: bool) -> None:
        """Lay the cells out side by side, or stacked (polar under rectangular)."""
        if stacked == self.stacked:
            return
        self.stacked = stacked
        grid = self.grid
        for widget in [*self.heads, *self.names, *self.cells.values()]:
            grid.removeWidget(widget)
        for col in range(3):
            grid.setColumnStretch(col, 0)
        for head in self.heads:
            head.setVisible(not stacked)
        if not stacked:
            for col, head in enumerate(self.heads, start=1):
                grid.addWidget(head, 0, col)
        for i, (key, _) in enumerate(self.ROWS):
            row = 2 * i if stacked else i + 1
            grid.addWidget(self.names[i], row, 0, Qt.AlignmentFlag.AlignTop)
            for j, form in enumerate(self.FORMS):
                at = (row + j, 1) if stacked else (row, 1 + j)
                grid.addWidget(self.cells[key, form], *at)
        grid.setColumnStretch(1 if stacked else 2, 1)

    def _wide_enough(self, width: int) -> bool:
        """Whether ``width`` pixels hold the names and both forms of every row on one line."""
        metrics = self.fontMetrics()
        spacing = self.grid.horizontalSpacing()
        name = max(n.sizeHint().width() for n in self.names)
        need = [metrics.horizontalAdvance(self.cells[key, form].text()) for key, _ in self.ROWS
                for form in self.FORMS]
        widest = max(need[0::2]) + max(need[1::2])
        return name + widest + 2 * spacing + 8 <= width

    def resizeEvent(self, event) -> None:
        super().resizeEvent(event)
        self._arrange(not self._wide_enough(event.size().width()))

    def show_equivalent(self, eq: Equivalent | None) -> None:
        if eq is None:
            for cell in self.cells.values():
                cell.setText("—")
        else:
            rect, polar = eq.rectangular(), eq.polar()
            for key, _ in self.ROWS:
                for form, texts in (("rectangular", rect), ("polar", polar)):
                    self.cells[key, form].setText(keep_values(getattr(texts, key)))
        self._arrange(not self._wide_enough(self.width()))

    def text(self, key: str, form: str) -> str:
        """What a cell says, with plain spaces."""
        return self.cells[key, form].text().replace("\u00a0", " ").replace("\u2060", "")


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
        self.port_boxes: dict[str, QComboBox] = {}
        for role, sign in zip(ROLES, ("+", "−"), strict=True):
            box = QComboBox()
            box.setAccessibleName(f"Port {role} net")
            box.setToolTip(f"The net at the port's {sign}: automatic (where the region meets "
                           "the rest), or any net of the region's parts")
            box.activated.connect(lambda index, r=role: self._choose_port(r, index))
            self.port_boxes[role] = box
        self.automatic_button = _button("Use the automatic port", "Forget the chosen port and "
                                        "take the two nets where the region meets the rest",
                                        self.automatic_port)
        self.port = _label()
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
        self.message = _label()
        self.values = ValuesTable()
        self.forms = _label()
        self.realisation = _label()
        self.power = _label()
        self.check = _label()
        self.notice = _label()
        self.swap_button = _button("Swap + / −", "Exchange the port's plus and minus nets",
                                   self.swap)
        self.collapse_button = _button("Collapse", "Replace the region by its equivalent block",
                                       self.collapse)
        self.expand_button = _button("Expand", "", self.expand)
        self.remove_button = _button("Remove region", "Forget the region (the parts stay)",
                                     self.remove_region)
        self.sweep_button = _button("Sweep…", "Show the region's Z and Voc over frequency")
        self._build()

        live.analysed.connect(self.show_analysis)
        live.checked.connect(self.show_check)
        live.currentChanged.connect(lambda _: self._fill_regions())
        canvas.selectionChanged.connect(lambda _: self._on_selection())
        live.documentChanged.connect(self._on_change)
        workbench.documentReplaced.connect(lambda _: self._show_document())
        self._show_document()

    def _build(self) -> None:
        settings = QFormLayout()
        settings.addRow("Region", self.region_box)
        settings.addRow("Name", self.name)
        for sign, box in zip(("+", "−"), self.port_boxes.values(), strict=True):
            settings.addRow(f"Port {sign}", box)
        settings.addRow("Frequency", self.frequency)
        forms = QHBoxLayout()
        forms.addWidget(self.thevenin)
        forms.addWidget(self.norton)
        forms.addStretch(1)
        settings.addRow("Form", forms)
        settings.addRow("Power", self.basis)
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
        scroll = QScrollArea()
        scroll.setWidgetResizable(True)
        scroll.setFrameShape(QFrame.Shape.NoFrame)
        # the panel is never narrower than its widest row (below), so a sideways scroll would
        # only hide the first letters of the texts, which wrap instead
        scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        scroll.setWidget(body)
        # the commands stay below the scrolled texts, always in sight
        outer = QWidget()
        frame = QVBoxLayout(outer)
        frame.setContentsMargins(0, 0, 0, 0)
        frame.addWidget(scroll, 1)
        buttons = QVBoxLayout()
        buttons.setContentsMargins(9, 0, 9, 6)
        buttons.addLayout(row1)
        buttons.addLayout(row2)
        frame.addLayout(buttons)
        self.setWidget(outer)
        scroll.setMinimumWidth(body.minimumSizeHint().width()
                               + scroll.verticalScrollBar().sizeHint().width())

    @property
    def doc(self) -> Document:
        return self.workbench.doc

    # -- following ----------------------------------------------------------------------------
    def _show_document(self) -> None:
        self._show_settings()
        self._fill_regions()
        self._update_expand()

    def _on_change(self, change: Change) -> None:
        if change.analysis:
            self._show_settings()
        doc = self.doc
        ids = change.added | change.removed | change.updated
        # the lists shown change only with regions and blocks (a value edit touches neither)
        if any(i not in doc or isinstance(doc[i], Region | Block) for i in ids):
            self._fill_regions()
            self._update_expand()

    def _on_selection(self) -> None:
        self._update_expand()
        self._show_idle_block()

    def _show_idle_block(self) -> None:
        """With no region shown, the selected (or only) block's equivalent stands in."""
        if self.live.region_id is None or self._region() is None:
            self.show_analysis(None)

    def _show_settings(self) -> None:
        a = self.doc.analysis
        if a.freq != self.frequency.text or not self.frequency.in_error:
            self.frequency.set_text(a.freq)
        for button, form in ((self.thevenin, "thevenin"), (self.norton, "norton")):
            button.blockSignals(True)
            button.setChecked(a.form == form)
            button.blockSignals(False)
        self.basis.setCurrentIndex(self.basis.findData(a.basis))

    def _fill_regions(self) -> None:
        box = self.region_box
        box.blockSignals(True)
        box.clear()
        for region in self.doc.regions():
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
        self._show_port(analysis)
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
        self.values.show_equivalent(eq)
        form = self.doc.analysis.form
        self.forms.setText("<br>".join(forms_text(eq, form)))
        self.realisation.setText(keep_values(realisation_text(eq)))
        self.power.setText(keep_values(power_text(eq, self.doc.analysis.basis)))
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
        self.values.show_equivalent(eq)
        self.values.show()
        self.forms.setText("<br>".join(forms_text(eq, block.form)))
        self.realisation.setText(keep_values(realisation_text(eq)))
        self.power.setText(keep_values(power_text(eq, self.doc.analysis.basis)))
        for widget in (self.forms, self.realisation, self.power):
            widget.show()
        return True

    def _show_port(self, analysis: RegionAnalysis | None) -> None:
        """The port boxes: "automatic" (with the nets it found) and the region's nets; a chosen
        net the region no longer has stays listed, marked gone."""
        region, conn = self._region(), self.live.conn
        usable = (region is not None and conn is not None and analysis is not None
                  and analysis.region_id == region.id)
        nets = region_nets(self.doc, region, conn) if usable else ()
        automatic = analysis.equivalent.port if usable and analysis.ok and \
            region.port is None else None
        for i, (role, box) in enumerate(self.port_boxes.items()):
            box.clear()
            box.setEnabled(usable)
            if not usable:
                continue
            box.addItem(f"automatic ({net_shown(automatic[i])})" if automatic else "automatic",
                        None)
            for net in nets:
                box.addItem(net_shown(net), net)
            chosen = region.port[i] if region.port is not None else None
            if chosen is not None and chosen not in nets:
                box.addItem(f"{chosen} (gone)", chosen)
            box.setCurrentIndex(0 if chosen is None else box.findData(chosen))
            box.setAccessibleDescription(f"{role}: {box.currentText()}")
        self.automatic_button.setVisible(usable and region.port is not None and not analysis.ok)

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

    # -- settings -----------------------------------------------------------------------------
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

    def _choose_port(self, role: str, index: int) -> None:
        region, analysis = self._region(), self.live.analysis
        if region is None or self.live.conn is None:
            return
        shown = region.port or (analysis.equivalent.port if analysis is not None and analysis.ok
                                and analysis.region_id == region.id else None)
        try:
            new = with_port_net(region, shown, region_nets(self.doc, region, self.live.conn),
                                role, self.port_boxes[role].itemData(index))
        except CircuitError as exc:
            self._refuse(str(exc))
            return
        if new != region:
            self.workbench.push(ReplaceElements(self.doc, [new], port_text(new)))

    def automatic_port(self) -> None:
        region = self._region()
        if region is not None and region.port is not None:
            new = replace(region, port=None)
            self.workbench.push(ReplaceElements(self.doc, [new], port_text(new)))

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
