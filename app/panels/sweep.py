"""The sweep view: the current region's |Z|, ∠Z and |Voc| over a log frequency axis, and on
request its thermal noise density and normalised sensitivities (app/panels/sweep_traces.py), a
cursor that reads the values at a frequency, and CSV export.

The sweep follows the live analysis (recomputed after each change while the view is shown, once
per burst) over the range and number of points in its fields; a collapsed block inside the
region is swept through its contents (app.analysis.sweep_region). A trace is computed only while
it is shown.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
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
from portcut.engine.schematic import Block
from portcut.engine.schematic.atomic import write_atomically
from portcut.engine.solve.mna import describe_freq
from portcut.engine.solve.noise import REFERENCE_TEMPERATURE
from portcut.engine.solve.stamps import PARAMETER_KINDS
from portcut.engine.solve.tables import SWEEP_COLUMNS
from portcut.engine.solve.tables import sweep_csv as rows_csv
from portcut.engine.solve.units import UNDEFINED, format_eng, parse_frequency

from ..analysis import LiveAnalysis
from .entry import ERROR_STYLE, CheckedEntry, mark_error
from .sweep_axes import LogAxis, shown
from .sweep_traces import TRACES, TraceChoice, noise_curve, sensitivity_curves

__all__ = ["CSV_COLUMNS", "SweepDock", "sweep_csv"]


#: CSV columns (the command line's `portcut sweep --csv` writes the same table).
CSV_COLUMNS = SWEEP_COLUMNS
_MAX_POINTS = 100_000
#: After an edit, the sweep waits this long (ms) for the next one before it runs again.
FOLLOW_MS = 150


#: Where a trace's axis is logarithmic, and its label: the unit on a line of its own, so that
#: a label stays within a short plot's height.
_AXES = {"z": (True, "|Z|<br>(Ω)"), "phase": (False, "∠Z<br>(°)"),
         "voc": (True, "|Voc|<br>(V)"), "noise": (True, "e_n<br>(V/√Hz)"),
         "sensitivity": (False, "|S|<br>(%/%)")}
_AXIS_WIDTH = 78
#: Pens of the sensitivity curves, most influential part first.
_PART_PENS = (PALETTE.accent, PALETTE.selection, PALETTE.error, PALETTE.ink)


def sweep_csv(result: Sweep) -> str:
    """The sweep as CSV text (:data:`CSV_COLUMNS`)."""
    return rows_csv(result[i] for i in range(len(result)))


def _positive(text: str) -> float:
    f = parse_frequency(text)
    if f <= 0:
        raise ValueParseError(f"a sweep runs on a log axis, so {text!r} must be above 0 Hz")
    return f


class SweepDock(QDockWidget):
    """The sweep view over the live analysis."""

    def __init__(self, live: LiveAnalysis, parent: QWidget | None = None) -> None:
        super().__init__("Sweep", parent)
        self.setObjectName("sweepDock")
        self.live = live
        self.result: Sweep | None = None
        #: Noise density (V/√Hz) per swept frequency, while the noise trace is shown.
        self.noise: np.ndarray | None = None
        #: {part: |normalised sensitivity|} per swept frequency, while that trace is shown.
        self.sensitivities: dict[str, np.ndarray] = {}
        self.temperature = REFERENCE_TEMPERATURE
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
        self.traces = TraceChoice()
        self.traces.changed.connect(self._trace_changed)
        self.status = QLabel()
        self.status.setWordWrap(True)
        self.trace_status = QLabel()
        self.trace_status.setWordWrap(True)
        self.trace_status.setProperty("error", True)
        self.trace_status.hide()
        self.legend = QLabel()
        self.legend.setAccessibleName("Sensitivity curves")
        self.legend.hide()
        self.readout = QLabel()
        self.readout.setWordWrap(True)
        self.readout.setAccessibleName("Values at the cursor")
        self.plots = pg.GraphicsLayoutWidget()
        self.plots.setBackground(PALETTE.paper)
        self.plot = {key: self._plot(row, key) for row, key in enumerate(TRACES)}
        self.z_plot, self.phase_plot, self.voc_plot = (self.plot[k] for k in ("z", "phase", "voc"))
        self.noise_plot, self.sensitivity_plot = self.plot["noise"], self.plot["sensitivity"]
        self.z_curve = self.z_plot.plot(pen=pg.mkPen(PALETTE.accent, width=2))
        self.phase_curve = self.phase_plot.plot(pen=pg.mkPen(PALETTE.accent, width=2))
        self.voc_curve = self.voc_plot.plot(pen=pg.mkPen(PALETTE.ink, width=2))
        self.noise_curve = self.noise_plot.plot(pen=pg.mkPen(PALETTE.ink, width=2))
        self.sensitivity_lines: dict[str, pg.PlotDataItem] = {}
        self.cursors = []
        for plot in self.plot.values():
            line = pg.InfiniteLine(angle=90, movable=True,
                                   pen=pg.mkPen(PALETTE.selection, width=1))
            line.sigPositionChanged.connect(self._cursor_moved)
            plot.addItem(line)
            self.cursors.append(line)
        self.plots.scene().sigMouseClicked.connect(self._clicked)
        self._build()
        self._lay_out_plots()

        for entry in (self.start, self.stop):
            entry.accepted.connect(lambda *_: self._schedule())
        self.points.editingFinished.connect(self._schedule)
        live.analysed.connect(lambda _: self._schedule(FOLLOW_MS))
        self.visibilityChanged.connect(lambda shown: shown and self._stale and self._schedule())

    def _plot(self, row: int, key: str) -> pg.PlotItem:
        log_y, label = _AXES[key]
        axes = {"bottom": LogAxis("bottom"), **({"left": LogAxis("left")} if log_y else {})}
        plot = self.plots.addPlot(row=row, col=0, axisItems=axes)
        plot.setLogMode(x=True, y=log_y)
        plot.showGrid(x=True, y=True, alpha=0.25)
        plot.setLabel("left", label)
        plot.getAxis("left").enableAutoSIPrefix(False)
        plot.getAxis("left").setWidth(_AXIS_WIDTH)  # the plots' frequencies line up
        plot.getAxis("bottom").enableAutoSIPrefix(False)
        plot.setMenuEnabled(False)
        if row:
            plot.setXLink(self.plots.getItem(0, 0))
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
        column.addWidget(self.traces)
        column.addWidget(self.status)
        column.addWidget(self.trace_status)
        column.addWidget(self.legend)
        column.addWidget(self.readout)
        column.addWidget(self.plots, 1)
        body.setStyleSheet(ERROR_STYLE)
        self.setWidget(body)

    def _lay_out_plots(self) -> None:
        """Show the chosen traces' plots; the frequencies are read off the lowest one."""
        visible = [k for k in TRACES if self.traces.shown(k)]
        for key, plot in self.plot.items():
            plot.setVisible(key in visible)
            last = bool(visible) and key == visible[-1]
            plot.getAxis("bottom").setStyle(showValues=last)
            plot.setLabel("bottom", "Frequency (Hz)" if last else None)

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
        """Sweep the current region now, and the insight traces shown."""
        self._timer.stop()
        self._stale = False
        self.noise, self.sensitivities = None, {}
        try:
            self.result = self.live.sweep(self.frequencies())
        except CircuitError as exc:
            self.result = None
            self.status.setText(f"No sweep: {exc}")
            mark_error(self.status, True)
            self._draw()
            return
        self._say_port()
        mark_error(self.status, False)
        analysis = self.live.analysis
        self.traces.set_parts(sorted(n for n in analysis.part_names
                                     if analysis.circuit[n].kind in PARAMETER_KINDS))
        self._compute(("noise", "sensitivity"))
        self._draw()

    def _say_port(self) -> None:
        plus, minus = self.result.port
        text = f"Port {plus} (+) / {minus} (−), {len(self.result)} frequencies"
        if self.traces.shown("noise"):
            text += f"; noise at {self.temperature:g} K"
        if self.traces.shown("sensitivity"):
            text += f"; |S| = |% change of {self.traces.sensitivity_choice[0]} per % change|"
        self.status.setText(text)

    def set_temperature(self, kelvin: float) -> None:
        """The parts' temperature for the noise trace (the Design insight panel's field)."""
        self.temperature = kelvin
        self._trace_changed("noise")

    def _trace_changed(self, key: str) -> None:
        self._lay_out_plots()
        if self.result is None:
            return
        if key == "noise":
            self.noise = None
        if key == "sensitivity":
            self.sensitivities = {}
        self._compute((key,))
        self._say_port()
        self._draw()

    def _compute(self, keys: Iterable[str]) -> None:
        """The insight traces among ``keys`` that are shown and not yet computed."""
        wanted = [k for k in keys if k in ("noise", "sensitivity") and self.traces.shown(k)]
        if not wanted:
            return
        try:
            circuit, region, port = self._own_parts()
            freqs = self.result.freqs
            if "noise" in wanted and self.noise is None:
                self.noise = noise_curve(circuit, region, port, freqs, self.temperature)
            if "sensitivity" in wanted and not self.sensitivities:
                figure, part = self.traces.sensitivity_choice
                self.sensitivities = sensitivity_curves(circuit, region, port, freqs, figure,
                                                        part)
        except CircuitError as exc:
            self.trace_status.setText(f"Not drawn: {exc}")
            self.trace_status.show()
            return
        self.trace_status.hide()

    def _own_parts(self) -> tuple:
        """The region's circuit, part names and port, for the noise and sensitivity traces."""
        analysis = self.live.analysis
        region = self.live.doc[analysis.region_id]
        if any(isinstance(self.live.doc[m], Block) for m in region.members if m in self.live.doc):
            raise CircuitError("the noise and sensitivity traces follow the region's own parts; "
                               "expand the collapsed block in it to see them")
        return analysis.circuit, analysis.part_names, self.result.port

    def _draw(self) -> None:
        self.export_button.setEnabled(self.result is not None)
        r = self.result
        if r is None:
            for curve in (self.z_curve, self.phase_curve, self.voc_curve, self.noise_curve):
                curve.setData([], [])
            self._draw_sensitivities()
            self.readout.clear()
            return
        z = np.abs(r.z)
        phase = np.degrees(np.angle(r.z))
        self.z_curve.setData(r.freqs, shown(z, r.has_thevenin, log=True), connect="finite")
        self.phase_curve.setData(r.freqs, shown(phase, r.has_thevenin & (z > 0), log=False),
                                 connect="finite")
        self.voc_curve.setData(r.freqs, shown(np.abs(r.voc), r.has_thevenin, log=True),
                               connect="finite")
        if self.noise is None:
            self.noise_curve.setData([], [])
        else:
            self.noise_curve.setData(r.freqs, shown(self.noise, r.has_thevenin, log=True),
                                     connect="finite")
        self._draw_sensitivities()
        for plot in self.plot.values():
            plot.enableAutoRange()
        at = self.cursor_frequency()
        if at is None or not r.freqs[0] <= at <= r.freqs[-1]:
            at = float(np.sqrt(r.freqs[0] * r.freqs[-1]))
        self.set_cursor(at)

    def _draw_sensitivities(self) -> None:
        for line in self.sensitivity_lines.values():
            self.sensitivity_plot.removeItem(line)
        self.sensitivity_lines = {}
        keys = []
        if self.result is not None:
            for pen, (name, values) in zip(_PART_PENS, self.sensitivities.items(), strict=False):
                self.sensitivity_lines[name] = self.sensitivity_plot.plot(
                    self.result.freqs, shown(values, np.isfinite(values), log=False),
                    pen=pg.mkPen(pen, width=2), connect="finite")
                keys.append(f'<span style="color:{pen}">━━</span> {name}')
        figure, _ = self.traces.sensitivity_choice
        self.legend.setText(f"|S| of {figure}:&nbsp; " + " &nbsp; ".join(keys))
        self.legend.setVisible(bool(keys) and self.traces.shown("sensitivity"))

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
        for plot in self.plot.values():
            if plot.isVisible() and plot.vb.sceneBoundingRect().contains(pos):
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
        extra = ""
        if self.noise is not None and self.traces.shown("noise"):
            extra += f"   e_n = {format_eng(float(self.noise[i]), 'V/√Hz', 4)}"
        if self.sensitivities and self.traces.shown("sensitivity"):
            figure, _ = self.traces.sensitivity_choice
            extra += "   " + ", ".join(f"|S({figure}, {name})| = {float(v[i]):.3g}"
                                       for name, v in self.sensitivities.items())
        self.readout.setText(f"Cursor at {describe_freq(eq.freq)}:   {z}   {voc}{extra}")

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
