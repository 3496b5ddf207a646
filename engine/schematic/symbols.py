"""Symbol geometry shared by every renderer (the Qt canvas and the SVG writer).

Coordinates are grid units, x to the right and y downwards (screen convention). A symbol is
defined in its own frame with its origin at the placed position; :func:`transform` maps a local
point to the sheet: first the mirror (x -> -x), then a clockwise rotation by 0/90/180/270 degrees.

:func:`symbol` gives a :class:`Symbol`: plain shapes (:class:`Line`, :class:`Arc`,
:class:`Circle`, :class:`Polygon`) in the local frame, its pins (the same as :data:`PINS`), its
text anchors and its bounds. Renderers apply the placement transform to the shapes (a rotation
by a multiple of 90 degrees and a mirror keep every shape of the same type, see :func:`place`)
and draw text upright at the placed anchor, aligned by :func:`place` as well.

Angles of an :class:`Arc` are degrees counterclockwise *as seen on screen*, measured from the
+x axis: 0 points right, 90 points up (towards -y). A point at angle ``a`` therefore sits at
``(cx + r cos a, cy - r sin a)``. ``span_deg`` is positive for a counterclockwise sweep.

Styles: ``"iec"`` (IEC 60617 forms, the default) and ``"ieee"`` (IEEE 315 forms). Resistor:
rectangle / zigzag. Inductor: semicircular humps / looped coil. Independent voltage source:
circle crossed by the conductor with + and − beside / circle with + and − inside. Independent
current source: circle with a bar across the conductor and an arrowhead on the lead towards
``to`` / circle with an arrow inside towards ``to``. Controlled sources are diamonds in both
(common practice). Everything else is the same in both styles.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from functools import cache

__all__ = [
    "ALIGNS",
    "BLOCK_FORMS",
    "COUPLING_DOT_RADIUS",
    "FONT_SIZE",
    "JUNCTION_RADIUS",
    "MARK_FONT_SIZE",
    "MARK_TEXT",
    "PINS",
    "ROLES",
    "STROKE_WIDTH",
    "STYLES",
    "Arc",
    "Bounds",
    "Circle",
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

Point = tuple[int, int]
FPoint = tuple[float, float]
#: (xmin, ymin, xmax, ymax) in grid units.
Bounds = tuple[float, float, float, float]

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

#: Text anchor roles. "designator" and "value" appear at most once per symbol ("value" may hold
#: several lines, stacked by :func:`text_baselines`); "name" is a net label's text; "plus" and
#: "minus" are polarity marks (a symbol may have several, drawn as :data:`MARK_TEXT`); "dot" is
#: where an inductor's coupling dot goes (its first node) when a coupling names it.
ROLES = ("designator", "value", "name", "plus", "minus", "dot")
MARK_TEXT = {"plus": "+", "minus": "−"}

#: Text alignment: the direction from the anchor point in which the text lies. "n": the text
#: sits above the point, horizontally centred (its last baseline at the point); "s": below it;
#: "e": to the right, starting at the point, vertically centred; "w": to the left, ending at the
#: point; "c": centred on the point.
ALIGNS = ("n", "s", "e", "w", "c")
_ALIGN_VECTOR = {"n": (0, -1), "s": (0, 1), "e": (1, 0), "w": (-1, 0), "c": (0, 0)}
_VECTOR_ALIGN = {v: k for k, v in _ALIGN_VECTOR.items()}


# -- shapes -------------------------------------------------------------------------------------
@dataclass(frozen=True, slots=True)
class Line:
    """An open polyline through ``points`` (two or more), stroked, never filled."""

    points: tuple[FPoint, ...]


@dataclass(frozen=True, slots=True)
class Arc:
    """A circular arc, stroked. Angles in degrees counterclockwise as seen on screen, from +x
    (a point at angle a is ``(cx + r cos a, cy - r sin a)``); ``span_deg`` > 0 sweeps
    counterclockwise."""

    center: FPoint
    radius: float
    start_deg: float
    span_deg: float

    def point_at(self, angle_deg: float) -> FPoint:
        a = math.radians(angle_deg)
        cx, cy = self.center
        return (_tidy(cx + self.radius * math.cos(a)), _tidy(cy - self.radius * math.sin(a)))

    @property
    def start(self) -> FPoint:
        return self.point_at(self.start_deg)

    @property
    def end(self) -> FPoint:
        return self.point_at(self.start_deg + self.span_deg)


@dataclass(frozen=True, slots=True)
class Circle:
    """A circle, stroked; also filled with the stroke colour when ``filled``."""

    center: FPoint
    radius: float
    filled: bool = False


@dataclass(frozen=True, slots=True)
class Polygon:
    """A closed polygon, stroked; filled with the stroke colour when ``filled``. ``dashed``
    outlines (a collapsed block's frame) use a dashed stroke."""

    points: tuple[FPoint, ...]
    filled: bool = False
    dashed: bool = False


@dataclass(frozen=True, slots=True)
class TextAnchor:
    """Where the text of ``role`` (:data:`ROLES`) goes: the point ``at`` and the side ``align``
    (:data:`ALIGNS`) of that point on which the text lies. Text is always drawn upright."""

    role: str
    at: FPoint
    align: str = "c"


Shape = Line | Arc | Circle | Polygon


@dataclass(frozen=True, slots=True)
class Symbol:
    """The drawing of one kind in one style, in the kind's local frame (grid units).

    ``pins`` equal :data:`PINS` of the kind; every pin is the end point of a :class:`Line`
    (its lead). ``bounds`` enclose every shape (not the text).
    """

    kind: str
    shapes: tuple[Shape, ...]
    pins: tuple[Point, ...]
    anchors: tuple[TextAnchor, ...]
    bounds: Bounds

    def anchor(self, role: str) -> TextAnchor | None:
        """The first anchor of ``role``, or None when the symbol has none."""
        return next((a for a in self.anchors if a.role == role), None)


# -- transforms ---------------------------------------------------------------------------------
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


def _moved(point: FPoint, at: FPoint, rotation: int, mirror: bool) -> FPoint:
    dx, dy = transform(point, rotation, mirror)
    return (at[0] + dx, at[1] + dy)


def place(item: Shape | TextAnchor, at: FPoint = (0, 0), rotation: int = 0,
          mirror: bool = False) -> Shape | TextAnchor:
    """The same shape or anchor on the sheet, for a symbol placed at ``at``.

    ``rotation`` is clockwise on screen, a multiple of 90 degrees; ``mirror`` flips x first.
    An arc's angles follow (mirror: a -> 180 - a and the span changes sign; a clockwise
    rotation by r: a -> a - r). An anchor keeps its text upright: its ``align`` turns with the
    symbol, so a designator above a horizontal part lies beside it once the part is vertical.
    """
    if isinstance(item, Line):
        return Line(tuple(_moved(p, at, rotation, mirror) for p in item.points))
    if isinstance(item, Polygon):
        return replace(item, points=tuple(_moved(p, at, rotation, mirror) for p in item.points))
    if isinstance(item, Circle):
        return replace(item, center=_moved(item.center, at, rotation, mirror))
    if isinstance(item, Arc):
        start, span = item.start_deg, item.span_deg
        if mirror:
            start, span = 180.0 - start, -span
        start = (start - (rotation // 90 % 4) * 90.0) % 360.0
        return Arc(_moved(item.center, at, rotation, mirror), item.radius, start, span)
    vector = transform(_ALIGN_VECTOR[item.align], rotation, mirror)
    align = _VECTOR_ALIGN[(round(vector[0]), round(vector[1]))]
    return TextAnchor(item.role, _moved(item.at, at, rotation, mirror), align)


# -- bounds -------------------------------------------------------------------------------------
def shape_bounds(shape: Shape) -> Bounds:
    """Tight bounds of one shape, stroke width not included."""
    if isinstance(shape, Line | Polygon):
        points = shape.points
    elif isinstance(shape, Circle):
        (cx, cy), r = shape.center, shape.radius
        points = ((cx - r, cy - r), (cx + r, cy + r))
    else:
        points = (shape.start, shape.end, *_arc_extremes(shape))
    xs = [p[0] for p in points]
    ys = [p[1] for p in points]
    return (min(xs), min(ys), max(xs), max(ys))


def _arc_extremes(arc: Arc) -> list[FPoint]:
    """The points at 0/90/180/270 degrees that lie on the arc's sweep."""
    lo = min(arc.start_deg, arc.start_deg + arc.span_deg)
    hi = max(arc.start_deg, arc.start_deg + arc.span_deg)
    first = math.ceil(lo / 90.0)
    return [arc.point_at(k * 90.0) for k in range(first, math.floor(hi / 90.0) + 1)]


def _union(boxes: list[Bounds]) -> Bounds:
    return (min(b[0] for b in boxes), min(b[1] for b in boxes),
            max(b[2] for b in boxes), max(b[3] for b in boxes))


def placed_bounds(kind: str, at: FPoint, rotation: int = 0, mirror: bool = False, *,
                  style: str = "iec", form: str = "thevenin") -> Bounds:
    """Sheet bounds of a placed symbol's shapes (text not included), grid units."""
    x0, y0, x1, y1 = symbol(kind, style, form).bounds
    corners = [_moved(p, at, rotation, mirror) for p in ((x0, y0), (x1, y1))]
    xs = [c[0] for c in corners]
    ys = [c[1] for c in corners]
    return (min(xs), min(ys), max(xs), max(ys))


# -- text ---------------------------------------------------------------------------------------
#: Line pitch and cap height as fractions of the font size, used to stack and centre text.
LINE_PITCH = 1.25
CAP_HEIGHT = 0.7


def text_baselines(at: FPoint, align: str, lines: int,
                   font_size: float) -> tuple[str, list[FPoint]]:
    """How to set ``lines`` lines of upright text at an anchor: the horizontal anchoring
    ("start", "middle" or "end", as SVG's text-anchor) and the baseline point of each line,
    first line first. Units are those of ``at`` and ``font_size``."""
    x, y = at
    pitch = LINE_PITCH * font_size
    cap = CAP_HEIGHT * font_size
    height = cap + pitch * (lines - 1)
    gap = 0.25 * font_size
    if align == "n":
        first = y - gap - pitch * (lines - 1)
    elif align == "s":
        first = y + gap + cap
    else:
        first = y - height / 2 + cap
    h = {"e": "start", "w": "end"}.get(align, "middle")
    dx = {"e": gap, "w": -gap}.get(align, 0.0)
    return h, [(x + dx, first + i * pitch) for i in range(lines)]


#: Advance of characters in font sizes, rounded up from common sans-serif faces: narrow,
#: wide, capitals, and everything else (digits, most lower case, Ω, µ).
NARROW, WIDE, CAPITAL, OTHER = " .,:;'|!·ijlrtf()[]-", "mwMW∠", 0.74, 0.66
NARROW_WIDTH, WIDE_WIDTH = 0.4, 1.0


def text_width(line: str) -> float:
    """The estimated advance of ``line`` in font sizes (a width per kind of character, a little
    wider than the sans-serif fonts used draw them, so the engine needs no font machinery)."""
    return sum(NARROW_WIDTH if c in NARROW else WIDE_WIDTH if c in WIDE
               else CAPITAL if c.isupper() else OTHER for c in line)


def text_bounds(at: FPoint, align: str, lines: tuple[str, ...] | list[str],
                font_size: float) -> Bounds:
    """Estimated box of upright ``lines`` set at an anchor by :func:`text_baselines` (same
    units as ``at``): each line :func:`text_width` wide, from a font size above its baseline to
    0.3 below."""
    how, baselines = text_baselines(at, align, len(lines), font_size)
    boxes = []
    for line, (x, y) in zip(lines, baselines, strict=True):
        width = text_width(line) * font_size
        left = {"start": x, "middle": x - width / 2, "end": x - width}[how]
        boxes.append((left, y - font_size, left + width, y + 0.3 * font_size))
    return _union(boxes)


# -- building blocks of symbols -----------------------------------------------------------------
def _tidy(v: float) -> float:
    r = round(v, 6)
    return 0.0 if r == 0 else r


def _line(*points: FPoint) -> Line:
    return Line(tuple(points))


def _box(x0: float, y0: float, x1: float, y1: float, **kw: bool) -> Polygon:
    return Polygon(((x0, y0), (x1, y0), (x1, y1), (x0, y1)), **kw)


def _arrow(tail: FPoint, head: FPoint, length: float = 0.45, width: float = 0.4,
           shaft: bool = True) -> tuple[Shape, ...]:
    """A filled arrowhead at ``head`` pointing away from ``tail``, with its shaft if asked."""
    (tx, ty), (hx, hy) = tail, head
    d = math.hypot(hx - tx, hy - ty)
    ux, uy = (hx - tx) / d, (hy - ty) / d
    bx, by = hx - ux * length, hy - uy * length
    half = width / 2
    tip = Polygon(((hx, hy), (_tidy(bx - uy * half), _tidy(by + ux * half)),
                   (_tidy(bx + uy * half), _tidy(by - ux * half))), filled=True)
    return (_line(tail, (_tidy(bx), _tidy(by))), tip) if shaft else (tip,)


def _leads(half: float) -> tuple[Line, Line]:
    """Leads of a horizontal two-terminal symbol from its pins to a body of half-width half."""
    return _line((-2, 0), (-half, 0)), _line((half, 0), (2, 0))


def _labels_two() -> tuple[TextAnchor, ...]:
    return (TextAnchor("designator", (0, -1.4), "n"), TextAnchor("value", (0, 1.4), "s"))


def _marks(plus: FPoint, minus: FPoint) -> tuple[TextAnchor, TextAnchor]:
    return TextAnchor("plus", plus, "c"), TextAnchor("minus", minus, "c")


# Each body function draws the part between its pins in the local frame and returns
# (shapes, anchors).
Body = tuple[tuple[Shape, ...], tuple[TextAnchor, ...]]


def _resistor(style: str) -> Body:
    if style == "iec":  # IEC 60617 resistor: a rectangle, about 1:3
        return (*_leads(1.0), _box(-1.0, -0.35, 1.0, 0.35)), _labels_two()
    # IEEE 315 resistor: a zigzag of six strokes
    peaks = [(_tidy(-1.0 + (2 * i + 1) / 6), 0.4 * (-1) ** (i + 1)) for i in range(6)]
    zig = [(-2.0, 0.0), (-1.0, 0.0), *peaks, (1.0, 0.0), (2.0, 0.0)]
    return (Line(tuple(zig)),), _labels_two()


def _capacitor(style: str) -> Body:
    plates = (_line((-0.25, -0.8), (-0.25, 0.8)), _line((0.25, -0.8), (0.25, 0.8)))
    return (*_leads(0.25), *plates), _labels_two()


def _inductor(style: str) -> Body:
    dot = TextAnchor("dot", (-1.6, -0.6), "c")
    if style == "iec":  # four semicircular humps over the conductor
        humps = tuple(Arc((-0.75 + 0.5 * i, 0.0), 0.25, 180.0, -180.0) for i in range(4))
        return (*_leads(1.0), *humps), (*_labels_two(), dot)
    # looped coil: a prolate trochoid of four turns from x = -1.2 to 1.2
    turns, half, height, loop = 4, 1.2, 0.8, 0.3
    pitch = 2 * half / (2 * math.pi * turns)
    steps = 24 * turns
    coil = []
    for i in range(steps + 1):
        t = 2 * math.pi * turns * i / steps
        coil.append((_tidy(-half + pitch * t - loop * math.sin(t)),
                     _tidy(-height / 2 * (1 - math.cos(t)))))
    return (*_leads(half), Line(tuple(coil))), (*_labels_two(), dot)


def _impedance(style: str) -> Body:
    # a generic impedance: a box, taller than the IEC resistor so the two are told apart
    return (*_leads(1.2), _box(-1.2, -0.5, 1.2, 0.5)), _labels_two()


def _voltage_source(style: str) -> Body:
    ring = Circle((0.0, 0.0), 1.0)
    if style == "iec":  # the conductor runs through the circle
        return ((_line((-2, 0), (2, 0)), ring),
                (*_labels_two(), *_marks((-1.5, -0.6), (1.5, -0.6))))
    return (*_leads(1.0), ring), (*_labels_two(), *_marks((-0.5, 0), (0.5, 0)))


def _current_source(style: str) -> Body:
    ring = Circle((0.0, 0.0), 1.0)
    if style == "iec":  # a bar across the conductor; the arrowhead on the lead shows direction
        return (*_leads(1.0), ring, _line((0, -1), (0, 1)),
                *_arrow((1.2, 0), (1.75, 0), shaft=False)), _labels_two()
    return (*_leads(1.0), ring, *_arrow((-0.6, 0), (0.6, 0))), _labels_two()


def _diamond(cx: float, cy: float) -> Polygon:
    return Polygon(((cx, cy - 1), (cx + 1, cy), (cx, cy + 1), (cx - 1, cy)))


def _controlled_two(voltage: bool) -> Body:
    shapes: tuple[Shape, ...] = (*_leads(1.0), _diamond(0, 0))
    if voltage:
        return shapes, (*_labels_two(), *_marks((-1.5, -0.6), (1.5, -0.6)))
    return (*shapes, *_arrow((-0.5, 0), (0.5, 0), 0.35, 0.35)), _labels_two()


def _controlled_four(voltage: bool) -> Body:
    """Output diamond on the right (p/from at top, n/to at bottom); the sense pins on the left
    end in small open terminals marked + (cp) and − (cn)."""
    shapes: tuple[Shape, ...] = (
        _line((2, -2), (2, -1)), _line((2, 1), (2, 2)), _diamond(2, 0),
        _line((-2, -2), (-2, -0.9)), Circle((-2.0, -0.75), 0.15),
        _line((-2, 2), (-2, 0.9)), Circle((-2.0, 0.75), 0.15),
    )
    # texts on the two free sides (pins and their wires sit top and bottom), marks between
    anchors = (TextAnchor("designator", (3.3, 0), "e"), TextAnchor("value", (-2.5, 0), "w"),
               *_marks((-1.5, -0.75), (-1.5, 0.75)))
    if voltage:
        return shapes, (*anchors, *_marks((1.45, -1.5), (1.45, 1.5)))
    return (*shapes, *_arrow((2, -0.5), (2, 0.5), 0.35, 0.35)), anchors


def _opamp(style: str) -> Body:
    shapes = (Polygon(((-2, -2), (-2, 2), (2, 0))),
              _line((-3, 1), (-2, 1)), _line((-3, -1), (-2, -1)), _line((2, 0), (3, 0)))
    anchors = (TextAnchor("designator", (0.3, -1.6), "n"), TextAnchor("value", (0.3, 1.6), "s"),
               *_marks((-1.5, 1), (-1.5, -1)))
    return shapes, anchors


def _opamp_finite(style: str) -> Body:
    """The op-amp triangle with a letter A drawn in it: a gain of its own, not infinite."""
    shapes, anchors = _opamp(style)
    letter = (_line((-0.9, 0.45), (-0.55, -0.45), (-0.2, 0.45)), _line((-0.77, 0.1), (-0.33, 0.1)))
    # its parameters take two lines: set them clear of the triangle's lower corner
    lowered = tuple(TextAnchor(a.role, (0.3, 2.3), a.align) if a.role == "value" else a
                    for a in anchors)
    return (*shapes, *letter), lowered


def _device_labels() -> tuple[TextAnchor, ...]:
    # the designator left of the body above the base/gate lead, the values right of the
    # collector/drain and emitter/source leads
    return (TextAnchor("designator", (-0.8, -1.2), "w"), TextAnchor("value", (1.6, 0.0), "e"))


def _envelope(style: str) -> tuple[Shape, ...]:
    # IEEE 315 draws a transistor inside a circle; IEC 60617 leaves the envelope out
    return (Circle((0.25, 0.0), 1.45),) if style == "ieee" else ()


def _bjt(style: str) -> Body:
    """A bipolar transistor (drawn NPN; a PNP has the same small-signal model): base pin on the
    left, collector top right, emitter bottom right with the arrow pointing out."""
    shapes = (_line((-2, 0), (-0.4, 0)), _line((-0.4, -0.9), (-0.4, 0.9)),
              _line((-0.4, -0.4), (1, -1.1), (1, -2)), _line((1, 1.1), (1, 2)),
              *_arrow((-0.4, 0.4), (1, 1.1), 0.45, 0.4), *_envelope(style))
    return shapes, _device_labels()


def _mosfet(style: str) -> Body:
    """An enhancement MOSFET (drawn n-channel; a p-channel has the same small-signal model):
    gate on the left, drain top right, source bottom right; the broken channel line marks
    enhancement, the arrow on the body lead points into the channel."""
    channel = tuple(_line((-0.2, y0), (-0.2, y1)) for y0, y1 in ((-1, -0.5), (-0.25, 0.25),
                                                                  (0.5, 1)))
    shapes = (_line((-2, 0), (-0.65, 0)), _line((-0.65, -0.8), (-0.65, 0.8)), *channel,
              _line((-0.2, -0.75), (1, -0.75), (1, -2)), _line((1, 0.75), (1, 2)),
              _line((-0.2, 0.75), (1, 0.75)), _line((1, 0), (1, 0.75)),
              *_arrow((1, 0), (-0.2, 0), 0.45, 0.4), *_envelope(style))
    return shapes, _device_labels()


def _coupling(style: str) -> Body:
    # two parallel bars: a magnetic core, standing for the coupling of two named inductors
    return ((_line((-0.2, -1), (-0.2, 1)), _line((0.2, -1), (0.2, 1))),
            (TextAnchor("designator", (0, -1.2), "n"), TextAnchor("value", (0, 1.2), "s")))


def _ground(style: str) -> Body:
    # IEC 60617 earth: a lead and three bars of falling length (IEEE 315 draws the same)
    return ((_line((0, 0), (0, 1)), _line((-1, 1), (1, 1)), _line((-0.6, 1.35), (0.6, 1.35)),
             _line((-0.25, 1.7), (0.25, 1.7))), ())


def _label(style: str) -> Body:
    # a tag pointing at its pin; the net name follows it
    tag = Polygon(((0.4, 0), (0.9, -0.5), (2.2, -0.5), (2.2, 0.5), (0.9, 0.5)))
    return (_line((0, 0), (0.4, 0)), tag), (TextAnchor("name", (2.4, 0), "e"),)


def _block(style: str, form: str) -> Body:
    """The equivalent of a collapsed region, framed by a dashed outline; plus at (3, -2),
    minus at (3, 2). Thevenin: source (+ at top) in series with the impedance on the upper
    rail. Norton: source driving upwards into plus, in parallel with a vertical impedance. The
    impedance is a box in IEC style and a zigzag in IEEE style; the designator stands above the
    frame and the values to its left."""
    frame = _box(-3.4, -3.0, 2.4, 3.0, dashed=True)
    port = (_line((2.4, -2), (3, -2)), _line((2.4, 2), (3, 2)))
    # the values stand left of the frame, away from the pins, so the leads, grounds and labels
    # that leave the pins to the right, up or down never meet them
    anchors = (TextAnchor("designator", (-0.5, -3.4), "n"),
               TextAnchor("value", (-3.8, 0.0), "w"),
               *_marks((2.75, -2.6), (2.75, 2.6)))
    source = symbol("voltage_source" if form == "thevenin" else "current_source", style)
    # the source stands upright at x = -2. Thevenin: its first pin (p) turned 90 degrees goes
    # to the top rail. Norton: the source drives from minus (bottom) into plus (top), so its
    # first pin (from) turned 270 degrees goes to the bottom rail
    turn = 90 if form == "thevenin" else 270
    at = (-2.0, 0.0)
    drawn = tuple(place(s, at, turn) for s in source.shapes)
    marks = tuple(place(a, at, turn) for a in source.anchors if a.role in MARK_TEXT)
    # IEC draws the impedance as a box; IEEE 315 as the resistor's zigzag
    box = symbol("impedance" if style == "iec" else "resistor", style).shapes
    if form == "thevenin":
        z = tuple(place(s, (0.4, -2.0)) for s in box)  # leads from x = -1.6 to 2.4
        rails = (_line((-2, -2), (-1.6, -2)), _line((-2, 2), (2.4, 2)))
    else:
        z = tuple(place(s, (1.0, 0.0), 90) for s in box)
        rails = (_line((-2, -2), (2.4, -2)), _line((-2, 2), (2.4, 2)))
    return (frame, *port, *rails, *drawn, *z), (*anchors, *marks)


_BODIES = {
    "resistor": _resistor,
    "capacitor": _capacitor,
    "inductor": _inductor,
    "impedance": _impedance,
    "voltage_source": _voltage_source,
    "current_source": _current_source,
    "ccvs": lambda style: _controlled_two(voltage=True),
    "cccs": lambda style: _controlled_two(voltage=False),
    "vcvs": lambda style: _controlled_four(voltage=True),
    "vccs": lambda style: _controlled_four(voltage=False),
    "opamp": _opamp,
    "opamp_finite": _opamp_finite,
    "bjt": _bjt,
    "mosfet": _mosfet,
    # a source known from measurements is drawn as the Thevenin block it stands for
    "measured_source": lambda style: _block(style, "thevenin"),
    "coupling": _coupling,
    "ground": _ground,
    "label": _label,
}


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
    shapes, anchors = _block(style, form) if kind == "block" else _BODIES[kind](style)
    bounds = _union([shape_bounds(s) for s in shapes])
    return Symbol(kind, tuple(shapes), PINS[kind], tuple(anchors), bounds)
