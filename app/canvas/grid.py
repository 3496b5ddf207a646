"""Sheet coordinates on the canvas: grid units (the document's) and scene units (Qt's).

One grid unit is :data:`UNIT` scene units; at zoom 1 a scene unit is one device-independent
pixel. Document positions are integer grid points; :func:`snap` rounds to the snapping step.
"""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF

from engine.symbols import Bounds, Point

__all__ = ["UNIT", "rect_of", "snap", "to_grid", "to_scene"]

#: Scene units per grid unit.
UNIT = 20.0


def to_scene(p: tuple[float, float]) -> QPointF:
    return QPointF(p[0] * UNIT, p[1] * UNIT)


def to_grid(p: QPointF) -> tuple[float, float]:
    return (p.x() / UNIT, p.y() / UNIT)


def snap(p: tuple[float, float], step: int = 1) -> Point:
    """The nearest grid point whose coordinates are multiples of ``step``."""
    return (round(p[0] / step) * step, round(p[1] / step) * step)


def rect_of(bounds: Bounds) -> QRectF:
    """Scene rectangle of (xmin, ymin, xmax, ymax) grid bounds."""
    x0, y0, x1, y1 = bounds
    return QRectF(x0 * UNIT, y0 * UNIT, (x1 - x0) * UNIT, (y1 - y0) * UNIT)
