"""The Design insight panel, driven by real clicks and keys: parts ranked by influence (a row
selects the part on the canvas), noise, standard values and tolerance results follow the region
and its edits. Figures are checked against closed forms named beside each check."""

from __future__ import annotations

import math

from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from sheets import SOURCE_SIDE, click_button, divider, lasso, open_sheet, pick, settle, type_into


def _drawn(window, drive, doc):
    open_sheet(window, doc)
    lasso(drive, SOURCE_SIDE)
    assert window.analysis.analysis.ok, window.analysis.analysis.message
    dock = window.insight_dock
    dock.show()
    dock.raise_()
    settle()
    return dock


def _click_row(dock, name: str) -> None:
    row = dock.ranked_parts().index(name)
    table = dock.table
    rect = table.visualItemRect(table.item(row, 0))
    QTest.mouseClick(table.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    settle()


def test_ranked_rows_select_their_part(window, drive):
    # Divider V1 = 10 V, R1 = 1 kΩ, R2 = 3 kΩ (common practice): voc = V R2/(R1+R2), so
    # S(voc, V1) = 1, S(voc, R1) = -R1/(R1+R2) = -0.25, S(voc, R2) = +0.25; the source first.
    dock = _drawn(window, drive, divider())
    assert dock.ranked_parts()[0] == "V1"
    assert set(dock.ranked_parts()) == {"V1", "R1", "R2"}
    row = dock.ranked_parts().index("R1")
    assert dock.table.item(row, 1).text() == "-0.250"
    _click_row(dock, "R2")
    assert [e.designator for e in window.canvas.selected()] == ["R2"]


def test_noise_and_standard_values_follow_the_region(window, drive):
    dock = _drawn(window, drive, divider())
    # Nyquist (Phys. Rev. 32, 1928): e_n = sqrt(4 k T R) with R = 1k || 3k = 750 Ω, 290 K.
    en = math.sqrt(4 * 1.380649e-23 * 290 * 750)
    assert f"{en * 1e9:.4g} nV/√Hz" in dock.noise_text.text()
    type_into(dock.temp, "0")
    assert "temperature" in dock.noise_text.text()
    type_into(dock.temp, "290")
    # IEC 60063: 750 Ω is an E24 value (error 0 %); in E12 the nearest is 680 Ω or 820 Ω.
    assert "750 Ω (+0.00 %)" in dock.standard_text.text()
    pick(dock.series, "E12")
    assert "820 Ω" in dock.standard_text.text() or "680 Ω" in dock.standard_text.text()


def test_tolerances_give_worst_case_and_monte_carlo(window, drive):
    dock = _drawn(window, drive, divider())
    assert not dock.run_button.isEnabled()
    drive.key(Qt.Key.Key_S)
    for name in ("R1", "R2"):  # ±5 % on both, typed in the inspector
        drive.click(drive.by(name).at)
        type_into(window.inspector.editors["tolerance"].edit, "J")
    assert drive.by("R1").tolerance == drive.by("R2").tolerance == "J"
    # Common practice: |voc| = 10 R2/(R1+R2) is largest with R1 low and R2 high.
    hi = 10 * 3e3 * 1.05 / (1e3 * 0.95 + 3e3 * 1.05)
    assert "all corners (4)" in dock.worst_text.text()
    assert f"{hi:.5g} V" in dock.worst_text.text()
    assert dock.run_button.isEnabled()
    click_button(dock.run_button)
    assert dock.monte is not None and dock.monte.n == 10_000
    assert dock.histogram.counts.sum() == 10_000
    assert "10,000 boards, uniform" in dock.mc_text.text()
