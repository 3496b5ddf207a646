"""Where each part's designator and value are drawn: the best free spot around its symbol.

For every part, in document order, each caption tries a fixed list of spots around the symbol's
body (engine.schematic.caption_spots: the symbol's own anchor first, then rows above and below
stepping outwards, beside it, the corners) and takes the first one with the lowest score: the
area it shares with symbol bodies, wires, junction dots and the captions already placed,
weighted so that covering a body or another caption costs most (engine.schematic.obstacles).
The result is deterministic for a document. A caption the user dragged keeps its offset from
the part's origin (``PlacedPart.captions``) and is an obstacle for the others.

The canvas, the screenshot mode and the SVG writer all draw :class:`Placement` results, so the
three agree. Units: grid units, x right, y down.
"""

from __future__ import annotations

import gc
from collections.abc import Callable, Iterable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from functools import cache
from heapq import heappop, heappush

import numpy as np

from .caption_spots import (
    PAD_X,
    PAD_Y,
    PlacedCaption,
    Spots,
    dragged,
    lines_width,
    overlap,
    part_texts,
    spots,
    text_box,
    union,
)
from .document import Document
from .model import CAPTION_ROLES, Element, PlacedPart
from .obstacles import WEIGHTS, CellIndex, box_array, obstacles, overlapping
from .spot_scores import DIGITS, Plan, SpotScores
from .symbols import Bounds, FPoint, text_width

__all__ = ["PlacedCaption", "Placement", "dragged", "overlap", "part_texts",
           "text_box", "text_width"]

