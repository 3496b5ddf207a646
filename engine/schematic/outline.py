"""The one rule of region membership: which points a drawn outline holds and which parts and
blocks it takes in. The canvas (app/regions.py, the boundary tool) and the collapse both ask
here.

An outline is a closed polygon in grid units (floats), as :class:`~engine.schematic.Region`
keeps it. A point lies inside by the even-odd rule (a ray from it crosses the outline an odd
number of times), so a freehand lasso that crosses itself still decides. A part or block belongs
inside when the middle of its symbol's body does, so a lasso may cut across leads and wires.
Nothing is inside an outline of fewer than three points.

>>> square = ((0, 0), (4, 0), (4, 4), (0, 4))
>>> inside(square, (2, 2)), inside(square, (5, 2))
(True, False)
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from .document import Document
from .model import Block, PlacedPart
from .symbols import Bounds, placed_bounds

__all__ = ["Outline", "body_bounds", "contains", "enclosed", "inside"]

Outline = tuple[tuple[float, float], ...]


def contains(outline: Sequence[tuple[float, float]], points: np.ndarray) -> np.ndarray:
    """Per point of ``points`` (an n x 2 array, grid units): whether it lies inside
    ``outline`` by the even-odd rule. Linear in points times outline corners."""
    points = np.asarray(points, dtype=float).reshape(-1, 2)
    hit = np.zeros(len(points), dtype=bool)
    if len(outline) < 3:
        return hit
    x, y = points[:, 0], points[:, 1]
    corners = np.asarray(outline, dtype=float)
    for (x0, y0), (x1, y1) in zip(corners, np.roll(corners, -1, axis=0), strict=True):
        spans = (y0 > y) != (y1 > y)  # the edge spans the point's height (never a flat edge)
        with np.errstate(divide="ignore", invalid="ignore"):
            crossing = x0 + (y - y0) * (x1 - x0) / (y1 - y0)
        hit ^= spans & (x < crossing)
    return hit


def inside(outline: Sequence[tuple[float, float]], point: tuple[float, float]) -> bool:
    """Whether ``point`` lies inside ``outline`` by the even-odd rule."""
    return bool(contains(outline, np.array([point]))[0])


def body_bounds(element: PlacedPart | Block, style: str = "iec") -> Bounds:
    """(xmin, ymin, xmax, ymax) of the element's symbol on the sheet, grid units."""
    if isinstance(element, Block):
        return placed_bounds("block", element.at, element.rotation, element.mirror, style=style,
                             form=element.form)
    return placed_bounds(element.kind, element.at, element.rotation, element.mirror, style=style)


def enclosed(doc: Document, outline: Outline, style: str = "iec") -> frozenset[str]:
    """Ids of the parts and blocks whose body's middle lies inside ``outline``."""
    members = [e for e in doc if isinstance(e, PlacedPart | Block)]
    if len(outline) < 3 or not members:
        return frozenset()
    boxes = np.array([body_bounds(e, style) for e in members], dtype=float)
    middles = (boxes[:, :2] + boxes[:, 2:]) / 2
    return frozenset(e.id for e, hit in zip(members, contains(outline, middles), strict=True)
                     if hit)
