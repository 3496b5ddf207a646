"""Where dots are drawn on a schematic: junction dots where three or more connections meet, and
the polarity dots of coupled inductors. Units: grid units, x right, y down."""

from __future__ import annotations

from bisect import bisect_left, bisect_right
from collections import Counter, defaultdict
from collections.abc import Iterable
from itertools import pairwise

from ..schematic.document import Document
from ..schematic.model import Block, NetLabel, PlacedPart
from ..schematic.symbols import pin_positions, symbol, transform

__all__ = ["coupling_dots", "junction_points"]


def junction_points(doc: Document) -> list[tuple[int, int]]:
    """Where a junction dot is drawn: every explicit Junction, and every pin or wire end at
    which three or more connections meet (a wire end counts one, a wire passing through or
    bending there counts two, a pin one). Crossings without a junction never get a dot, as
    they do not connect (engine.schematic.connectivity)."""
    count: Counter[tuple[int, int]] = Counter()
    # per row (y) of horizontal segments and per column (x) of vertical ones: their ends, sorted
    rows: dict[int, list[tuple[int, int]]] = defaultdict(list)
    columns: dict[int, list[tuple[int, int]]] = defaultdict(list)
    for wire in doc.wires():
        if len(set(wire.points)) < 2:  # a zero-length wire joins nothing new
            continue
        count[wire.points[0]] += 1
        count[wire.points[-1]] += 1
        for p in wire.points[1:-1]:
            count[p] += 2
        for (x0, y0), (x1, y1) in pairwise(wire.points):
            if y0 == y1 and x0 != x1:
                rows[y0].append((min(x0, x1), max(x0, x1)))
            elif x0 == x1 and y0 != y1:
                columns[x0].append((min(y0, y1), max(y0, y1)))
    for pin in _all_pins(doc):
        count[pin] += 1
    across, along = _Spans(rows), _Spans(columns)
    for (x, y) in list(count):
        count[x, y] += 2 * (across.inside(y, x) + along.inside(x, y))
    dots = {p for p, n in count.items() if n >= 3} | {j.at for j in doc.junctions()}
    return sorted(dots)


class _Spans:
    """Open segments grouped by the line they lie on, counted by bisection: the segments
    holding ``at`` strictly inside are those starting before it less those ending at or before
    it (a segment that ends before ``at`` also starts before it)."""

    def __init__(self, lines: dict[int, list[tuple[int, int]]]) -> None:
        self.starts = {k: sorted(lo for lo, _ in v) for k, v in lines.items()}
        self.ends = {k: sorted(hi for _, hi in v) for k, v in lines.items()}

    def inside(self, line: int, at: int) -> int:
        starts = self.starts.get(line)
        if starts is None:
            return 0
        return bisect_left(starts, at) - bisect_right(self.ends[line], at)


def _all_pins(doc: Document) -> Iterable[tuple[int, int]]:
    for e in doc:
        if isinstance(e, PlacedPart):
            yield from pin_positions(e.kind, e.at, e.rotation, e.mirror)
        elif isinstance(e, Block):
            yield from pin_positions("block", e.at, e.rotation, e.mirror)
        elif isinstance(e, NetLabel):
            yield from pin_positions("ground" if e.style == "ground" else "label", e.at,
                                     e.rotation)


def coupling_dots(doc: Document, style: str) -> list[tuple[float, float]]:
    """The dot at the first node of each inductor a coupling names (dot convention)."""
    parts = {p.designator: p for p in doc.parts()}
    named = {d for p in parts.values() if p.kind == "coupling" for d in p.couples}
    dots = []
    for designator in sorted(named):
        inductor = parts.get(designator)
        if inductor is None or inductor.kind != "inductor":
            continue
        anchor = symbol("inductor", style).anchor("dot")
        assert anchor is not None
        dx, dy = transform(anchor.at, inductor.rotation, inductor.mirror)
        dots.append((inductor.at[0] + dx, inductor.at[1] + dy))
    return dots
