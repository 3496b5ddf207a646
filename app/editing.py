"""Edit planning: the new elements a gesture produces, computed without Qt.

A move, rotation or mirror is a :class:`RigidMap` applied to the chosen elements; wires attached
to them follow (the attached end moves and the wire bends to stay orthogonal), and a pin that
leaves something staying behind (a tap in the middle of a wire, a pin or junction that holds
the wire end) gets a new orthogonal link wire back to it, so no connection is lost. A delete
takes the wires left joining nothing with it. A paste gets fresh ids and designators.
app/commands.py wraps the results in undo commands; nothing here touches the document.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import dataclass, replace
from itertools import pairwise

from portcut.engine.schematic import (
    Block,
    Document,
    Element,
    Junction,
    NetLabel,
    PlacedPart,
    Region,
    Wire,
)
from portcut.engine.schematic.symbols import Point

from .sheet import SheetIndex, element_pins

__all__ = [
    "Deletion",
    "RigidMap",
    "anchor_points",
    "bend",
    "center_of",
    "link_route",
    "moved",
    "paste",
    "plan_delete",
    "plan_placement",
    "simplify",
]


@dataclass(frozen=True)
class RigidMap:
    """A map of the sheet onto itself: mirror x about ``center`` (if ``mirror``), then turn by
    ``turns`` quarter turns clockwise on screen about ``center``, then shift by ``offset``.
    Integer points map to integer points when ``center`` is an integer point."""

    offset: Point = (0, 0)
    turns: int = 0
    mirror: bool = False
    center: Point = (0, 0)

    def point(self, p: tuple[float, float]) -> tuple:
        cx, cy = self.center
        x, y = p[0] - cx, p[1] - cy
        if self.mirror:
            x = -x
        for _ in range(self.turns % 4):
            x, y = -y, x
        return (x + cx + self.offset[0], y + cy + self.offset[1])

    def orient(self, rotation: int, mirror: bool) -> tuple[int, bool]:
        """A placed symbol's rotation and mirror after the map (its mirror flips x first, then
        it turns clockwise: flipping the result turns it the other way)."""
        if self.mirror:
            rotation, mirror = -rotation, not mirror
        return (rotation + 90 * self.turns) % 360, mirror


def moved(element: Element, m: RigidMap) -> Element:
    """The element carried by ``m``."""
    if isinstance(element, PlacedPart | Block):
        rotation, mirror = m.orient(element.rotation, element.mirror)
        return replace(element, at=m.point(element.at), rotation=rotation, mirror=mirror)
    if isinstance(element, NetLabel):
        rotation = element.rotation
        if m.mirror:
            # markers have no mirror: a ground is symmetric about its lead, a label's tag
            # points the other way along its lead
            rotation = -rotation if element.style == "ground" else 180 - rotation
        return replace(element, at=m.point(element.at), rotation=(rotation + 90 * m.turns) % 360)
    if isinstance(element, Junction):
        return replace(element, at=m.point(element.at))
    if isinstance(element, Wire):
        return replace(element, points=tuple(m.point(p) for p in element.points))
    return replace(element, outline=tuple(m.point(p) for p in element.outline))


def anchor_points(element: Element) -> tuple[Point, ...]:
    """The grid points that stand for an element's place (pins, or its own point, or its wire
    points)."""
    if isinstance(element, Wire):
        return element.points
    if isinstance(element, Junction):
        return (element.at,)
    if isinstance(element, Region):
        return tuple((round(x), round(y)) for x, y in element.outline)
    return element_pins(element) or (element.at,)


def center_of(elements: Iterable[Element]) -> Point:
    """The grid point nearest the centre of the elements' anchor points (the pivot of a
    rotation or mirror)."""
    points = [p for e in elements for p in anchor_points(e)]
    xs = [p[0] for p in points]
    ys = [p[1] for p in points]
    return (round((min(xs) + max(xs)) / 2), round((min(ys) + max(ys)) / 2))


# -- orthogonal routing -------------------------------------------------------------------------
def bend(a: Point, b: Point, horizontal_first: bool) -> list[Point]:
    """Points after ``a`` of an orthogonal path from ``a`` to ``b`` with at most one bend."""
    if a[0] == b[0] or a[1] == b[1]:
        return [b]
    corner = (b[0], a[1]) if horizontal_first else (a[0], b[1])
    return [corner, b]


def _dogleg(a: Point, b: Point, horizontal: bool) -> list[Point]:
    """Points after ``a`` of a path that leaves ``a`` and enters ``b`` along the same axis,
    turning half way (a Z), so a lead keeps meeting its pin head on."""
    if a[0] == b[0] or a[1] == b[1]:
        return [b]
    if horizontal:
        mid = (a[0] + b[0]) // 2
        return [(mid, a[1]), (mid, b[1]), b]
    mid = (a[1] + b[1]) // 2
    return [(a[0], mid), (b[0], mid), b]


def _collinear(a: Point, b: Point, c: Point) -> bool:
    return a[0] == b[0] == c[0] or a[1] == b[1] == c[1]


def _grid_points(a: Point, b: Point) -> set[Point]:
    (x0, y0), (x1, y1) = a, b
    if y0 == y1:
        return {(x, y0) for x in range(min(x0, x1), max(x0, x1) + 1)}
    return {(x0, y) for y in range(min(y0, y1), max(y0, y1) + 1)}


def simplify(points: Iterable[Point],
             pinned: Callable[[Point], bool] = lambda p: False) -> tuple[Point, ...]:
    """Drop repeated points and the middle of three collinear points. Where the path doubles
    back, the middle point goes only if no ``pinned`` point lies on the stretch it loses."""
    out: list[Point] = []
    for p in points:
        if out and out[-1] == p:
            continue
        out.append(p)
        while len(out) >= 3 and _collinear(*out[-3:]):
            a, b, c = out[-3:]
            lost = (_grid_points(a, b) | _grid_points(b, c)) - _grid_points(a, c)
            if any(pinned(q) for q in lost):
                break
            del out[-2]
            if out[-1] == out[-2]:
                out.pop()
    return tuple(out)


def _horizontal(a: Point, b: Point) -> bool:
    return a[1] == b[1]


def _drag_end(wire: Wire, at_start: bool, new: Point, index: SheetIndex) -> tuple[Point, ...]:
    """The wire's points once one end goes to ``new`` and the rest stays joined."""
    pts = list(wire.points[::-1] if at_start else wire.points)
    old = pts[-1]
    last_horizontal = _horizontal(pts[-2], old) if pts[-2] != old else True

    def holds(p: Point) -> bool:
        return p != old and index.is_connection(p)

    tail = Wire(wire.id, tuple(pts[-3:]))
    clear = not (index.points_on(tail) - {pts[0], pts[-3] if len(pts) >= 3 else old, old})
    if len(pts) >= 3 and clear and not holds(pts[-2]):
        # slide the last bend across, keeping the segment count
        prev = pts[-2]
        pts[-2] = (prev[0], new[1]) if last_horizontal else (new[0], prev[1])
        pts[-1] = new
    elif len(pts) == 2 and clear:
        pts = [pts[0], *_dogleg(pts[0], new, last_horizontal)]
    else:
        # something joins along the wire: keep it all and extend from the old end
        pts = [*pts, *bend(old, new, not last_horizontal)]
    result = simplify(pts, holds)
    if len(result) < 2:
        result = (new, new)
    return result[::-1] if at_start else result


