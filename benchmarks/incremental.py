"""Engine benchmark: a move on the 502-part sheet of benchmarks/live_panel.py, answered by the
incremental path (the nets it touches joined again, the kept circuit updated) against the whole
path (the sheet extracted and the circuit built afresh).

The sheet: the generated RC ladder of live_panel.py (502 parts; a region of 401 parts at
1 kHz). The gestures, each a one-step move of a resistor inside the region:

* kept connections: R105 one grid step up, its two wires following with a bend each (as the
  move tool plans them), so no net changes and the kept circuit is the answer as it is;
* rewired: R105 one step up alone, so its pins leave their nets and three nets change.

Each is timed from the edited document to the region's analysis (connectivity, circuit,
analyse_region), and its connectivity-and-circuit part alone; then a region-membership change
(the region's last cell, R200 and C200, taken out and put back) to its analysis, with the
connectivity and circuit kept. All against a floor measured in the same run: the bare
engine.equivalent() of the region on the built circuit with the netlists it keeps forgotten.
Medians over alternating edits (there and back), in CPU time of the process.

Run from the repository root: ``python3 benchmarks/incremental.py [--repeats N]``. Figures go
to docs/performance.md ("Moves on a 500-part sheet").
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

from live_panel import CELL, PER_ROW, ROW, ladder_sheet  # the one generated sheet

from portcut.engine import equivalent
from portcut.engine.schematic import Document, Element, Wire, build_circuit, extract
from portcut.engine.schematic.connectivity import updated_circuit
from portcut.engine.schematic.reduction import analyse_region
from portcut.engine.solve.topology import forget_netlists

#: CPU time of this process: on a machine shared with other work it moves far less than
#: wall-clock time, which counts the time the process waits for a core.
_clock = time.process_time
MOVED = 105  # a resistor in row 4, well inside the region
FREQ = 1e3


def move_plans(doc: Document) -> dict[str, tuple[list[Element], list[Element]]]:
    """Each gesture's new elements and the ones they replace (to move back)."""
    row, col = divmod(MOVED - 1, PER_ROW)
    x, y = col * CELL, row * ROW
    r, left, right = doc[f"r{MOVED}"], doc[f"s{MOVED - 1}"], doc[f"s{MOVED}"]
    up = replace(r, at=(r.at[0], y - 1))  # pins (x, y - 1) and (x + 4, y - 1)
    kept = [up, Wire(left.id, ((x - 2, y), (x, y), (x, y - 1))),
            Wire(right.id, ((x + 4, y - 1), (x + 4, y), (x + CELL, y)))]
    return {"kept connections": (kept, [r, left, right]), "rewired": ([up], [r])}


def median_ms(times: list[float]) -> float:
    return statistics.median(times) * 1e3


def timed(doc: Document, plan: tuple[list[Element], list[Element]], repeats: int,
          step: Callable[[int], None]) -> list[float]:
    """Times of ``step`` after each move, alternating there and back."""
    out = []
    for i in range(repeats):
        with doc.batch():
            for e in plan[i % 2]:
                doc.replace(e)
        start = _clock()
        step(i)
        out.append(_clock() - start)
    return out


def main(argv: list[str] | None = None) -> int:
    args = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    args.add_argument("--repeats", type=int, default=40)
    repeats = args.parse_args(argv).repeats
    doc = ladder_sheet()
    conn = extract(doc)
    circuit = build_circuit(doc, conn, FREQ)
    analysis = analyse_region(doc, "reg", conn=conn, freq=FREQ, circuit=circuit)
    assert analysis.ok, analysis.message
    print(f"sheet: {len(doc.parts())} parts, {len(doc.wires())} wires; region of "
          f"{len(doc['reg'].members)} parts at 1 kHz; R{MOVED} moved one step")

    floor = []
    for _ in range(repeats):
        forget_netlists()
        start = _clock()
        equivalent(analysis.circuit, analysis.part_names, freq=FREQ)
        floor.append(_clock() - start)
    low = median_ms(floor)
    print(f"{'measure':<52}{'median':>10}{'ratio':>9}")
    print(f"{'floor: equivalent() of the region, netlists forgotten':<52}{low:>7.2f} ms")

    for gesture, plan in move_plans(doc).items():
        kept = {"conn": conn, "circuit": circuit}

        def incremental(_: int, analyse: bool, kept=kept) -> None:
            after = extract(doc, previous=kept["conn"])
            kept["circuit"] = updated_circuit(kept["circuit"], doc, kept["conn"], after, FREQ)
            kept["conn"] = after
            if analyse:
                analyse_region(doc, "reg", conn=after, freq=FREQ, circuit=kept["circuit"])

        def whole(_: int, analyse: bool) -> None:
            after = extract(doc)
            built = build_circuit(doc, after, FREQ)
            if analyse:
                analyse_region(doc, "reg", conn=after, freq=FREQ, circuit=built)

        for label, analyse in (("nets + circuit", False), ("-> analysed", True)):
            for path, step in (("incremental", incremental), ("whole", whole)):
                med = median_ms(timed(doc, plan, repeats, lambda i, s=step, a=analyse: s(i, a)))
                name = f"{gesture}, {path}: {label}"
                print(f"{name:<52}{med:>7.2f} ms {med / low:>7.1f}x")
        assert kept["circuit"] == build_circuit(doc, extract(doc), FREQ)  # the same answer

    # a region-membership change keeps the connectivity and the circuit; only the region's
    # own netlist, cut check and factorization are new (forgotten before each, as for a
    # region not analysed before)
    region = doc["reg"]
    members = (region.members - {f"r{MOVED + 95}", f"c{MOVED + 95}"}, region.members)
    conn = extract(doc)
    circuit = build_circuit(doc, conn, FREQ)
    times = []
    for i in range(repeats):
        doc.replace(replace(region, members=members[i % 2]))
        forget_netlists()
        start = _clock()
        assert analyse_region(doc, "reg", conn=conn, freq=FREQ, circuit=circuit).ok
        times.append(_clock() - start)
    med = median_ms(times)
    name = "region's last cell taken out and back: analysed"
    print(f"{name:<52}{med:>7.2f} ms {med / low:>7.1f}x")
    return 0


if __name__ == "__main__":
    sys.exit(main())
