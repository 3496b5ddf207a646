"""The sweep view with real events: curves against the closed form of an RC region, axes with
units, the cursor read-out after a click on the plot, CSV export through the file dialog, a
collapsed block swept through its contents, and refused ranges."""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np
import pytest
from PySide6.QtCore import QPointF, Qt
from PySide6.QtTest import QTest
from PySide6.QtWidgets import QFileDialog
from sheets import SOURCE_SIDE, click_button, divider, lasso, open_sheet, pick, settle, type_into

from portcut.app.panels.sweep import CSV_COLUMNS
from portcut.engine.solve.units import format_eng

R, C, V = 1e3, 100e-9, 10.0
SHIFT = Qt.KeyboardModifier.ShiftModifier


def rc_z(f):
    """common practice (RC low-pass seen from the capacitor): Z = R / (1 + jωRC)."""
    return R / (1 + 1j * 2 * np.pi * np.asarray(f) * R * C)


def rc_voc(f):
    """... and Voc = V / (1 + jωRC)."""
    return V / (1 + 1j * 2 * np.pi * np.asarray(f) * R * C)


def _swept(window, drive):
    open_sheet(window, divider(second="capacitor", second_value="100n"))
    lasso(drive, SOURCE_SIDE)
    click_button(window.equivalent_dock.sweep_button)
    dock = window.sweep_dock
    assert dock.isVisible()
    settle()
    assert dock.result is not None, dock.status.text()
    return dock


def test_the_curves_follow_the_closed_form(window, drive):
    dock = _swept(window, drive)
    f = dock.z_curve.xData
    assert len(f) == 201 and f[0] == pytest.approx(10) and f[-1] == pytest.approx(1e6)
    np.testing.assert_allclose(dock.z_curve.yData, np.abs(rc_z(f)), rtol=1e-12)
    np.testing.assert_allclose(dock.phase_curve.yData, np.degrees(np.angle(rc_z(f))),
                               rtol=1e-10, atol=1e-12)
    np.testing.assert_allclose(dock.voc_curve.yData, np.abs(rc_voc(f)), rtol=1e-12)
    assert dock.z_plot.getAxis("left").labelText == "|Z|<br>(Ω)"
    assert dock.phase_plot.getAxis("left").labelText == "∠Z<br>(°)"
    assert dock.voc_plot.getAxis("left").labelText == "|Voc|<br>(V)"
    assert dock.voc_plot.getAxis("bottom").labelText == "Frequency (Hz)"
    assert dock.z_plot.getAxis("bottom").logMode


def test_a_click_on_the_plot_moves_the_cursor_and_reads_the_values(window, drive):
    dock = _swept(window, drive)
    vb = dock.z_plot.vb
    target = 1591.5  # near the corner frequency 1 / (2π RC)
    at = dock.plots.mapFromScene(vb.mapViewToScene(QPointF(math.log10(target),
                                                           vb.viewRange()[1][0] + 0.1)))
    QTest.mouseClick(dock.plots.viewport(), Qt.MouseButton.LeftButton,
                     Qt.KeyboardModifier.NoModifier, at)
    settle()
    chosen = dock.cursor_frequency()
    assert chosen == pytest.approx(target, rel=0.02)  # within a pixel or two
    freqs = dock.result.freqs
    nearest = freqs[np.argmin(np.abs(np.log10(freqs) - math.log10(chosen)))]
    text = dock.readout.text()
    assert format_eng(abs(rc_z(nearest)), "Ω", 4) in text
    assert format_eng(abs(rc_voc(nearest)), "V", 4) in text
    assert f"{math.degrees(np.angle(rc_z(nearest))):.2f}°" in text


def test_csv_export_through_the_file_dialog(window, drive, monkeypatch, tmp_path: Path):
    dock = _swept(window, drive)
    out = tmp_path / "rc.csv"
    monkeypatch.setattr(QFileDialog, "getSaveFileName", lambda *a, **k: (str(out), ""))
    click_button(dock.export_button)
    with out.open(encoding="utf-8", newline="") as f:
        rows = list(csv.reader(f))
    assert rows[0] == CSV_COLUMNS
    assert len(rows) == 1 + 201
    column = {name: i for i, name in enumerate(CSV_COLUMNS)}
    for row in (rows[1], rows[100], rows[-1]):
        f = float(row[column["f (Hz)"]])
        z = complex(float(row[column["Re Z (ohm)"]]), float(row[column["Im Z (ohm)"]]))
        assert z == pytest.approx(complex(rc_z(f)), rel=1e-12)
        assert float(row[column["|Voc| (V)"]]) == pytest.approx(abs(rc_voc(f)), rel=1e-12)
    assert "Wrote 201 frequencies" in dock.status.text()


def test_the_sweep_follows_an_edit(window, drive, qtbot):
    dock = _swept(window, drive)
    drive.key(Qt.Key.Key_S)
    drive.click(drive.by("R1").at)
    type_into(window.inspector.editors["value"].edit, "2k")
    # at 10 Hz the capacitor barely conducts: |Z| comes close to the new R1, once the edits
    # have settled
    qtbot.waitUntil(lambda: dock.z_curve.yData[0] == pytest.approx(2e3, rel=1e-3),
                    timeout=2000)