# -- plans --------------------------------------------------------------------------------------
def plan_placement(doc: Document, index: SheetIndex, ids: Iterable[str],
                   m: RigidMap) -> list[Element]:
    """New versions of the elements ``ids`` carried by ``m``, and of the wires that follow them.

    A net marker (label, ground) whose pin sits on a moving pin moves along. A wire end follows
    when it sits on a pin, junction or wire that moves, unless a pin or junction that stays
    holds it there. A wire with both ends following moves whole. A moving pin that leaves a
    staying pin, junction or wire at its old point gets a new wire (an id not in ``doc``) from
    there to its new point.
    """
    moving = [doc[i] for i in dict.fromkeys(ids) if i in doc]
    out: dict[str, Element] = {e.id: moved(e, m) for e in moving}
    moving_ids = frozenset(out)
    carried: set[Point] = set()
    for e in moving:
        carried.update(element_pins(e))
        if isinstance(e, Junction):
            carried.add(e.at)
        if isinstance(e, Wire):
            carried |= index.points_on(e)

    # a net marker sitting right on a moving pin goes along (keeping its own orientation)
    pins = {p for e in moving for p in element_pins(e)}
    for label_id in sorted({eid for p in pins for eid, _ in index.pins_at(p)} - moving_ids):
        label = doc[label_id]
        if isinstance(label, NetLabel):
            out[label_id] = replace(label, at=m.point(label.at))
    moving_ids = frozenset(out)

    def follows(p: Point) -> bool:
        if p not in carried:
            return False
        holders = {eid for eid, _ in index.pins_at(p)}
        if index.junction_at(p):
            holders.update(j.id for j in doc.junctions() if j.at == p)
        return holders <= moving_ids

    for wid in sorted(index.wires_ending_at(carried) - moving_ids):
        wire = doc[wid]
        first, last = follows(wire.points[0]), follows(wire.points[-1])
        if first and last:
            out[wid] = moved(wire, m)
            continue
        points = wire.points
        for at_start, on in ((True, first), (False, last)):
            if on:
                end = points[0] if at_start else points[-1]
                points = _drag_end(Wire(wid, points), at_start, m.point(end), index)
        if points != wire.points:
            out[wid] = replace(wire, points=points)
    return list(out.values()) + _links(doc, index, moving, out, m)


