"""The Design insight panel, driven by real clicks and keys: parts ranked by influence (a row
selects the part on the canvas), noise, standard values and tolerance results follow the region
and its edits. Figures are checked against closed forms named beside each check."""

from __future__ import annotations

import math

import numpy as np
import pytest
from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from sheets import SOURCE_SIDE, click_button, divider, lasso, open_sheet, pick, settle, type_into
from uncertainties import ufloat


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


def _toleranced(window, drive, doc=None, code: str = "J"):
    """The divider drawn, R1 and R2 given ``code`` by typing in the inspector."""
    dock = _drawn(window, drive, doc or divider())
    drive.key(Qt.Key.Key_S)
    for name in ("R1", "R2"):
        drive.click(drive.by(name).at)
        type_into(window.inspector.editors["tolerance"].edit, code)
    assert drive.by("R1").tolerance == drive.by("R2").tolerance == code
    return dock


def test_tolerances_give_worst_case_and_monte_carlo(window, drive):
    dock = _drawn(window, drive, divider())
    assert not dock.run_button.isEnabled()
    dock = _toleranced(window, drive)  # ±5 % on both
    # Common practice: |voc| = 10 R2/(R1+R2) is largest with R1 low and R2 high.
    hi = 10 * 3e3 * 1.05 / (1e3 * 0.95 + 3e3 * 1.05)
    assert "all corners (4)" in dock.worst_text.text()
    assert f"{hi:.5g} V" in dock.worst_text.text()
    assert dock.run_button.isEnabled()
    click_button(dock.run_button)
    assert dock.monte is not None and dock.monte.n == 10_000
    for key, view in dock.monte_box.views.items():
        assert view.histogram.counts.sum() == 10_000, key
        assert view.yield_text.text() == ""  # no limits yet
    assert "10,000 boards, uniform, seed 0" in dock.monte_box.text.text()


def test_typed_limits_give_the_yield_counted_from_the_samples(window, drive):
    dock = _toleranced(window, drive)
    click_button(dock.run_button)
    voc, z = dock.monte_box.views["voc"], dock.monte_box.views["z"]
    type_into(voc.low.edit, "7450m")  # SI prefix: 7.45 V
    type_into(voc.high.edit, "7.55 V")
    type_into(z.high.edit, "0.76k")
    s = dock.monte.samples
    # the same count done directly with numpy on the panel's own samples
    in_voc = (s["voc"] >= 7.45) & (s["voc"] <= 7.55)
    in_z = s["z"] <= 760.0
    assert voc.yield_text.text() == f"yield {100 * np.mean(in_voc):.1f} %"
    assert z.yield_text.text() == f"yield {100 * np.mean(in_z):.1f} %"
    overall = 100 * np.mean(in_voc & in_z)
    assert 0 < overall < 100
    assert f"Within every limit: {overall:.1f} %" in dock.monte_box.text.text()
    assert voc.histogram.limit == (7.45, 7.55) and z.histogram.limit == (None, 760.0)
    assert voc.histogram.counts.sum() == 10_000
    assert voc.histogram.edges[0] <= 7.45 and voc.histogram.edges[-1] >= 7.55
    assert dock.monte_box.views["isc"].yield_text.text() == ""
    # an edit of the region forgets the run; the limits stay for the next one
    drive.click(drive.by("R1").at)
    type_into(window.inspector.editors["value"].edit, "1k1")
    assert dock.monte is None and voc.histogram.counts.size == 0
    assert voc.title.text() == "<b>|Voc|</b>" and voc.yield_text.text() == ""
    assert voc.limit == (7.45, 7.55)


def test_limits_that_cannot_hold_say_why(window, drive):
    dock = _toleranced(window, drive)
    click_button(dock.run_button)
    voc = dock.monte_box.views["voc"]
    type_into(voc.low.edit, "5 mA")
    assert voc.low.in_error and "|Voc| lower limit" in voc.low.error.text()
    assert "in A" in voc.low.error.text()
    type_into(voc.low.edit, "8")
    type_into(voc.high.edit, "7")
    assert "No yield" in dock.monte_box.text.text()
    assert "lower limit no more than the upper" in dock.monte_box.text.text()
    assert dock.monte_box.text.property("error") is True


def test_board_count_and_seed_fields_repeat_a_run(window, drive):
    dock = _toleranced(window, drive)
    box = dock.monte_box
    for spin, text in ((box.boards, "2000"), (box.seed, "3")):
        type_into(spin.lineEdit(), text)
    click_button(dock.run_button)
    first = dock.monte
    assert first.n == 2000 and first.seed == 3
    click_button(dock.run_button)
    assert np.array_equal(dock.monte.samples["voc"], first.samples["voc"])
    type_into(box.seed.lineEdit(), "4")
    click_button(dock.run_button)
    assert not np.array_equal(dock.monte.samples["voc"], first.samples["voc"])
    assert "2,000 boards, uniform, seed 4" in box.text.text()


@pytest.mark.parametrize(("distribution", "sigma_of_t"), [
    ("uniform", 1 / math.sqrt(3)),  # uniform within ±t: σ = t/√3 (common practice)
    ("normal", 1 / 3),              # tolerance as 3 σ
])
def test_monte_carlo_matches_first_order_propagation(window, drive, distribution, sigma_of_t):
    # Independent reference: first-order (linear) propagation by the `uncertainties` library,
    # Voc = V R2 / (R1 + R2) for the divider (common practice), two ±5 % resistors.
    dock = _toleranced(window, drive)
    pick(dock.monte_box.distribution, distribution)
    click_button(dock.run_button)
    m = dock.monte
    assert m.distribution == distribution
    r1, r2 = ufloat(1e3, 1e3 * 0.05 * sigma_of_t), ufloat(3e3, 3e3 * 0.05 * sigma_of_t)
    voc = 10 * r2 / (r1 + r2)
    # the mean within four standard errors plus the second-order term linear propagation
    # leaves out (|½ Σ f'' σ²| = 10 |R2 σ1² - R1 σ2²| / (R1 + R2)³, under 1 mV here)
    second = 10 * abs(3e3 * r1.s ** 2 - 1e3 * r2.s ** 2) / 4e3 ** 3
    assert abs(m.mean["voc"] - voc.n) <= 4 * voc.s / math.sqrt(m.n) + second
    # the sample σ within 3 % (its own standard error is about 1/√(2n) = 0.7 %)
    assert m.std["voc"] == pytest.approx(voc.s, rel=0.03)


def test_a_hidden_panel_catches_up_when_shown(window, drive):
    # The figures cost several solves, so a tabbed-away panel waits until it is shown; then it
    # ranks the divider's parts as above (common practice: S(voc, R2) = +R1/(R1+R2) = 0.25, and
    # with R2 typed as 1k, S(voc, R2) = 1k/2k = 0.5).
    dock = _drawn(window, drive, divider())
    window.equivalent_dock.raise_()
    settle()
    assert dock.visibleRegion().isEmpty()
    drive.key(Qt.Key.Key_S)
    drive.click(drive.by("R2").at)
    type_into(window.inspector.editors["value"].edit, "1k")
    row = dock.ranked_parts().index("R2")
    assert dock.table.item(row, 1).text() == "+0.250"  # not yet followed
    dock.raise_()
    settle()
    row = dock.ranked_parts().index("R2")
    assert dock.table.item(row, 1).text() == "+0.500"
