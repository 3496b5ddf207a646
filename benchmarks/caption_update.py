"""Caption placement benchmark: what ``Placement.update`` costs the GUI thread after one edit on
the 502-part sheet of benchmarks/live_panel.py.

The canvas scene calls ``Placement.update`` synchronously for every document change, so its
time is spent inside the edit. Two gestures, applied through the app's own undo commands (one
``doc.batch()`` per step, as the window does) with ``update`` called from a document listener
with the ids the scene passes:

* a value edit of R200, "1k" <-> "2k2" (the caption text changes, nothing fixed moves);
* a one-step move of C100, right then left (the arrow-key nudge: the move tool's plan, with the
  link wires it lays to keep C100 joined, merged with the next nudge as the undo stack does).

Each gesture's time is the sum of ``update`` over the changes it sends. Floor, measured in the
same run: one ``Placement.of`` of the whole sheet divided by its number of parts, the cost of
placing one part's captions when a sheet is placed at once. Medians, in CPU time of the
process (the host is shared). Every result is checked against ``Placement.of`` of the edited
document.

Run from the repository root: ``python3 benchmarks/caption_update.py [--edits N]``. Figures go
to docs/performance.md ("Caption update").
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from dataclasses import replace
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from live_panel import ladder_sheet  # the one generated sheet
from PySide6.QtGui import QUndoStack

from portcut.app.commands import MoveElements, ReplaceElements
from portcut.app.editing import RigidMap, plan_placement
from portcut.app.sheet import SheetIndex
from portcut.engine.schematic import Change, Document
from portcut.engine.schematic.placement import Placement

_clock = time.process_time


class Timed:
    """A placement kept up to date by a document listener, timing each ``update``."""

    def __init__(self, doc: Document) -> None:
        self.doc = doc
        self.placement = Placement.of(doc)
        self.spent = 0.0
        self.recaptioned = 0
        doc.subscribe(self._on_change)

    def _on_change(self, change: Change) -> None:
        ids = (*change.removed, *change.updated, *change.added)
        start = _clock()
        self.recaptioned += len(self.placement.update(self.doc, ids))
        self.spent += _clock() - start

    def gesture(self, act) -> float:
        """Seconds ``update`` took over the changes ``act()`` sent."""
        self.spent = 0.0
        act()
        assert self.placement.captions == Placement.of(self.doc).captions, "update differs"
        return self.spent


def floor(doc: Document, repeats: int) -> float:
    """Seconds one part's captions cost in ``Placement.of`` of the whole sheet (median)."""
    times = []
    for _ in range(repeats):
        start = _clock()
        Placement.of(doc)
        times.append(_clock() - start)
    return statistics.median(times) / len(doc.parts())


def value_edits(timed: Timed, stack: QUndoStack, times: int) -> list[float]:
    doc = timed.doc
    part = doc.by_designator("R200")
    out = []
    for i in range(times):
        new = replace(doc[part.id], value="2k2" if i % 2 == 0 else "1k")
        out.append(timed.gesture(lambda new=new: stack.push(
            ReplaceElements(doc, [new], "Set value"))))
    return out


def moves(timed: Timed, stack: QUndoStack, times: int) -> list[float]:
    doc = timed.doc
    part = doc.by_designator("C100")
    out = []
    for i in range(times):
        plan = plan_placement(doc, SheetIndex(doc), [part.id],
                              RigidMap(offset=(1, 0) if i % 2 == 0 else (-1, 0)))
        out.append(timed.gesture(lambda plan=plan: stack.push(
            MoveElements(doc, [part.id], plan, "Move C100"))))
    return out


def main(argv: list[str] | None = None) -> int:
    args = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    args.add_argument("--edits", type=int, default=20, help="repetitions of each gesture")
    opts = args.parse_args(argv)
    doc = ladder_sheet()
    per_part = floor(doc, 5)
    timed = Timed(doc)
    stack = QUndoStack()
    rows = []
    for name, run in (("value edit of R200", value_edits), ("one-step move of C100", moves)):
        timed.recaptioned = 0
        spent = statistics.median(run(timed, stack, opts.edits))
        rows.append((name, spent, timed.recaptioned / opts.edits))
    print(f"sheet: {len(doc.parts())} parts; floor: Placement.of per part "
          f"{per_part * 1e6:.1f} us")
    print(f"{'gesture':24} {'update':>9} {'ratio':>7} {'parts changed':>14}")
    for name, spent, recaptioned in rows:
        print(f"{name:24} {spent * 1e3:6.3f} ms {spent / per_part:6.1f}x {recaptioned:14.1f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
