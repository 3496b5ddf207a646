"""Where a collapsed block goes and how its two leads reach the sheet, clear of everything drawn.

The sheet is read as the SVG writer and the canvas draw it: every symbol's body
(engine.schematic.symbols.placed_bounds), every caption's box
(engine.schematic.symbols.text_bounds at the symbol's anchors) and every grid point a wire or
pin of each net occupies. :class:`Obstacles` holds that
picture; :func:`place_block` finds the free spot nearest to where the region stood for the
block with its captions; :func:`route` finds an orthogonal lead on the integer grid by A*
search (unit steps, a penalty per bend), never through a body, a caption, a point of another
net or a point of its own net other than its targets; :func:`place_marker` puts a ground or net
label on a lead, or at the end of a short stub, with its body and name clear of everything.

Clearances are in grid units: a box keeps :data:`CLEAR` from every grid point a lead may use,
so a lead never touches a box, and since every box so grown spans a grid point in both
directions, testing points is enough to keep a whole lead segment out of it.
"""

from __future__ import annotations

import heapq
import math
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, field
from itertools import count, pairwise

from ..errors import CircuitError
from .captions import block_caption, drawn_form, value_caption
from .connectivity import Connectivity, block_equivalent
from .document import Document
from .model import Block, NetLabel, PlacedPart
from .symbols import (
    FONT_SIZE,
    MARK_FONT_SIZE,
    MARK_TEXT,
    Bounds,
    Point,
    TextAnchor,
    pin_positions,
    place,
    placed_bounds,
    shape_bounds,
    symbol,
    text_bounds,
)

__all__ = ["CLEAR", "Obstacles", "block_boxes", "corners", "element_boxes", "grid_walk", "grown",
           "marker_body", "place_block", "place_marker", "route", "union"]

#: Room kept between a lead's grid points and any body or caption box, grid units.
CLEAR = 0.5
#: Extra cost of a bend, in grid steps: a lead takes a few more steps to save a corner.
BEND = 3
#: How far (grid units) beyond the drawing a lead may wander to get round things.
MARGIN = 6
#: How far (grid units, in each axis) from where the region stood the block may move to find
#: room inside the region's outline, and how far to find any room at all.
REACH = 16
FAR_REACH = 32
#: How much further (grid units) than the nearest free spot outside the outline a better
#: placed one may lie.
SLACK = 8


def union(boxes: Iterable[Bounds]) -> Bounds:
    boxes = list(boxes)
    return (min(b[0] for b in boxes), min(b[1] for b in boxes),
            max(b[2] for b in boxes), max(b[3] for b in boxes))


def grown(box: Bounds, by: float) -> Bounds:
    return (box[0] - by, box[1] - by, box[2] + by, box[3] + by)


def _holds(box: Bounds, pt: tuple[float, float]) -> bool:
    return box[0] <= pt[0] <= box[2] and box[1] <= pt[1] <= box[3]


def _meet(a: Bounds, b: Bounds) -> bool:
    return a[0] <= b[2] and b[0] <= a[2] and a[1] <= b[3] and b[1] <= a[3]


def grid_walk(points: Iterable[Point]) -> list[Point]:
    """Every grid point along an orthogonal polyline, in order."""
    points = list(points)
    walk: list[Point] = points[:1]
    for (x0, y0), (x1, y1) in pairwise(points):
        steps = max(abs(x1 - x0), abs(y1 - y0))
        sx, sy = (x1 > x0) - (x1 < x0), (y1 > y0) - (y1 < y0)
        walk.extend((x0 + sx * i, y0 + sy * i) for i in range(1, steps + 1))
    return walk


def _text_boxes(anchors: Iterable[TextAnchor], texts: dict[str, list[str]], at: Point,
                rotation: int, mirror: bool) -> list[Bounds]:
    boxes = []
    for anchor in anchors:
        lines = [MARK_TEXT[anchor.role]] if anchor.role in MARK_TEXT else texts.get(anchor.role)
        if not lines:
            continue
        placed = place(anchor, at, rotation, mirror)
        size = MARK_FONT_SIZE if anchor.role in MARK_TEXT else FONT_SIZE
        boxes.append(text_bounds(placed.at, placed.align, lines, size))
    return boxes


