"""Where each part's designator and value are drawn: the best free spot around its symbol.

For every part, in document order, each caption tries a fixed list of spots around the symbol's
body (the symbol's own anchor first, then rows above and below stepping outwards, beside it,
the corners)
and takes the first one with the lowest score: the area it shares with symbol bodies, wires,
junction dots and the captions already placed, weighted so that covering a body or another
caption costs most. The result is deterministic for a document. A caption the user dragged keeps
its offset from the part's origin (``PlacedPart.captions``) and is an obstacle for the others.

The canvas, the screenshot mode and the SVG writer all draw :class:`Placement` results, so the
three agree. Text widths are estimated (:func:`text_width`: a width per kind of character, a
little wider than the sans-serif fonts used draw them) so the engine needs no font machinery.
Units: grid units, x right, y down.
"""

from __future__ import annotations

import math
from collections import defaultdict
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field, replace
from functools import cache
from itertools import pairwise

import numpy as np

from ..solve.devices import DEVICE_KINDS
from .captions import value_caption
from .document import Document
from .model import CAPTION_ROLES, Block, Element, Junction, NetLabel, PlacedPart, Wire
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
    text_width,
)

__all__ = ["PlacedCaption", "Placement", "dragged", "overlap", "part_texts",
           "text_box", "text_width"]

#: Descent below the last baseline, in font sizes.
DESCENT = 0.24
#: Space kept between a body and a caption beside it.
GAP = 0.3
#: Room kept free around a caption, grid units, left and right / above and below.
PAD_X, PAD_Y = 0.4, 0.1
#: Cost per square grid unit of covering each kind of obstacle.
WEIGHTS = {"body": 100.0, "caption": 100.0, "wire": 20.0, "dot": 20.0}
#: Side of the square cells of the obstacle index, grid units.
CELL = 8.0
#: Side of the squares of the quick free-spot raster, and its margin around the sheet.
RES = 0.25
RASTER_MARGIN = 20.0
RASTER_CELLS = 16_000_000
WIRE_HALF = STROKE_WIDTH / 2


def part_texts(part: PlacedPart, *, ac: bool = False) -> dict[str, tuple[str, ...]]:
    """The lines drawn beside ``part`` per role: its designator and its value (``"no value"``
    where one is missing; a coupling adds the inductors it joins)."""
    value = _value_text(part.kind, part.value, part.phase_deg, part.control, part.couples,
                        part.tolerance, part.params, ac)
    if not value and part.kind != "opamp":
        value = "no value"
    if part.kind in DEVICE_KINDS:  # the entered parameters, a line each
        return {"designator": (part.designator,), "value": tuple(value.split("\n"))}
    if part.kind == "coupling" and part.couples:
        return {"designator": (part.designator,), "value": (value, " · ".join(part.couples))}
    return {"designator": (part.designator,), "value": (value,) if value else ()}


@cache
def _value_text(kind: str, value: str, phase: str, control: str, couples: tuple[str, ...],
                tolerance: str, params: tuple[tuple[str, str], ...], ac: bool) -> str:
    """Cached: sheets repeat their values."""
    return value_caption(PlacedPart("", kind, "", (0, 0), value=value, phase_deg=phase,
                                    control=control, couples=couples, tolerance=tolerance,
                                    params=params), ac=ac)


def text_box(lines: tuple[str, ...], at: FPoint, align: str,
             size: float = FONT_SIZE) -> Bounds:
    """The box the upright ``lines`` set at anchor point ``at`` with ``align`` take up (top of
    the capitals of the first line to the descent of the last), as text_baselines sets them."""
    width = text_width(lines[0]) if len(lines) == 1 else max(map(text_width, lines))
    x0, y0, x1, y1 = _text_box_at_origin(len(lines), width, align, size)
    return (x0 + at[0], y0 + at[1], x1 + at[0], y1 + at[1])


@cache
@cache
def _text_box_at_origin(lines: int, width: float, align: str, size: float) -> Bounds:
    how, baselines = text_baselines((0.0, 0.0), align, lines, size)
    width *= size
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


