"""The Monte Carlo part of the Design insight panel: a seeded run of random boards within the
parts' tolerances, a histogram of each port figure with optional limits drawn on it, and the
yield under those limits (engine/solve/limits.py), worked out again from the samples whenever a
limit changes.
"""

from __future__ import annotations

from collections.abc import Collection, Mapping, Sequence

import numpy as np
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QPainter, QPen
from PySide6.QtWidgets import (
    QComboBox,
    QFormLayout,
    QGridLayout,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from portcut.engine.drawing.palette import PALETTE
from portcut.engine.errors import CircuitError
from portcut.engine.solve.limits import Limit, board_yield
from portcut.engine.solve.tolerance import FIGURES, MonteCarlo, monte_carlo
from portcut.engine.solve.units import format_eng, parse_value

from .entry import ERROR_STYLE, CheckedEntry, mark_error

__all__ = ["FIGURE_NAMES", "FigureView", "Histogram", "MonteCarloBox", "figure_text",
           "read_limit"]

#: The figures as the panel names them, in the order their histograms stand.
FIGURE_NAMES = {"voc": "|Voc|", "z": "|Z|", "z_deg": "∠Z", "isc": "|Isc|"}
_BINS = 40
_MAX_BOARDS = 1_000_000


def figure_text(value: float, key: str, digits: int = 5) -> str:
    """A figure's value with its unit: engineering notation, degrees for ∠Z."""
    if key == "z_deg":
        text = f"{value:.3f}"
        return f"{0.0 if float(text) == 0 else value:.3f}°"  # never "-0.000°"
    return format_eng(value, FIGURES[key], digits)


def read_limit(text: str, key: str, end: str) -> float | None:
    """A limit typed for figure ``key`` (SI prefixes, the figure's unit optional; ∠Z in
    degrees); empty for none. ``end`` ("lower" or "upper") names the field in a refusal."""
    text = text.strip()
    if not text:
        return None
    what = f"{FIGURE_NAMES[key]} {end} limit"
    if key == "z_deg":
        return float(parse_value(text.removesuffix("°"), what=what, unit=""))
    value = parse_value(text, what=what, unit=FIGURES[key])
    if isinstance(value, complex):
        raise CircuitError(f"{what}: {text!r} must be a real number")
    return float(value)


class Histogram(QWidget):
    """Counts of a figure's samples per bin, with the limits drawn as lines; boards outside the
    limits are drawn muted. The range's ends are written under it."""

    def __init__(self, key: str, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.key = key
        self.counts = np.zeros(0, dtype=int)
        self.edges = np.zeros(0)
        self.limit: Limit = (None, None)
        self.setMinimumSize(120, 80)
        self.setAccessibleName(f"histogram of {FIGURE_NAMES[key]}")

    def show_samples(self, samples: np.ndarray, limit: Limit = (None, None)) -> None:
        """Bin ``samples`` over their range widened to take in the limits."""
        self.limit = limit
        finite = samples[np.isfinite(samples)]
        if not finite.size:
            self.counts, self.edges = np.zeros(0, dtype=int), np.zeros(0)
            self.update()
            return
        ends = [float(finite.min()), float(finite.max()), *(x for x in limit if x is not None)]
        lo, hi = min(ends), max(ends)
        if hi - lo <= 1e-12 * max(abs(lo), abs(hi), 1.0):  # all boards alike (∠Z at DC)
            pad = 1e-9 * max(abs(lo), 1.0)
            lo, hi = lo - pad, hi + pad
        self.counts, self.edges = np.histogram(finite, bins=_BINS, range=(lo, hi))
        self.update()

    def paintEvent(self, event) -> None:
        if not self.counts.size or self.counts.max() == 0:
            return
        painter = QPainter(self)
        text_h = self.fontMetrics().height()
        h = self.height() - text_h - 2
        w = self.width()
        lo, hi = float(self.edges[0]), float(self.edges[-1])

        def x_of(value: float) -> float:
            return (value - lo) / (hi - lo) * (w - 1)

        top = float(self.counts.max())
        low, high = self.limit
        inside, outside = QColor(PALETTE.accent), QColor(PALETTE.grid).darker(115)
        bar_w = w / self.counts.size
        for i, count in enumerate(self.counts.tolist()):
            middle = 0.5 * (self.edges[i] + self.edges[i + 1])
            ok = (low is None or middle >= low) and (high is None or middle <= high)
            bar = h * count / top
            painter.fillRect(QRectF(i * bar_w + 0.5, h - bar, max(bar_w - 1, 1), bar),
                             inside if ok else outside)
        painter.setPen(QPen(QColor(PALETTE.error), 2))
        for limit in (low, high):
            if limit is not None:
                x = x_of(limit)
                painter.drawLine(QPointF(x, 0), QPointF(x, h))
        painter.setPen(QColor(PALETTE.muted))
        baseline = QRectF(0, h + 1, w, text_h)
        painter.drawText(baseline, Qt.AlignmentFlag.AlignLeft, figure_text(lo, self.key, 4))
        painter.drawText(baseline, Qt.AlignmentFlag.AlignRight, figure_text(hi, self.key, 4))
        painter.end()


class FigureView(QWidget):
    """One figure: its name, mean and σ, the yield under its limits, the histogram and the
    lower and upper limit fields."""

    def __init__(self, key: str, on_limit, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.key = key
        name = FIGURE_NAMES[key]
        self.title = QLabel(f"<b>{name}</b>")
        self.title.setWordWrap(True)
        self.yield_text = QLabel()
        self.yield_text.setAccessibleName(f"yield of {name}")
        self.histogram = Histogram(key)
        unit = "°" if key == "z_deg" else FIGURES[key]
        self.low = CheckedEntry(lambda t: read_limit(t, key, "lower"), "", f"{name} lower limit",
                                f"Lowest acceptable {name}, e.g. 2m or 2 m{unit}; empty: none")
        self.high = CheckedEntry(lambda t: read_limit(t, key, "upper"), "",
                                 f"{name} upper limit",
                                 f"Highest acceptable {name}; empty: none")
        for entry in (self.low, self.high):
            entry.edit.setPlaceholderText("none")
            entry.accepted.connect(lambda *_: on_limit())
        header = QHBoxLayout()
        header.addWidget(self.title, 1)
        header.addWidget(self.yield_text, 0, Qt.AlignmentFlag.AlignTop)
        fields = QHBoxLayout()
        fields.addWidget(QLabel("≥"))
        fields.addWidget(self.low, 1)
        fields.addWidget(QLabel("≤"))
        fields.addWidget(self.high, 1)
        column = QVBoxLayout(self)
        column.setContentsMargins(0, 0, 0, 0)
        column.setSpacing(2)
        column.addLayout(header)
        column.addWidget(self.histogram, 1)
        column.addLayout(fields)

    @property
    def limit(self) -> Limit:
        return self.low.value, self.high.value


class MonteCarloBox(QWidget):
    """Distribution, board count and seed, a Run button, the run's summary and one
    :class:`FigureView` per figure, two by two."""

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.monte: MonteCarlo | None = None
        self.distribution = QComboBox()
        self.distribution.addItem("uniform within ±t", "uniform")
        self.distribution.addItem("normal, t = 3σ", "normal")
        self.distribution.setAccessibleName("Distribution")
        self.boards = QSpinBox()
        self.boards.setRange(2, _MAX_BOARDS)
        self.boards.setValue(10_000)
        self.boards.setGroupSeparatorShown(True)
        self.boards.setAccessibleName("Boards")
        self.seed = QSpinBox()
        self.seed.setRange(0, 2**31 - 1)
        self.seed.setAccessibleName("Seed")
        self.seed.setToolTip("The same seed draws the same boards")
        self.run_button = QPushButton("Run Monte Carlo")
        self.text = QLabel()
        self.text.setWordWrap(True)
        self.views = {key: FigureView(key, self.show_yield) for key in FIGURE_NAMES}
        form = QFormLayout()
        form.addRow("Distribution", self.distribution)
        counts = QHBoxLayout()
        counts.addWidget(self.boards, 1)
        counts.addWidget(QLabel("Seed"))
        counts.addWidget(self.seed, 1)
        form.addRow("Boards", counts)
        grid = QGridLayout()
        for i, view in enumerate(self.views.values()):
            grid.addWidget(view, i // 2, i % 2)
        column = QVBoxLayout(self)
        column.setContentsMargins(0, 0, 0, 0)
        column.addLayout(form)
        column.addWidget(self.run_button)
        column.addWidget(self.text)
        column.addLayout(grid)
        self.setStyleSheet(ERROR_STYLE)
        self.clear()

    def clear(self) -> None:
        """Forget the last run (the region or its values changed)."""
        self.monte = None
        self.text.setText("")
        mark_error(self.text, False)
        for key, view in self.views.items():
            view.histogram.show_samples(np.zeros(0))
            view.title.setText(f"<b>{FIGURE_NAMES[key]}</b>")
            view.yield_text.setText("")

    def run(self, circuit, region: Collection[str], tolerances: Mapping[str, str],
            port: Sequence[str], freq: float) -> None:
        """Draw the boards with the chosen distribution, count and seed, and show them."""
        try:
            self.monte = monte_carlo(circuit, region, tolerances, n=self.boards.value(),
                                     distribution=self.distribution.currentData(),
                                     seed=self.seed.value(), port=port, freq=freq)
        except CircuitError as exc:
            self.clear()
            self.text.setText(f"Monte Carlo: {exc}")
            mark_error(self.text, True)
            return
        mark_error(self.text, False)
        self.show_yield()

    def limits(self) -> dict[str, Limit]:
        return {key: view.limit for key, view in self.views.items()}

    def show_yield(self) -> None:
        """The summary, the histograms and the yields under the limits now in the fields."""
        m = self.monte
        if m is None:
            return
        limits = self.limits()
        for key, view in self.views.items():
            view.histogram.show_samples(m.samples[key], limits[key])
            spread = (f"{figure_text(m.mean[key], key, 4)} ± {figure_text(m.std[key], key, 2)}"
                      .replace(" ", "\u00a0").replace("\u00a0±", " ±"))  # wraps at ± only
            view.title.setText(f"<b>{FIGURE_NAMES[key]}</b> {spread}")
        summary = f"{m.n:,} boards, {m.distribution}, seed {m.seed}; mean ± σ of each figure"
        try:
            got = board_yield(m.samples, limits)
        except CircuitError as exc:
            self.text.setText(f"{summary}. No yield: {exc}")
            mark_error(self.text, True)
            return
        mark_error(self.text, False)
        for key, view in self.views.items():
            share = got.per_figure.get(key)
            view.yield_text.setText("" if share is None else f"yield {share:.1f} %")
        if got.per_figure:
            summary += f". Within every limit: {got.overall:.1f} %"
        self.text.setText(summary)
