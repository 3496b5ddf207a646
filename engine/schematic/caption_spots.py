"""The geometry of captions: the lines a part shows, the box a text takes, and the spots around
a symbol where its designator or value may go (engine.schematic.placement picks among them).

Text widths are estimated (:func:`~engine.schematic.symbols.text_width`), so the engine needs no
font machinery. Spots are worked out once per kind of symbol, orientation, role and size of
text, relative to the part's origin: sheets repeat all four. Units: grid units, x right, y down.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from typing import NamedTuple

from ..solve.devices import DEVICE_KINDS
from .captions import value_caption
from .model import PlacedPart
from .symbols import (
    CAP_HEIGHT,
    FONT_SIZE,
    LINE_PITCH,
    Bounds,
    FPoint,
    TextAnchor,
    place,
    placed_bounds,
    symbol,
    text_baselines,
    text_width,
)

__all__ = ["DESCENT", "PlacedCaption", "Spots", "dragged", "overlap", "part_texts", "spots",
           "text_box", "union"]

#: Descent below the last baseline, in font sizes.
DESCENT = 0.24
#: Space kept between a body and a caption beside it.
GAP = 0.3
#: Room kept free around a caption, grid units, left and right / above and below.
PAD_X, PAD_Y = 0.4, 0.1

_width = cache(text_width)  # sheets repeat their designators' and values' widths


def part_texts(part: PlacedPart, *, ac: bool = False) -> dict[str, tuple[str, ...]]:
    """The lines drawn beside ``part`` per role: its designator and its value (``"no value"``
    where one is missing; a coupling adds the inductors it joins)."""
    value = _value_text(part.kind, part.value, part.phase_deg, part.control, part.couples,
                        part.tolerance, part.params, ac)
    if not value and part.kind != "opamp":
        value = "no value"
    if part.kind in DEVICE_KINDS:  # the entered parameters, a line each
        return {"designator": (part.designator,), "value": tuple(value.split("\n"))}
    if part.kind == "coupling" and part.couples:
        return {"designator": (part.designator,), "value": (value, " · ".join(part.couples))}
    return {"designator": (part.designator,), "value": (value,) if value else ()}


@cache
def _value_text(kind: str, value: str, phase: str, control: str, couples: tuple[str, ...],
                tolerance: str, params: tuple[tuple[str, str], ...], ac: bool) -> str:
    """Cached: sheets repeat their values."""
    return value_caption(PlacedPart("", kind, "", (0, 0), value=value, phase_deg=phase,
                                    control=control, couples=couples, tolerance=tolerance,
                                    params=params), ac=ac)


def lines_width(lines: tuple[str, ...]) -> float:
    """The widest of ``lines``, in font sizes."""
    return _width(lines[0]) if len(lines) == 1 else max(map(_width, lines))


def text_box(lines: tuple[str, ...], at: FPoint, align: str,
             size: float = FONT_SIZE) -> Bounds:
    """The box the upright ``lines`` set at anchor point ``at`` with ``align`` take up (top of
    the capitals of the first line to the descent of the last), as text_baselines sets them."""
    x0, y0, x1, y1 = _text_box_at_origin(len(lines), lines_width(lines), align, size)
    return (x0 + at[0], y0 + at[1], x1 + at[0], y1 + at[1])


@cache
def _text_box_at_origin(lines: int, width: float, align: str, size: float) -> Bounds:
    how, baselines = text_baselines((0.0, 0.0), align, lines, size)
    width *= size
    x = baselines[0][0]
    left = {"start": x, "middle": x - width / 2, "end": x - width}[how]
    return (left, baselines[0][1] - CAP_HEIGHT * size, left + width,
            baselines[-1][1] + DESCENT * size)


def overlap(a: Bounds, b: Bounds) -> float:
    """Area two boxes share (0 when they only touch)."""
    w = min(a[2], b[2]) - max(a[0], b[0])
    h = min(a[3], b[3]) - max(a[1], b[1])
    return w * h if w > 1e-9 and h > 1e-9 else 0.0


def padded(box: Bounds) -> Bounds:
    """``box`` with the room kept free around a caption, so neighbouring captions do not run
    together."""
    return (box[0] - PAD_X, box[1] - PAD_Y, box[2] + PAD_X, box[3] + PAD_Y)


class PlacedCaption(NamedTuple):
    """One caption as drawn: its lines, anchor point and alignment (for text_baselines), its
    box, and whether it was crowded (no spot around the symbol was free). A named tuple: a
    sheet makes thousands."""

    role: str
    lines: tuple[str, ...]
    at: FPoint
    align: str
    box: Bounds
    crowded: bool = False


def dragged(part: PlacedPart, caption: PlacedCaption,
            shift: FPoint) -> tuple[tuple[str, float, float], ...]:
    """``part.captions`` once ``caption`` is dragged by ``shift`` grid units: its anchor point
    (text centred on it) relative to the part's origin, to a tenth of a grid unit."""
    x0, y0, x1, y1 = caption.box
    # the middle of the capitals block, where a centred text's anchor lies (text_baselines)
    middle = y0 + (y1 - y0 - DESCENT * FONT_SIZE) / 2
    dx = round((x0 + x1) / 2 + shift[0] - part.at[0], 1)
    dy = round(middle + shift[1] - part.at[1], 1)
    kept = tuple(c for c in part.captions if c[0] != caption.role)
    return tuple(sorted((*kept, (caption.role, dx, dy))))


