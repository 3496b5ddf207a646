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
from itertools import compress, pairwise
from operator import is_not

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
from .obstacles import EPS, WEIGHTS, CellIndex, box_array, obstacles, overlapping
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

#: A box that came (True) or went (False) near a caption: a fixed obstacle, or a caption placed
#: before it.
Moved = tuple[Bounds, bool]
#: What each caption waits for in :meth:`Placement.update`: the boxes moved around it since it
#: was placed, or None: place it afresh.
Waiting = dict[tuple[str, int], list[Moved] | None]


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
    _plans: dict[str, list[Plan]] = field(default_factory=dict)
    # the spot each caption not dragged took (its position in the spots) and its score there
    _chosen: dict[str, dict[str, tuple[int, float]]] = field(default_factory=dict)
    _reach: dict[str, Bounds] = field(default_factory=dict)
    _ranks: dict[str, int] = field(default_factory=dict)
    _elements: list[Element] = field(default_factory=list)  # the document's, in its order
    _order: list[str] = field(default_factory=list)  # the parts' ids, in placing order
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
            plans = [placement._plan(part) for part in parts]
            placement._place_sheet(parts, plans,
                                   SpotScores(boxes, np.array([WEIGHTS[e[0]] for e in entries])))
            ranks, reach = placement._ranks, placement._reach
            for part, plan in zip(parts, plans, strict=True):
                found = _reach_of(part, plan)
                if found is not None:
                    reach[part.id] = found
            placement._reaches = CellIndex.of([("reach", box, eid, (ranks[eid], 0))
                                               for eid, box in reach.items()])
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
        (removed elements included).

        A caption's choice depends on its own text and spots, the fixed obstacles over its
        spots and the captions placed before it there. So only the captions of an edited part
        whose text or spots changed are placed afresh; one that a changed box reaches keeps
        its spot when no spot that box covers now beats it; and a caption that moves reaches
        the later ones its old and new boxes cover, which are looked at in placing order."""
        changed = list(changed)
        out = {eid for eid in changed if eid not in doc}
        if not self._rank(doc):
            return out | self._place_again(doc)
        waiting: Waiting = {}
        queue: list[tuple[tuple[int, int], str]] = []
        touched: list[list[Moved]] = []  # by element: boxes far apart are looked up apart
        present = {eid: doc[eid] for eid in changed if eid in doc}
        for eid in dict.fromkeys(changed):
            element = present.get(eid)
            touched.append(self._refix(eid, element) + self._replan(
                eid, element if isinstance(element, PlacedPart) else None, waiting, queue))
        for moved in touched:
            if moved:
                self._touch(moved, None, waiting, queue)
        while queue:
            rank, eid = heappop(queue)
            if self._settle(doc[eid], rank, waiting.pop((eid, rank[1])), waiting, queue):
                out.add(eid)
        return out

    def _rank(self, doc: Document) -> bool:
        """Hold the placing order of ``doc``'s parts; returns whether the parts held before
        kept their order among themselves (parts come and go, but a part taken off and put
        back in one step, for one, comes back last)."""
        elements, held = list(doc), self._elements
        self._elements = elements
        if len(elements) == len(held) and all(
                elements[k].id == held[k].id
                for k in compress(range(len(held)), map(is_not, elements, held))):
            return True  # the same ids in the same order (most edits replace elements)
        order = [e.id for e in elements if isinstance(e, PlacedPart)]
        if order == self._order:
            return True
        before, self._order = self._ranks, order
        self._ranks = {eid: i for i, eid in enumerate(order)}
        kept = [before[eid] for eid in order if eid in before]
        return all(a < b for a, b in pairwise(kept))

    def _place_again(self, doc: Document) -> set[str]:
        """Place the whole sheet afresh; returns the parts whose captions changed."""
        before = self.captions
        self.__dict__.update(Placement.of(doc, self.style, self.ac).__dict__)
        return {eid for eid in before.keys() | self.captions.keys()
                if before.get(eid) != self.captions.get(eid)}

    def _refix(self, eid: str, element: Element | None) -> list[Moved]:
        """Hold the fixed obstacles of ``element`` (None: removed) instead of those element
        ``eid`` had; returns the boxes gone and new."""
        old = self._fixed.pop(eid, [])
        new = [] if element is None else obstacles(element, self.style)
        if element is not None:
            self._fixed[eid] = new
        if new == old:
            return []
        for _, box in old:
            self._index.remove(box, eid)
        for kind, box in new:
            self._index.add(kind, box, eid, (-1, 0))
        gone, came = list(old), []
        for entry in new:  # the few boxes of one element: lists beat counting
            if entry in gone:
                gone.remove(entry)
            else:
                came.append(entry)
        return [*((box, False) for _, box in gone), *((box, True) for _, box in came)]

    def _replan(self, eid: str, part: PlacedPart | None, waiting: Waiting,
                queue: list[tuple[tuple[int, int], str]]) -> list[Moved]:
        """Hold the captions to place of ``part`` (None: element ``eid`` is no part, or gone)
        and queue those whose text, spots or origin changed; returns the boxes of its captions
        dropped."""
        plan = [] if part is None else self._plan(part)
        old = {entry[0]: entry for entry in self._plans.pop(eid, [])}
        moved = part is None or self._origins.get(eid) != part.at
        captions = self.captions.pop(eid, {})
        chosen = self._chosen.pop(eid, {})
        reach = self._reach.pop(eid, None)
        if reach is not None:
            self._reaches.remove(reach, eid)
        kept = {entry[0] for entry in plan}
        gone = [c for role, c in captions.items() if role not in kept]
        for c in gone:
            self._placed.remove(c.box, eid, CAPTION_ROLES.index(c.role))
            del captions[c.role]
            chosen.pop(c.role, None)
        if part is None:
            self._origins.pop(eid, None)
            return [(c.box, False) for c in gone]
        rank = self._ranks[eid]
        for entry in plan:
            if moved or old.get(entry[0]) != entry or entry[0] not in captions:
                waiting[(eid, entry[1])] = None
                heappush(queue, ((rank, entry[1]), eid))
        self._plans[eid], self._origins[eid] = plan, part.at
        self.captions[eid], self._chosen[eid] = captions, chosen
        reach = _reach_of(part, plan)
        if reach is not None:
            self._reach[eid] = reach
            self._reaches.add("reach", reach, eid, (rank, 0))
        return [(c.box, False) for c in gone]

    def _touch(self, moved: list[Moved], after: tuple[int, int] | None, waiting: Waiting,
               queue: list[tuple[tuple[int, int], str]]) -> None:
        """Queue the captions not dragged whose spots the boxes ``moved`` reach, placed after
        ``after`` (None: all). The parts are looked up once, for all the boxes."""
        ranks = self._ranks
        for owner in self._reaches.owners(union([box for box, _ in moved])):
            px, py = self._origins[owner]
            for _, i, _, where, at in self._plans[owner]:
                key = (owner, i)
                rank = (ranks[owner], i)
                if at is not None or (after is not None and rank <= after):
                    continue
                held = waiting.get(key, ())
                if held is None:
                    continue  # placed afresh anyway
                x0, y0, x1, y1 = where.reach
                x0, y0, x1, y1 = x0 + px, y0 + py, x1 + px, y1 + py
                seen = [(box, came) for box, came in moved
                        if min(box[2], x1) - max(box[0], x0) > EPS
                        and min(box[3], y1) - max(box[1], y0) > EPS]
                if not seen:
                    continue
                if held:
                    held += seen
                else:
                    waiting[key] = seen
                    heappush(queue, (rank, owner))

    def _settle(self, part: PlacedPart, rank: tuple[int, int], changes: list[Moved] | None,
                waiting: Waiting, queue: list[tuple[tuple[int, int], str]]) -> bool:
        """Place the caption of ``part`` at ``rank`` after the boxes ``changes`` changed around
        it (None: afresh), and queue the later captions its move reaches; returns whether the
        caption changed."""
        role, i, lines, where, at = next(e for e in self._plans[part.id] if e[1] == rank[1])
        captions, chosen = self.captions[part.id], self._chosen[part.id]
        old = captions.get(role)
        if at is not None:  # dragged: kept whatever it covers
            new = _pinned(role, lines, at)
            chosen.pop(role, None)
        else:
            stays = None if changes is None else self._stays(where, part.at, rank,
                                                             chosen[role], changes)
            if stays is None:
                new, k, cost = self._best(role, lines, where, part.at, rank)
            else:
                (k, cost), new = stays, old._replace(crowded=stays[1] != 0)
            chosen[role] = (k, cost)
        captions[role] = new
        if old is None or old.box != new.box:
            moved = [(new.box, True)]
            if old is not None:
                self._placed.remove(old.box, part.id, i)
                moved.append((old.box, False))
            self._placed.add("caption", new.box, part.id, rank)
            self._touch(moved, rank, waiting, queue)
        return new != old

    def _stays(self, where: Spots, origin: FPoint, rank: tuple[int, int],
               chosen: tuple[int, float], changes: list[Moved]) -> tuple[int, float] | None:
        """The spot a caption took and its score now, if it is still the first of least score
        after the boxes ``changes`` moved around it; else None.

        Its spots scored as when it was placed but where a box moved over them: a box that
        came only adds to a spot's score, so the spot taken is scored again if any box moved
        over it, another spot only if a box went from it; and none after the spot taken can
        beat a score of 0."""
        k, before = chosen
        px, py = origin
        near = [(x0 - px, y0 - py, x1 - px, y1 - py, came) for (x0, y0, x1, y1), came in changes]
        again = []
        for j, (x0, y0, x1, y1) in enumerate(where.rooms):
            for bx0, by0, bx1, by1, came in near:
                if (j == k or not came) and x0 < bx1 and bx0 < x1 and y0 < by1 and by0 < y1:
                    again.append(j)
                    break
        if not again:
            return chosen
        rooms = where.rooms
        x0, y0, x1, y1 = rooms[k]
        now = self._cost((x0 + px, y0 + py, x1 + px, y1 + py), rank) if k in again else before
        if now > before:
            return None
        for j in again:
            if j > k and now == 0:
                break
            if j != k:
                x0, y0, x1, y1 = rooms[j]
                room = (x0 + px, y0 + py, x1 + px, y1 + py)
                cost = round(self._index.score(room), DIGITS)
                if cost > now or (cost == now and j > k):
                    continue  # beaten by the fixed obstacles alone: the captions only add
                cost += round(self._placed.score(room, rank, self._ranks), DIGITS)
                if cost < now or (cost == now and j < k):
                    return None
        return k, now

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
        """Place every caption of the sheet, giving what placing part after part in placing
        order gives, with the spot search of :meth:`_best` run for few captions.

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
        out, chosen, rooms, free = [], [], [], []
        for r, ((part, (role, _, lines, where, at)), known) in enumerate(zip(rows, scores,
                                                                              strict=True)):
            if known is None:
                out.append(_pinned(role, lines, at))
                chosen.append(None)
                continue
            if known[0]:
                rounded = [round(cost, DIGITS) for cost in known]
                best = min(rounded)
                k = rounded.index(best)
            else:
                best, k = 0.0, 0
            out.append(_caption(role, lines, where, part.at, k, best != 0))
            chosen.append((k, best))
            px, py = part.at
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
            caption, k, cost = self._best(role, lines, where, part.at, rank, scores[r])
            first, out[r], chosen[r] = out[r], caption, (k, cost)
            moved = caption.box != first.box
            if moved and r not in waiting:
                placed.remove(first.box, part.id, i)
            if moved or r in waiting:
                placed.add("caption", caption.box, part.id, rank)
            if moved:  # the later captions whose room (their box, padded) its new box covers
                x0, y0, x1, y1 = caption.box
                for held in placed.ranked_after((x0 - GROWN_X, y0 - GROWN_Y, x1 + GROWN_X,
                                                 y1 + GROWN_Y), rank):
                    later = row_of[held]
                    if scores[later] is not None:  # not dragged
                        heappush(suspects, later)
        self._keep(parts, plans, out, chosen)

    def _keep(self, parts: list[PlacedPart], plans: list[list[Plan]],
              out: list[PlacedCaption], chosen: list[tuple[int, float] | None]) -> None:
        """Hold the captions ``out`` (in placing order) of ``parts``, and the spot each took
        with its score (``chosen``, None for a dragged one)."""
        found = iter(zip(out, chosen, strict=True))
        for part, plan in zip(parts, plans, strict=True):
            captions, spots_taken = {}, {}
            for entry in plan:
                caption, taken = next(found)
                captions[entry[0]] = caption
                if taken is not None:
                    spots_taken[entry[0]] = taken
            self.captions[part.id], self._chosen[part.id] = captions, spots_taken
            self._plans[part.id], self._origins[part.id] = plan, part.at

    def _best(self, role: str, lines: tuple[str, ...], where: Spots, origin: FPoint,
              rank: tuple[int, int], fixed: list[float] | None = None
              ) -> tuple[PlacedCaption, int, float]:
        """The first spot nothing covers, or else the least covered one (marked crowded),
        with its position among the spots and its score; ``fixed`` holds the fixed
        obstacles' scores of the first spots when they are known; captions placed after
        ``rank`` are left out."""
        px, py = origin
        score: Callable[[Bounds], float] = self._index.score
        placed, ranks = self._placed.score, self._ranks
        known = 0 if fixed is None else len(fixed)
        best, best_k = float("inf"), 0
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
                    break
        return _caption(role, lines, where, origin, best_k, best != 0), best_k, best

    def _cost(self, room: Bounds, rank: tuple[int, int]) -> float:
        """The score of ``room`` (on the sheet) for the caption of ``rank``: the fixed
        obstacles and the captions placed before it that it covers, as :meth:`_best` counts
        them."""
        return (round(self._index.score(room), DIGITS)
                + round(self._placed.score(room, rank, self._ranks), DIGITS))


def _caption(role: str, lines: tuple[str, ...], where: Spots, origin: FPoint, k: int,
             crowded: bool) -> PlacedCaption:
    """The caption at the ``k``-th of spots ``where`` around a symbol at ``origin``."""
    px, py = origin
    ax, ay = where.at[k]
    x0, y0, x1, y1 = where.boxes[k]
    return PlacedCaption(role, lines, (ax + px, ay + py), where.align[k],
                         (x0 + px, y0 + py, x1 + px, y1 + py), crowded)


def _reach_of(part: PlacedPart, plan: list[Plan]) -> Bounds | None:
    """Where the spots of the part's captions not dragged lie (None: it has none)."""
    free = tuple([entry[3] for entry in plan if entry[4] is None])
    if not free:
        return None
    x0, y0, x1, y1 = _reach_at_origin(free)
    px, py = part.at
    return (x0 + px, y0 + py, x1 + px, y1 + py)


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
    """The box holding every room of these ``spots`` (around a symbol at the origin)."""
    return union([found.reach for found in spots])


