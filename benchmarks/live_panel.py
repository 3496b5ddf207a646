"""Live equivalent panel benchmark: every gesture of a user on a generated 500-part schematic.

The sheet: one RC ladder snaking over rows of 25 cells (a series resistor and a capacitor to the
row's ground rail per cell), fed by a 1 V source and ended by a load; 250 cells, 502 parts. The
region is the source and the first 200 cells (401 parts), seen from the node after cell 200, at
1 kHz.

Each gesture is driven by real Qt events and timed from the event that changes the document to
the moment the panel (and the canvas) are repainted with the answer:

* value typed in the inspector, Enter -> the panel shows the new Z (R200, beside the port);
* the same edit -> the equivalence line shown (the check that follows the numbers);
* drag a part one step with the mouse, release -> analysed and repainted (the load, outside);
* arrow-key nudge of a part inside the region (C100) -> analysed and repainted;
* open the sheet from its file until the numbers show;
* a keystroke typed right after that Enter: how long it waits to be handled, with the analysis
  in the background and, for comparison, with it forced into the GUI thread.

Each figure is printed beside the bare engine call for the same state, measured in the same run
right after it, and as a ratio to it: ``engine.equivalent()`` of the region on the circuit the
gesture left, with no netlist kept (the window's own set aside meanwhile, then given back; for
the equivalence line, that and ``equivalence()``; for opening, loading the file and
``analyse_region()`` from scratch).
Targets (docs/performance.md): value edit <= 3x, move and nudge <= 6x. Beside them, how long
the gesture's own event took to handle: what input waits for, the analysis running meanwhile in
the background on this sheet.

The Design insight panel is left out (its per-edit work is benchmarks/insight.py's subject), and
the run rests between gestures for longer than the Checks panel's pause, as a user does, so
that its circuit checks fall between gestures.

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
from collections.abc import Callable
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtCore import QEvent, QEventLoop, QObject, QPoint, QSettings, Qt
from PySide6.QtGui import QKeyEvent
from PySide6.QtTest import QTest
from PySide6.QtWidgets import QApplication, QLineEdit

from portcut.app.analysis import INLINE_MS, INLINE_PARTS
from portcut.app.canvas.grid import to_scene
from portcut.app.panels.checks import CIRCUIT_PAUSE_MS
from portcut.app.settings import Settings
from portcut.app.window import MainWindow
from portcut.engine import GROUND, equivalent
from portcut.engine.schematic import Analysis, Document, NetLabel, PlacedPart, Region, Wire
from portcut.engine.schematic.fileformat import load, save
from portcut.engine.schematic.reduction import analyse_region, equivalence
from portcut.engine.solve.topology import NETLISTS, forget_netlists

CELLS, PER_ROW, INSIDE = 250, 25, 200
CELL, ROW = 6, 8  # grid units per cell and per row
_WAIT = QEventLoop.ProcessEventsFlag.WaitForMoreEvents  # sleep until an event comes


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


class Bench:
    """The window on the generated sheet, and the timing of one gesture."""

    def __init__(self) -> None:
        self.app = QApplication.instance() or QApplication([])
        self.scratch = Path(tempfile.mkdtemp())
        window = self.window = MainWindow(Settings(QSettings(
            str(self.scratch / "settings.ini"), QSettings.Format.IniFormat)))
        window.resize(1400, 860)
        window.show()
        self.live, self.panel = window.analysis, window.equivalent_dock
        self.live.analysed.disconnect(window.insight_dock.show_analysis)
        self.view = window.canvas.view
        self.marks: dict[str, float] = {}
        self.handled: list[float] = []
        self.live.analysed.connect(self._shown)  # after the panel: its labels are set by now
        self.live.checked.connect(lambda _: self.marks.__setitem__("checked",
                                                                    painted(window)))
        self.path = self.scratch / "ladder.json"
        save(ladder_sheet(), self.path)

    @property
    def doc(self) -> Document:
        return self.window.workbench.doc

    def _shown(self, _analysis) -> None:
        self.marks["shown"] = painted(self.window)

    def rest(self) -> None:
        """Let every timer of the last gesture run out (the Checks panel's pause included)."""
        until = time.perf_counter() + CIRCUIT_PAUSE_MS / 1e3 + 0.05
        while time.perf_counter() < until:
            self.app.processEvents()

    def timed(self, gesture: Callable[[], None], check: bool = False) -> tuple[float, float]:
        """Seconds from ``gesture`` (the event that changes the document) to the numbers shown,
        and to the equivalence line shown (``check``; else 0). How long the event itself took
        (the input waits that long) is noted in :attr:`handled`."""
        self.rest()
        self.marks.clear()
        start = time.perf_counter()
        gesture()
        self.handled.append(time.perf_counter() - start)
        for key in ("shown", "checked") if check else ("shown",):
            while key not in self.marks:  # as the window's own loop waits: asleep, the
                self.app.processEvents(_WAIT)  # worker free to take the interpreter lock
        return (self.marks["shown"] - start,
                self.marks["checked"] - start if check else 0.0)

    def floor(self, with_check: bool = False) -> float:
        """Seconds of the bare engine call for the state shown (see the module docstring)."""
        analysis = self.live.analysis
        with NETLISTS.set_aside():  # the window's own netlists stay, as between a user's edits
            start = time.perf_counter()
            equivalent(analysis.circuit, set(analysis.part_names), freq=analysis.freq)
            if with_check:
                equivalence(analysis, self.doc.analysis.form)
            return time.perf_counter() - start

    def type_new_value(self, part: PlacedPart) -> tuple[QLineEdit, str]:
        """Type into the inspector's value field a value other than ``part``'s own (an unchanged
        value would change nothing, and no answer would come); the field and the value."""
        value = "1k" if self.doc[part.id].value == "2k2" else "2k2"
        edit = self.window.inspector.editors["value"].edit
        edit.setFocus()
        QTest.keyClick(edit, Qt.Key.Key_A, Qt.KeyboardModifier.ControlModifier)
        QTest.keyClicks(edit, value)
        return edit, value

    def at(self, p: tuple[float, float]) -> QPoint:
        return self.view.mapFromScene(to_scene(p))

    def show_part(self, designator: str) -> PlacedPart:
        part = self.doc.by_designator(designator)
        self.view.actual_size()
        self.view.centerOn(to_scene(part.at))
        self.window.canvas.scene.select_ids([part.id])
        self.app.processEvents()
        return part


def painted(window: MainWindow) -> float:
    """The moment the window has laid out and painted what changed (``perf_counter``): the
    events the change posted (layouts, the scene's changed items, which paints the view) are
    delivered, then the window's next frame (the window system's paint request) is sent at once
    instead of when the platform's timer would send it."""
    QApplication.sendPostedEvents()
    QApplication.sendPostedEvents()  # what the first round posted (a layout's own requests)
    QApplication.sendEvent(window, QEvent(QEvent.Type.UpdateRequest))
    return time.perf_counter()


def _median_ms(values: list[float]) -> float:
    return statistics.median(values) * 1e3


def _row(name: str, ours: list[float], floor: list[float], target: str,
         handled: list[float]) -> None:
    med, low = _median_ms(ours), _median_ms(floor)
    print(f"{name:<44}{med:>9.2f} ms {max(ours) * 1e3:>9.2f} ms {low:>7.2f} ms "
          f"{med / low:>6.1f}x {target:>6} {_median_ms(handled):>8.2f} ms")


def opening(bench: Bench, times: int) -> tuple[list[float], list[float]]:
    ours, floor = [], []
    for _ in range(times):
        ours.append(bench.timed(lambda: bench.window.files.open_path(bench.path,
                                                                     confirmed=True))[0])
        forget_netlists()
        start = time.perf_counter()
        analyse_region(load(bench.path), "reg")
        floor.append(time.perf_counter() - start)
    return ours, floor


def value_edits(bench: Bench, times: int) -> tuple[list[float], ...]:
    target = bench.show_part(f"R{INSIDE}")  # next to the port: every edit shows
    numbers, checks, floor, check_floor = [], [], [], []
    for _ in range(times):
        edit, value = bench.type_new_value(target)
        before = bench.panel.values.text("z", "rectangular")
        shown, checked = bench.timed(lambda e=edit: QTest.keyClick(e, Qt.Key.Key_Return), True)
        assert bench.panel.values.text("z", "rectangular") != before  # the numbers did change
        assert bench.doc[target.id].value == value
        numbers.append(shown)
        checks.append(checked)
        floor.append(bench.floor())
        check_floor.append(bench.floor(with_check=True))
    return numbers, floor, checks, check_floor


class _KeySeen(QObject):
    """Notes when the End key reaches the watched widget."""

    def __init__(self) -> None:
        super().__init__()
        self.at = 0.0

    def eventFilter(self, watched: QObject, event: QEvent) -> bool:
        if event.type() == QEvent.Type.KeyPress and event.key() == Qt.Key.Key_End:
            self.at = time.perf_counter()
        return False


def keystrokes(bench: Bench, times: int, inline: bool) -> list[float]:
    """Seconds a keystroke typed right after Enter waits before it is handled: it queues behind
    the edit's analysis where that runs in the GUI thread (``inline``), not where it runs in the
    background."""
    live, part = bench.live, bench.show_part(f"R{INSIDE}")
    live.inline_parts = len(bench.doc.parts()) + 1 if inline else INLINE_PARTS
    live.inline_ms = INLINE_MS if inline else 0
    seen, waits = _KeySeen(), []
    for _ in range(times):
        edit, _ = bench.type_new_value(part)
        edit.installEventFilter(seen)
        posted = []

        def enter_then_key(e=edit, posted=posted) -> None:
            QTest.keyClick(e, Qt.Key.Key_Return)
            posted.append(time.perf_counter())
            QApplication.postEvent(e, QKeyEvent(QEvent.Type.KeyPress, Qt.Key.Key_End,
                                                Qt.KeyboardModifier.NoModifier))

        bench.timed(enter_then_key, True)
        edit.removeEventFilter(seen)
        waits.append(seen.at - posted[0])
    live.inline_parts, live.inline_ms = INLINE_PARTS, INLINE_MS
    return waits


def drags(bench: Bench, times: int) -> tuple[list[float], list[float]]:
    load_part = bench.show_part("RL")
    viewport = bench.view.viewport()
    ours, floor = [], []
    for i in range(times):
        a = bench.doc[load_part.id].at
        b = (a[0] + (1 if i % 2 == 0 else -1), a[1])
        QTest.mousePress(viewport, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier,
                         bench.at(a))
        for t in (0.5, 1.0):
            QTest.mouseMove(viewport, bench.at((a[0] + (b[0] - a[0]) * t, a[1])))
        ours.append(bench.timed(lambda b=b: QTest.mouseRelease(
            viewport, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier,
            bench.at(b)))[0])
        assert bench.doc[load_part.id].at == b, "the drag did not move the part"
        floor.append(bench.floor())
    return ours, floor


def nudges(bench: Bench, times: int) -> tuple[list[float], list[float]]:
    part = bench.show_part("C100")
    ours, floor = [], []
    for i in range(times):
        before = bench.doc[part.id].at
        key = Qt.Key.Key_Right if i % 2 == 0 else Qt.Key.Key_Left
        bench.view.setFocus()
        ours.append(bench.timed(lambda k=key: QTest.keyClick(bench.view, k))[0])
        assert bench.doc[part.id].at != before, "the arrow key did not move the part"
        floor.append(bench.floor())
    return ours, floor


def main(argv: list[str] | None = None) -> int:
    args = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    args.add_argument("--edits", type=int, default=20, help="repetitions of each gesture")
    opts = args.parse_args(argv)
    bench = Bench()
    open_ms, open_floor = opening(bench, max(3, opts.edits // 4))
    open_handled, bench.handled = bench.handled, []
    live = bench.live
    assert live.analysis is not None and live.analysis.ok, live.analysis
    doc = bench.doc
    print(f"sheet: {len(doc.parts())} parts, {len(doc.wires())} wires; region of "
          f"{len(doc['reg'].members)} parts, port {live.analysis.equivalent.port} at 1 kHz")
    numbers, floor, checks, check_floor = value_edits(bench, opts.edits)
    edit_handled, bench.handled = bench.handled, []
    drag_ms, drag_floor = drags(bench, opts.edits)
    drag_handled, bench.handled = bench.handled, []
    nudge_ms, nudge_floor = nudges(bench, opts.edits)
    waits = keystrokes(bench, opts.edits, inline=False)
    waits_inline = keystrokes(bench, opts.edits, inline=True)
    print(f"{'gesture':<44}{'median':>12}{'worst':>13}{'floor':>11}{'ratio':>8}{'target':>7}"
          f"{'event':>11}")
    _row("value typed, Enter -> new Z shown", numbers, floor, "<= 3x", edit_handled)
    _row("value typed, Enter -> equivalence line", checks, check_floor, "", edit_handled)
    _row("drag a part one step, release -> shown", drag_ms, drag_floor, "<= 6x", drag_handled)
    _row("arrow-key nudge inside the region -> shown", nudge_ms, nudge_floor, "<= 6x",
         bench.handled)
    _row("open the sheet -> numbers shown", open_ms, open_floor, "", open_handled)
    for name, ours in (("keystroke after Enter waits (background)", waits),
                       ("keystroke after Enter waits (GUI thread)", waits_inline)):
        print(f"{name:<44}{_median_ms(ours):>9.2f} ms {max(ours) * 1e3:>9.2f} ms")
    print("event: how long the gesture's own event took to handle (input waits that long); the "
          "rest of the time to the numbers, the analysis ran in the background")
    os._exit(0)  # no teardown: closing would ask about the unsaved sheet, and Qt objects
    # torn down by the interpreter at exit can abort it


if __name__ == "__main__":
    sys.exit(main())