def block_boxes(at: Point, form: str, caption: Iterable[str], designator: str,
                style: str = "iec", rotation: int = 0, mirror: bool = False) -> list[Bounds]:
    """The block's body (frame and port leads) and the boxes of its designator, values and
    polarity marks, for the value lines ``caption``."""
    sym = symbol("block", style, form)
    texts = {"designator": [designator], "value": list(caption)}
    return [placed_bounds("block", at, rotation, mirror, style=style, form=form),
            *_text_boxes(sym.anchors, texts, at, rotation, mirror)]


def element_boxes(element: PlacedPart | NetLabel, style: str = "iec",
                  ac: bool = False) -> list[Bounds]:
    """A part's or net marker's body and the boxes of its texts."""
    if isinstance(element, NetLabel):
        kind = "ground" if element.style == "ground" else "label"
        rotation, mirror, texts = element.rotation, False, {"name": [element.name]}
    else:
        kind, rotation, mirror = element.kind, element.rotation, element.mirror
        texts = {"designator": [element.designator],
                 "value": [value_caption(element, ac=ac)]}
    sym = symbol(kind, style)
    body = placed_bounds(kind, element.at, rotation, mirror, style=style)
    return [body, *_text_boxes(sym.anchors, texts, element.at, rotation, mirror)]


def marker_body(style: str, at: Point, rotation: int, name: str) -> Bounds:
    """A ground (``style`` "ground") or net label at ``at`` without its lead: the part that
    must stay clear of every wire, its own included."""
    kind = "ground" if style == "ground" else "label"
    sym = symbol(kind)
    boxes = [shape_bounds(place(s, at, rotation)) for s in sym.shapes[1:]]
    if kind == "label":
        boxes += _text_boxes(sym.anchors, {"name": [name]}, at, rotation, False)
    return union(boxes)


@dataclass
class Obstacles:
    """What a lead must keep clear of: ``boxes`` (bodies and captions) and ``taken``, the nets
    on each occupied grid point."""

    boxes: list[Bounds] = field(default_factory=list)
    taken: dict[Point, set[str]] = field(default_factory=dict)
    _wall_cache: tuple = field(default=(), repr=False, compare=False)

    @classmethod
    def of(cls, doc: Document, conn: Connectivity, *, style: str = "iec",
           freq: float = 0.0) -> Obstacles:
        """The drawing of ``doc``, its captions as they read at ``freq`` hertz."""
        # the captions where the drawing puts them (placement reads the document package,
        # which holds this module, so it is imported when first needed)
        from .placement import Placement

        placement = Placement.of(doc, style, ac=freq > 0)
        found = cls()
        for element in doc:
            if isinstance(element, PlacedPart):
                found.boxes.append(placed_bounds(element.kind, element.at, element.rotation,
                                                 element.mirror, style=style))
                found.boxes += [c.box for c in placement.captions[element.id].values()]
            elif isinstance(element, NetLabel):
                found.boxes += element_boxes(element, style, freq > 0)
            elif isinstance(element, Block):
                found.boxes += _drawn_block(element, style, freq)
        for key, net in conn.net_of_pin.items():
            element = doc[key[0]]
            if isinstance(element, PlacedPart | Block | NetLabel):
                found.occupy([_pin(doc, key)], net)
        for wire in doc.wires():
            found.occupy(grid_walk(wire.points), conn.net_of_wire[wire.id])
        return found

    def occupy(self, points: Iterable[Point], net: str) -> None:
        for pt in points:
            self.taken.setdefault(pt, set()).add(net)

    def extent(self) -> Bounds:
        points = [(x, y, x, y) for x, y in self.taken]
        return union([*self.boxes, *points] or [(0, 0, 0, 0)])

    def free(self, box: Bounds, by: float = CLEAR) -> bool:
        """Is ``box`` clear of every box and occupied point, by ``by``?"""
        room = grown(box, by)
        return (not any(_meet(room, b) for b in self.boxes)
                and not any(_holds(room, pt) for pt in self._points_near(room)))

    def _points_near(self, box: Bounds) -> Iterator[Point]:
        x0, y0, x1, y1 = (round(v) for v in box)
        if (x1 - x0 + 1) * (y1 - y0 + 1) > len(self.taken):
            yield from self.taken
            return
        for x in range(x0 - 1, x1 + 2):
            for y in range(y0 - 1, y1 + 2):
                if (x, y) in self.taken:
                    yield (x, y)

    def blocked(self, pt: Point, targets: frozenset[Point], boxes: bool = True) -> bool:
        """May a lead not pass through ``pt``: an occupied point, or (with ``boxes``) one
        within :data:`CLEAR` of a box? Targets are always open."""
        if pt in targets:
            return False
        if pt in self.taken:
            return True
        return boxes and pt in self._walls()

    def _walls(self) -> set[Point]:
        """Grid points within :data:`CLEAR` of a box, worked out again when boxes are added."""
        if len(self._wall_cache) != 2 or self._wall_cache[0] != len(self.boxes):
            walls: set[Point] = set()
            for box in self.boxes:
                x0, y0, x1, y1 = grown(box, CLEAR)
                walls.update((x, y) for x in range(math.ceil(x0), math.floor(x1) + 1)
                             for y in range(math.ceil(y0), math.floor(y1) + 1))
            self._wall_cache = (len(self.boxes), walls)
        return self._wall_cache[1]


