"""What a caption must keep clear of, and how much covering it costs.

Every element puts fixed boxes on the sheet (symbol bodies, wire strokes, junction dots, net
names); placed captions add theirs. A spot's score is the area it shares with each box, weighted
by the box's kind. :class:`CellIndex` answers that for one box at a time, boxes coming and going
as a sheet is edited; :func:`fixed_scores` answers it for every spot of a whole sheet at once,
in array operations, giving the same sums. Units: grid units, x right, y down.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Iterable
from functools import cache
from itertools import chain, pairwise

import numpy as np

from .caption_spots import text_box
from .model import Block, Element, Junction, NetLabel, PlacedPart, Wire
from .symbols import JUNCTION_RADIUS, STROKE_WIDTH, Bounds, place, placed_bounds, symbol

__all__ = ["WEIGHTS", "BoxCells", "CellIndex", "box_array", "fixed_scores", "obstacles",
           "overlapping"]

#: Cost per square grid unit of covering each kind of obstacle.
WEIGHTS = {"body": 100.0, "caption": 100.0, "wire": 20.0, "dot": 20.0}
#: Side of the square cells of the obstacle index, grid units.
CELL = 8.0
#: Side of the cells :func:`fixed_scores` pairs spots with boxes in (small: spots are small).
JOIN_CELL = 2.0
#: Overlaps thinner than this count as touching, grid units.
EPS = 1e-9
WIRE_HALF = STROKE_WIDTH / 2

Entry = tuple[str, Bounds, str, tuple[int, int]]


@cache
def _body_at_origin(kind: str, rotation: int, mirror: bool, style: str, form: str) -> Bounds:
    return placed_bounds(kind, (0.0, 0.0), rotation, mirror, style=style, form=form)


def body(element: Element, style: str) -> Bounds | None:
    """The sheet box of a part's, block's or marker's symbol (None for wires and dots)."""
    if isinstance(element, PlacedPart):
        key = (element.kind, element.rotation, element.mirror, style, "thevenin")
    elif isinstance(element, Block):
        key = ("block", element.rotation, element.mirror, style, element.form)
    elif isinstance(element, NetLabel):
        kind = "ground" if element.style == "ground" else "label"
        key = (kind, element.rotation, False, style, "thevenin")
    else:
        return None
    x0, y0, x1, y1 = _body_at_origin(*key)
    x, y = element.at
    return (x0 + x, y0 + y, x1 + x, y1 + y)


def obstacles(element: Element, style: str) -> list[tuple[str, Bounds]]:
    """The fixed boxes an element puts on the sheet, with their kinds: bodies, wire strokes,
    dots, and the texts that are not placed by caption placement (net names). A part's body
    comes first."""
    if isinstance(element, Wire):
        return [("wire", (min(x0, x1) - WIRE_HALF, min(y0, y1) - WIRE_HALF,
                          max(x0, x1) + WIRE_HALF, max(y0, y1) + WIRE_HALF))
                for (x0, y0), (x1, y1) in pairwise(element.points)]
    if isinstance(element, Junction):
        x, y = element.at
        r = JUNCTION_RADIUS
        return [("dot", (x - r, y - r, x + r, y + r))]
    box = body(element, style)
    if box is None:
        return []
    out = [("body", box)]
    if isinstance(element, NetLabel) and element.name and element.style != "ground":
        anchor = symbol("label", style).anchor("name")
        if anchor is not None:
            placed = place(anchor, element.at, element.rotation)
            out.append(("caption", text_box((element.name,), placed.at, placed.align)))
    return out


