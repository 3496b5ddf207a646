"""How the analysis panels show values: a table of Voc, Isc and Z in rectangular and polar form
that lays itself out for the panel's width, and texts whose values never break across lines."""

from __future__ import annotations

import re

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QGridLayout, QLabel, QWidget

from portcut.engine.solve.equivalent import Equivalent

__all__ = ["SelectableLabel", "ValuesTable", "keep_values", "text_label"]


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


class SelectableLabel(QLabel):
    """A label whose text the mouse can select, made selectable only while the pointer is over
    it or a selection is held: a selectable label keeps a whole text document and lays it out
    again at every new text, which on a panel of them doubles the cost of showing new numbers
    after each edit."""

    _SELECT = Qt.TextInteractionFlag.TextSelectableByMouse

    def enterEvent(self, event) -> None:
        self.setTextInteractionFlags(self._SELECT)
        super().enterEvent(event)

    def leaveEvent(self, event) -> None:
        super().leaveEvent(event)
        if not self.hasSelectedText():
            self.setTextInteractionFlags(Qt.TextInteractionFlag.NoTextInteraction)


def text_label(text: str = "", selectable: bool = True, plain: bool = False) -> QLabel:
    """A wrapping label; ``selectable``: its text can be selected with the mouse; ``plain``:
    its text is shown as written, lines broken at "\\n" (laid out without a text document:
    for the texts that change at every edit)."""
    label = SelectableLabel(text) if selectable else QLabel(text)
    label.setWordWrap(True)
    if plain:
        label.setTextFormat(Qt.TextFormat.PlainText)
    return label


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
                cell = text_label(plain=True)
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
