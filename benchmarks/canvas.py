"""Desktop canvas benchmark on a generated schematic (2,000 parts by default).

Three figures, each printed beside a floor measured in the same run on the same machine:

* open: read the file text, build the scene (items, sheet index, junction dots), fit and paint
  the first frame — against building as many bare QGraphicsPathItems (one per part and per wire)
  in a plain scene and painting that with the same render hints;
* pan and zoom: the time of each repainted frame over a run of zoom and pan steps, median and
  worst — against the same steps on the bare-item scene;
* move one part: the undo command (wires follow), the scene update, the repaint, and the
  connectivity re-extraction the live analysis then runs (engine.schematic.connectivity.extract
  given the previous result) — against moving one bare item and repainting. A first extraction
  of the whole sheet (no previous result) is printed beside it;
* captions: placing every caption of the sheet (engine.schematic.placement, part of the open)
  against the bare open, and re-placing them after a move (part of the move) against the bare
  move.

Run from the repository root: ``python3 benchmarks/canvas.py [--parts N]`` (offscreen unless a
display is set). ``--count-placing N`` only places the sheet's captions N times, for counting
executed instructions, which host load cannot move (callgrind's "Collected" total over N)::

    valgrind --tool=callgrind --instr-atstart=no --collect-atstart=no \\
        --toggle-collect=map_next --callgrind-out-file=/dev/null \\
        .venv/bin/python benchmarks/canvas.py --count-placing 3
 Targets: open under 1 s; frames without stalls (worst under 50 ms); a move with
re-extraction under 16 ms (one frame at 60 Hz); placing the captions adds under 100 ms to the
open.
"""

from __future__ import annotations

import argparse
import os
import shutil
import statistics
import subprocess
import sys
import time
from collections.abc import Callable
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtCore import QRectF
from PySide6.QtGui import QPainter, QPainterPath
from PySide6.QtWidgets import (
    QApplication,
    QGraphicsPathItem,
    QGraphicsScene,
    QGraphicsView,
)

from portcut.app.canvas import Canvas, Look
from portcut.app.commands import MoveElements
from portcut.app.editing import RigidMap, plan_placement
from portcut.app.workbench import Workbench
from portcut.engine import GROUND
from portcut.engine.schematic import Document, NetLabel, PlacedPart, Wire
from portcut.engine.schematic.connectivity import extract
from portcut.engine.schematic.fileformat import dumps, loads
from portcut.engine.schematic.placement import Placement

VIEW_SIZE = (1400, 900)
CELL = 8   # grid units per ladder cell
ROW = 10   # grid units between ladder rows


