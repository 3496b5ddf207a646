"""What the sweep view plots beside the equivalent: the port's thermal noise density and the
normalised sensitivities over the sweep, and the controls that choose them.

Each curve is computed only while its trace is shown (app/panels/sweep.py asks); the engine
does the work: :func:`noise_curve` one noise solve per frequency, :func:`sensitivity_curves` one
adjoint sweep.
"""

from __future__ import annotations

from collections.abc import Collection, Sequence

import numpy as np
from PySide6.QtCore import Signal
from PySide6.QtWidgets import QCheckBox, QComboBox, QHBoxLayout, QLabel, QWidget

from portcut.engine.errors import CircuitError
from portcut.engine.solve.noise import noise
from portcut.engine.solve.sensitivity import sensitivity_sweep

__all__ = ["SENSITIVITY_FIGURES", "TOP_PARTS", "TRACES", "TraceChoice", "noise_curve",
           "sensitivity_curves"]

#: The traces the view offers, in the order the plots stand, with their check-box titles.
TRACES = {"z": "|Z|", "phase": "∠Z", "voc": "|Voc|", "noise": "Noise e_n",
          "sensitivity": "Sensitivity"}
#: The traces shown when the view first opens.
DEFAULT_TRACES = ("z", "phase", "voc")
#: Sensitivity figures offered: the Sensitivity field each reads, by the name shown.
SENSITIVITY_FIGURES = {"Voc": "svoc", "Z": "sz"}
#: How many parts "the most influential parts" draws.
TOP_PARTS = 3


def noise_curve(circuit, region: Collection[str], port: Sequence[str], freqs: np.ndarray,
                temp_k: float) -> np.ndarray:
    """Open-circuit noise voltage density e_n (V/√Hz, rms) at each of ``freqs`` (Hz), parts at
    ``temp_k`` kelvin; nan at a frequency where the region has no Thevenin form."""
    def at(f: float) -> float:
        try:
            return noise(circuit, region, port, f, temp_k).en
        except CircuitError:
            return np.nan
    return np.array([at(float(f)) for f in freqs])


def sensitivity_curves(circuit, region: Collection[str], port: Sequence[str],
                       freqs: np.ndarray, figure: str, part: str | None
                       ) -> dict[str, np.ndarray]:
    """{part name: |(p/X) dX/dp| at each of ``freqs``} for X the ``figure`` ("Voc" or "Z"):
    of ``part``, or with None of the :data:`TOP_PARTS` parts largest anywhere on the sweep,
    largest first. Raises CircuitError where the region has no Thevenin form on the sweep,
    or ``part`` is not a valued part of the region."""
    table = sensitivity_sweep(circuit, region, freqs, port)
    field = SENSITIVITY_FIGURES[figure]
    curves = {name: np.abs(np.asarray(getattr(s, field), dtype=complex))
              for name, s in table.items()}
    if part is not None:
        if part not in curves:
            raise CircuitError(f"{part} is not a part with a value in the region")
        return {part: curves[part]}

    def peak(name: str) -> float:
        finite = curves[name][np.isfinite(curves[name])]
        return float(finite.max()) if finite.size else 0.0
    ranked = sorted(curves, key=lambda n: (-peak(n), n))
    return {name: curves[name] for name in ranked[:TOP_PARTS]}


class TraceChoice(QWidget):
    """A check box per trace, and for the sensitivity trace its figure and part (the most
    influential parts, or one). :attr:`changed` carries the trace whose choice changed."""

    changed = Signal(str)

    def __init__(self, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.boxes: dict[str, QCheckBox] = {}
        row = QHBoxLayout(self)
        row.setContentsMargins(0, 0, 0, 0)
        row.addWidget(QLabel("Show"))
        for key, title in TRACES.items():
            box = QCheckBox(title)
            box.setChecked(key in DEFAULT_TRACES)
            box.toggled.connect(lambda _on, k=key: self.changed.emit(k))
            self.boxes[key] = box
            row.addWidget(box)
        self.figure = QComboBox()
        self.figure.setAccessibleName("Sensitivity of")
        for name in SENSITIVITY_FIGURES:
            self.figure.addItem(f"of {name}", name)
        self.part = QComboBox()
        self.part.setAccessibleName("Sensitivity to")
        self.set_parts([])
        for combo in (self.figure, self.part):
            combo.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToContents)
            combo.setMinimumContentsLength(8)
            combo.currentIndexChanged.connect(lambda _i: self.changed.emit("sensitivity"))
            row.addWidget(combo)
        row.addStretch(1)

    def shown(self, key: str) -> bool:
        return self.boxes[key].isChecked()

    def set_parts(self, names: Sequence[str]) -> None:
        """Offer ``names`` (the region's valued parts); a part chosen before stays chosen
        where the region still has it."""
        chosen = self.part.currentData()
        self.part.blockSignals(True)
        self.part.clear()
        self.part.addItem(f"to the top {TOP_PARTS} parts", None)
        for name in names:
            self.part.addItem(f"to {name}", name)
        index = self.part.findData(chosen) if chosen is not None else 0
        self.part.setCurrentIndex(max(index, 0))
        self.part.blockSignals(False)

    @property
    def sensitivity_choice(self) -> tuple[str, str | None]:
        """(figure, part or None for the most influential parts)."""
        return self.figure.currentData(), self.part.currentData()