def _links(doc: Document, index: SheetIndex, moving: list[Element], out: dict[str, Element],
           m: RigidMap) -> list[Wire]:
    """New wires from each moving pin's old point, where something staying still touches it,
    to the pin's new point."""
    moving_ids = frozenset(out)
    old_pins = {p for e in moving for p in element_pins(e)}
    # what a link must not touch on its way: the new pins, the links already laid, and any
    # pin, junction or wire that stays
    avoid = {m.point(p) for p in old_pins}
    links: list[Wire] = []
    taken: set[str] = set()
    for p in sorted(old_pins):
        q = m.point(p)
        if q == p or not _held(doc, index, p, out, moving_ids) \
                or _still_on(doc, index, p, q, out, moving_ids):
            continue
        wid = doc.new_id(Wire)
        while wid in taken:
            wid = doc.new_id(Wire)
        taken.add(wid)

        def blocked(t: Point, p=p, q=q) -> bool:
            if t in (p, q):
                return False
            return (t in avoid or index.junction_at(t)
                    or bool({eid for eid, _ in index.pins_at(t)} - moving_ids)
                    or bool(index.wires_through(t) - moving_ids))

        route = link_route(p, q, blocked)
        avoid.update(t for a, b in pairwise(route) for t in _grid_points(a, b))
        links.append(Wire(wid, route))
    return links


def _held(doc: Document, index: SheetIndex, p: Point, out: dict[str, Element],
          moving_ids: frozenset[str]) -> bool:
    """Whether a pin, junction or wire that stays (in its planned version) touches ``p``."""
    if {eid for eid, _ in index.pins_at(p)} - moving_ids:
        return True
    if index.junction_at(p) and any(j.at == p and j.id not in moving_ids
                                    for j in doc.junctions()):
        return True
    for wid in index.wires_through(p):
        wire = out.get(wid, doc[wid])
        if any(_between(p, a, b) for a, b in pairwise(wire.points)):
            return True
    return False