def _block_alone(window, drive) -> None:
    """An RC divider's source side collapsed into a block, and a new region of the block
    alone."""
    open_sheet(window, divider(second="capacitor", second_value="100n"))
    lasso(drive, SOURCE_SIDE)
    click_button(window.equivalent_dock.collapse_button)
    (block,) = drive.doc.blocks()
    window.canvas.scene.select_ids([])
    drive.key(Qt.Key.Key_B)
    drive.click(block.at, SHIFT)
    settle()


def test_a_collapsed_block_is_swept_through_its_contents(window, drive):
    _block_alone(window, drive)
    assert window.analysis.analysis.ok, window.analysis.analysis.message
    click_button(window.equivalent_dock.sweep_button)
    settle()
    dock = window.sweep_dock
    f = dock.result.freqs
    # the drawn block holds its DC values; the sweep must see the capacitor inside it
    np.testing.assert_allclose(np.abs(dock.result.z), np.abs(rc_z(f)), rtol=1e-12)
    np.testing.assert_allclose(dock.result.voc, rc_voc(f), rtol=1e-12)


def test_a_back_to_front_range_is_refused(window, drive):
    dock = _swept(window, drive)
    type_into(dock.start.edit, "2M")
    settle()
    assert dock.result is None
    assert "make From less than To" in dock.status.text()
    assert not dock.export_button.isEnabled()
    type_into(dock.start.edit, "0")
    assert dock.start.in_error and "above 0 Hz" in dock.start.error.text()
    type_into(dock.start.edit, "100")
    settle()
    assert dock.result is not None and dock.result.freqs[0] == pytest.approx(100)


def test_a_csv_that_cannot_be_written_says_so(window, drive, tmp_path: Path):
    dock = _swept(window, drive)
    assert not dock.export_csv_to(tmp_path / "no such folder" / "rc.csv")
    assert "rc.csv” was not written" in dock.status.text()
    assert dock.status.property("error") is True


def _check(box) -> None:
    QTest.mouseClick(box, Qt.MouseButton.LeftButton)
    settle()


def test_the_noise_trace_is_nyquist_at_the_panels_temperature(window, drive):
    dock = _swept(window, drive)
    assert dock.noise is None and not dock.noise_plot.isVisible()  # not computed unasked
    insight = window.insight_dock
    insight.show()
    insight.raise_()
    type_into(insight.temp, "350")
    _check(dock.traces.boxes["noise"])
    assert dock.noise_plot.isVisible()
    f = dock.noise_curve.xData
    # Nyquist (Phys. Rev. 32, 1928): a passive region's open-circuit noise density is
    # sqrt(4 k T Re Z) at every frequency; k exact in the 2019 SI (BIPM SI Brochure).
    want = np.sqrt(4 * 1.380649e-23 * 350 * rc_z(f).real)
    np.testing.assert_allclose(dock.noise_curve.yData, want, rtol=1e-9)
    assert "noise at 350 K" in dock.status.text()
    assert "e_n = " in dock.readout.text()
    # the frequencies are read off the lowest plot shown
    assert dock.noise_plot.getAxis("bottom").labelText == "Frequency (Hz)"
    assert not dock.voc_plot.getAxis("bottom").labelText
    type_into(insight.temp, "290")
    np.testing.assert_allclose(dock.noise_curve.yData, want * math.sqrt(290 / 350), rtol=1e-9)


def test_the_sensitivity_trace_is_the_engines_checked_by_finite_differences(window, drive):
    from dataclasses import replace

    from portcut.engine import equivalent
    from portcut.engine.solve.sensitivity import sensitivity

    dock = _swept(window, drive)
    _check(dock.traces.boxes["sensitivity"])
    assert set(dock.sensitivities) == {"V1", "R1", "C1"}  # the top three of three
    assert all(name in dock.legend.text() for name in ("V1", "R1", "C1"))
    assert dock.legend.isVisible()
    pick(dock.traces.figure, "Z")
    assert dock.traces.figure.currentData() == "Z", dock.traces.figure.currentText()
    pick(dock.traces.part, "R1")
    assert dock.traces.sensitivity_choice == ("Z", "R1"), dock.traces.sensitivity_choice
    assert list(dock.sensitivities) == ["R1"]
    curve = dock.sensitivity_lines["R1"]
    analysis = window.analysis.analysis
    c, region, port = analysis.circuit, analysis.part_names, analysis.equivalent.port
    for i in (0, 100, 200):
        f = float(curve.xData[i])
        s = sensitivity(c, region, port, f)["R1"]
        assert curve.yData[i] == pytest.approx(abs(s.sz), rel=1e-12)
        # central finite difference of Z in R1 (common practice), step 1e-6 relative
        h = 1e-6

        def z(scale: float, f: float = f) -> complex:
            changed = c.replaced([replace(c["R1"], value=c["R1"].value * scale)])
            return equivalent(changed, region, port, freq=f).z

        fd = (z(1 + h) - z(1 - h)) / (2 * h) / z(1)
        assert s.sz == pytest.approx(fd, rel=1e-6, abs=1e-9)
    assert "|S(Z, R1)|" in dock.readout.text()


def test_insight_traces_of_a_collapsed_block_say_to_expand_it(window, drive):
    _block_alone(window, drive)
    click_button(window.equivalent_dock.sweep_button)
    dock = window.sweep_dock
    _check(dock.traces.boxes["noise"])
    assert dock.result is not None and dock.noise is None
    assert not dock.trace_status.isHidden()
    assert "expand the collapsed block" in dock.trace_status.text()
