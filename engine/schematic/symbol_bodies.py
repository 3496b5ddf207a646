"""What each kind's symbol draws between its pins, in its local frame and in either style
(:data:`BODIES`, and :func:`block_body` for a collapsed region in either form): its shapes and
text anchors. engine/schematic/symbols.py builds the :class:`~engine.schematic.shapes.Symbol`
of each from them."""

from __future__ import annotations

import math
from collections.abc import Callable

from .shapes import MARK_TEXT, Arc, Circle, FPoint, Line, Polygon, Shape, TextAnchor, place, tidy

__all__ = ["BODIES", "Body", "block_body"]


# -- building blocks of symbols -----------------------------------------------------------------
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
    tip = Polygon(((hx, hy), (tidy(bx - uy * half), tidy(by + ux * half)),
                   (tidy(bx + uy * half), tidy(by - ux * half))), filled=True)
    return (_line(tail, (tidy(bx), tidy(by))), tip) if shaft else (tip,)


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
    peaks = [(tidy(-1.0 + (2 * i + 1) / 6), 0.4 * (-1) ** (i + 1)) for i in range(6)]
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
        coil.append((tidy(-half + pitch * t - loop * math.sin(t)),
                     tidy(-height / 2 * (1 - math.cos(t)))))
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


def block_body(style: str, form: str) -> Body:
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
               *_marks((2.9, -2.6), (2.9, 2.6)))
    source_shapes, source_anchors = BODIES["voltage_source" if form == "thevenin"
                                           else "current_source"](style)
    # the source stands upright at x = -2. Thevenin: its first pin (p) turned 90 degrees goes
    # to the top rail. Norton: the source drives from minus (bottom) into plus (top), so its
    # first pin (from) turned 270 degrees goes to the bottom rail
    turn = 90 if form == "thevenin" else 270
    at = (-2.0, 0.0)
    drawn = tuple(place(s, at, turn) for s in source_shapes)
    marks = tuple(place(a, at, turn) for a in source_anchors if a.role in MARK_TEXT)
    # IEC draws the impedance as a box; IEEE 315 as the resistor's zigzag
    box = BODIES["impedance" if style == "iec" else "resistor"](style)[0]
    if form == "thevenin":
        z = tuple(place(s, (0.4, -2.0)) for s in box)  # leads from x = -1.6 to 2.4
        rails = (_line((-2, -2), (-1.6, -2)), _line((-2, 2), (2.4, 2)))
    else:
        z = tuple(place(s, (1.0, 0.0), 90) for s in box)
        rails = (_line((-2, -2), (2.4, -2)), _line((-2, 2), (2.4, 2)))
    return (frame, *port, *rails, *drawn, *z), (*anchors, *marks)


BODIES: dict[str, Callable[[str], Body]] = {
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
    "measured_source": lambda style: block_body(style, "thevenin"),
    "coupling": _coupling,
    "ground": _ground,
    "label": _label,
}
