"""Region geometry on the sheet: which parts a drawn outline takes in, how the outline follows a
part added or taken out by hand, and where the two port nets cross it (the + and − marks).

Outlines are closed polygons in grid units (floats), as engine.schematic.Region keeps them. Which
parts an outline takes in is the engine's one rule (engine/schematic/outline.py: the middle of a
symbol's body inside, by the even-odd rule); ``body_bounds`` and ``enclosed`` are its functions.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from itertools import pairwise

import numpy as np
from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QPainterPath, QPolygonF

from portcut.engine.schematic import Block, Connectivity, Document, PlacedPart, Region, Wire
from portcut.engine.schematic.outline import Outline, body_bounds, enclosed

__all__ = [
    "Outline",
    "PortMark",
    "PortMarker",
    "body_bounds",
    "enclosed",
    "outline_with",
    "outline_without",
    "port_marks",
    "region_name",
]

FPoint = tuple[float, float]
#: Room left around a part's body when the outline grows to take it in, grid units.
_PAD = 1.0


@dataclass(frozen=True)
class PortMark:
    """Where a port net meets the outline: ``role`` "plus" or "minus", ``net`` its name."""

    at: FPoint
    role: str
    net: str


def _polygon(outline: Iterable[FPoint]) -> QPolygonF:
    return QPolygonF([QPointF(x, y) for x, y in outline])


def _padded(element: PlacedPart | Block, style: str) -> QPainterPath:
    x0, y0, x1, y1 = body_bounds(element, style)
    path = QPainterPath()
    path.addRect(QRectF(x0 - _PAD, y0 - _PAD, x1 - x0 + 2 * _PAD, y1 - y0 + 2 * _PAD))
    return path


def _outline_path(outline: Outline) -> QPainterPath:
    path = QPainterPath()
    path.addPolygon(_polygon(outline))
    path.closeSubpath()
    return path


def _pieces(path: QPainterPath) -> list[Outline]:
    """The closed polygons of a path, each without its repeated closing point."""
    out = []
    for polygon in path.simplified().toFillPolygons():
        points = [(round(p.x(), 3), round(p.y(), 3)) for p in polygon]
        if len(points) > 1 and points[0] == points[-1]:
            points.pop()
        if len(points) >= 3:
            out.append(tuple(points))
    return out


def outline_with(outline: Outline, element: PlacedPart | Block, style: str = "iec") -> Outline:
    """The outline grown to take in ``element``'s body (with a little room): the union of the
    two, or their convex hull where they do not touch, so the region stays one shape."""
    grown = _padded(element, style)
    if len(outline) < 3:
        return _pieces(grown)[0]
    pieces = _pieces(_outline_path(outline).united(grown))
    if len(pieces) == 1:
        return pieces[0]
    return _hull([p for piece in pieces for p in piece])


def outline_without(outline: Outline, element: PlacedPart | Block,
                    style: str = "iec") -> Outline:
    """The outline with ``element``'s body cut out, where that leaves one shape; otherwise the
    outline as it was (membership, not the drawing, decides what is inside)."""
    if len(outline) < 3:
        return outline
    pieces = _pieces(_outline_path(outline).subtracted(_padded(element, style)))
    return pieces[0] if len(pieces) == 1 else outline


def _hull(points: Sequence[FPoint]) -> Outline:
    """Convex hull, counterclockwise in the sheet's axes (monotone chain)."""
    pts = sorted(set(points))
    if len(pts) < 3:
        return tuple(pts)

    def cross(o: FPoint, a: FPoint, b: FPoint) -> float:
        return (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0])

    def chain(seq: Iterable[FPoint]) -> list[FPoint]:
        out: list[FPoint] = []
        for p in seq:
            while len(out) >= 2 and cross(out[-2], out[-1], p) <= 0:
                out.pop()
            out.append(p)
        return out

    lower, upper = chain(pts), chain(reversed(pts))
    return tuple(lower[:-1] + upper[:-1])


def region_name(doc: Document) -> str:
    """The first free name "Region 1", "Region 2", ... for a new region."""
    taken = {r.name for r in doc.regions()}
    n = 1
    while f"Region {n}" in taken:
        n += 1
    return f"Region {n}"


# -- port marks ---------------------------------------------------------------------------------
def port_marks(doc: Document, conn: Connectivity, region: Region,
               port: tuple[str, str]) -> tuple[PortMark, ...]:
    """A mark for each place a port net's wires cross the outline (plus first). A port net that
    no wire carries across (joined by a net label or a ground marker) gets one mark on the
    outline next to the region's pin nearest to it; a chosen port net that nothing outside
    uses, on the region's pin on it nearest to the outline."""
    return PortMarker().marks(doc, conn, region, port)