def dragged(part: PlacedPart, caption: PlacedCaption,
            shift: FPoint) -> tuple[tuple[str, float, float], ...]:
    """``part.captions`` once ``caption`` is dragged by ``shift`` grid units: its anchor point
    (text centred on it) relative to the part's origin, to a tenth of a grid unit."""
    x0, y0, x1, y1 = caption.box
    # the middle of the capitals block, where a centred text's anchor lies (text_baselines)
    middle = y0 + (y1 - y0 - DESCENT * FONT_SIZE) / 2
    dx = round((x0 + x1) / 2 + shift[0] - part.at[0], 1)
    dy = round(middle + shift[1] - part.at[1], 1)
    kept = tuple(c for c in part.captions if c[0] != caption.role)
    return tuple(sorted((*kept, (caption.role, dx, dy))))


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
    """Boxes by grid cell, each with its kind, owner and rank (the order of placing: fixed
    obstacles rank -1, a caption the position of its part and role), for the overlap queries
    of the candidate spots. A query sees only captions placed before the one being placed, so
    re-placing one part gives what placing everything again would."""

    def __init__(self, extent: Bounds | None = None) -> None:
        self.cells: dict[tuple[int, int], list[tuple[str, Bounds, str, tuple[int, int]]]] = (
            defaultdict(list))
        self.raster = None if extent is None else _Raster.over(extent)

    def add(self, kind: str, box: Bounds, owner: str, rank: tuple[int, int]) -> None:
        entry = (kind, box, owner, rank)
        cells = self.cells
        for cell in _cells(box):
            cells[cell].append(entry)
        if self.raster is not None:
            self.raster.count(box, 1)

    def free(self, box: Bounds) -> bool:
        """A quick yes when nothing at all lies under ``box`` (False: look closer)."""
        return self.raster is not None and self.raster.free(box)

    def remove(self, box: Bounds, owner: str) -> None:
        if self.raster is not None:
            self.raster.count(box, -1)
        for cell in _cells(box):
            entries = self.cells.get(cell)
            if entries:
                self.cells[cell] = [e for e in entries if not (e[2] == owner and e[1] == box)]

    def owners(self, box: Bounds) -> set[str]:
        """Owners of the boxes overlapping ``box``."""
        return {e[2] for cell in _cells(box) for e in self.cells.get(cell, ())
                if overlap(box, e[1]) > 0}

    def score(self, box: Bounds, rank: tuple[int, int], ranks: dict[str, int]) -> float:
        total = 0.0
        bx0, by0, bx1, by1 = box
        for cell in _cells(box):
            for kind, (x0, y0, x1, y1), owner, entry_rank in self.cells.get(cell, ()):
                w = min(bx1, x1) - max(bx0, x0)
                h = min(by1, y1) - max(by0, y0)
                if w <= 1e-9 or h <= 1e-9:
                    continue
                # an overlap is counted in the one cell holding its top-left corner
                if (int(max(bx0, x0) // CELL), int(max(by0, y0) // CELL)) != cell:
                    continue
                if kind == "caption" and entry_rank[0] >= 0 and (
                        ranks.get(owner, -1), entry_rank[1]) >= rank:
                    continue  # placed after this one: not an obstacle for it
                total += WEIGHTS[kind] * w * h
        return total


@dataclass
class _Raster:
    """How many obstacle boxes touch each square of :data:`RES` grid units over the sheet: a
    box whose squares are all empty overlaps no obstacle (boxes are counted on every square
    they touch), which settles most spots with one array look-up."""

    x0: float
    y0: float
    counts: np.ndarray

    @classmethod
    def over(cls, extent: Bounds) -> _Raster | None:
        x0, y0 = extent[0] - RASTER_MARGIN, extent[1] - RASTER_MARGIN
        nx = math.ceil((extent[2] + RASTER_MARGIN - x0) / RES)
        ny = math.ceil((extent[3] + RASTER_MARGIN - y0) / RES)
        if nx * ny > RASTER_CELLS:
            return None  # a sheet this large is scored box by box
        return cls(x0, y0, np.zeros((ny, nx), dtype=np.int32))

    def _span(self, box: Bounds) -> tuple[int, int, int, int]:
        return (math.floor((box[0] - self.x0) / RES), math.floor((box[1] - self.y0) / RES),
                math.ceil((box[2] - self.x0) / RES), math.ceil((box[3] - self.y0) / RES))

    def count(self, box: Bounds, step: int) -> None:
        i0, j0, i1, j1 = self._span(box)
        ny, nx = self.counts.shape
        self.counts[max(j0, 0):max(min(j1, ny), 0), max(i0, 0):max(min(i1, nx), 0)] += step

    def free(self, box: Bounds) -> bool:
        i0, j0, i1, j1 = self._span(box)
        ny, nx = self.counts.shape
        if i0 < 0 or j0 < 0 or i1 > nx or j1 > ny:
            return False
        return not self.counts[j0:j1, i0:i1].any()


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
    # centred rows first (they read as belonging to the part), in half-line steps outwards,
    # then beside it, then the corners
    rows = [k * pitch / 2 for k in range(5)]
    spots += [spot for d in rows for spot in (((cx, y0 - GAP - d), "n"), ((cx, y1 + GAP + d), "s"))]
    spots += [((x1 + GAP, cy), "e"), ((x0 - GAP, cy), "w"),
              ((x1 + GAP, cy - pitch / 2), "e"), ((x1 + GAP, cy + pitch / 2), "e"),
              ((x0 - GAP, cy - pitch / 2), "w"), ((x0 - GAP, cy + pitch / 2), "w"),
              ((x1, y0 - half), "e"), ((x0, y0 - half), "w"),
              ((x1, y1 + half), "e"), ((x0, y1 + half), "w")]
    return spots


@dataclass
class Placement:
    """The captions of every part of a document: ``captions[part id][role]``.

    Build with :meth:`of`; after an edit, :meth:`update` places again only the captions whose
    surroundings changed, and gives what :meth:`of` would give for the edited document, so
    the canvas after any edits and an export of the same document agree.
    """

    style: str = "iec"
    ac: bool = False
    captions: dict[str, dict[str, PlacedCaption]] = field(default_factory=dict)
    _fixed: dict[str, list[tuple[str, Bounds]]] = field(default_factory=dict)
    _origins: dict[str, FPoint] = field(default_factory=dict)
    _reach: dict[str, Bounds] = field(default_factory=dict)
    _ranks: dict[str, int] = field(default_factory=dict)
    _index: _Index = field(default_factory=_Index)
    _reaches: _Index = field(default_factory=_Index)

    @classmethod
    def of(cls, doc: Document, style: str = "iec", ac: bool = False) -> Placement:
        """Captions for every part of ``doc`` drawn in ``style`` (``ac``: sources as phasors)."""
        placement = cls(style, ac)
        placement._rank(doc)
        fixed = {e.id: _obstacles(e, style) for e in doc}
        boxes = [box for found in fixed.values() for _, box in found]
        placement._index = _Index(_union(boxes) if boxes else None)
        for element in doc:
            placement._add_fixed(element, fixed[element.id])
        for part in doc.parts():
            placement._place_part(part)
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
        """Place again after the elements ``changed`` (ids, whether added, updated or removed)
        were edited in ``doc``; returns the ids of the parts whose captions moved or changed
        (removed parts included)."""
        changed = list(changed)
        self._rank(doc)
        dirty: set[str] = set()
        gone: dict[str, dict[str, PlacedCaption]] = {}
        for eid in changed:
            for _, box in self._fixed.get(eid, ()):
                dirty |= self._reaches.owners(box)
            for c in self.captions.get(eid, {}).values():
                dirty |= self._reaches.owners(c.box)
            gone[eid] = self.captions.get(eid, {})
            self._drop(eid)
            if eid in doc:
                self._add_fixed(doc[eid])
                dirty |= {o for _, box in self._fixed[eid] for o in self._reaches.owners(box)}
                if isinstance(doc[eid], PlacedPart):
                    dirty.add(eid)
        out = {eid for eid in changed if eid not in doc}
        # in placing order; a caption that moves can move those placed after it
        while dirty:
            eid = min((e for e in dirty if e in doc), key=self._ranks.__getitem__, default=None)
            if eid is None:
                break
            dirty.discard(eid)
            before = self.captions.get(eid, gone.get(eid))
            self._drop_captions(eid)
            after = self._place_part(doc[eid])
            if after != before:
                out.add(eid)
                rank = self._ranks[eid]
                for c in (*(before or {}).values(), *after.values()):
                    dirty |= {o for o in self._reaches.owners(c.box) if self._ranks[o] > rank}
        return out

    def _rank(self, doc: Document) -> None:
        self._ranks = {p.id: i for i, p in enumerate(doc.parts())}

    def _add_fixed(self, element: Element,
                   boxes: list[tuple[str, Bounds]] | None = None) -> None:
        boxes = _obstacles(element, self.style) if boxes is None else boxes
        self._fixed[element.id] = boxes
        for kind, box in boxes:
            self._index.add(kind, box, element.id, (-1, 0))

    def _drop_captions(self, eid: str) -> None:
        for c in self.captions.pop(eid, {}).values():
            self._index.remove(c.box, eid)

    def _drop(self, eid: str) -> None:
        """Forget everything of element ``eid``."""
        for _, box in self._fixed.pop(eid, ()):
            self._index.remove(box, eid)
        self._drop_captions(eid)
        reach = self._reach.pop(eid, None)
        if reach is not None:
            self._reaches.remove(reach, eid)
        self._origins.pop(eid, None)

    def _place_part(self, part: PlacedPart) -> dict[str, PlacedCaption]:
        texts = part_texts(part, ac=self.ac)
        sym = symbol(part.kind, self.style)
        body = self._fixed[part.id][0][1]
        pinned = {role: (dx, dy) for role, dx, dy in part.captions}
        rank = self._ranks[part.id]
        out: dict[str, PlacedCaption] = {}
        reach = [body]
        for i, role in enumerate(CAPTION_ROLES):
            lines = tuple(line for line in texts.get(role, ()) if line)
            if not lines:
                continue
            if role in pinned:
                dx, dy = pinned[role]
                at = (part.at[0] + dx, part.at[1] + dy)
                spots = [(at, "c")]
            else:
                anchor = sym.anchor(role)
                placed = None if anchor is None else place(anchor, part.at, part.rotation,
                                                           part.mirror)
                spots = _spots(placed, body, len(lines))
            reach += [text_box(lines, *spots[0]), _reach(body, lines)]
            caption = _best(role, lines, spots, self._index.free,
                            lambda box, i=i: self._index.score(box, (rank, i), self._ranks))
            self._index.add("caption", caption.box, part.id, (rank, i))
            out[role] = caption
        old = self._reach.pop(part.id, None)
        if old is not None:
            self._reaches.remove(old, part.id)
        self._reach[part.id] = _union(reach)
        self._reaches.add("reach", self._reach[part.id], part.id, (rank, 0))
        self._origins[part.id] = part.at
        self.captions[part.id] = out
        return out


def _union(boxes: list[Bounds]) -> Bounds:
    x0s, y0s, x1s, y1s = zip(*boxes, strict=True)
    return (min(x0s), min(y0s), max(x1s), max(y1s))


def _reach(body: Bounds, lines: tuple[str, ...]) -> Bounds:
    """A box holding every spot of :func:`_spots` but the first, for ``lines`` around
    ``body``: a text width beside it, five half-line rows and the text above and below."""
    x0, y0, x1, y1 = body
    tx0, ty0, tx1, ty1 = _text_box_at_origin(len(lines), max(map(text_width, lines)), "c",
                                             FONT_SIZE)
    width, height = tx1 - tx0, ty1 - ty0
    rows = GAP + 2 * LINE_PITCH * FONT_SIZE + 2 * height
    return (x0 - GAP - width - FONT_SIZE, y0 - rows, x1 + GAP + width + FONT_SIZE, y1 + rows)


def _best(role: str, lines: tuple[str, ...], spots: list[tuple[FPoint, str]],
          free: Callable[[Bounds], bool], score: Callable[[Bounds], float]) -> PlacedCaption:
    """The first free spot, or else the least covered one (marked crowded); a single spot (a
    dragged caption) is taken whatever it covers."""
    best: PlacedCaption | None = None
    best_score = float("inf")
    for at, align in spots:
        box = text_box(lines, at, align)
        # a little room around the text, so neighbouring captions do not run together
        room = (box[0] - PAD_X, box[1] - PAD_Y, box[2] + PAD_X, box[3] + PAD_Y)
        if len(spots) == 1 or free(room):
            return PlacedCaption(role, lines, at, align, box)
        value = score(room)
        if value == 0:
            return PlacedCaption(role, lines, at, align, box)
        if value < best_score:
            best, best_score = PlacedCaption(role, lines, at, align, box, crowded=True), value
    assert best is not None
    return best
