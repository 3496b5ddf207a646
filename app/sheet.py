"""Where things touch on the sheet: an incremental index of pins, wire ends and wire segments.

Qt-free. The canvas keeps one up to date with every document Change (junction dots, what a moved
part drags along, pin hits); edit planning (app/editing.py) reads it. The joining rules are those
of engine.schematic.connectivity: a pin or a wire end joins every wire through its point (end,
bend or mid-segment); wires that merely cross stay apart; a Junction joins all through its point.
Points are integer grid units.
"""

from __future__ import annotations

from collections import Counter, defaultdict
from collections.abc import Iterable, Iterator
from itertools import pairwise

from portcut.engine.schematic import Block, Element, Junction, NetLabel, PlacedPart, Wire
from portcut.engine.schematic.symbols import Point, pin_positions

__all__ = ["SheetIndex", "element_pins", "segments"]

#: Length (grid units) of the stretches of a row or column that segments are filed under, so
#: a point looks only at the segments near it.
_BUCKET = 16


def element_pins(element: Element) -> tuple[Point, ...]:
    """Sheet positions of an element's pins (engine.schematic.symbols.PINS order); () for wires
    etc."""
    if isinstance(element, PlacedPart):
        return pin_positions(element.kind, element.at, element.rotation, element.mirror)
    if isinstance(element, Block):
        return pin_positions("block", element.at, element.rotation, element.mirror)
    if isinstance(element, NetLabel):
        kind = "ground" if element.style == "ground" else "label"
        return pin_positions(kind, element.at, element.rotation)
    return ()


def segments(points: Iterable[Point]) -> Iterator[tuple[Point, Point]]:
    """Consecutive point pairs of a polyline."""
    return pairwise(points)


