"""Symbol geometry shared by every renderer (the Qt canvas and the SVG writer).

Coordinates are grid units, x to the right and y downwards (screen convention). A symbol is
defined in its own frame with its origin at the placed position; :func:`transform` maps a local
point to the sheet: first the mirror (x -> -x), then a clockwise rotation by 0/90/180/270 degrees.
"""

from __future__ import annotations

__all__ = ["PINS", "Point", "pin_positions", "transform"]

Point = tuple[int, int]

#: Pin positions in the symbol's own frame, in the order of the kind's node roles
#: (engine.circuit.KINDS). "ground" and "label" are net markers; "block" is a collapsed region
#: (pins: plus, minus).
PINS: dict[str, tuple[Point, ...]] = {
    "resistor": ((-2, 0), (2, 0)),
    "capacitor": ((-2, 0), (2, 0)),
    "inductor": ((-2, 0), (2, 0)),
    "impedance": ((-2, 0), (2, 0)),
    "voltage_source": ((-2, 0), (2, 0)),
    "current_source": ((-2, 0), (2, 0)),
    "ccvs": ((-2, 0), (2, 0)),
    "cccs": ((-2, 0), (2, 0)),
    "vcvs": ((2, -2), (2, 2), (-2, -2), (-2, 2)),
    "vccs": ((2, -2), (2, 2), (-2, -2), (-2, 2)),
    "opamp": ((-3, 1), (-3, -1), (3, 0)),
    "coupling": (),
    "ground": ((0, 0),),
    "label": ((0, 0),),
    "block": ((3, -2), (3, 2)),
}


def transform(point: tuple[float, float], rotation: int = 0,
              mirror: bool = False) -> tuple[float, float]:
    """Local symbol point -> offset on the sheet: mirror x first, then rotate clockwise."""
    x, y = point
    if mirror:
        x = -x
    turns = (rotation // 90) % 4
    for _ in range(turns):
        x, y = -y, x
    return (x, y)


def pin_positions(kind: str, at: Point, rotation: int = 0,
                  mirror: bool = False) -> tuple[Point, ...]:
    """Sheet positions of a placed symbol's pins, in the order of :data:`PINS`."""
    ax, ay = at
    out = []
    for pin in PINS[kind]:
        dx, dy = transform(pin, rotation, mirror)
        out.append((ax + int(dx), ay + int(dy)))
    return tuple(out)