class CellIndex:
    """Boxes by grid cell, each with its kind, owner and rank (the order of placing: fixed
    obstacles rank -1, a caption the position of its part and role)."""

    def __init__(self) -> None:
        self.cells: dict[tuple[int, int], list[Entry]] = defaultdict(list)

    @classmethod
    def of(cls, entries: list[Entry], boxes: np.ndarray | None = None) -> CellIndex:
        """An index holding ``entries``, built in array operations (as :meth:`add` would);
        ``boxes``: their boxes as a :func:`box_array`, where already made."""
        index = cls()
        if not entries:
            return index
        if boxes is None:
            boxes = box_array(e[1] for e in entries)
        lo = np.floor_divide(boxes[:, :2], CELL).astype(np.int64)
        span = np.floor_divide(boxes[:, 2:], CELL).astype(np.int64) - lo + 1
        row, i, j = _expand(lo, span)
        order = np.lexsort((row, j, i))
        row, i, j = row[order], i[order], j[order]
        starts = np.flatnonzero(np.r_[True, (i[1:] != i[:-1]) | (j[1:] != j[:-1])])
        ends = np.r_[starts[1:], len(row)].tolist()
        rows = row.tolist()
        index.cells.update(
            ((a, b), [entries[r] for r in rows[start:end]])
            for a, b, start, end in zip(i[starts].tolist(), j[starts].tolist(),
                                         starts.tolist(), ends, strict=True))
        return index

    def add(self, kind: str, box: Bounds, owner: str, rank: tuple[int, int]) -> None:
        entry = (kind, box, owner, rank)
        cells = self.cells
        x0, y0, x1, y1 = box
        j0, j1 = int(y0 // CELL), int(y1 // CELL) + 1
        for i in range(int(x0 // CELL), int(x1 // CELL) + 1):
            for j in range(j0, j1):
                cells[(i, j)].append(entry)

    def remove(self, box: Bounds, owner: str, role: int | None = None) -> None:
        """Drop ``owner``'s entries of ``box`` (with ``role``: only the caption of that position
        among the part's captions, the second number of its rank)."""
        for cell in _cells(box):
            entries = self.cells.get(cell)
            if entries:
                self.cells[cell] = [e for e in entries if not (
                    e[2] == owner and e[1] == box and role in (None, e[3][1]))]

    def owners(self, box: Bounds) -> set[str]:
        """Owners of the boxes overlapping ``box``."""
        bx0, by0, bx1, by1 = box
        cells = self.cells
        found = set()
        for cell in _cells(box):
            for _, (x0, y0, x1, y1), owner, _ in cells.get(cell, ()):
                if min(bx1, x1) - max(bx0, x0) > EPS and min(by1, y1) - max(by0, y0) > EPS:
                    found.add(owner)
        return found

    def ranked_after(self, box: Bounds, rank: tuple[int, int]) -> set[tuple[int, int]]:
        """Ranks after ``rank`` of the boxes sharing some area with ``box``."""
        bx0, by0, bx1, by1 = box
        cells = self.cells
        found = set()
        j0, j1 = int(by0 // CELL), int(by1 // CELL) + 1
        for i in range(int(bx0 // CELL), int(bx1 // CELL) + 1):
            for j in range(j0, j1):
                for _, (x0, y0, x1, y1), _, entry_rank in cells.get((i, j), ()):
                    if entry_rank > rank and x0 < bx1 and bx0 < x1 and y0 < by1 and by0 < y1:
                        found.add(entry_rank)
        return found

    def score(self, box: Bounds, rank: tuple[int, int] | None = None,
              ranks: dict[str, int] | None = None) -> float:
        """The weighted area ``box`` shares with the boxes held; with ``rank``, captions
        placed after that rank (by ``ranks`` of their owners) are left out."""
        total = 0.0
        bx0, by0, bx1, by1 = box
        cells = self.cells
        i0, i1 = int(bx0 // CELL), int(bx1 // CELL)
        j0, j1 = int(by0 // CELL), int(by1 // CELL)
        alone = i0 == i1 and j0 == j1  # in one cell, which holds every overlap's corner
        for i in range(i0, i1 + 1):
            for j in range(j0, j1 + 1):
                for kind, (x0, y0, x1, y1), owner, entry_rank in cells.get((i, j), ()):
                    if x0 >= bx1 or x1 <= bx0 or y0 >= by1 or y1 <= by0:
                        continue  # apart (the common case, settled without arithmetic)
                    # max and min written out: this is the innermost loop of placing
                    left = x0 if x0 > bx0 else bx0
                    top = y0 if y0 > by0 else by0
                    w = (x1 if x1 < bx1 else bx1) - left
                    h = (y1 if y1 < by1 else by1) - top
                    # an overlap is counted in the one cell holding its top-left corner
                    if w <= EPS or h <= EPS or (not alone and (
                            int(left // CELL) != i or int(top // CELL) != j)):
                        continue
                    if rank is not None and entry_rank[0] >= 0 and (
                            ranks.get(owner, -1), entry_rank[1]) >= rank:
                        continue  # placed after this one: not an obstacle for it
                    total += WEIGHTS[kind] * w * h
        return total


def box_array(boxes: Iterable[Bounds]) -> np.ndarray:
    """``boxes`` as an array, one row per box (x0 y0 x1 y1); read as one flat run of numbers,
    which numpy takes far faster than a list of tuples."""
    return np.fromiter(chain.from_iterable(boxes), dtype=float).reshape(-1, 4)


def _shared(a: Bounds, b: Bounds) -> float:
    w = min(a[2], b[2]) - max(a[0], b[0])
    h = min(a[3], b[3]) - max(a[1], b[1])
    return w * h if w > EPS and h > EPS else 0.0


def _cells(box: Bounds) -> list[tuple[int, int]]:
    i0, j0 = int(box[0] // CELL), int(box[1] // CELL)
    i1, j1 = int(box[2] // CELL), int(box[3] // CELL)
    return [(i, j) for i in range(i0, i1 + 1) for j in range(j0, j1 + 1)]


def _expand(lo: np.ndarray, span: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Each box's cells, from its first cell ``lo`` and its ``span`` of cells (rows i j): the
    box's row and the cell's i and j, one row per cell."""
    count = span[:, 0] * span[:, 1]
    row = np.repeat(np.arange(len(lo)), count)
    k = np.arange(int(count.sum())) - np.repeat(np.cumsum(count) - count, count)
    wide = span[row, 0]
    return row, lo[row, 0] + k % wide, lo[row, 1] + k // wide


def _covered(boxes: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """For each :data:`JOIN_CELL` cell each box touches: the box's row and the cell's key."""
    lo = np.floor_divide(boxes[:, :2], JOIN_CELL).astype(np.int64)
    span = np.floor_divide(boxes[:, 2:], JOIN_CELL).astype(np.int64) - lo + 1
    row, i, j = _expand(lo, span)
    return row, _key(i, j)


def _key(i: np.ndarray, j: np.ndarray) -> np.ndarray:
    return i * (1 << 32) + j  # one number per cell (|j| stays far below 2**31)


def fixed_scores(rooms: np.ndarray, boxes: np.ndarray | BoxCells,
                 weights: np.ndarray) -> np.ndarray:
    """The weighted area each of ``rooms`` (rows x0 y0 x1 y1) shares with ``boxes`` (same
    layout, or already by cell; cost per square unit in ``weights``): :meth:`CellIndex.score`
    for all at once."""
    cells = boxes if isinstance(boxes, BoxCells) else BoxCells(boxes)
    if not len(rooms) or not len(cells.boxes):
        return np.zeros(len(rooms))
    pr, pb, w, h = cells.pairs(rooms)
    return np.bincount(pr, weights=weights[pb] * w * h, minlength=len(rooms))


def overlapping(rooms: np.ndarray, boxes: np.ndarray) -> tuple[np.ndarray, ...]:
    """Every pair of one of ``rooms`` and one of ``boxes`` (rows x0 y0 x1 y1) sharing some
    area: the room's row, the box's row, and the width and height they share."""
    return BoxCells(boxes).pairs(rooms)


class BoxCells:
    """Boxes (rows x0 y0 x1 y1) by the :data:`JOIN_CELL` cells they touch, to be paired with
    many rooms, in one or several calls of :meth:`pairs`."""

    def __init__(self, boxes: np.ndarray) -> None:
        self.boxes = boxes
        box_row, box_key = _covered(boxes)
        order = np.argsort(box_key, kind="stable")
        self.row = box_row[order]
        self.cells, self.first, self.held = np.unique(box_key[order], return_index=True,
                                                      return_counts=True)

    def pairs(self, rooms: np.ndarray) -> tuple[np.ndarray, ...]:
        """Every pair of one of ``rooms`` and one of the boxes sharing some area: the room's
        row, the box's row, and the width and height they share.

        Rooms and boxes are paired through the cells both touch; a pair's overlap is counted
        in the one cell holding its top-left corner, so it is counted once."""
        boxes, cells = self.boxes, self.cells
        if not len(rooms) or not len(boxes):
            none = np.zeros(0, dtype=np.int64)
            return none, none, np.zeros(0), np.zeros(0)
        room_row, room_key = _covered(rooms)
        at = np.minimum(np.searchsorted(cells, room_key), len(cells) - 1)
        n = np.where(cells[at] == room_key, self.held[at], 0)
        k = np.arange(int(n.sum())) - np.repeat(np.cumsum(n) - n, n)
        pr = np.repeat(room_row, n)
        pb = self.row[np.repeat(self.first[at], n) + k]
        # column by column: gathers from one-dimensional arrays are the cheap kind
        x0 = np.maximum(rooms[:, 0][pr], boxes[:, 0][pb])
        y0 = np.maximum(rooms[:, 1][pr], boxes[:, 1][pb])
        w = np.minimum(rooms[:, 2][pr], boxes[:, 2][pb]) - x0
        h = np.minimum(rooms[:, 3][pr], boxes[:, 3][pb]) - y0
        here = _key(np.floor_divide(x0, JOIN_CELL).astype(np.int64),
                    np.floor_divide(y0, JOIN_CELL).astype(np.int64)) == np.repeat(room_key, n)
        keep = (w > EPS) & (h > EPS) & here
        return pr[keep], pb[keep], w[keep], h[keep]
