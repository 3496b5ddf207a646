"""Renders the user guide's region screenshots offscreen: a valid region, an invalid one, a
collapsed block, the sweep view, a port chosen by hand and a selected block, from the bundled
examples.

Run from the repository root: ``python3 docs/images/make_region_screenshots.py``. Settings are
throwaway; nothing of the user's is read or written.
"""

from __future__ import annotations

import os
import sys
import tempfile
from dataclasses import replace
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtWidgets import QApplication
from shots import settle as _settle
from shots import window as _shot_window

from portcut import assets
from portcut.app.commands import ReplaceElements
from portcut.app.region_edits import port_text
from portcut.app.window import MainWindow
from portcut.engine.schematic import fileformat

HERE = Path(__file__).resolve().parent
SIZE = (1400, 900)


def _shoot(app: QApplication, window: MainWindow, name: str) -> None:
    _settle(app)
    window.canvas.view.fit()
    _settle(app)
    path = HERE / name
    window.grab().save(str(path))
    print(f"wrote {path}")


def main() -> int:
    app = QApplication.instance() or QApplication([])
    scratch = tempfile.mkdtemp()

    window = _shot_window(scratch, SIZE)
    window.files.open_path(assets.example_path("rc_antialias"), as_copy=True)
    _shoot(app, window, "region-valid.png")

    window.equivalent_dock.collapse()
    window.canvas.scene.select_ids([])  # the block in its own colours, not the selection's
    _shoot(app, window, "region-collapsed.png")
    window.workbench.undo_stack.undo()

    window.resize(SIZE[0], 1000)
    window.equivalent_dock.sweep_button.click()
    _shoot(app, window, "sweep-view.png")

    window = _shot_window(scratch, SIZE)
    doc = fileformat.load(assets.example_path("rc_antialias"))
    region = doc.regions()[0]
    left_out = doc.by_designator("R1")
    doc.replace(replace(region, members=region.members - {left_out.id}))
    window.workbench.replace_document(doc, None)
    _shoot(app, window, "region-invalid.png")

    window = _shot_window(scratch, SIZE)
    window.files.open_path(assets.example_path("strain_gauge_bridge"), as_copy=True)
    doc = window.workbench.doc
    region = replace(doc.regions()[0], swap=False, port=("adc_p", "adc_n"))
    window.workbench.push(ReplaceElements(doc, [region], port_text(region)))
    _shoot(app, window, "region-port.png")

    window = _shot_window(scratch, SIZE)  # a block selected: its values in both panels
    window.files.open_path(assets.example_path("audio_crossover"), as_copy=True)
    _settle(app)
    window.equivalent_dock.collapse()
    (block,) = window.workbench.doc.blocks()
    window.canvas.scene.select_ids([block.id])
    _shoot(app, window, "block-selected.png")
    os._exit(0)  # no teardown: closing would ask about the unsaved sheets


if __name__ == "__main__":
    sys.exit(main())
