"""Measures a drawn sheet for what makes it hard to read: texts over texts or symbols, wires
through symbols, markers and blocks run into each other, and strokes of different nets touching.

It measures the geometry the canvas and the SVG writer draw: symbol bodies
(engine.schematic.symbols, without the leads, which meet other strokes at pins), leads and wire
strokes, and the captions of engine.schematic.placement (net names and block captions at their
symbol's anchors). Units are grid units. Each fault names the elements involved, so a test can
say which part is crowded.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from itertools import combinations, pairwise

from ..errors import CircuitError
from ..schematic.captions import block_caption
from ..schematic.connectivity import block_equivalent, extract
from ..schematic.document import Document
from ..schematic.model import Block, NetLabel, PlacedPart
from ..schematic.placement import Placement, overlap, text_box
from ..schematic.symbols import (
    Bounds,
    FPoint,
    Line,
    Point,
    TextAnchor,
    pin_positions,
    place,
    shape_bounds,
    symbol,
)

__all__ = ["FAULT_KINDS", "Fault", "drawing_faults", "drawn_texts"]

#: The kinds of fault, in the order they are reported.
FAULT_KINDS = ("caption/caption", "caption/body", "caption/wire", "wire/body", "body/body",
               "net/net")
#: Bodies are shrunk by this much before testing, so strokes that meet at a pin do not count.
SLACK = 0.05


@dataclass(frozen=True, slots=True)
class Fault:
    """One collision: its ``kind`` (:data:`FAULT_KINDS`) and the elements (designators, net
    names or ids) involved; ``crowded`` when a caption in it had no free spot at all."""

    kind: str
    between: tuple[str, ...]
    crowded: bool = False

    def __str__(self) -> str:
        return f"{self.kind}: {' / '.join(self.between)}"


@dataclass(frozen=True, slots=True)
class _Text:
    owner: str
    box: Bounds
    crowded: bool


def _shrunk(box: Bounds) -> Bounds:
    return (box[0] + SLACK, box[1] + SLACK, box[2] - SLACK, box[3] - SLACK)


def _name(element: PlacedPart | Block | NetLabel) -> str:
    if isinstance(element, NetLabel):
        return "ground" if element.style == "ground" else f"label {element.name}"
    return element.designator


@cache
def _core(kind: str, style: str, form: str) -> tuple[Bounds, tuple[Line, ...]]:
    """A symbol's body without its leads (the lines that end at a pin), and the leads, in
    its local frame: leads meet wires and other leads at pins, the body must stay clear."""
    sym = symbol(kind, style, form)
    pins = set(map(tuple, sym.pins))
    leads = tuple(s for s in sym.shapes if isinstance(s, Line)
                  and (s.points[0] in pins or s.points[-1] in pins))
    rest = [shape_bounds(s) for s in sym.shapes if s not in leads] or [sym.bounds]
    return (min(b[0] for b in rest), min(b[1] for b in rest), max(b[2] for b in rest),
            max(b[3] for b in rest)), leads


def _drawn(e: PlacedPart | Block | NetLabel, style: str) -> tuple[Bounds, list[Line]]:
    """The placed body box and leads of an element's symbol."""
    if isinstance(e, PlacedPart):
        kind, form, mirror = e.kind, "thevenin", e.mirror
    elif isinstance(e, Block):
        kind, form, mirror = "block", e.form, e.mirror
    else:
        kind, form, mirror = ("ground" if e.style == "ground" else "label"), "thevenin", False
    (x0, y0, x1, y1), leads = _core(kind, style, form)
    corners = [place(Line(((x0, y0), (x1, y1))), e.at, e.rotation, mirror).points]
    (ax, ay), (bx, by) = corners[0]
    box = (min(ax, bx), min(ay, by), max(ax, bx), max(ay, by))
    return box, [place(lead, e.at, e.rotation, mirror) for lead in leads]


def _bodies(doc: Document, style: str) -> list[tuple[str, str, Bounds, list[Line]]]:
    """(id, name, body box, leads) of every drawn symbol."""
    return [(e.id, _name(e), *_drawn(e, style)) for e in doc
            if isinstance(e, PlacedPart | Block | NetLabel)]


def _anchored(kind: str, role: str, lines: tuple[str, ...], at: Point, rotation: int,
              mirror: bool, style: str, form: str = "thevenin") -> Bounds | None:
    anchor = symbol(kind, style, form).anchor(role)
    if anchor is None or not lines:
        return None
    placed = place(anchor, at, rotation, mirror)
    assert isinstance(placed, TextAnchor)
    return text_box(lines, placed.at, placed.align)


def drawn_texts(doc: Document, style: str = "iec", freq: float = 0.0) -> list[_Text]:
    """Every caption drawn on the sheet with its owner's name: part captions as placed, net
    names, block captions at ``freq`` hertz."""
    placement = Placement.of(doc, style, ac=freq > 0)
    texts = []
    for part in doc.parts():
        for c in placement.captions.get(part.id, {}).values():
            texts.append(_Text(part.designator, c.box, c.crowded))
    for label in doc.labels():
        if label.style != "ground":
            box = _anchored("label", "name", (label.name,), label.at, label.rotation, False,
                            style)
            if box is not None:
                texts.append(_Text(f"label {label.name}", box, False))
    for block in doc.blocks():
        try:
            lines = block_caption(block_equivalent(block, freq), block.form, freq)
        except CircuitError as exc:
            lines = ("no equivalent:", str(exc))
        for role, shown in (("designator", (block.designator,)), ("value", tuple(lines))):
            box = _anchored("block", role, shown, block.at, block.rotation, block.mirror, style,
                            block.form)
            if box is not None:
                texts.append(_Text(block.designator, box, False))
    return texts


