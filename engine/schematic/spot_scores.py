"""The fixed obstacles' scores of the candidate spots of every caption of a sheet, worked out
in array operations (engine.schematic.placement places a whole sheet with them). Units: grid
units, x right, y down; scores in weighted square grid units (engine.schematic.obstacles)."""

from __future__ import annotations

from itertools import chain

import numpy as np

from .caption_spots import Spots
from .model import PlacedPart
from .obstacles import BoxCells, box_array, fixed_scores
from .symbols import FPoint

__all__ = ["DIGITS", "Plan", "SpotScores"]

#: Scores are compared to a millionth of a square grid unit, so that sums taken in another
#: order (one spot at a time or a whole sheet at once) choose the same spot.
DIGITS = 6

#: One caption to place: its role, its position among the part's captions, its lines, its
#: candidate spots, and the anchor point a dragged caption keeps (None: not dragged).
Plan = tuple[str, int, tuple[str, ...], Spots, FPoint | None]


class SpotScores:
    """The fixed obstacles' scores of the spots of every caption of a sheet, worked out in
    array operations: ``scores[row]`` lists those of a caption's first spots (None: dragged)."""

    def __init__(self, boxes: np.ndarray, weights: np.ndarray) -> None:
        """Scores against the fixed obstacles' ``boxes`` (a :func:`box_array`) costing
        ``weights`` per square unit."""
        self.boxes, self.weights = BoxCells(boxes), weights
        self.spots: list[Spots] = []
        self.shifts = np.zeros((0, 4))
        self.scores: list[list[float] | None] = []

    def start(self, rows: list[tuple[PlacedPart, Plan]]) -> None:
        """Score the first spot of the captions of ``rows`` not dragged, and all the spots of
        those whose first spot is not free."""
        self.spots = [where for _, (*_, where, _) in rows]
        at = np.fromiter(chain.from_iterable(part.at for part, _ in rows),
                         dtype=float).reshape(-1, 2)
        self.shifts = np.hstack((at, at))
        free = [r for r, (_, (*_, at)) in enumerate(rows) if at is None]
        self.scores = scores = [None] * len(rows)
        if not free:
            return
        spots = self.spots
        rooms = box_array(spots[r].rooms[0] for r in free) + self.shifts[free]
        for r, cost in zip(free, fixed_scores(rooms, self.boxes, self.weights).tolist(),
                           strict=True):
            scores[r] = [cost]
        self.extend([r for r in free if round(scores[r][0], DIGITS)], None)

    def extend(self, rows: list[int], upto: int | None) -> None:
        """Score the spots of the captions of ``rows`` up to the ``upto``-th (None: all)."""
        scores, spots = self.scores, self.spots
        start = [len(scores[r]) for r in rows]
        end = [len(spots[r].rooms) if upto is None else min(upto, len(spots[r].rooms))
               for r in rows]
        todo = [(r, a, b) for r, a, b in zip(rows, start, end, strict=True) if b > a]
        if not todo:
            return
        rooms = box_array(chain.from_iterable(spots[r].rooms[a:b] for r, a, b in todo))
        rooms += np.repeat(self.shifts[[r for r, _, _ in todo]], [b - a for _, a, b in todo],
                           axis=0)
        more = fixed_scores(rooms, self.boxes, self.weights).tolist()
        at = 0
        for r, a, b in todo:
            scores[r] += more[at:at + b - a]
            at += b - a
