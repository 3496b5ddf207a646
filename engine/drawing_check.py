"""Measures a drawn sheet for what makes it hard to read: texts over texts or symbols, wires
through symbols, markers and blocks run into each other, and strokes of different nets touching.

It measures the geometry the canvas and the SVG writer draw: symbol bounds (engine.symbols),
wire strokes, and the captions of engine.placement (net names and block captions at their
symbol's anchors). Units are grid units. Each fault names the elements involved, so a test can
say which part is crowded.
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass
from itertools import combinations, pairwise

from .captions import block_caption
from .errors import CircuitError
from .placement import Placement, overlap, text_box
from .schematic.connectivity import block_equivalent, extract
from .schematic.document import Document
from .schematic.model import Block, NetLabel, PlacedPart
from .symbols import Bounds, FPoint, Point, TextAnchor, pin_positions, place, placed_bounds, symbol

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


def _bodies(doc: Document, style: str) -> list[tuple[str, str, Bounds]]:
    """(id, name, bounds) of every drawn symbol."""
    out = []
    for e in doc:
        if isinstance(e, PlacedPart):
            box = placed_bounds(e.kind, e.at, e.rotation, e.mirror, style=style)
        elif isinstance(e, Block):
            box = placed_bounds("block", e.at, e.rotation, e.mirror, style=style, form=e.form)
        elif isinstance(e, NetLabel):
            kind = "ground" if e.style == "ground" else "label"
            box = placed_bounds(kind, e.at, e.rotation, style=style)
        else:
            continue
        out.append((e.id, _name(e), box))
    return out


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


def _net_touches(doc: Document) -> list[Fault]:
    """Pairs of nets whose strokes meet without joining: a wire end or a pin of one net on a
    wire of another, or two nets' segments running along each other. (Plain crossings are
    drawn without a dot and read as not joined, so they do not count.)"""
    conn = extract(doc)
    ends: list[tuple[str, FPoint]] = []
    for wire in doc.wires():
        net = conn.net_of_wire.get(wire.id, "")
        ends += [(net, wire.points[0]), (net, wire.points[-1])]
    for e in doc:
        if isinstance(e, PlacedPart | Block | NetLabel):
            kind = e.kind if isinstance(e, PlacedPart) else (
                "block" if isinstance(e, Block) else
                "ground" if e.style == "ground" else "label")
            mirror = getattr(e, "mirror", False)
            for i, p in enumerate(pin_positions(kind, e.at, e.rotation, mirror)):
                ends.append((conn.net_of_pin.get((e.id, i), ""), p))
    by_point: dict[FPoint, set[str]] = defaultdict(set)
    for net, p in ends:
        by_point[p].add(net)
    pairs: set[tuple[str, str]] = set()
    segments = [(conn.net_of_wire.get(wid, ""), a, b) for wid, a, b in _segments(doc)]
    for net, a, b in segments:
        for p, nets in by_point.items():
            if _on(p, a, b):
                pairs |= {tuple(sorted((net, other))) for other in nets if other != net}
    for (n1, a1, b1), (n2, a2, b2) in combinations(segments, 2):
        if n1 != n2 and (_on(a1, a2, b2) or _on(b1, a2, b2) or _on(a2, a1, b1)
                         or _on(b2, a1, b1)):
            box1, box2 = _segment_box(a1, b1), _segment_box(a2, b2)
            if box1[0] == box1[2] == box2[0] == box2[2] or box1[1] == box1[3] == box2[1] == \
                    box2[3]:
                pairs.add(tuple(sorted((n1, n2))))
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
    for t in texts:
        for _, name, box in bodies:
            if overlap(t.box, _shrunk(box)) > 0:
                faults.append(Fault("caption/body", (t.owner, name), t.crowded))
        for wid, a, b in segments:
            if _crosses(_segment_box(a, b), t.box):
                faults.append(Fault("caption/wire", (t.owner, wid), t.crowded))
    for wid, a, b in segments:
        for _, name, box in bodies:
            if _crosses(_segment_box(a, b), _shrunk(box)):
                faults.append(Fault("wire/body", (wid, name)))
    for (_, n1, b1), (_, n2, b2) in combinations(bodies, 2):
        if overlap(_shrunk(b1), _shrunk(b2)) > 0:
            faults.append(Fault("body/body", (n1, n2)))
    faults += _net_touches(doc)
    return faults