def _drawn_block(block: Block, style: str, freq: float) -> list[Bounds]:
    """A block already on the sheet, with the caption it shows (or the reason it has none)."""
    try:
        eq = block_equivalent(block, freq)
    except CircuitError as exc:
        form, caption = block.form, ("no equivalent:", str(exc))
    else:
        form = drawn_form(eq, block.form)
        caption = block_caption(eq, form, freq)
    return block_boxes(block.at, form, caption, block.designator, style, block.rotation,
                       block.mirror)


def _pin(doc: Document, key: tuple[str, int]) -> Point:
    element = doc[key[0]]
    if isinstance(element, NetLabel):
        return element.at
    kind = "block" if isinstance(element, Block) else element.kind
    return pin_positions(kind, element.at, element.rotation, element.mirror)[key[1]]


def place_block(obstacles: Obstacles, centre: Point, boxes_at, area: Bounds) -> Point:
    """The grid point nearest to ``centre`` where the block's boxes (``boxes_at(point)``) are
    free and lie inside ``area``, searched out to :data:`REACH`; else a free spot outside it,
    searched outward ring by ring to :data:`FAR_REACH` (:func:`_outside_choice` picks among
    the nearest); ``centre`` itself when no spot is free (the block then overlaps what crowds
    it, rather than not collapsing)."""
    reach = union([grown(b, FAR_REACH + 1.0) for b in boxes_at(centre)])
    obstacles = Obstacles([b for b in obstacles.boxes if _meet(b, reach)],
                          {p: n for p, n in obstacles.taken.items() if _holds(reach, p)})
    outside: list[tuple[int, Point]] = []
    for distance, spot in _rings(centre, FAR_REACH):
        if outside and distance > max(2 * REACH, outside[0][0] + SLACK):
            break  # no spot inside is left to find, nor a better one outside
        boxes = boxes_at(spot)
        if not all(obstacles.free(b, 1.0) for b in boxes):
            continue
        near = max(abs(spot[0] - centre[0]), abs(spot[1] - centre[1])) <= REACH
        if near and all(_meet(b, area) and _holds(area, b[:2]) and _holds(area, b[2:])
                        for b in boxes):
            return spot
        outside.append((distance, spot))
    if not outside:
        return centre
    return _outside_choice([(d, p) for d, p in outside if d <= outside[0][0] + SLACK], area)


def _rings(centre: Point, reach: int) -> Iterator[tuple[int, Point]]:
    """Grid points by Manhattan distance from ``centre`` out to ``reach`` in both axes, each
    ring in (x, y) order, with their distances."""
    cx, cy = centre
    for d in range(2 * reach + 1):
        ring = sorted({(cx + dx, cy + sy * (d - abs(dx))) for dx in range(-d, d + 1)
                       for sy in (-1, 1) if abs(dx) <= reach and d - abs(dx) <= reach})
        for spot in ring:
            yield d, spot


def _outside_choice(spots: list[tuple[int, Point]], area: Bounds) -> Point:
    """Of the free ``spots`` outside the region (with their distances), the nearest from
    which the plus lead, laid first, need not pass the minus pin's way out to reach the
    region: a spot where the region lies beyond the minus pin, seen from the plus pin, comes
    after the others."""
    ax, ay = (area[0] + area[2]) / 2, (area[1] + area[3]) / 2

    def passes(spot: Point) -> bool:
        (px, py), (mx, my) = pin_positions("block", spot)
        ux, uy = mx - px, my - py
        return (ax - px) * ux + (ay - py) * uy > ux * ux + uy * uy

    return min(spots, key=lambda found: (passes(found[1]), found[0], found[1]))[1]


