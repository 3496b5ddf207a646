"""Where each part's designator and value are drawn: the best free spot around its symbol.

For every part, in document order, each caption tries a fixed list of spots around the symbol's
body (the symbol's own anchor first, then above, below, beside, a second row out, the corners)
and takes the first one with the lowest score: the area it shares with symbol bodies, wires,
junction dots and the captions already placed, weighted so that covering a body or another
caption costs most. The result is deterministic for a document. A caption the user dragged keeps
its offset from the part's origin (``PlacedPart.captions``) and is an obstacle for the others.

The canvas, the screenshot mode and the SVG writer all draw :class:`Placement` results, so the
three agree. Text widths are estimated (:data:`CHAR_WIDTH` per character, a little wider than
the average of the sans-serif fonts used) so the engine needs no font machinery. Units: grid
units, x right, y down.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Iterable
from dataclasses import dataclass, field, replace
from itertools import pairwise

from .captions import value_caption
from .schematic.document import Document
from .schematic.model import CAPTION_ROLES, Block, Element, Junction, NetLabel, PlacedPart, Wire
from .symbols import (
    CAP_HEIGHT,
    FONT_SIZE,
    JUNCTION_RADIUS,
    LINE_PITCH,
    STROKE_WIDTH,
    Bounds,
    FPoint,
    TextAnchor,
    place,
    placed_bounds,
    symbol,
    text_baselines,
)

__all__ = ["CHAR_WIDTH", "PlacedCaption", "Placement", "overlap",
           "part_texts", "text_box"]

#: Advance of one character in font sizes (DejaVu Sans digits are 0.64, letters mostly less).
CHAR_WIDTH = 0.64
#: Descent below the last baseline, in font sizes.
DESCENT = 0.24
#: Space kept between a body and a caption beside it.
GAP = 0.3
#: Cost per square grid unit of covering each kind of obstacle.
WEIGHTS = {"body": 100.0, "caption": 100.0, "wire": 20.0, "dot": 20.0}
#: Side of the square cells of the obstacle index, grid units.
CELL = 4.0
WIRE_HALF = STROKE_WIDTH / 2


def part_texts(part: PlacedPart, *, ac: bool = False) -> dict[str, tuple[str, ...]]:
    """The lines drawn beside ``part`` per role: its designator and its value (``"no value"``
    where one is missing; a coupling adds the inductors it joins)."""
    value = value_caption(part, ac=ac)
    if not value and part.kind != "opamp":
        value = "no value"
    if part.kind == "coupling" and part.couples:
        return {"designator": (part.designator,), "value": (value, " · ".join(part.couples))}
    return {"designator": (part.designator,), "value": (value,) if value else ()}


def text_box(lines: tuple[str, ...], at: FPoint, align: str,
             size: float = FONT_SIZE) -> Bounds:
    """The box the upright ``lines`` set at anchor point ``at`` with ``align`` take up (top of
    the capitals of the first line to the descent of the last), as text_baselines sets them."""
    how, baselines = text_baselines(at, align, len(lines), size)
    width = CHAR_WIDTH * size * max(len(line) for line in lines)
    x = baselines[0][0]
    left = {"start": x, "middle": x - width / 2, "end": x - width}[how]
    return (left, baselines[0][1] - CAP_HEIGHT * size, left + width,
            baselines[-1][1] + DESCENT * size)


def overlap(a: Bounds, b: Bounds) -> float:
    """Area two boxes share (0 when they only touch)."""
    w = min(a[2], b[2]) - max(a[0], b[0])
    h = min(a[3], b[3]) - max(a[1], b[1])
    return w * h if w > 1e-9 and h > 1e-9 else 0.0


@dataclass(frozen=True, slots=True)
class PlacedCaption:
    """One caption as drawn: its lines, anchor point and alignment (for text_baselines), its
    box, and whether it was crowded (no spot around the symbol was free)."""

    role: str
    lines: tuple[str, ...]
    at: FPoint
    align: str
    box: Bounds
    crowded: bool = False


def _body(element: Element, style: str) -> Bounds | None:
    if isinstance(element, PlacedPart):
        return placed_bounds(element.kind, element.at, element.rotation, element.mirror,
                             style=style)
    if isinstance(element, Block):
        return placed_bounds("block", element.at, element.rotation, element.mirror,
                             style=style, form=element.form)
    if isinstance(element, NetLabel):
        kind = "ground" if element.style == "ground" else "label"
        return placed_bounds(kind, element.at, element.rotation, style=style)
    return None


def _obstacles(element: Element, style: str) -> list[tuple[str, Bounds]]:
    """The fixed boxes an element puts on the sheet: bodies, wire strokes, dots, and the texts
    that are not placed here (net names)."""
    if isinstance(element, Wire):
        out = []
        for (x0, y0), (x1, y1) in pairwise(element.points):
            out.append(("wire", (min(x0, x1) - WIRE_HALF, min(y0, y1) - WIRE_HALF,
                                 max(x0, x1) + WIRE_HALF, max(y0, y1) + WIRE_HALF)))
        return out
    if isinstance(element, Junction):
        x, y = element.at
        r = JUNCTION_RADIUS
        return [("dot", (x - r, y - r, x + r, y + r))]
    body = _body(element, style)
    if body is None:
        return []
    out = [("body", body)]
    if isinstance(element, NetLabel):
        anchor = symbol("ground" if element.style == "ground" else "label", style).anchor("name")
        if anchor is not None and element.name and element.style != "ground":
            placed = place(anchor, element.at, element.rotation)
            out.append(("caption", text_box((element.name,), placed.at, placed.align)))
    return out


class _Index:
    """Boxes by grid cell, for the overlap queries of the candidate spots."""

    def __init__(self) -> None:
        self.cells: dict[tuple[int, int], list[tuple[str, Bounds, str]]] = defaultdict(list)

    def add(self, kind: str, box: Bounds, owner: str) -> None:
        for cell in _cells(box):
            self.cells[cell].append((kind, box, owner))

    def score(self, box: Bounds) -> float:
        seen: set[tuple[str, Bounds, str]] = set()
        total = 0.0
        for cell in _cells(box):
            for entry in self.cells.get(cell, ()):
                if entry not in seen:
                    seen.add(entry)
                    total += WEIGHTS[entry[0]] * overlap(box, entry[1])
        return total


def _cells(box: Bounds) -> Iterable[tuple[int, int]]:
    i0, j0 = int(box[0] // CELL), int(box[1] // CELL)
    i1, j1 = int(box[2] // CELL), int(box[3] // CELL)
    for i in range(i0, i1 + 1):
        for j in range(j0, j1 + 1):
            yield (i, j)


def _spots(anchor: TextAnchor | None, body: Bounds,
           lines: int) -> list[tuple[FPoint, str]]:
    """Candidate (anchor point, align) pairs around ``body``, most wanted first."""
    x0, y0, x1, y1 = body
    cx, cy = (x0 + x1) / 2, (y0 + y1) / 2
    pitch = LINE_PITCH * FONT_SIZE
    half = (CAP_HEIGHT * FONT_SIZE + pitch * (lines - 1)) / 2 + GAP
    spots = [] if anchor is None else [(anchor.at, anchor.align)]
    spots += [((cx, y0 - GAP), "n"), ((cx, y1 + GAP), "s"), ((x1 + GAP, cy), "e"),
              ((x0 - GAP, cy), "w"),
              ((x1 + GAP, cy - pitch / 2), "e"), ((x1 + GAP, cy + pitch / 2), "e"),
              ((x0 - GAP, cy - pitch / 2), "w"), ((x0 - GAP, cy + pitch / 2), "w"),
              ((cx, y0 - GAP - pitch), "n"), ((cx, y1 + GAP + pitch), "s"),
              ((x1, y0 - half), "e"), ((x0, y0 - half), "w"),
              ((x1, y1 + half), "e"), ((x0, y1 + half), "w"),
              ((cx, y0 - GAP - 2 * pitch), "n"), ((cx, y1 + GAP + 2 * pitch), "s")]
    return spots


@dataclass
class Placement:
    """The captions of every part of a document: ``captions[part id][role]``.

    Build with :meth:`of`; after an edit, :meth:`update` re-places only the captions near the
    elements that changed (in document order, the captions farther away kept as obstacles), so
    a move stays cheap on a large sheet.
    """

    style: str = "iec"
    ac: bool = False
    captions: dict[str, dict[str, PlacedCaption]] = field(default_factory=dict)
    _boxes: dict[str, list[tuple[str, Bounds]]] = field(default_factory=dict)
    _origins: dict[str, FPoint] = field(default_factory=dict)

    @classmethod
    def of(cls, doc: Document, style: str = "iec", ac: bool = False) -> Placement:
        """Captions for every part of ``doc`` drawn in ``style`` (``ac``: sources as phasors)."""
        placement = cls(style, ac)
        for element in doc:
            placement._boxes[element.id] = _obstacles(element, style)
        placement._place(doc, list(doc), None)
        return placement

    def around(self, part_id: str) -> list[PlacedCaption] | None:
        """The part's captions relative to its origin (so they follow it while it is dragged),
        or None for a part not placed here."""
        roles = self.captions.get(part_id)
        if roles is None:
            return None
        ox, oy = self._origins[part_id]
        return [replace(c, at=(c.at[0] - ox, c.at[1] - oy),
                        box=(c.box[0] - ox, c.box[1] - oy, c.box[2] - ox, c.box[3] - oy))
                for c in roles.values()]

    def update(self, doc: Document, changed: Iterable[str]) -> set[str]:
        """Re-place after the elements ``changed`` (ids, whether added, updated or removed)
        were edited in ``doc``; returns the ids of the parts whose captions moved or changed."""
        changed = list(changed)
        region: list[Bounds] = []
        for eid in changed:
            region += [box for _, box in self._boxes.pop(eid, ())]
            region += [c.box for c in self.captions.pop(eid, {}).values()]
            if eid in doc:
                self._boxes[eid] = _obstacles(doc[eid], self.style)
                region += [box for _, box in self._boxes[eid]]
        if not region:
            return set()
        # every part whose body or caption could reach the changed area is placed again
        reach = 2 * CELL + 4 * LINE_PITCH * FONT_SIZE
        window = (min(b[0] for b in region) - reach, min(b[1] for b in region) - reach,
                  max(b[2] for b in region) + reach, max(b[3] for b in region) + reach)
        inside = {eid for eid, boxes in self._boxes.items()
                  if any(overlap(box, window) > 0 for _, box in boxes)}
        near = {eid for eid in inside if isinstance(doc[eid], PlacedPart)}
        before = {eid: self.captions.get(eid) for eid in near}
        self._place(doc, [e for e in doc if e.id in inside], near)
        return {eid for eid in near if self.captions.get(eid) != before[eid]} | {
            eid for eid in changed if eid not in doc}

    def _place(self, doc: Document, elements: list[Element], only: set[str] | None) -> None:
        index = _Index()
        for element in elements:
            for kind, box in self._boxes[element.id]:
                index.add(kind, box, element.id)
        if only is not None:
            # captions outside the re-placed set stay where they are, as obstacles
            for eid, roles in self.captions.items():
                if eid not in only:
                    for c in roles.values():
                        index.add("caption", c.box, eid)
        for element in elements:
            if isinstance(element, PlacedPart) and (only is None or element.id in only):
                self.captions[element.id] = self._place_part(element, index)

    def _place_part(self, part: PlacedPart, index: _Index) -> dict[str, PlacedCaption]:
        texts = part_texts(part, ac=self.ac)
        self._origins[part.id] = part.at
        sym = symbol(part.kind, self.style)
        body = self._boxes[part.id][0][1]
        pinned = {role: (dx, dy) for role, dx, dy in part.captions}
        out: dict[str, PlacedCaption] = {}
        for role in CAPTION_ROLES:
            lines = tuple(line for line in texts.get(role, ()) if line)
            if not lines:
                continue
            if role in pinned:
                dx, dy = pinned[role]
                at = (part.at[0] + dx, part.at[1] + dy)
                caption = PlacedCaption(role, lines, at, "c", text_box(lines, at, "c"))
            else:
                anchor = sym.anchor(role)
                placed = None if anchor is None else place(anchor, part.at, part.rotation,
                                                           part.mirror)
                caption = _best(role, lines, _spots(placed, body, len(lines)), index)
            index.add("caption", caption.box, part.id)
            out[role] = caption
        return out


def _best(role: str, lines: tuple[str, ...], spots: list[tuple[FPoint, str]],
          index: _Index) -> PlacedCaption:
    """The first free spot, or else the least covered one (marked crowded)."""
    best: PlacedCaption | None = None
    best_score = float("inf")
    for at, align in spots:
        box = text_box(lines, at, align)
        score = index.score(box)
        if score == 0:
            return PlacedCaption(role, lines, at, align, box)
        if score < best_score:
            best, best_score = PlacedCaption(role, lines, at, align, box, crowded=True), score
    assert best is not None
    return best
