"""Live equivalent panel benchmark on a generated 500-part schematic.

The sheet: one RC ladder snaking over rows of 25 cells (a series resistor and a capacitor to the
row's ground rail per cell), fed by a 1 V source and ended by a load; 250 cells, 502 parts. The
region is the source and the first 200 cells (401 parts), seen from the node after cell 200.

Figures, each against a floor measured in the same run on the same machine:

* value edit -> numbers shown: from pushing the undo command that changes one resistor inside the
  region to the equivalent panel repainted with the new numbers (document notification, canvas
  update, live analysis, panel update and repaint) — against the bare engine.equivalent() of the
  region on the same, already built circuit, with the netlists it keeps forgotten (an edited part
  is a new part to the engine too). Target: under 16 ms (one frame at 60 Hz).
* value edit -> equivalence line: the same edit until the reduced-circuit check that follows the
  numbers is shown (two whole-circuit solves) — for information.
* a part moved outside the region -> numbers shown: a change of the drawing, which re-extracts
  connectivity and rebuilds the circuit — for information.

Run from the repository root: ``python3 benchmarks/live_panel.py [--edits N]`` (offscreen unless
a display is set). Figures go to docs/performance.md ("Live equivalent panel").
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtCore import QSettings
from PySide6.QtWidgets import QApplication

from portcut.app.commands import MoveElements, ReplaceElements
from portcut.app.settings import Settings
from portcut.app.window import MainWindow
from portcut.engine import GROUND, equivalent
from portcut.engine.schematic import Analysis, Document, NetLabel, PlacedPart, Region, Wire
from portcut.engine.solve.topology import forget_netlists

CELLS, PER_ROW, INSIDE = 250, 25, 200
CELL, ROW = 6, 8  # grid units per cell and per row


def ladder_sheet() -> Document:
    """The generated sheet with its region (see the module docstring)."""
    doc = Document("Generated 500-part RC ladder")
    doc.set_analysis(Analysis(freq="1k"))
    rows = CELLS // PER_ROW
    inside: set[str] = set()

    def add(part: PlacedPart, region: bool) -> None:
        doc.add(part)
        if region:
            inside.add(part.id)

    # the source sits left of row 0: plus at (-4, 0) on the top row, minus on the rail
    add(PlacedPart("src", "voltage_source", "V1", (-4, 2), 90, value="1"), True)
    doc.add(Wire("src_top", ((-4, 0), (0, 0))))
    for r in range(rows):
        y = r * ROW
        doc.add(NetLabel(f"gnd{r}", GROUND, (-4 if r == 0 else 0, y + 4), style="ground"))
        doc.add(Wire(f"rail{r}", ((-4 if r == 0 else 0, y + 4), (PER_ROW * CELL, y + 4))))
        for c in range(PER_ROW):
            n = r * PER_ROW + c + 1
            x = c * CELL
            region = n <= INSIDE
            # R: pins (x, y) and (x + 4, y); C: pins (x + 4, y) and (x + 4, y + 4)
            add(PlacedPart(f"r{n}", "resistor", f"R{n}", (x + 2, y), value="1k"), region)
            add(PlacedPart(f"c{n}", "capacitor", f"C{n}", (x + 4, y + 2), 90, value="10n"),
                region)
            doc.add(Wire(f"s{n}", ((x + 4, y), (x + CELL, y))))
        if r + 1 < rows:  # on to the next row's first cell
            end, start = (PER_ROW * CELL, y), (0, y + ROW)
            doc.add(Wire(f"down{r}", (end, (end[0] + 2, y), (end[0] + 2, y + ROW - 2),
                                      (-2, y + ROW - 2), (-2, y + ROW), start)))
    last = (rows - 1) * ROW
    doc.add(PlacedPart("load", "resistor", "RL", (PER_ROW * CELL + 4, last + 2), 90, value="1k"))
    doc.add(Wire("to_load", ((PER_ROW * CELL, last), (PER_ROW * CELL + 4, last))))
    doc.add(Wire("load_rail", ((PER_ROW * CELL, last + 4), (PER_ROW * CELL + 4, last + 4))))
    top = (INSIDE // PER_ROW) * ROW - 3
    doc.add(Region("reg", "first 200 cells", frozenset(inside),
                   ((-7, -2), (PER_ROW * CELL + 1, -2), (PER_ROW * CELL + 1, top), (-7, top))))
    return doc


def _median_ms(values: list[float]) -> float:
    return statistics.median(values) * 1e3


def main(argv: list[str] | None = None) -> int:
    args = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    args.add_argument("--edits", type=int, default=40)
    opts = args.parse_args(argv)
    app = QApplication.instance() or QApplication([])
    scratch = tempfile.mkdtemp()
    window = MainWindow(Settings(QSettings(str(Path(scratch) / "settings.ini"),
                                           QSettings.Format.IniFormat)))
    window.resize(1400, 860)
    window.show()
    doc = ladder_sheet()
    window.workbench.replace_document(doc, None)
    live, panel = window.analysis, window.equivalent_dock
    for _ in range(5):
        app.processEvents()
    assert live.analysis is not None and live.analysis.ok, live.analysis
    print(f"sheet: {len(doc.parts())} parts, {len(doc.wires())} wires; region of "
          f"{len(doc['reg'].members)} parts, port {live.analysis.equivalent.port} at 1 kHz")

    marks: dict[str, float] = {}

    def shown(_analysis) -> None:  # connected after the panel: its labels are set by now
        panel.widget().repaint()
        marks["shown"] = time.perf_counter()

    live.analysed.connect(shown)
    live.checked.connect(lambda _: marks.__setitem__("checked", time.perf_counter()))

    def until(key: str) -> None:
        while key not in marks:
            app.processEvents()

    def timed(command) -> tuple[float, float]:
        marks.clear()
        start = time.perf_counter()
        window.workbench.push(command)
        until("shown")
        until("checked")
        return marks["shown"] - start, marks["checked"] - start

    edit_ms, check_ms, floor_ms = [], [], []
    target = doc.by_designator(f"R{INSIDE}")  # next to the port: every edit shows
    for i in range(opts.edits):
        value = "1k" if i % 2 else "2k2"
        before = panel.values.text("z", "rectangular")
        shown_at, checked_at = timed(ReplaceElements(doc, [PlacedPart(
            target.id, target.kind, target.designator, target.at, target.rotation,
            value=value)], "Edit value"))
        assert panel.values.text("z", "rectangular") != before  # the numbers did change
        edit_ms.append(shown_at)
        check_ms.append(checked_at)
        circuit, names = live.analysis.circuit, live.analysis.part_names
        forget_netlists()
        start = time.perf_counter()
        equivalent(circuit, names, freq=1e3)
        floor_ms.append(time.perf_counter() - start)

    move_ms = []
    load = doc.by_designator("RL")
    for i in range(max(4, opts.edits // 4)):
        moved = PlacedPart(load.id, load.kind, load.designator,
                           (load.at[0] + (1 if i % 2 == 0 else 0), load.at[1]), load.rotation,
                           value=load.value)
        move_ms.append(timed(MoveElements(doc, [load.id], [moved], "Move"))[0])

    def row(name: str, ours: list[float], floor: list[float] | None, target: str) -> None:
        med = _median_ms(ours)
        if floor is None:
            print(f"{name:<40}{med:>9.2f} ms {max(ours) * 1e3:>9.2f} ms {'':>10} {'':>7}   "
                  f"{target}")
            return
        low = _median_ms(floor)
        print(f"{name:<40}{med:>9.2f} ms {max(ours) * 1e3:>9.2f} ms {low:>7.2f} ms "
              f"{med / low:>6.1f}x   {target}")

    print(f"{'measure':<40}{'median':>12}{'worst':>13}{'floor':>11}{'ratio':>8}   target")
    row("value edit -> numbers shown", edit_ms, floor_ms, "< 16 ms")
    row("value edit -> equivalence line shown", check_ms, None, "")
    row("part moved -> numbers shown", move_ms, None, "")
    os._exit(0)  # no teardown: closing would ask about the unsaved sheet, and Qt objects
    # torn down by the interpreter at exit can abort it


if __name__ == "__main__":
    sys.exit(main())