def generated_sheet(parts: int, columns: int = 40) -> Document:
    """Rows of RC ladders: per cell a series resistor and a capacitor to the row's ground rail,
    joined by wires (the capacitor's wire tees into the series wire). Two parts per cell."""
    doc = Document(f"Generated {parts}-part ladder")
    rows = max(1, parts // (2 * columns))
    n = 0
    for r in range(rows):
        y = r * ROW
        doc.add(NetLabel(f"g{r}", GROUND, (0, y + 6), style="ground"))
        doc.add(Wire(f"rail{r}", ((0, y + 6), (columns * CELL, y + 6))))
        for c in range(columns):
            x = c * CELL
            n += 1
            doc.add(PlacedPart(f"r{n}", "resistor", f"R{n}", (x + 4, y), value="1k"))
            doc.add(PlacedPart(f"c{n}", "capacitor", f"C{n}", (x + 8, y + 4), rotation=90,
                               value="100n"))
            doc.add(Wire(f"s{n}", ((x + 6, y), (x + 10, y))))
            doc.add(Wire(f"t{n}", ((x + 8, y), (x + 8, y + 2))))
    return doc


def _timed(fn: Callable[[], object]) -> float:
    """CPU seconds this process spends on ``fn`` (painting included: Qt paints in this thread);
    steadier than wall time on a machine shared with other work."""
    start = time.process_time()
    fn()
    return time.process_time() - start


def _bare_scene(doc: Document) -> tuple[QGraphicsScene, QGraphicsView, list]:
    scene = QGraphicsScene()
    items = []
    for e in doc:
        path = QPainterPath()
        if isinstance(e, Wire):
            path.moveTo(e.points[0][0] * 20, e.points[0][1] * 20)
            for x, y in e.points[1:]:
                path.lineTo(x * 20, y * 20)
        else:
            x, y = e.at
            path.addRect(QRectF(x * 20 - 40, y * 20 - 10, 80, 20))
        item = QGraphicsPathItem(path)
        scene.addItem(item)
        items.append(item)
    view = QGraphicsView(scene)
    view.setRenderHints(QPainter.RenderHint.Antialiasing | QPainter.RenderHint.TextAntialiasing)
    view.resize(*VIEW_SIZE)
    view.show()
    view.fitInView(scene.itemsBoundingRect())
    view.viewport().repaint()
    return scene, view, items


def _frames(view: QGraphicsView, zoom: Callable[[float], None]) -> list[float]:
    """Repainted frame times over 20 zoom-in, 20 zoom-out and 40 pan steps."""
    times = []
    steps = ([lambda: zoom(1.15)] * 20 + [lambda: zoom(1 / 1.15)] * 20
             + [lambda: view.horizontalScrollBar().setValue(
                 view.horizontalScrollBar().value() + 60)] * 20
             + [lambda: view.verticalScrollBar().setValue(
                 view.verticalScrollBar().value() + 40)] * 20)
    for step in steps:
        times.append(_timed(lambda s=step: (s(), view.viewport().repaint())))
    return times


def _count_placing(sheet: Document, count: int) -> None:
    """Place ``sheet``'s captions ``count`` times with callgrind collecting (when it runs)."""
    for _ in range(2):  # warm: imports, first-call caches
        Placement.of(sheet)
    control = shutil.which("callgrind_control")
    if control:
        subprocess.run([control, "-i", "on", str(os.getpid())], capture_output=True,
                       check=False)
    list(map(lambda _: Placement.of(sheet), range(count)))  # collected inside map's calls


def main(argv: list[str] | None = None) -> int:
    args = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    args.add_argument("--parts", type=int, default=2000)
    args.add_argument("--repeat", type=int, default=3, help="best of N for the open figure")
    args.add_argument("--count-placing", type=int, default=0, metavar="N",
                      help="only place the captions N times (under callgrind: see above)")
    opts = args.parse_args(argv)
    if opts.count_placing:
        _count_placing(generated_sheet(opts.parts), opts.count_placing)
        return 0
    app = QApplication.instance() or QApplication([])
    sheet = generated_sheet(opts.parts)
    text = dumps(sheet)
    print(f"sheet: {len(sheet.parts())} parts, {len(sheet.wires())} wires, "
          f"{len(text) / 1e6:.1f} MB of file text")

    opens, floors = [], []
    workbench = canvas = None
    keep = []  # every scene and view made here lives to the end (Qt deletes items with scenes)
    for _ in range(opts.repeat):
        workbench = Workbench()
        canvas = Canvas(workbench, Look())
        canvas.view.resize(*VIEW_SIZE)
        canvas.view.show()

        def open_sheet(wb=workbench, cv=canvas) -> None:
            wb.replace_document(loads(text), None)
            cv.view.viewport().repaint()

        opens.append(_timed(open_sheet))
        floors.append(_timed(lambda: keep.append(_bare_scene(sheet))))
        keep.append((workbench, canvas))
    _, floor_view, floor_items = _bare_scene(sheet)
    app.processEvents()

    view = canvas.view
    view.fit()
    frames = _frames(view, view.zoom_by)
    floor_frames = _frames(floor_view, lambda f: floor_view.scale(f, f))

    doc = workbench.doc
    part = doc.by_designator(f"R{len(doc.parts()) // 4}")
    view.centerOn(canvas.scene.item(part.id))
    view.zoom_by(4 / view.zoom())
    app.processEvents()
    canvas_ms, extract_ms, full_ms, floor_ms = [], [], [], []
    conn = extract(doc)
    for i in range(40):
        step = (1, 0) if i % 2 == 0 else (-1, 0)

        def move(step=step) -> None:
            plan = plan_placement(doc, canvas.scene.index, [part.id], RigidMap(offset=step))
            workbench.push(MoveElements(doc, [part.id], plan, "Move"))
            app.processEvents()  # the repaint of what changed

        def re_extract() -> None:
            nonlocal conn
            conn = extract(doc, previous=conn)  # as the live analysis does after an edit

        canvas_ms.append(_timed(move) * 1e3)
        extract_ms.append(_timed(re_extract) * 1e3)
        full_ms.append(_timed(lambda: extract(doc)) * 1e3)
        item = floor_items[0]
        floor_ms.append(_timed(lambda it=item, s=step: (
            it.setPos(it.pos().x() + 20 * s[0], it.pos().y()), app.processEvents())) * 1e3)
    total = [a + b for a, b in zip(canvas_ms, extract_ms, strict=True)]
    placing_ms = min(_timed(lambda: Placement.of(doc)) for _ in range(opts.repeat)) * 1e3
    placement = Placement.of(doc)
    replacing_ms = []
    for i in range(40):
        step = 1 if i % 2 == 0 else -1
        doc.replace_fields(part.id, at=(part.at[0] + (step > 0), part.at[1]))
        replacing_ms.append(_timed(lambda: placement.update(doc, [part.id])) * 1e3)

    def row(name: str, ours: float, floor: float, unit: str, target: str) -> None:
        print(f"{name:<38}{ours:>10.2f} {unit:<3}{floor:>10.2f} {unit:<3}"
              f"{ours / floor:>8.1f}x   {target}")

    print(f"{'measure':<38}{'portcut':>14}{'floor':>13}{'ratio':>9}   target")
    row("open and first paint", min(opens), min(floors), "s", "< 1 s")
    med, worst = statistics.median(frames) * 1e3, max(frames) * 1e3
    row("pan/zoom frame, median", med, statistics.median(floor_frames) * 1e3, "ms", "")
    row("pan/zoom frame, worst", worst, max(floor_frames) * 1e3, "ms", "< 50 ms")
    row("move one part: edit + repaint", statistics.median(canvas_ms),
        statistics.median(floor_ms), "ms", "")
    row("move one part: + re-extraction", statistics.median(total),
        statistics.median(floor_ms), "ms", "< 16 ms")
    row("placing every caption (part of open)", placing_ms, min(floors) * 1e3, "ms",
        "< 100 ms")
    row("re-placing captions after a move", statistics.median(replacing_ms),
        statistics.median(floor_ms), "ms", "inside the 16 ms")
    print(f"  (re-extraction alone: median {statistics.median(extract_ms):.2f} ms; "
          f"a first extraction of the sheet: {statistics.median(full_ms):.2f} ms)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