class PortMarker:
    """Works out :func:`port_marks` again after each edit, each port net's marks only where
    what they depend on changed: for a net whose wires cross the outline, those wires; for one
    that none does, its pins in the region and whether a part outside uses it. (A move of a part
    on the ground net of a large sheet changes that net's pins, not the other net's wires; a value
    typed changes neither.)"""

    def __init__(self) -> None:
        self._held: dict[str, tuple[tuple, tuple[FPoint, ...]]] = {}  # role: (key, points)

    def marks(self, doc: Document, conn: Connectivity, region: Region,
              port: tuple[str, str]) -> tuple[PortMark, ...]:
        """The marks of ``region`` for ``port`` on ``doc`` (see :func:`port_marks`)."""
        if len(region.outline) < 3:
            return ()
        edges = list(zip(region.outline, region.outline[1:] + region.outline[:1], strict=True))
        wires: dict[str, list[Wire]] = {net: [] for net in port}
        for wire in doc.wires():
            if (net := conn.net_of_wire.get(wire.id)) in wires:
                wires[net].append(wire)
        marks: list[PortMark] = []
        for role, net in zip(("plus", "minus"), port, strict=True):
            for pt in dict.fromkeys(self._points(doc, conn, region, role, net,
                                                 tuple(wires[net]), edges)):
                marks.append(PortMark(pt, role, net))
        return tuple(marks)

    def _points(self, doc: Document, conn: Connectivity, region: Region, role: str, net: str,
                wires: tuple[Wire, ...], edges: list[tuple[FPoint, FPoint]]
                ) -> tuple[FPoint, ...]:
        """Where the marks of ``net`` go (rounded to 0.001 grid unit), held for ``role``."""
        held_key, held = self._held.get(role, ((), ()))
        wired = (region.outline, wires)
        if held_key[:2] == wired:  # the same wires: what crossed, or that none did, stands
            crossing = held if len(held_key) == 2 else ()
        else:
            crossing = tuple((round(x, 3), round(y, 3)) for wire in wires
                             for a, b in pairwise(wire.points)
                             for x, y in _crossings(a, b, edges))
        if crossing:
            self._held[role] = (wired, crossing)
            return crossing
        on_net = conn.pins_on(net)
        inside = tuple(sorted((k, at) for k, at in on_net  # sorted: repeatable
                              if k[0] in region.members and k[0] in doc))
        key = (*wired, inside, _used_outside(doc, region, on_net))
        points = held if held_key == key else _pin_point(inside, key[-1], edges)
        self._held[role] = (key, points)
        return points


def _pin_point(inside: tuple[tuple[tuple[str, int], FPoint], ...], used_outside: bool,
               edges: list[tuple[FPoint, FPoint]]) -> tuple[FPoint, ...]:
    """The mark of a port net that no wire carries across the outline, from its pins
    ``inside`` the region: where a part outside uses it, the outline point nearest to them
    (ties: the lower point); else the pin nearest to the outline (ties: the lower pin)."""
    if not inside:
        return ()
    pins = np.array([at for _, at in inside], dtype=float)
    dist, near = _nearest(edges, pins)
    best = near if used_outside else pins
    x, y = best[np.lexsort((best[:, 1], best[:, 0], dist))[0]].tolist()
    return ((round(x, 3), round(y, 3)),)


def _used_outside(doc: Document, region: Region, pins: list[tuple[tuple[str, int], FPoint]]
                  ) -> bool:
    """Is one of ``pins`` (a net's) on a part or block outside the region?"""
    return any(eid not in region.members and eid in doc and isinstance(doc[eid], PlacedPart | Block)
               for (eid, _), _ in pins)


def _crossings(a: FPoint, b: FPoint, edges: list[tuple[FPoint, FPoint]]) -> list[FPoint]:
    """Where segment a-b crosses the outline's edges (an edge's end point counts once)."""
    found = []
    rx, ry = b[0] - a[0], b[1] - a[1]
    for p, q in edges:
        sx, sy = q[0] - p[0], q[1] - p[1]
        d = rx * sy - ry * sx
        if d == 0:
            continue  # parallel: a wire running along the outline does not cross it
        wx, wy = p[0] - a[0], p[1] - a[1]
        t = (wx * sy - wy * sx) / d
        u = (wx * ry - wy * rx) / d
        if 0 <= t <= 1 and 0 <= u < 1:
            found.append((a[0] + t * rx, a[1] + t * ry))
    return found


def _nearest(edges: list[tuple[FPoint, FPoint]], pts: np.ndarray) -> tuple[np.ndarray,
                                                                         np.ndarray]:
    """The distance from each point of ``pts`` (n × 2) to the outline, and the outline point
    nearest to it (n × 2; ties between edges: the lower point), in one pass over all points:
    a port net such as ground may have hundreds of pins inside the region."""
    p = np.array([e[0] for e in edges], dtype=float)
    s = np.array([e[1] for e in edges], dtype=float) - p
    length = (s * s).sum(axis=1)
    w = pts[:, None, :] - p[None, :, :]
    t = np.clip(np.divide((w * s).sum(axis=2), length, out=np.zeros(w.shape[:2]),
                          where=length > 0), 0.0, 1.0)
    near = p + t[:, :, None] * s
    dist = np.hypot(near[:, :, 0] - pts[:, None, 0], near[:, :, 1] - pts[:, None, 1])
    best = np.lexsort((near[:, :, 1], near[:, :, 0], dist), axis=1)[:, 0]
    rows = np.arange(len(pts))
    return dist[rows, best], near[rows, best]