def _segments(doc: Document) -> list[tuple[str, FPoint, FPoint]]:
    return [(w.id, a, b) for w in doc.wires() for a, b in pairwise(w.points) if a != b]


def _segment_box(a: FPoint, b: FPoint) -> Bounds:
    return (min(a[0], b[0]), min(a[1], b[1]), max(a[0], b[0]), max(a[1], b[1]))


def _crosses(seg: Bounds, box: Bounds) -> bool:
    """Whether a horizontal or vertical segment (as its degenerate box) enters ``box``."""
    return (seg[0] < box[2] and seg[2] > box[0] and seg[1] < box[3] and seg[3] > box[1])


def _on(p: FPoint, a: FPoint, b: FPoint) -> bool:
    (x0, y0), (x1, y1) = a, b
    return (min(x0, x1) <= p[0] <= max(x0, x1) and min(y0, y1) <= p[1] <= max(y0, y1)
            and (x0 == x1 == p[0] or y0 == y1 == p[1]))


def _net_strokes(doc: Document, style: str) -> list[tuple[str, bool, Bounds]]:
    """(net, is a wire, segment box) of every stroke that carries a net: wire segments, the
    leads of parts and blocks (the net of their pin), every stroke of a ground or label."""
    conn = extract(doc)
    out = [(conn.net_of_wire.get(wid, ""), True, _segment_box(a, b))
           for wid, a, b in _segments(doc)]
    for e in doc:
        if not isinstance(e, PlacedPart | Block | NetLabel):
            continue
        kind = (e.kind if isinstance(e, PlacedPart) else "block" if isinstance(e, Block)
                else "ground" if e.style == "ground" else "label")
        mirror = getattr(e, "mirror", False)
        pins = pin_positions(kind, e.at, e.rotation, mirror)
        nets = {p: conn.net_of_pin.get((e.id, i), "") for i, p in enumerate(pins)}
        lines = (symbol(kind, style).shapes if isinstance(e, NetLabel)
                 else _core(kind, style, getattr(e, "form", "thevenin"))[1])
        for line in lines:
            if not isinstance(line, Line):
                continue
            placed = place(line, e.at, e.rotation, mirror)
            ends = {nets[p] for p in (placed.points[0], placed.points[-1]) if p in nets}
            if len(ends) > 1:
                continue  # a stroke from pin to pin is the body itself (wire/body covers it)
            net = ends.pop() if ends else nets[pins[0]]
            for a, b in pairwise(placed.points):
                out.append((net, False, _segment_box(a, b)))
    return out


def _touch(a: Bounds, b: Bounds) -> bool:
    return a[0] <= b[2] and b[0] <= a[2] and a[1] <= b[3] and b[1] <= a[3]


def _net_touches(doc: Document, style: str) -> list[Fault]:
    """Pairs of nets whose strokes touch: a wire over a lead or a marker of another net, two
    leads of different nets meeting. (Two wires crossing are drawn without a dot and read as
    not joined, and a wire end on a wire joins it, so wire pairs do not count.)"""
    strokes = _net_strokes(doc, style)
    pairs: set[tuple[str, str]] = set()
    for (n1, w1, b1), (n2, w2, b2) in combinations(strokes, 2):
        if n1 != n2 and not (w1 and w2) and _touch(b1, b2):
            pairs.add((min(n1, n2), max(n1, n2)))
    return [Fault("net/net", pair) for pair in sorted(pairs)]


def drawing_faults(doc: Document, style: str = "iec", freq: float = 0.0) -> list[Fault]:
    """Every collision on the drawn sheet (:data:`FAULT_KINDS`), each pair once."""
    faults: list[Fault] = []
    texts = drawn_texts(doc, style, freq)
    bodies = _bodies(doc, style)
    segments = _segments(doc)
    for t1, t2 in combinations(texts, 2):
        if overlap(t1.box, t2.box) > 0:
            faults.append(Fault("caption/caption", (t1.owner, t2.owner),
                                t1.crowded or t2.crowded))
    strokes = segments + [(f"{name} lead", a, b) for _, name, _, leads in bodies
                          for lead in leads for a, b in pairwise(lead.points)]
    for t in texts:
        for _, name, box, _ in bodies:
            if overlap(t.box, _shrunk(box)) > 0:
                faults.append(Fault("caption/body", (t.owner, name), t.crowded))
        for wid, a, b in strokes:
            if _crosses(_segment_box(a, b), t.box):
                faults.append(Fault("caption/wire", (t.owner, wid), t.crowded))
    for wid, a, b in strokes:
        for _, name, box, _ in bodies:
            if not wid.startswith(f"{name} ") and _crosses(_segment_box(a, b), _shrunk(box)):
                faults.append(Fault("wire/body", (wid, name)))
    for (_, n1, b1, _), (_, n2, b2, _) in combinations(bodies, 2):
        if overlap(_shrunk(b1), _shrunk(b2)) > 0:
            faults.append(Fault("body/body", (n1, n2)))
    faults += _net_touches(doc, style)
    return faults
