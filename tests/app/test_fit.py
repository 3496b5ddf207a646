"""Panels that fit: at the two window sizes users report (1280x720, 1400x860), on every bundled
example, no button of a dock or of the toolbar is clipped or scrolled out of sight; values keep
their units on one line; the two forms stack when the panel is narrow; Undo/Redo keep their
labels; the sweep opens at a modest height."""

from __future__ import annotations

import pytest
from PySide6.QtCore import QPoint, QRect, Qt
from PySide6.QtGui import QTextLayout
from PySide6.QtWidgets import QAbstractButton, QApplication, QLabel, QWidget
from sheets import SOURCE_SIDE, click_button, divider, lasso, open_sheet, settle

from portcut import assets
from portcut.app.panels import SWEEP_SHARE
from portcut.app.panels.equivalent import keep_values

SIZES = ((1280, 720), (1400, 860))


def _hidden_part(button: QAbstractButton, top: QWidget) -> str:
    """The first ancestor (up to ``top``) that does not show all of ``button``, or ""."""
    parent = button.parentWidget()
    while parent is not None:
        rect = QRect(button.mapTo(parent, QPoint(0, 0)), button.size())
        if not parent.rect().contains(rect):
            return f"{parent.metaObject().className()} {parent.objectName()}".strip()
        if parent is top:
            return ""
        parent = parent.parentWidget()
    return ""


def _clipped(window) -> list[str]:
    out = []
    tops = [d for d in window.docks if d.isVisible() and not d.visibleRegion().isEmpty()]
    for top in [*tops, window.toolbar]:
        for button in top.findChildren(QAbstractButton):
            if button.isVisibleTo(top) and button.isVisible():
                where = _hidden_part(button, top)
                if where:
                    out.append(f"{top.objectName()}: “{button.text() or button.toolTip()}” "
                               f"cut by {where}")
    return out


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
@pytest.mark.parametrize("name", assets.example_names())
def test_no_button_is_clipped_on_any_example(window, name, size):
    assert window.files.open_path(assets.example_path(name), as_copy=True)
    window.resize(*size)
    settle()
    for dock in (window.equivalent_dock, window.history, window.checks_dock):
        dock.raise_()
        settle()
        assert _clipped(window) == [], dock.objectName()
    ext = [b for b in window.toolbar.findChildren(QAbstractButton)
           if b.objectName() == "qt_toolbar_ext_button" and b.isVisible()]
    assert ext == []  # every toolbar button on the bar itself, none behind an overflow arrow


def test_values_keep_their_units_and_terms_together():
    # line breaks may fall only between values (non-breaking space U+00A0, Unicode UAX #14)
    assert keep_values("114.6 µW") == "114.6\u00a0µW"
    # a break may fall after a hyphen-minus even before a no-break space (UAX #14, LB12a), so
    # a word joiner (U+2060) holds the minus to its j
    assert keep_values("717 mV - j 450.5 mV") == "717\u00a0mV -\u2060\u00a0j\u00a0450.5\u00a0mV"
    assert keep_values("717 mV + j 450.5 mV") == "717\u00a0mV +\u00a0j\u00a0450.5\u00a0mV"
    assert keep_values("846.8 mV ∠ -32.14°") == "846.8\u00a0mV\u00a0∠\u00a0-32.14°"
    assert keep_values("R2 inside, 3 nets") == "R2 inside, 3 nets"


def test_the_forms_stack_when_the_panel_is_narrow(window):
    # the op-amp stage at 10 kHz has complex values, long in both forms
    assert window.files.open_path(assets.example_path("opamp_stage_output"), as_copy=True)
    window.resize(1400, 860)
    panel = window.equivalent_dock
    values = panel.values
    for width, stacked in ((330, True), (760, False)):
        window.resizeDocks([panel], [width], Qt.Orientation.Horizontal)
        settle()
        assert values.stacked is stacked, width
        polar, rect = values.cells["voc", "polar"], values.cells["voc", "rectangular"]
        below = polar.geometry().top() > rect.geometry().top()
        assert below is stacked
        assert rect.text().count(" ") == 1  # the one place to break: between the two terms


def _laid_lines(label: QLabel, width: int) -> list[str]:
    """The lines Qt's text layout breaks ``label``'s text into at ``width`` pixels, in the
    label's own font."""
    layout = QTextLayout(label.text(), label.font())
    layout.beginLayout()
    lines = []
    while (line := layout.createLine()).isValid():
        line.setLineWidth(width)
        lines.append(label.text()[line.textStart():line.textStart() + line.textLength()])
    layout.endLayout()
    return lines


def test_a_stacked_complex_value_breaks_only_between_its_terms(window):
    # the anti-alias filter at 10 kHz: Voc and Z have negative imaginary parts ("- j ...")
    assert window.files.open_path(assets.example_path("rc_antialias"), as_copy=True)
    window.resize(1280, 720)
    panel = window.equivalent_dock
    values = panel.values
    window.resizeDocks([panel], [240], Qt.Orientation.Horizontal)
    settle()
    assert values.stacked
    signed = [values.cells[key, "rectangular"] for key, _ in values.ROWS]
    assert any(" - j " in values.text(key, "rectangular") for key, _ in values.ROWS)
    for cell in signed:
        for width in (cell.width(), 60, 40):
            for line in _laid_lines(cell, width):
                # never split at the sign or the j of a term, nor inside a number and its unit
                assert not line.rstrip().endswith(("-", "+", "j")), (cell.text(), width, line)
                assert not line.startswith(("\u00a0", "\u2060", "j")), (cell.text(), width, line)


def test_undo_and_redo_keep_their_labels(window, drive):
    bar = window.toolbar
    undo = bar.widgetForAction(window.actions["undo"])
    width = undo.width()
    drive.place("resistor", (0, 0))
    settle()
    assert undo.text().replace("&", "") == "Undo"
    assert undo.width() == width
    assert window.actions["undo"].toolTip().startswith("Undo Place")
    window.actions["undo"].trigger()
    assert window.actions["redo"].text().replace("&", "") == "Redo"
    assert window.actions["redo"].toolTip().startswith("Redo Place")


def test_the_sweep_opens_at_a_modest_height(window, drive):
    window.resize(1280, 720)
    open_sheet(window, divider())
    lasso(drive, SOURCE_SIDE)
    settle()
    click_button(window.equivalent_dock.sweep_button)
    settle()
    QApplication.processEvents()
    assert window.sweep_dock.isVisible()
    assert window.sweep_dock.height() <= window.height() * (SWEEP_SHARE + 0.05)