@dataclass(frozen=True, eq=False)
class Spots:
    """The candidate spots of one caption around a symbol placed at the origin, most wanted
    first: anchor points, alignments, text boxes and the padded boxes that are scored
    (``rooms``); ``reach`` is the smallest box holding every room: nothing outside it changes
    the caption's choice. Made once per kind of caption (:func:`spots`), so compared by
    identity."""

    at: tuple[FPoint, ...]
    align: tuple[str, ...]
    boxes: tuple[Bounds, ...]
    rooms: tuple[Bounds, ...]
    reach: Bounds


@cache
def spots(kind: str, rotation: int, mirror: bool, style: str, role: str, lines: int,
          width: float) -> Spots:
    """The spots for a caption of ``lines`` lines, ``width`` font sizes wide, in ``role``
    beside a ``kind`` symbol at the origin drawn in ``style``."""
    body = placed_bounds(kind, (0.0, 0.0), rotation, mirror, style=style)
    anchor = symbol(kind, style).anchor(role)
    placed = None if anchor is None else place(anchor, (0.0, 0.0), rotation, mirror)
    found = _spots(placed, body, lines)
    ats = tuple(at for at, _ in found)
    aligns = tuple(align for _, align in found)
    boxes = tuple(_shifted(_text_box_at_origin(lines, width, align, FONT_SIZE), at)
                  for at, align in found)
    rooms = tuple(map(padded, boxes))
    return Spots(ats, aligns, boxes, rooms, union(list(rooms)))


def _shifted(box: Bounds, by: FPoint) -> Bounds:
    return (box[0] + by[0], box[1] + by[1], box[2] + by[0], box[3] + by[1])


def _spots(anchor: TextAnchor | None, body: Bounds,
           lines: int) -> list[tuple[FPoint, str]]:
    """Candidate (anchor point, align) pairs around ``body``, most wanted first."""
    x0, y0, x1, y1 = body
    cx, cy = (x0 + x1) / 2, (y0 + y1) / 2
    pitch = LINE_PITCH * FONT_SIZE
    half = (CAP_HEIGHT * FONT_SIZE + pitch * (lines - 1)) / 2 + GAP
    spots = [] if anchor is None else [(anchor.at, anchor.align)]
    # centred rows first (they read as belonging to the part), in half-line steps outwards,
    # then beside it, then the corners
    rows = [k * pitch / 2 for k in range(5)]
    spots += [spot for d in rows for spot in (((cx, y0 - GAP - d), "n"), ((cx, y1 + GAP + d), "s"))]
    spots += [((x1 + GAP, cy), "e"), ((x0 - GAP, cy), "w"),
              ((x1 + GAP, cy - pitch / 2), "e"), ((x1 + GAP, cy + pitch / 2), "e"),
              ((x0 - GAP, cy - pitch / 2), "w"), ((x0 - GAP, cy + pitch / 2), "w"),
              ((x1, y0 - half), "e"), ((x0, y0 - half), "w"),
              ((x1, y1 + half), "e"), ((x0, y1 + half), "w")]
    return spots


def union(boxes: list[Bounds]) -> Bounds:
    """The smallest box holding ``boxes``."""
    x0s, y0s, x1s, y1s = zip(*boxes, strict=True)
    return (min(x0s), min(y0s), max(x1s), max(y1s))