def _still_on(doc: Document, index: SheetIndex, p: Point, q: Point, out: dict[str, Element],
              moving_ids: frozenset[str]) -> bool:
    """Whether what stays at ``p`` is only wires that also run through ``q`` (a tap slid along
    its wire needs no link; one at a crossing, where it joins both wires, does)."""
    if index.junction_at(p) or {eid for eid, _ in index.pins_at(p)} - moving_ids:
        return False
    wires = index.wires_through(p) - moving_ids
    return bool(wires) and all(any(_between(q, a, b) for a, b in pairwise(doc[wid].points))
                               for wid in wires)


def _between(p: Point, a: Point, b: Point) -> bool:
    return (min(a[0], b[0]) <= p[0] <= max(a[0], b[0])
            and min(a[1], b[1]) <= p[1] <= max(a[1], b[1]) and (a[0] == b[0] or a[1] == b[1]))


def link_route(p: Point, q: Point, blocked: Callable[[Point], bool]) -> tuple[Point, ...]:
    """An orthogonal path from ``p`` to ``q``: the first of a straight run, the two L bends and
    the two Z doglegs whose grid points avoid ``blocked`` ones (the straight or first L when
    none does; the caller's net check then says what joins)."""
    candidates = [bend(p, q, True), bend(p, q, False), _dogleg(p, q, True),
                  _dogleg(p, q, False)]
    for tail in candidates:
        route = (p, *tail)
        if not any(blocked(t) for a, b in pairwise(route) for t in _grid_points(a, b)):
            return simplify(route)
    return simplify((p, *candidates[0]))


@dataclass(frozen=True)
class Deletion:
    """What a delete removes: the chosen elements, the wires left joining nothing, and the
    regions that keep fewer members."""

    removed: tuple[str, ...]
    dangling: tuple[str, ...]
    regions: tuple[Region, ...]


def plan_delete(doc: Document, index: SheetIndex, ids: Iterable[str]) -> Deletion:
    """Remove ``ids``; a wire attached to anything removed goes too once it joins at most one
    other thing (repeated along chains of wires)."""
    chosen = tuple(i for i in dict.fromkeys(ids) if i in doc)
    gone = set(chosen)
    frontier = {p for i in chosen for p in index.touch_points(doc[i])}
    dangling: list[str] = []
    while frontier:
        candidates = {i for p in frontier for i in index.joined_at(p)
                      if i not in gone and isinstance(doc[i], Wire)}
        frontier = set()
        for wid in sorted(candidates):
            wire = doc[wid]
            joined = set().union(*(index.joined_at(p, frozenset(gone | {wid}))
                                   for p in index.points_on(wire)))
            if len(joined) <= 1:
                gone.add(wid)
                dangling.append(wid)
                frontier |= index.touch_points(wire)
    regions = tuple(replace(r, members=r.members - gone) for r in doc.regions()
                    if r.id not in gone and r.members & gone)
    return Deletion(chosen, tuple(dangling), regions)


def paste(doc: Document, elements: Iterable[Element], offset: Point) -> list[Element]:
    """Copies of ``elements`` shifted by ``offset``, with new ids and the lowest free
    designators. References among the copies (a controlling part, coupled inductors) follow the
    renaming; references to parts outside the copies stay as they were."""
    elements = [e for e in elements if not isinstance(e, Region | Block)]
    renames: dict[str, str] = {}
    for e in elements:
        if isinstance(e, PlacedPart):
            renames[e.designator] = doc.next_designator(e.kind, reserved=renames.values())
    shift = RigidMap(offset=offset)
    out: list[Element] = []
    for e in elements:
        copy = replace(moved(e, shift), id=doc.new_id(type(e)))
        if isinstance(copy, PlacedPart):
            copy = replace(copy, designator=renames[copy.designator],
                           control=renames.get(copy.control, copy.control),
                           couples=tuple(renames.get(c, c) for c in copy.couples))
        out.append(copy)
    return out