class SheetIndex:
    """Pins, wire ends, junctions and wire segments of a document, by grid point.

    "Points of interest" are pins, wire ends and junctions: the only places where anything
    joins. Rows and columns of them are kept so that a segment finds what lies on it without
    visiting the whole sheet.
    """

    def __init__(self, elements: Iterable[Element] = ()) -> None:
        self._pins: dict[Point, set[tuple[str, int]]] = defaultdict(set)
        self._ends: dict[Point, Counter[str]] = defaultdict(Counter)
        self._junctions: dict[Point, set[str]] = defaultdict(set)
        # segments by (axis, line, bucket of _BUCKET units along it): (lo, hi, wire id)
        self._segments: dict[tuple[str, int, int], list[tuple[int, int, str]]] = \
            defaultdict(list)
        self._poi_rows: dict[int, Counter[int]] = defaultdict(Counter)
        self._poi_cols: dict[int, Counter[int]] = defaultdict(Counter)
        self._elements: dict[str, Element] = {}
        for element in elements:
            self.add(element)

    # -- upkeep -------------------------------------------------------------------------------
    def add(self, element: Element) -> None:
        """Index an element whose id is not in the index yet."""
        self._elements[element.id] = element
        self._update(element, +1)

    def remove(self, element_id: str) -> Element:
        """Forget an element; returns the version that was indexed."""
        element = self._elements.pop(element_id)
        self._update(element, -1)
        return element

    def points_of_interest(self) -> set[Point]:
        """Every pin, wire end and junction point."""
        return {(x, y) for y, xs in self._poi_rows.items() for x in xs}

    def _update(self, element: Element, sign: int) -> None:
        for i, p in enumerate(element_pins(element)):
            self._change(self._pins, p, (element.id, i), sign)
        if isinstance(element, Junction):
            self._change(self._junctions, element.at, element.id, sign)
        if isinstance(element, Wire):
            self._update_wire(element, sign)

    def _update_wire(self, wire: Wire, sign: int) -> None:
        if len(set(wire.points)) < 2:
            return  # a zero-length wire joins nothing new (the SVG writer's dots agree)
        for end in (wire.points[0], wire.points[-1]):
            self._ends[end][wire.id] += sign
            if self._ends[end][wire.id] <= 0:
                del self._ends[end][wire.id]
                if not self._ends[end]:
                    del self._ends[end]
            self._count_poi(end, sign)
        for (x0, y0), (x1, y1) in segments(wire.points):
            axis, line, lo, hi = (("h", y0, min(x0, x1), max(x0, x1)) if y0 == y1
                                  else ("v", x0, min(y0, y1), max(y0, y1)))
            for bucket in range(lo // _BUCKET, hi // _BUCKET + 1):
                key = (axis, line, bucket)
                if sign > 0:
                    self._segments[key].append((lo, hi, wire.id))
                else:
                    self._segments[key].remove((lo, hi, wire.id))
                    if not self._segments[key]:
                        del self._segments[key]

    def _change(self, table: dict[Point, set], p: Point, key: object, sign: int) -> None:
        if sign > 0:
            table[p].add(key)
        else:
            table[p].discard(key)
            if not table[p]:
                del table[p]
        self._count_poi(p, sign)

    def _count_poi(self, p: Point, sign: int) -> None:
        x, y = p
        for table, line, at in ((self._poi_rows, y, x), (self._poi_cols, x, y)):
            table[line][at] += sign
            if table[line][at] <= 0:
                del table[line][at]
                if not table[line]:
                    del table[line]

    # -- queries ------------------------------------------------------------------------------
    def pins_at(self, p: Point) -> set[tuple[str, int]]:
        """(element id, pin index) of every pin at ``p``."""
        return set(self._pins.get(p, ()))

    def junction_at(self, p: Point) -> bool:
        return p in self._junctions

    def wires_through(self, p: Point) -> set[str]:
        """Ids of the wires that have ``p`` on one of their segments (ends and bends included)."""
        x, y = p
        found = {wid for lo, hi, wid in self._segments.get(("h", y, x // _BUCKET), ())
                 if lo <= x <= hi}
        found.update(wid for lo, hi, wid in self._segments.get(("v", x, y // _BUCKET), ())
                     if lo <= y <= hi)
        return found

    def legs(self, p: Point) -> int:
        """Conductors leaving ``p``: one per pin and per wire end there, two per wire that
        passes through it."""
        ends = self._ends.get(p, {})
        passing = sum(ends.get(wid, 0) or 2 for wid in self.wires_through(p))
        return passing + len(self._pins.get(p, ()))

    def is_dot(self, p: Point) -> bool:
        """A computed junction dot: at least three conductors meet at ``p`` and one of them ends
        there (crossing wires do not join). Explicit Junction elements draw their own dot."""
        if p in self._junctions or not (p in self._ends or p in self._pins):
            return False
        return self.legs(p) >= 3

    def points_on(self, wire: Wire) -> set[Point]:
        """Every point of interest (pin, wire end, junction) on the wire's segments."""
        found: set[Point] = set()
        for (x0, y0), (x1, y1) in segments(wire.points):
            if y0 == y1:
                lo, hi = sorted((x0, x1))
                found.update((x, y0) for x in self._poi_rows.get(y0, {}) if lo <= x <= hi)
            else:
                lo, hi = sorted((y0, y1))
                found.update((x0, y) for y in self._poi_cols.get(x0, {}) if lo <= y <= hi)
        return found

    def touch_points(self, element: Element) -> set[Point]:
        """Points whose junction dot may change when ``element`` is added or removed."""
        points = set(element_pins(element))
        if isinstance(element, Junction):
            points.add(element.at)
        if isinstance(element, Wire):
            points |= self.points_on(element)
            points.update((element.points[0], element.points[-1]))
        return points

    def joined_at(self, p: Point, exclude: frozenset[str] = frozenset()) -> set[str]:
        """Ids of the elements (parts, labels, blocks, wires, junctions) joined at ``p``,
        leaving out ``exclude``. A wire that only passes through ``p`` is joined there when
        something else ends or sits at ``p``."""
        ids = {eid for eid, _ in self._pins.get(p, ())}
        ids.update(self._ends.get(p, {}))
        ids.update(self._junctions.get(p, ()))
        ids.update(self.wires_through(p))
        return ids - exclude

    def wires_ending_at(self, points: Iterable[Point]) -> set[str]:
        """Ids of the wires with an end at any of ``points``."""
        return {wid for p in points for wid in self._ends.get(p, {})}

    def pin_near(self, x: float, y: float, radius: float) -> Point | None:
        """The pin point nearest to (x, y) within ``radius`` grid units, or None."""
        best: tuple[float, Point] | None = None
        r = int(radius) + 1
        cx, cy = round(x), round(y)
        for px in range(cx - r, cx + r + 1):
            for py in range(cy - r, cy + r + 1):
                if (px, py) in self._pins:
                    d = ((px - x) ** 2 + (py - y) ** 2) ** 0.5
                    if d <= radius and (best is None or d < best[0]):
                        best = (d, (px, py))
        return None if best is None else best[1]

    def is_connection(self, p: Point) -> bool:
        """Whether anything can join at ``p``: a pin, a wire end or a junction sits there."""
        return p in self._pins or p in self._ends or p in self._junctions
