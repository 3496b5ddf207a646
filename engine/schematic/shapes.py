"""The plain shapes every symbol is drawn with, in grid units (x right, y down): lines, arcs,
circles, polygons and text anchors; placing them on the sheet (mirror x first, then a clockwise
turn by a multiple of 90 degrees), their bounds, and how upright text is set and how wide it is
estimated to be.

Angles of an :class:`Arc` are degrees counterclockwise *as seen on screen*, measured from the
+x axis: 0 points right, 90 points up (towards -y). A point at angle ``a`` therefore sits at
``(cx + r cos a, cy - r sin a)``. ``span_deg`` is positive for a counterclockwise sweep.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

__all__ = ["ALIGNS", "CAP_HEIGHT", "LINE_PITCH", "MARK_TEXT", "ROLES", "Arc", "Bounds", "Circle",
           "FPoint", "Line", "Point", "Polygon", "Shape", "Symbol", "TextAnchor", "moved", "place",
           "shape_bounds", "text_baselines", "text_bounds", "text_width", "tidy",
           "transform", "union_bounds"]

Point = tuple[int, int]
FPoint = tuple[float, float]
#: (xmin, ymin, xmax, ymax) in grid units.
Bounds = tuple[float, float, float, float]

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
        return (tidy(cx + self.radius * math.cos(a)), tidy(cy - self.radius * math.sin(a)))

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


def tidy(v: float) -> float:
    """``v`` rounded to 1e-6 grid units, never -0.0 (so that drawn coordinates compare equal)."""
    r = round(v, 6)
    return 0.0 if r == 0 else r


# -- placing ------------------------------------------------------------------------------------
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


def moved(point: FPoint, at: FPoint, rotation: int, mirror: bool) -> FPoint:
    """A local point on the sheet, for a symbol placed at ``at``."""
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
        return Line(tuple(moved(p, at, rotation, mirror) for p in item.points))
    if isinstance(item, Polygon):
        return replace(item, points=tuple(moved(p, at, rotation, mirror) for p in item.points))
    if isinstance(item, Circle):
        return replace(item, center=moved(item.center, at, rotation, mirror))
    if isinstance(item, Arc):
        start, span = item.start_deg, item.span_deg
        if mirror:
            start, span = 180.0 - start, -span
        start = (start - (rotation // 90 % 4) * 90.0) % 360.0
        return Arc(moved(item.center, at, rotation, mirror), item.radius, start, span)
    vector = transform(_ALIGN_VECTOR[item.align], rotation, mirror)
    align = _VECTOR_ALIGN[(round(vector[0]), round(vector[1]))]
    return TextAnchor(item.role, moved(item.at, at, rotation, mirror), align)


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


def union_bounds(boxes: list[Bounds]) -> Bounds:
    """The bounds enclosing every box of ``boxes``."""
    return (min(b[0] for b in boxes), min(b[1] for b in boxes),
            max(b[2] for b in boxes), max(b[3] for b in boxes))


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
    return union_bounds(boxes)
