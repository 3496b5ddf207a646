"""The Design insight panel: which parts move the equivalent most (a bar each; a row selects the
part on the canvas), the port's thermal noise, the equivalent in standard values, and what the
parts' tolerances do (worst case, and on request a Monte Carlo run: app/panels/montecarlo.py).

It reads the live analysis of the current region (app.analysis) and asks the engine; it holds
no document state. Tolerances are the parts' own (inspector field).
"""

from __future__ import annotations

import math

from PySide6.QtCore import Signal
from PySide6.QtWidgets import (
    QComboBox,
    QDockWidget,
    QFormLayout,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QProgressBar,
    QScrollArea,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from portcut.engine.errors import CircuitError
from portcut.engine.schematic import PlacedPart
from portcut.engine.schematic.reduction import RegionAnalysis
from portcut.engine.solve.eseries import SERIES, best_pair, nearest, realise
from portcut.engine.solve.noise import noise, noise_band
from portcut.engine.solve.sensitivity import influence, sensitivity
from portcut.engine.solve.tolerance import MonteCarlo, worst_case
from portcut.engine.solve.units import format_eng, parse_frequency

from ..analysis import LiveAnalysis
from ..canvas import Canvas
from .montecarlo import FIGURE_NAMES, MonteCarloBox, figure_text

__all__ = ["InsightDock"]

_BAR_STEPS = 1000


class InsightDock(QDockWidget):
    """The "Design insight" dock; follows ``live`` and selects parts on ``canvas``.
    :attr:`temperatureChanged` carries each temperature (K) taken for the noise figures."""

    temperatureChanged = Signal(float)

    def __init__(self, canvas: Canvas, live: LiveAnalysis, parent: QWidget | None = None) -> None:
        super().__init__("Design insight", parent)
        self.setObjectName("insight")
        self.canvas, self.live = canvas, live
        self.analysis: RegionAnalysis | None = None
        self.status = QLabel("Draw a region to see which parts matter")
        self.status.setWordWrap(True)
        self.table = QTableWidget(0, 4)
        self.table.setHorizontalHeaderLabels(["Part", "Voc %/%", "Z %/%", "Influence"])
        self.table.setSelectionBehavior(QTableWidget.SelectionBehavior.SelectRows)
        self.table.setEditTriggers(QTableWidget.EditTrigger.NoEditTriggers)
        self.table.verticalHeader().hide()
        self.table.horizontalHeader().setStretchLastSection(True)
        self.table.cellClicked.connect(self._select_part)
        self.noise_text = QLabel()
        self.noise_text.setWordWrap(True)
        self.band_lo, self.band_hi = QLineEdit("20"), QLineEdit("20k")
        self.temp = QLineEdit("290")
        for edit in (self.band_lo, self.band_hi):
            edit.editingFinished.connect(self._show_noise)
        self.temp.editingFinished.connect(self._temperature_edited)
        self.series = QComboBox()
        for name in SERIES:
            self.series.addItem(name, name)
        self.series.setCurrentIndex(list(SERIES).index("E24"))
        self.series.currentIndexChanged.connect(self._show_standard)
        self.standard_text = QLabel()
        self.standard_text.setWordWrap(True)
        self.worst_text = QLabel()
        self.worst_text.setWordWrap(True)
        self.monte_box = MonteCarloBox()
        self.run_button = self.monte_box.run_button
        self.run_button.clicked.connect(self.run_monte_carlo)
        self._build()
        # the figures take several solves: worked out only while the dock is shown
        self._stale = False
        self.visibilityChanged.connect(lambda shown: shown and self._stale and self._refresh())
        live.analysed.connect(self.show_analysis)
        self.show_analysis(live.analysis)

    def _build(self) -> None:
        body = QWidget()
        column = QVBoxLayout(body)
        column.addWidget(self.status)
        influence_box = QGroupBox("Influence: % change per % change of each part")
        QVBoxLayout(influence_box).addWidget(self.table)
        column.addWidget(influence_box)
        noise_box = QGroupBox("Thermal noise")
        form = QFormLayout(noise_box)
        band = QHBoxLayout()
        band.addWidget(self.band_lo)
        band.addWidget(QLabel("to"))
        band.addWidget(self.band_hi)
        band.addWidget(QLabel("Hz"))
        form.addRow("Band", band)
        form.addRow("Temperature (K)", self.temp)
        form.addRow(self.noise_text)
        column.addWidget(noise_box)
        standard_box = QGroupBox("Standard values")
        form = QFormLayout(standard_box)
        form.addRow("Series", self.series)
        form.addRow(self.standard_text)
        column.addWidget(standard_box)
        tolerance_box = QGroupBox("Tolerances")
        form = QFormLayout(tolerance_box)
        form.addRow(self.worst_text)
        form.addRow(self.monte_box)
        column.addWidget(tolerance_box)
        column.addStretch(1)
        scroll = QScrollArea()
        scroll.setWidgetResizable(True)
        scroll.setWidget(body)
        self.setWidget(scroll)

    # -- following the analysis -----------------------------------------------------------------
    def _usable(self) -> bool:
        a = self.analysis
        return a is not None and a.ok and a.circuit is not None

    def _args(self) -> tuple:
        a = self.analysis
        return a.circuit, set(a.part_names), a.equivalent.port

    def show_analysis(self, analysis: RegionAnalysis | None) -> None:
        """Follow ``analysis``: at once while the dock is shown, else when it is next shown."""
        self.analysis = analysis
        self.monte_box.clear()
        # a dock tabbed behind another stays "visible" to Qt but shows nothing
        self._stale = self.visibleRegion().isEmpty()
        if not self._stale:
            self._refresh()

    def _refresh(self) -> None:
        self._stale = False
        analysis = self.analysis
        if not self._usable():
            self.status.setText("Draw a valid region to see which parts matter"
                                if analysis is None or analysis.ok else analysis.message)
            self.table.setRowCount(0)
            for label in (self.noise_text, self.standard_text, self.worst_text):
                label.setText("")
            return
        self.status.setText(f"Port ({analysis.equivalent.port[0]}, "
                            f"{analysis.equivalent.port[1]})")
        self._show_sensitivity()
        self._show_noise()
        self._show_standard()
        self._show_worst_case()

    def _show_sensitivity(self) -> None:
        circuit, region, port = self._args()
        try:
            table = sensitivity(circuit, region, port, self.analysis.freq)
        except CircuitError as exc:
            self.table.setRowCount(0)
            self.status.setText(str(exc))
            return
        ranked = sorted(table.values(), key=lambda s: (-influence(s), s.name))
        top = max((influence(s) for s in ranked), default=0.0) or 1.0
        self.table.setRowCount(len(ranked))
        for row, s in enumerate(ranked):
            cells = [s.name, _ratio(s.svoc), _ratio(s.sz)]
            for col, text in enumerate(cells):
                self.table.setItem(row, col, QTableWidgetItem(text))
            bar = QProgressBar()
            bar.setRange(0, _BAR_STEPS)
            bar.setValue(round(_BAR_STEPS * influence(s) / top))
            bar.setTextVisible(False)
            bar.setAccessibleName(f"influence of {s.name}")
            self.table.setCellWidget(row, 3, bar)
        self.table.resizeColumnsToContents()

    def ranked_parts(self) -> list[str]:
        """The part names as listed, most influential first."""
        return [self.table.item(r, 0).text() for r in range(self.table.rowCount())]

    def _select_part(self, row: int, _column: int) -> None:
        name = self.table.item(row, 0).text()
        doc = self.canvas.doc
        part = doc.by_designator(name)
        if isinstance(part, PlacedPart):
            self.canvas.scene.select_ids([part.id])

    def _temperature_edited(self) -> None:
        try:
            t = float(self.temp.text())
        except ValueError:
            t = math.nan
        if math.isfinite(t) and t > 0:
            self.temperatureChanged.emit(t)
        self._show_noise()

    def _show_noise(self) -> None:
        if not self._usable():
            return
        circuit, region, port = self._args()
        try:
            t = float(self.temp.text())
            lo, hi = parse_frequency(self.band_lo.text()), parse_frequency(self.band_hi.text())
            at = noise(circuit, region, port, self.analysis.freq, t)
            band = noise_band(circuit, region, lo, hi, port, t)
        except (CircuitError, ValueError) as exc:
            self.noise_text.setText(f"Noise: {exc}")
            return
        loudest = next(iter(at.shares), None)
        share = "" if loudest is None or at.en == 0 else (
            f"; {loudest} gives {100 * at.shares[loudest] / at.en ** 2:.0f} % of the power")
        self.noise_text.setText(
            f"e_n = {format_eng(at.en, 'V/√Hz', 4)}, i_n = {format_eng(at.in_, 'A/√Hz', 4)} "
            f"at {format_eng(self.analysis.freq, 'Hz', 4)}{share}\n"
            f"{format_eng(band.vrms, 'V', 4)} rms over {format_eng(lo, 'Hz')} to "
            f"{format_eng(hi, 'Hz')}")

    def _show_standard(self) -> None:
        if not self._usable():
            return
        z, freq, series = self.analysis.equivalent.z, self.analysis.freq, self.series.currentData()
        try:
            if z.imag == 0 and z.real > 0:
                one, pair = nearest(z.real, series), best_pair(z.real, series)
                join = " + " if pair.connection == "series" else " ∥ "
                text = (f"Z ≈ {format_eng(one.value, 'Ω', 3)} ({one.error_pct:+.2f} %); "
                        f"{format_eng(pair.a, 'Ω', 3)}{join}{format_eng(pair.b, 'Ω', 3)} "
                        f"= {format_eng(pair.value, 'Ω', 4)} ({pair.error_pct:+.3f} %)")
            else:
                r = realise(z, freq, series)
                parts = [] if r.resistance is None else [
                    f"{format_eng(r.resistance.value, 'Ω', 3)} ({r.resistance.error_pct:+.2f} %)"]
                if r.kind is not None:
                    unit = "H" if r.kind == "inductor" else "F"
                    parts.append(f"{format_eng(r.reactive.value, unit, 3)} "
                                 f"({r.reactive.error_pct:+.2f} %)")
                text = "Z ≈ " + " in series with ".join(parts)
        except CircuitError as exc:
            text = f"No standard realisation: {exc}"
        self.standard_text.setText(text)

    def _tolerances(self) -> dict[str, str]:
        doc = self.canvas.doc
        names = self.analysis.part_names
        return {p.designator: p.tolerance for p in doc.parts()
                if p.tolerance.strip() and p.designator in names}

    def _show_worst_case(self) -> None:
        tol = self._tolerances()
        self.run_button.setEnabled(bool(tol))
        if not tol:
            self.worst_text.setText("No part in the region has a tolerance; set one in the "
                                    "inspector (e.g. F for ±1 %)")
            return
        circuit, region, port = self._args()
        try:
            wc = worst_case(circuit, region, tol, port, self.analysis.freq)
        except CircuitError as exc:
            self.worst_text.setText(f"Worst case: {exc}")
            return
        lines = [f"{len(tol)} toleranced parts; extremes from {wc.method} ({wc.corners}), "
                 "linear bound from the sensitivities:"]
        for key, name in FIGURE_NAMES.items():
            lo, hi = wc.extremes[key]
            llo, lhi = wc.linear[key]
            lines.append(f"{name}: {figure_text(lo, key)} … {figure_text(hi, key)} "
                         f"(linear {figure_text(llo, key)} … {figure_text(lhi, key)})")
        self.worst_text.setText("\n".join(lines))

    @property
    def monte(self) -> MonteCarlo | None:
        """The last Monte Carlo run for the region shown, or None."""
        return self.monte_box.monte

    def run_monte_carlo(self) -> None:
        """Boards drawn with the parts' tolerances, as the Monte Carlo fields say."""
        if self._usable():
            circuit, region, port = self._args()
            self.monte_box.run(circuit, region, self._tolerances(), port, self.analysis.freq)


def _ratio(x: complex) -> str:
    if math.isnan(x.real):
        return "–"
    if abs(x.imag) <= 1e-9 * abs(x):
        return f"{x.real:+.3f}"
    return f"{abs(x):.3f} ∠ {math.degrees(math.atan2(x.imag, x.real)):.0f}°"
