"""Symbol geometry shared by every renderer (the Qt canvas and the SVG writer).

Coordinates are grid units, x to the right and y downwards (screen convention). A symbol is
defined in its own frame with its origin at the placed position; :func:`transform` maps a local
point to the sheet: first the mirror (x -> -x), then a clockwise rotation by 0/90/180/270 degrees.

:func:`symbol` gives a :class:`Symbol`: plain shapes (:class:`Line`, :class:`Arc`,
:class:`Circle`, :class:`Polygon`) in the local frame, its pins (the same as :data:`PINS`), its
text anchors and its bounds. Renderers apply the placement transform to the shapes (a rotation
by a multiple of 90 degrees and a mirror keep every shape of the same type, see :func:`place`)
and draw text upright at the placed anchor, aligned by :func:`place` as well.

The shapes, their placing and text setting live in engine/schematic/shapes.py and each kind's
drawing in engine/schematic/symbol_bodies.py; this module gathers them and re-exports the shapes.

Styles: ``"iec"`` (IEC 60617 forms, the default) and ``"ieee"`` (IEEE 315 forms). Resistor:
rectangle / zigzag. Inductor: semicircular humps / looped coil. Independent voltage source:
circle crossed by the conductor with + and − beside / circle with + and − inside. Independent
current source: circle with a bar across the conductor and an arrowhead on the lead towards
``to`` / circle with an arrow inside towards ``to``. Controlled sources are diamonds in both
(common practice). Everything else is the same in both styles.
"""

from __future__ import annotations

from functools import cache

from .shapes import (
    ALIGNS,
    CAP_HEIGHT,
    LINE_PITCH,
    MARK_TEXT,
    ROLES,
    Arc,
    Bounds,
    Circle,
    FPoint,
    Line,
    Point,
    Polygon,
    Shape,
    Symbol,
    TextAnchor,
    moved,
    place,
    shape_bounds,
    text_baselines,
    text_bounds,
    text_width,
    transform,
    union_bounds,
)
from .symbol_bodies import BODIES, block_body

__all__ = [
    "ALIGNS",
    "BLOCK_FORMS",
    "CAP_HEIGHT",
    "COUPLING_DOT_RADIUS",
    "FONT_SIZE",
    "JUNCTION_RADIUS",
    "LINE_PITCH",
    "MARK_FONT_SIZE",
    "MARK_TEXT",
    "PINS",
    "ROLES",
    "STROKE_WIDTH",
    "STYLES",
    "Arc",
    "Bounds",
    "Circle",
    "FPoint",
    "Line",
    "Point",
    "Polygon",
    "Shape",
    "Symbol",
    "TextAnchor",
    "pin_positions",
    "place",
    "placed_bounds",
    "shape_bounds",
    "symbol",
    "text_baselines",
    "text_bounds",
    "text_width",
    "transform",
]

#: Pin positions in the symbol's own frame, in the order of the kind's node roles
#: (engine.solve.circuit.KINDS). "ground" and "label" are net markers; "block" is a collapsed region
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
    "opamp_finite": ((-3, 1), (-3, -1), (3, 0)),
    "bjt": ((-2, 0), (1, -2), (1, 2)),
    "mosfet": ((-2, 0), (1, -2), (1, 2)),
    "measured_source": ((3, -2), (3, 2)),
    "coupling": (),
    "ground": ((0, 0),),
    "label": ((0, 0),),
    "block": ((3, -2), (3, 2)),
}

STYLES = ("iec", "ieee")

#: Drawing weights in grid units, shared by every renderer.
STROKE_WIDTH = 0.12        # symbol strokes and wires
JUNCTION_RADIUS = 0.25     # the dot where three or more connections meet
COUPLING_DOT_RADIUS = 0.16  # the dot at a coupled inductor's first node
FONT_SIZE = 1.1            # designators, values, net names
MARK_FONT_SIZE = 0.9       # + and − polarity marks
BLOCK_FORMS = ("thevenin", "norton")


def pin_positions(kind: str, at: Point, rotation: int = 0,
                  mirror: bool = False) -> tuple[Point, ...]:
    """Sheet positions of a placed symbol's pins, in the order of :data:`PINS`."""
    ax, ay = at
    out = []
    for pin in PINS[kind]:
        dx, dy = transform(pin, rotation, mirror)
        out.append((ax + int(dx), ay + int(dy)))
    return tuple(out)


def placed_bounds(kind: str, at: FPoint, rotation: int = 0, mirror: bool = False, *,
                  style: str = "iec", form: str = "thevenin") -> Bounds:
    """Sheet bounds of a placed symbol's shapes (text not included), grid units."""
    x0, y0, x1, y1 = symbol(kind, style, form).bounds
    corners = [moved(p, at, rotation, mirror) for p in ((x0, y0), (x1, y1))]
    xs = [c[0] for c in corners]
    ys = [c[1] for c in corners]
    return (min(xs), min(ys), max(xs), max(ys))


def symbol(kind: str, style: str = "iec", form: str = "thevenin") -> Symbol:
    """The symbol of ``kind`` (a key of :data:`PINS`) in ``style`` ("iec" or "ieee").

    ``form`` ("thevenin" or "norton") selects the drawing of a collapsed ``"block"`` and is
    ignored for every other kind. Results are cached and immutable.
    """
    if kind not in PINS:
        raise KeyError(f"no symbol for kind {kind!r}; known kinds: {', '.join(PINS)}")
    if style not in STYLES:
        raise ValueError(f"symbol style must be one of {STYLES}, got {style!r}")
    if kind == "block" and form not in BLOCK_FORMS:
        raise ValueError(f"block form must be one of {BLOCK_FORMS}, got {form!r}")
    return _built(kind, style, form if kind == "block" else "")


@cache
def _built(kind: str, style: str, form: str) -> Symbol:
    shapes, anchors = block_body(style, form) if kind == "block" else BODIES[kind](style)
    bounds = union_bounds([shape_bounds(s) for s in shapes])
    return Symbol(kind, tuple(shapes), PINS[kind], tuple(anchors), bounds)
