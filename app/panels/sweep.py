"""The sweep view: the current region's |Z|, ∠Z and |Voc| over a log frequency axis, a cursor
that reads the values at a frequency, and CSV export.

The sweep follows the live analysis (recomputed after each change while the view is shown, once
per burst) over the range and number of points in its fields; a collapsed block inside the
region is swept through its contents (app.analysis.sweep_region).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QTimer
from PySide6.QtWidgets import (
    QDockWidget,
    QFileDialog,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from portcut.engine import Sweep
from portcut.engine.drawing.palette import PALETTE
from portcut.engine.errors import CircuitError, ValueParseError
from portcut.engine.schematic.atomic import write_atomically
from portcut.engine.solve.mna import describe_freq
from portcut.engine.solve.tables import SWEEP_COLUMNS
from portcut.engine.solve.tables import sweep_csv as rows_csv
from portcut.engine.solve.units import UNDEFINED, format_eng, parse_frequency

from ..analysis import LiveAnalysis
from .entry import ERROR_STYLE, CheckedEntry, mark_error

__all__ = ["CSV_COLUMNS", "SweepDock", "sweep_csv"]


#: CSV columns (the command line's `portcut sweep --csv` writes the same table).
CSV_COLUMNS = SWEEP_COLUMNS
_MAX_POINTS = 100_000
#: After an edit, the sweep waits this long (ms) for the next one before it runs again.
FOLLOW_MS = 150


def sweep_csv(result: Sweep) -> str:
    """The sweep as CSV text (:data:`CSV_COLUMNS`)."""
    return rows_csv(result[i] for i in range(len(result)))


class LogAxis(pg.AxisItem):
    """A log axis ticked at each decade and, where there is room, at 2 and 5 times it (every
    integer multiple inside a single decade), labelled in engineering notation (1 k, 200 m)."""

    def logTickValues(self, minVal, maxVal, size, stdTicks):
        lo, hi = math.floor(minVal), math.ceil(maxVal)

        def ticks(multiples) -> list[float]:
            return [d + math.log10(m) for d in range(lo, hi + 1) for m in multiples
                    if minVal <= d + math.log10(m) <= maxVal]

        decades = ticks((1,))
        room = size / max(maxVal - minVal, 1e-12)  # pixels per decade
        between = ticks((2, 5)) if room >= 90 else []
        if len(decades) + len(between) < 2:
            between = ticks(range(2, 10))
        return [(None, decades), (None, between)]

    def logTickStrings(self, values, scale, spacing):
        return [format_eng(10 ** v * scale, "", 3) for v in values]


def _positive(text: str) -> float:
    f = parse_frequency(text)
    if f <= 0:
        raise ValueParseError(f"a sweep runs on a log axis, so {text!r} must be above 0 Hz")
    return f


def _shown(values: np.ndarray, exists: np.ndarray, log: bool) -> np.ndarray:
    """Values to plot: nan where undefined (a gap in the curve), and where a log axis cannot
    show them."""
    out = np.where(exists & np.isfinite(values), values, np.nan)
    return np.where(out > 0, out, np.nan) if log else out


class SweepDock(QDockWidget):
    """The sweep view over the live analysis."""

    def __init__(self, live: LiveAnalysis, parent: QWidget | None = None) -> None:
        super().__init__("Sweep", parent)
        self.setObjectName("sweepDock")
        self.live = live
        self.result: Sweep | None = None
        self._stale = True
        self._timer = QTimer(self, singleShot=True, interval=0)
        self._timer.timeout.connect(self.refresh)

        self.start = CheckedEntry(_positive, "10", "Sweep from", "Lowest frequency, e.g. 10, 1k")
        self.stop = CheckedEntry(_positive, "1M", "Sweep to", "Highest frequency, e.g. 1M")
        self.points = QSpinBox()
        self.points.setRange(2, _MAX_POINTS)
        self.points.setValue(201)
        self.points.setAccessibleName("Sweep points")
        self.points.setToolTip("Log-spaced frequencies, both ends included")
        self.export_button = QPushButton("Export CSV…")
        self.export_button.clicked.connect(self.export_csv)
        self.status = QLabel()
        self.status.setWordWrap(True)
        self.readout = QLabel()
        self.readout.setAccessibleName("Values at the cursor")
        self.plots = pg.GraphicsLayoutWidget()
        self.plots.setBackground(PALETTE.paper)
        self.z_plot = self._plot(0, "|Z| (Ω)", log_y=True)
        self.phase_plot = self._plot(1, "∠Z (°)", log_y=False)
        self.voc_plot = self._plot(2, "|Voc| (V)", log_y=True)
        self.voc_plot.setLabel("bottom", "Frequency (Hz)")
        self.z_curve = self.z_plot.plot(pen=pg.mkPen(PALETTE.accent, width=2))
        self.phase_curve = self.phase_plot.plot(pen=pg.mkPen(PALETTE.accent, width=2))
        self.voc_curve = self.voc_plot.plot(pen=pg.mkPen(PALETTE.ink, width=2))
        self.cursors = []
        for plot in (self.z_plot, self.phase_plot, self.voc_plot):
            line = pg.InfiniteLine(angle=90, movable=True,
                                   pen=pg.mkPen(PALETTE.selection, width=1))
            line.sigPositionChanged.connect(self._cursor_moved)
            plot.addItem(line)
            self.cursors.append(line)
        self.plots.scene().sigMouseClicked.connect(self._clicked)
        self._build()

        for entry in (self.start, self.stop):
            entry.accepted.connect(lambda *_: self._schedule())
        self.points.editingFinished.connect(self._schedule)
        live.analysed.connect(lambda _: self._schedule(FOLLOW_MS))
        self.visibilityChanged.connect(lambda shown: shown and self._stale and self._schedule())

    def _plot(self, row: int, label: str, log_y: bool) -> pg.PlotItem:
        axes = {"bottom": LogAxis("bottom"), **({"left": LogAxis("left")} if log_y else {})}
        plot = self.plots.addPlot(row=row, col=0, axisItems=axes)
        plot.setLogMode(x=True, y=log_y)
        plot.showGrid(x=True, y=True, alpha=0.25)
        plot.setLabel("left", label)
        plot.getAxis("left").enableAutoSIPrefix(False)
        plot.getAxis("bottom").enableAutoSIPrefix(False)
        plot.setMenuEnabled(False)
        if row:
            plot.setXLink(self.z_plot)
        if row < 2:  # the frequencies are read off the bottom plot's axis
            plot.getAxis("bottom").setStyle(showValues=False)
        return plot

    def _build(self) -> None:
        fields = QHBoxLayout()
        for title, widget in (("From", self.start), ("To", self.stop), ("Points", self.points)):
            fields.addWidget(QLabel(title))
            fields.addWidget(widget)
        fields.addStretch(1)
        fields.addWidget(self.export_button)
        body = QWidget()
        column = QVBoxLayout(body)
        column.addLayout(fields)
        column.addWidget(self.status)
        column.addWidget(self.readout)
        column.addWidget(self.plots, 1)
        body.setStyleSheet(ERROR_STYLE)
        self.setWidget(body)

    # -- computing ----------------------------------------------------------------------------
    def _schedule(self, delay_ms: int = 0) -> None:
        """Sweep again once the view is shown; ``delay_ms`` lets a burst of edits settle
        first (a sweep of a large region takes a good part of a second)."""
        self._stale = True
        if self.isVisible():
            self._timer.start(delay_ms)

    def frequencies(self) -> np.ndarray:
        """The sweep's frequencies; raises CircuitError where the range is back to front."""
        lo, hi = self.start.value, self.stop.value
        if lo is None or hi is None or not lo < hi:
            raise CircuitError("the sweep runs from a lower to a higher frequency: make From "
                               "less than To")
        return np.geomspace(lo, hi, self.points.value())

    def refresh(self) -> None:
        """Sweep the current region now."""
        self._timer.stop()
        self._stale = False
        try:
            self.result = self.live.sweep(self.frequencies())
        except CircuitError as exc:
            self.result = None
            self.status.setText(f"No sweep: {exc}")
            mark_error(self.status, True)
            self._draw()
            return
        plus, minus = self.result.port
        self.status.setText(f"Port {plus} (+) / {minus} (−), {len(self.result)} frequencies")
        mark_error(self.status, False)
        self._draw()

    def _draw(self) -> None:
        self.export_button.setEnabled(self.result is not None)
        r = self.result
        if r is None:
            for curve in (self.z_curve, self.phase_curve, self.voc_curve):
                curve.setData([], [])
            self.readout.clear()
            return
        z = np.abs(r.z)
        phase = np.degrees(np.angle(r.z))
        self.z_curve.setData(r.freqs, _shown(z, r.has_thevenin, log=True), connect="finite")
        self.phase_curve.setData(r.freqs, _shown(phase, r.has_thevenin & (z > 0), log=False),
                                 connect="finite")
        self.voc_curve.setData(r.freqs, _shown(np.abs(r.voc), r.has_thevenin, log=True),
                               connect="finite")
        for plot in (self.z_plot, self.phase_plot, self.voc_plot):
            plot.enableAutoRange()
        at = self.cursor_frequency()
        if at is None or not r.freqs[0] <= at <= r.freqs[-1]:
            at = float(np.sqrt(r.freqs[0] * r.freqs[-1]))
        self.set_cursor(at)

    # -- the cursor ---------------------------------------------------------------------------
    def cursor_frequency(self) -> float | None:
        value = self.cursors[0].value()
        return None if value is None else 10 ** float(value)

    def set_cursor(self, hz: float) -> None:
        """Put the cursor at ``hz`` and read the values there."""
        for line in self.cursors:
            line.blockSignals(True)
            line.setValue(math.log10(hz))
            line.blockSignals(False)
        self._read_out()

    def _cursor_moved(self, line: pg.InfiniteLine) -> None:
        self.set_cursor(10 ** float(line.value()))

    def _clicked(self, event) -> None:
        pos = event.scenePos()
        for plot in (self.z_plot, self.phase_plot, self.voc_plot):
            if plot.vb.sceneBoundingRect().contains(pos):
                self.set_cursor(10 ** plot.vb.mapSceneToView(pos).x())
                return

    def _read_out(self) -> None:
        r = self.result
        at = self.cursor_frequency()
        if r is None or at is None:
            self.readout.clear()
            return
        i = int(np.argmin(np.abs(np.log10(r.freqs) - math.log10(at))))
        eq = r[i]
        z = (f"|Z| = {format_eng(abs(eq.z), 'Ω', 4)}   ∠Z = "
             f"{math.degrees(math.atan2(eq.z.imag, eq.z.real)):.2f}°" if eq.has_thevenin
             else "|Z| = ∞")
        voc = f"|Voc| = {format_eng(abs(eq.voc), 'V', 4)}" if eq.has_thevenin else \
            f"Voc {UNDEFINED}"
        self.readout.setText(f"Cursor at {describe_freq(eq.freq)}:   {z}   {voc}")

    # -- export -------------------------------------------------------------------------------
    def export_csv(self) -> bool:
        if self.result is None:
            return False
        path, _ = QFileDialog.getSaveFileName(self, "Export sweep as CSV", "sweep.csv",
                                              "CSV files (*.csv)")
        return bool(path) and self.export_csv_to(Path(path))

    def export_csv_to(self, path: Path) -> bool:
        """Write the sweep to ``path`` (atomically: a failure leaves any old file whole)."""
        try:
            write_atomically(path, sweep_csv(self.result))
        except OSError as exc:
            self.status.setText(f"“{path.name}” was not written: {exc.strerror or exc}")
            mark_error(self.status, True)
            return False
        self.status.setText(f"Wrote {len(self.result)} frequencies to {path.name}")
        return True