_STEPS = ((1, 0), (-1, 0), (0, 1), (0, -1))


def route(sources: Iterable[Point], targets: Iterable[Point], blocked, area: Bounds
          ) -> tuple[Point, ...] | None:
    """The cheapest orthogonal grid path from any of ``sources`` to any of ``targets`` through
    points where ``blocked(point)`` is False, inside ``area``: a step costs 1 and a bend
    :data:`BEND` more. Returned as its corner points (source first), or None."""
    goals = frozenset(targets)
    if not goals:
        return None
    x0, y0, x1, y1 = area

    def guess(p: Point) -> int:
        return min(abs(p[0] - g[0]) + abs(p[1] - g[1]) for g in goals)

    tie = count()
    heap = [(guess(s), next(tie), 0, s, None) for s in set(sources)]
    heapq.heapify(heap)
    came: dict[tuple[Point, tuple[int, int] | None], tuple[Point, tuple[int, int] | None] | None]
    came = {(s, None): None for _, _, _, s, _ in heap}
    best: dict[tuple[Point, tuple[int, int] | None], int] = {k: 0 for k in came}
    while heap:
        _, _, cost, pt, heading = heapq.heappop(heap)
        if pt in goals:
            return corners(_walk_back(came, (pt, heading)))
        if cost > best.get((pt, heading), cost):
            continue
        for step in _STEPS:
            nxt = (pt[0] + step[0], pt[1] + step[1])
            if not (x0 <= nxt[0] <= x1 and y0 <= nxt[1] <= y1) or blocked(nxt):
                continue
            extra = 1 + (BEND if heading is not None and step != heading else 0)
            key = (nxt, step)
            if cost + extra < best.get(key, 1 << 30):
                best[key] = cost + extra
                came[key] = (pt, heading)
                heapq.heappush(heap, (cost + extra + guess(nxt), next(tie), cost + extra,
                                      nxt, step))
    return None


def _walk_back(came, key) -> list[Point]:
    path = []
    while key is not None:
        path.append(key[0])
        key = came[key]
    return path[::-1]


def corners(path: list[Point]) -> tuple[Point, ...]:
    """The corner points of a path given point by point (its ends included)."""
    out = path[:1]
    for a, b, c in zip(path, path[1:], path[2:], strict=False):
        if (b[0] - a[0], b[1] - a[1]) != (c[0] - b[0], c[1] - b[1]):
            out.append(b)
    if len(path) > 1:
        out.append(path[-1])
    return tuple(out)


def place_marker(obstacles: Obstacles, style: str, name: str, pin: Point,
                 along: list[Point], keep_out: Bounds
                 ) -> tuple[NetLabel, tuple[Point, ...]] | None:
    """A ground or label named ``name`` (``style`` "ground" or "label") at one of the grid
    points ``along`` the pin's leads, or at the end of a short straight stub out of ``pin``
    (to the right first, then down, left and up); its body and name clear of every box, every
    occupied point (the leads' included) and the block's ``keep_out``. Returns the marker (id
    left empty) and the stub's points (empty when it sits on a lead), or None."""
    turns = (0,) if style == "ground" else (0, 270, 90, 180)
    for at, stub in _marker_spots(obstacles, pin, along, keep_out):
        for turn in turns:
            body = marker_body(style, at, turn, name)
            if obstacles.free(body, 0.3) and not _meet(grown(body, 0.3), keep_out):
                return NetLabel("", name, at, turn, style), stub
    return None


#: Directions a marker's stub may leave its pin in, most wanted first, and its longest length.
_STUB_WAYS = ((1, 0), (0, 1), (-1, 0), (0, -1))
STUB = 6


def _marker_spots(obstacles: Obstacles, pin: Point, along: list[Point], keep_out: Bounds
                  ) -> Iterator[tuple[Point, tuple[Point, ...]]]:
    """Where a marker of ``pin``'s net may sit: the points of its leads, then the ends of
    straight stubs out of the pin that cross nothing taken and stay out of ``keep_out``."""
    for pt in along:
        if pt != pin and not _holds(keep_out, pt):
            yield pt, ()
    for dx, dy in _STUB_WAYS:
        for k in range(1, STUB + 1):
            end = (pin[0] + dx * k, pin[1] + dy * k)
            if obstacles.blocked(end, frozenset()) or _holds(keep_out, end):
                break  # a longer stub this way would cross it too
            yield end, (pin, end)
