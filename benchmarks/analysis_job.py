"""Engine benchmark: one live analysis job (app.analyser.Analyser.analyse) on the 502-part sheet
of benchmarks/live_panel.py, after each kind of edit a user makes there, against the bare
engine call.

The sheet: the generated RC ladder of live_panel.py (502 parts; region "reg" of 401 parts at
1 kHz). The edits, 20 of each by default, alternating there and back:

* a value typed: R200 (inside the region, beside the port) between 1k and 2k2;
* a one-step move of C100 (inside the region) right and back, planned as the select tool plans
  an arrow-key nudge (app.editing.plan_placement): its top pin leaves R100's pin, so a link
  wire is laid to keep them joined, and taken away again on the way back (as merging the two
  nudges into one undo step leaves the sheet);
* the same for the load RL (outside the region), whose pins leave the ends of its two wires:
  two link wires.

Each job is handed a snapshot of the document, as the background worker is, with the reach the
live view gives it. Beside each job, the floor measured in the same run right after it: the
bare ``engine.equivalent()`` of the region on the circuit the job left, with the netlists the
engine keeps forgotten. Printed: the median job, the median floor and their ratio. Targets
(docs/performance.md, "Analysis job"): value edit <= 1.3x, move <= 2.5x. Times are CPU time of
the process (the machine is shared).

Run from the repository root: ``python3 benchmarks/analysis_job.py [--edits N]``.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from collections.abc import Callable
from dataclasses import replace
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from live_panel import ladder_sheet  # the one generated sheet

from portcut.app.analyser import EVERYTHING, Analyser, Job, Reach
from portcut.app.editing import RigidMap, plan_placement
from portcut.app.sheet import SheetIndex
from portcut.engine import equivalent
from portcut.engine.schematic import Document, build_circuit, extract
from portcut.engine.solve.topology import forget_netlists

_clock = time.process_time
FREQ = 1e3


def value_edit(doc: Document) -> Callable[[int], Reach]:
    """R200's value typed, alternately 2k2 and back to 1k."""
    part = doc.by_designator("R200")

    def edit(i: int) -> Reach:
        doc.replace(replace(part, value="2k2" if i % 2 == 0 else part.value))
        return Reach(values=frozenset({part.id}))
    return edit


def move(doc: Document, designator: str) -> Callable[[int], Reach]:
    """The part one grid step right as the select tool plans it (its wires following, links
    added), then back to the sheet as it was (the links taken out)."""
    part = doc.by_designator(designator)
    before: list = []
    added: list[str] = []

    def edit(i: int) -> Reach:
        with doc.batch():
            if i % 2 == 0:
                plan = plan_placement(doc, SheetIndex(doc), [part.id], RigidMap(offset=(1, 0)))
                before[:] = [doc[e.id] for e in plan if e.id in doc]
                added[:] = [e.id for e in plan if e.id not in doc]
                for e in plan:
                    (doc.replace if e.id in doc else doc.add)(e)
            else:
                for eid in added:
                    doc.remove(eid)
                for e in before:
                    doc.replace(e)
        return Reach(sheet=True)
    return edit


def run(analyser: Analyser, doc: Document, edit: Callable[[int], Reach], edits: int,
        generation: list[int]) -> tuple[float, float]:
    """Median seconds of the job after each edit, and of the floor measured right after it."""
    jobs, floors = [], []
    for i in range(edits):
        reach = edit(i)
        generation[0] += 1
        job = Job(generation[0], doc.snapshot(), "reg", reach)
        start = _clock()
        answer = analyser.analyse(job)
        jobs.append(_clock() - start)
        analysis = answer.analysis
        assert analysis is not None and analysis.ok, analysis
        forget_netlists()
        start = _clock()
        equivalent(analysis.circuit, set(analysis.part_names), freq=FREQ)
        floors.append(_clock() - start)
    # the kept state is the one a fresh extraction and build give
    assert answer.conn.net_of_pin == extract(doc).net_of_pin
    assert analysis.circuit == build_circuit(doc, extract(doc), FREQ)
    return statistics.median(jobs), statistics.median(floors)


def main(argv: list[str] | None = None) -> int:
    args = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    args.add_argument("--edits", type=int, default=20, help="jobs per kind of edit")
    edits = args.parse_args(argv).edits
    doc = ladder_sheet()
    analyser = Analyser()
    generation = [0]
    first = analyser.analyse(Job(0, doc.snapshot(), "reg", EVERYTHING)).analysis
    assert first is not None and first.ok, first
    print(f"sheet: {len(doc.parts())} parts, {len(doc.wires())} wires; region of "
          f"{len(doc['reg'].members)} parts at 1 kHz, port {first.equivalent.port}")
    print(f"{'job after':<44}{'job':>9}{'floor':>10}{'ratio':>8}  target")
    for name, edit, target in (
            ("value of R200 typed", value_edit(doc), "<= 1.3x"),
            ("C100 moved one step (inside)", move(doc, "C100"), "<= 2.5x"),
            ("RL moved one step (outside)", move(doc, "RL"), "<= 2.5x")):
        job, floor = run(analyser, doc, edit, edits, generation)
        print(f"{name:<44}{job * 1e3:>6.2f} ms{floor * 1e3:>7.2f} ms{job / floor:>7.2f}x  "
              f"{target}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
