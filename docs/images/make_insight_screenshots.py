"""Renders the user guide's Design insight screenshots offscreen: the strain-gauge bridge with
±1 % gauges, a Monte Carlo run with a limit on the ADC's offset, and the sweep view of the
anti-alias region with its noise density and sensitivity traces, each at two window sizes.

Run from the repository root: ``python3 docs/images/make_insight_screenshots.py [FOLDER]``
(FOLDER defaults to docs/images). Settings are throwaway; nothing of the user's is read or
written.
"""

from __future__ import annotations

import os
import sys
import tempfile
from dataclasses import replace
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication
from shots import settle as _settle
from shots import window as _shot_window

from portcut import assets
from portcut.app.commands import ReplaceElements
from portcut.app.window import MainWindow

SIZES = ((1280, 720), (1400, 860))
GAUGES = ("R1", "R2", "R3", "R4")


def _type(edit, text: str) -> None:
    edit.setText(text)
    edit.editingFinished.emit()


def _bridge(app: QApplication, scratch: str, size: tuple[int, int]) -> MainWindow:
    """The bridge with ±1 % gauges, the insight panel shown with a 0-10 Hz noise band."""
    window = _shot_window(scratch, size)
    window.files.open_path(assets.example_path("strain_gauge_bridge"), as_copy=True)
    doc = window.workbench.doc
    gauges = [replace(doc.by_designator(n), tolerance="F") for n in GAUGES]
    window.workbench.push(ReplaceElements(doc, gauges, "Tolerance ±1 % on the gauges"))
    window.inspector.hide()  # the panel takes the whole right column
    dock = window.insight_dock
    dock.show()
    dock.raise_()
    _settle(app)
    _type(dock.band_lo, "0")
    _type(dock.band_hi, "10")
    window.canvas.view.fit()
    _settle(app)
    return window


def _insight(app: QApplication, scratch: str, size: tuple[int, int]) -> MainWindow:
    window = _bridge(app, scratch, size)
    dock = window.insight_dock
    dock.run_button.click()
    views = dock.monte_box.views
    _type(views["voc"].high.edit, "20m")   # the ADC's offset budget
    _type(views["z"].low.edit, "348")
    _type(views["z"].high.edit, "352")
    _settle(app)
    scroll = dock.widget()  # the tolerance box at the top of the panel's view
    box = dock.worst_text.parentWidget()
    scroll.verticalScrollBar().setValue(box.mapTo(scroll.widget(), box.rect().topLeft()).y())
    window.canvas.view.fit()
    _settle(app)
    return window


def _sweep(app: QApplication, scratch: str, size: tuple[int, int]) -> MainWindow:
    window = _shot_window(scratch, size)
    window.files.open_path(assets.example_path("rc_antialias"), as_copy=True)
    _settle(app)
    window.equivalent_dock.sweep_button.click()
    dock = window.sweep_dock
    window.resizeDocks([dock], [int(size[1] * 0.55)], Qt.Orientation.Vertical)
    for key, on in (("phase", False), ("voc", False), ("noise", True), ("sensitivity", True)):
        dock.traces.boxes[key].setChecked(on)
    dock.traces.figure.setCurrentIndex(dock.traces.figure.findData("Z"))
    _settle(app)
    dock.set_cursor(3e4)
    window.canvas.view.fit()
    _settle(app)
    return window


def main() -> int:
    out = Path(sys.argv[1]) if len(sys.argv) > 1 else Path(__file__).resolve().parent
    app = QApplication.instance() or QApplication([])
    scratch = tempfile.mkdtemp()
    for size in SIZES:
        tag = f"{size[0]}x{size[1]}"
        for name, make in (("insight-monte-carlo", _insight), ("sweep-noise", _sweep)):
            window = make(app, scratch, size)
            path = out / f"{name}-{tag}.png"
            window.grab().save(str(path))
            print(f"wrote {path}")
    path = out / "insight-panel.png"  # the panel's top: parts by influence, noise, standard values
    _bridge(app, scratch, SIZES[1]).grab().save(str(path))
    print(f"wrote {path}")
    os._exit(0)  # no teardown: closing would ask about the unsaved sheets


if __name__ == "__main__":
    sys.exit(main())