#: How many spots of a caption covered at its first choice are scored at once (most of them
#: take one of the first few; later ones are scored one at a time, only where reached).
SUSPECT_SPOTS = 4
#: A caption's room is its box grown by the padding; grown a little more here, so that no
#: rounding hides a room a box covers.
GROWN_X, GROWN_Y = PAD_X + 1e-6, PAD_Y + 1e-6


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
    _index: CellIndex = field(default_factory=CellIndex)    # fixed obstacles
    _placed: CellIndex = field(default_factory=CellIndex)   # captions placed
    _reaches: CellIndex = field(default_factory=CellIndex)  # where each part's captions may go

    @classmethod
    def of(cls, doc: Document, style: str = "iec", ac: bool = False) -> Placement:
        """Captions for every part of ``doc`` drawn in ``style`` (``ac``: sources as phasors)."""
        placement = cls(style, ac)
        with _collector_paused():
            placement._rank(doc)
            fixed = placement._fixed
            for element in doc:
                fixed[element.id] = obstacles(element, style)
            entries = [(kind, box, eid, (-1, 0)) for eid, boxes in fixed.items()
                       for kind, box in boxes]
            boxes = box_array(entry[1] for entry in entries)
            placement._index = CellIndex.of(entries, boxes)
            parts = doc.parts()
            placement._place_sheet(parts, [placement._plan(part) for part in parts],
                                   SpotScores(boxes, np.array([WEIGHTS[e[0]] for e in entries])))
            ranks = placement._ranks
            placement._reaches = CellIndex.of([("reach", box, eid, (ranks[eid], 0))
                                               for eid, box in placement._reach.items()])
        return placement

    def around(self, part_id: str) -> list[PlacedCaption] | None:
        """The part's captions relative to its origin (so they follow it while it is dragged),
        or None for a part not placed here."""
        roles = self.captions.get(part_id)
        if roles is None:
            return None
        ox, oy = self._origins[part_id]
        return [c._replace(at=(c.at[0] - ox, c.at[1] - oy),
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
            part = doc[eid]
            after = self._place_part(part, self._plan(part))
            if after != before:
                out.add(eid)
                rank = self._ranks[eid]
                for c in (*(before or {}).values(), *after.values()):
                    dirty |= {o for o in self._reaches.owners(c.box) if self._ranks[o] > rank}
        return out

    def _rank(self, doc: Document) -> None:
        self._ranks = {p.id: i for i, p in enumerate(doc.parts())}

    def _add_fixed(self, element: Element) -> None:
        boxes = obstacles(element, self.style)
        self._fixed[element.id] = boxes
        for kind, box in boxes:
            self._index.add(kind, box, element.id, (-1, 0))

    def _drop_captions(self, eid: str) -> None:
        for c in self.captions.pop(eid, {}).values():
            self._placed.remove(c.box, eid)

    def _drop(self, eid: str) -> None:
        """Forget everything of element ``eid``."""
        for _, box in self._fixed.pop(eid, ()):
            self._index.remove(box, eid)
        self._drop_captions(eid)
        reach = self._reach.pop(eid, None)
        if reach is not None:
            self._reaches.remove(reach, eid)
        self._origins.pop(eid, None)

    def _plan(self, part: PlacedPart) -> list[Plan]:
        """The part's captions to place, in placing order."""
        texts = part_texts(part, ac=self.ac)
        pinned = {role: (part.at[0] + dx, part.at[1] + dy) for role, dx, dy in part.captions}
        plan = []
        for i, role in enumerate(CAPTION_ROLES):
            lines = tuple(line for line in texts.get(role, ()) if line)
            if lines:
                found = spots(part.kind, part.rotation, part.mirror, self.style, role,
                              len(lines), lines_width(lines))
                plan.append((role, i, lines, found, pinned.get(role)))
        return plan

    def _place_sheet(self, parts: list[PlacedPart], plans: list[list[Plan]],
                     fixed: SpotScores) -> None:
        """Place every caption of the sheet, giving what :meth:`_place_part` gives part after
        part in placing order, with the spot search of :meth:`_best` run for few captions.

        A caption's score at a spot is its fixed obstacles' score plus the captions placed
        before it, which only add; so a caption takes the first spot of lowest fixed score
        unless a caption placed before it covers that spot. Every caption first takes that
        spot; those covered there (suspects) are placed by :meth:`_best`, in placing order, and
        one that lands elsewhere makes suspects of the later ones its new box covers;
        ``fixed`` scores spots against the fixed obstacles."""
        rows = [(part, entry) for part, plan in zip(parts, plans, strict=True) for entry in plan]
        fixed.start(rows)
        scores = fixed.scores
        ranks = self._ranks
        out, rooms, free = [], [], []
        for r, ((part, (role, _, lines, where, at)), known) in enumerate(zip(rows, scores,
                                                                              strict=True)):
            if known is None:
                out.append(_pinned(role, lines, at))
                continue
            if known[0]:
                rounded = [round(cost, DIGITS) for cost in known]
                best = min(rounded)
                k = rounded.index(best)
            else:
                best, k = 0.0, 0
            px, py = part.at
            ax, ay = where.at[k]
            x0, y0, x1, y1 = where.boxes[k]
            out.append(PlacedCaption(role, lines, (ax + px, ay + py), where.align[k],
                                     (x0 + px, y0 + py, x1 + px, y1 + py), best != 0))
            x0, y0, x1, y1 = where.rooms[k]
            rooms.append((x0 + px, y0 + py, x1 + px, y1 + py))
            free.append(r)
        suspects: list[int] = []
        if free:
            taken = np.array(free, dtype=np.int64)
            pr, pb, _, _ = overlapping(box_array(rooms), box_array(c.box for c in out))
            suspects = np.unique(taken[pr][pb < taken[pr]]).tolist()
        waiting = set(suspects)  # left out of the index of placed captions until placed
        self._placed = placed = CellIndex.of([
            ("caption", c.box, part.id, (ranks[part.id], entry[1]))
            for r, ((part, entry), c) in enumerate(zip(rows, out, strict=True))
            if r not in waiting])
        if not suspects:
            return self._keep(parts, plans, out)
        fixed.extend(suspects, SUSPECT_SPOTS)
        row_of = {(ranks[part.id], entry[1]): r for r, (part, entry) in enumerate(rows)}
        done = set()
        while suspects:
            r = heappop(suspects)
            if r in done:
                continue
            done.add(r)
            part, (role, i, lines, where, _) = rows[r]
            rank = (ranks[part.id], i)
            caption = self._best(role, lines, where, part.at, rank, scores[r])
            first, out[r] = out[r], caption
            moved = caption.box != first.box
            if moved and r not in waiting:
                placed.remove(first.box, part.id, rank)
            if moved or r in waiting:
                placed.add("caption", caption.box, part.id, rank)
            if moved:  # the later captions whose room (their box, padded) its new box covers
                x0, y0, x1, y1 = caption.box
                for held in placed.ranked_after((x0 - GROWN_X, y0 - GROWN_Y, x1 + GROWN_X,
                                                 y1 + GROWN_Y), rank):
                    later = row_of[held]
                    if scores[later] is not None:  # not dragged
                        heappush(suspects, later)
        return self._keep(parts, plans, out)

    def _keep(self, parts: list[PlacedPart], plans: list[list[Plan]],
              out: list[PlacedCaption]) -> None:
        """Hold the captions ``out`` (in placing order) of ``parts`` and their reaches."""
        captions = iter(out)
        for part, plan in zip(parts, plans, strict=True):
            found = {entry[0]: next(captions) for entry in plan}
            self._reach[part.id] = self._reach_of(part, plan, found)
            self._origins[part.id] = part.at
            self.captions[part.id] = found

    def _place_part(self, part: PlacedPart, plan: list[Plan]) -> dict[str, PlacedCaption]:
        """Place the part's captions after the captions placed before it."""
        rank = self._ranks[part.id]
        out: dict[str, PlacedCaption] = {}
        for role, i, lines, where, at in plan:
            if at is not None:  # dragged: kept whatever it covers
                caption = _pinned(role, lines, at)
            else:
                caption = self._best(role, lines, where, part.at, (rank, i), None)
            self._placed.add("caption", caption.box, part.id, (rank, i))
            out[role] = caption
        old = self._reach.pop(part.id, None)
        if old is not None:
            self._reaches.remove(old, part.id)
        self._reach[part.id] = self._reach_of(part, plan, out)
        self._reaches.add("reach", self._reach[part.id], part.id, (rank, 0))
        self._origins[part.id] = part.at
        self.captions[part.id] = out
        return out

    def _reach_of(self, part: PlacedPart, plan: list[Plan],
                  captions: dict[str, PlacedCaption]) -> Bounds:
        """Where the part's captions may go: their spots, its body and the dragged ones."""
        if not plan:
            return self._fixed[part.id][0][1]  # its body
        x0, y0, x1, y1 = _reach_at_origin(tuple([entry[3] for entry in plan]))
        px, py = part.at
        reach = (x0 + px, y0 + py, x1 + px, y1 + py)
        if part.captions:
            held = [captions[entry[0]].box for entry in plan if entry[4] is not None]
            return union([reach, *held]) if held else reach
        return reach

    def _best(self, role: str, lines: tuple[str, ...], where: Spots, origin: FPoint,
              rank: tuple[int, int], fixed: list[float] | None) -> PlacedCaption:
        """The first spot nothing covers, or else the least covered one (marked crowded);
        ``fixed`` holds the fixed obstacles' scores of the first spots when they are known;
        captions placed after ``rank`` are left out."""
        px, py = origin
        score: Callable[[Bounds], float] = self._index.score
        placed, ranks = self._placed.score, self._ranks
        known = 0 if fixed is None else len(fixed)
        best, best_k = float("inf"), 0
        crowded = True
        for k, (x0, y0, x1, y1) in enumerate(where.rooms):
            room = (x0 + px, y0 + py, x1 + px, y1 + py)
            cost = fixed[k] if k < known else score(room)
            if cost:
                cost = round(cost, DIGITS)
                if cost >= best:
                    continue
            covered = placed(room, rank, ranks)
            if covered:
                cost += round(covered, DIGITS)
            if cost < best:
                best, best_k = cost, k
                if cost == 0:
                    crowded = False
                    break
        ax, ay = where.at[best_k]
        x0, y0, x1, y1 = where.boxes[best_k]
        return PlacedCaption(role, lines, (ax + px, ay + py), where.align[best_k],
                             (x0 + px, y0 + py, x1 + px, y1 + py), crowded)


@contextmanager
def _collector_paused() -> Iterator[None]:
    """Hold off the cyclic garbage collector: placing a sheet makes many small tuples and no
    cycles, and the collections they would set off cost a fifth of the time."""
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()


def _pinned(role: str, lines: tuple[str, ...], at: FPoint) -> PlacedCaption:
    """A dragged caption: centred on ``at`` whatever it covers."""
    return PlacedCaption(role, lines, at, "c", text_box(lines, at, "c"))


@cache
def _reach_at_origin(spots: tuple[Spots, ...]) -> Bounds:
    """Where the captions with these ``spots`` may go (their symbol's body included)."""
    return union([found.reach for found in spots])


