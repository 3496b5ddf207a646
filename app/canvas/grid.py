"""Sheet coordinates on the canvas: grid units (the document's) and scene units (Qt's).

One grid unit is :data:`UNIT` scene units; at zoom 1 a scene unit is one device-independent
pixel. Document positions are integer grid points; :func:`snap` rounds to the snapping step.
"""

from __future__ import annotations

from PySide6.QtCore import QPointF

from portcut.engine.schematic.symbols import Point

__all__ = ["UNIT", "snap", "to_grid", "to_scene"]

#: Scene units per grid unit.
UNIT = 20.0


def to_scene(p: tuple[float, float]) -> QPointF:
    return QPointF(p[0] * UNIT, p[1] * UNIT)


def to_grid(p: QPointF) -> tuple[float, float]:
    return (p.x() / UNIT, p.y() / UNIT)


def snap(p: tuple[float, float], step: int = 1) -> Point:
    """The nearest grid point whose coordinates are multiples of ``step``."""
    return (round(p[0] / step) * step, round(p[1] / step) * step)
