"""Every bundled example collapsed, measured on the SVG the writer draws: the block's leads keep
clear of bodies, captions, markers and other nets, the block's own texts of every wire, and no
two distinct nets' strokes touch anywhere on the sheet.

Geometry is read back from the SVG itself: wires from their polylines, texts from each
``<text>`` (position, anchor, size and length, with the writer's width estimate), bodies from
the element each ``<g>`` stands for. A schematic that reads unambiguously keeps distinct nets
apart and texts off the wires (common practice of schematic drafting).
"""

from __future__ import annotations

import math
import xml.etree.ElementTree as ET
from itertools import combinations, pairwise

import pytest

from portcut import assets
from portcut.engine.drawing.svg import SCALE, document_svg
from portcut.engine.schematic import Document, Region, Wire, extract, load
from portcut.engine.schematic.block_layout import Obstacles, grid_walk, place_marker, route
from portcut.engine.schematic.model import Block, NetLabel, PlacedPart
from portcut.engine.schematic.reduction import collapse_region
from portcut.engine.schematic.symbols import (
    STROKE_WIDTH,
    STYLES,
    Polygon,
    place,
    placed_bounds,
    shape_bounds,
    symbol,
    text_width,
)
from portcut.engine.solve.circuit import GROUND

NS = {"svg": "http://www.w3.org/2000/svg"}


def _examples():
    from pathlib import Path

    folder = Path(assets.__file__).parent / "examples"
    return sorted(folder.glob("*.json"))


def _collapsed(path):
    doc = load(path)
    for region in list(doc.regions()):
        collapse_region(doc, region.id).apply(doc)
    return doc


def _svg_geometry(svg: str):
    """(wires {id: points}, texts [(group id, class, box)]) in grid units, from the SVG."""
    root = ET.fromstring(svg.split("\n", 1)[1])
    wires = {}
    for line in root.iterfind(".//svg:polyline[@class='wire']", NS):
        pts = [tuple(float(v) / SCALE for v in p.split(",")) for p in line.get("points").split()]
        wires[line.get("id")[3:]] = pts
    texts = []
    for group in root.iterfind(".//svg:g[@id]", NS):
        for text in group.findall("svg:text", NS):
            x, y = float(text.get("x")) / SCALE, float(text.get("y")) / SCALE
            size = float(text.get("font-size")) / SCALE
            width = text_width(text.text) * size
            left = {"start": x, "middle": x - width / 2, "end": x - width}[text.get("text-anchor")]
            texts.append((group.get("id")[3:], text.get("class"),
                          (left, y - size, left + width, y + 0.3 * size)))
    return wires, texts


def _segments(points):
    return list(pairwise(points))


def _point_gap(p, a, b) -> float:
    (px, py), (ax, ay), (bx, by) = p, a, b
    dx, dy = bx - ax, by - ay
    length = dx * dx + dy * dy
    t = 0.0 if length == 0 else max(0.0, min(1.0, ((px - ax) * dx + (py - ay) * dy) / length))
    return math.dist(p, (ax + t * dx, ay + t * dy))


def _gap(s, t) -> float:
    (a, b), (c, d) = s, t
    if _crosses(s, t):
        return 0.0
    return min(_point_gap(a, c, d), _point_gap(b, c, d), _point_gap(c, a, b),
               _point_gap(d, a, b))


def _crosses(s, t) -> bool:
    (a, b), (c, d) = s, t

    def orient(p, q, r):
        v = (q[0] - p[0]) * (r[1] - p[1]) - (q[1] - p[1]) * (r[0] - p[0])
        return (v > 1e-12) - (v < -1e-12)

    return (orient(a, b, c) * orient(a, b, d) < 0) and (orient(c, d, a) * orient(c, d, b) < 0)


def _enters(segment, box, inset: float = 0.05) -> bool:
    """Does the segment pass through the box shrunk by ``inset`` (touching its edge, as a lead
    does at a pin, does not count)?"""
    (ax, ay), (bx, by) = segment
    x0, y0, x1, y1 = box[0] + inset, box[1] + inset, box[2] - inset, box[3] - inset
    if x0 > x1 or y0 > y1:
        return False
    return (min(ax, bx) <= x1 and max(ax, bx) >= x0 and min(ay, by) <= y1 and max(ay, by) >= y0)


def _bodies(doc):
    """(element id, body box) of every drawn symbol, as the writer places it."""
    for e in doc:
        if isinstance(e, PlacedPart):
            yield e.id, placed_bounds(e.kind, e.at, e.rotation, e.mirror)
        elif isinstance(e, Block):
            yield e.id, placed_bounds("block", e.at, e.rotation, e.mirror, form=e.form)
        elif isinstance(e, NetLabel):
            kind = "ground" if e.style == "ground" else "label"
            yield e.id, placed_bounds(kind, e.at, e.rotation)


@pytest.mark.parametrize("style", STYLES)
@pytest.mark.parametrize("path", _examples(), ids=lambda p: p.stem)
def test_collapsed_examples_draw_clear_leads_and_apart_nets(path, style):
    _check_sheet(_collapsed(path), style)


def _check_sheet(doc, style: str) -> None:
    """Every check of the module docstring on ``doc`` drawn in ``style``."""
    conn = extract(doc)
    wires, texts = _svg_geometry(document_svg(doc, style=style))
    net_of = dict(conn.net_of_wire)
    for label in doc.labels():
        net_of[label.id] = conn.net_of_pin[label.id, 0]
    bodies = dict(_bodies(doc))
    assert doc.blocks()
    for block in doc.blocks():
        _check_block(doc, block, style, wires, texts, net_of, bodies)
    # no two distinct nets' strokes touch: wires against wires, markers against wires
    for (w1, p1), (w2, p2) in combinations(wires.items(), 2):
        if net_of[w1] != net_of[w2]:
            gap = min(_gap(s, t) for s in _segments(p1) for t in _segments(p2))
            assert gap > STROKE_WIDTH, f"wires {w1} ({net_of[w1]}) and {w2} ({net_of[w2]}) touch"
    for label in doc.labels():
        box = bodies[label.id]
        for wid, points in wires.items():
            if net_of[wid] != net_of[label.id]:
                assert not any(_enters(s, box, -STROKE_WIDTH) for s in _segments(points)), \
                    f"wire {wid} ({net_of[wid]}) touches marker {label.id} ({label.name})"


def _check_block(doc, block, style, wires, texts, net_of, bodies) -> None:
    """One block: its leads clear of bodies, texts and other nets, its texts clear of every
    wire, and every marker off its frame."""
    leads = [s for s in block.stubs if s in wires]
    assert leads, "the block's pins are wired to the sheet"
    for lead in leads:
        for segment in _segments(wires[lead]):
            for eid, box in bodies.items():
                assert not _enters(segment, box), f"lead {lead} crosses the body of {eid}"
            for eid, role, box in texts:
                assert not _enters(segment, box, 0.0), f"lead {lead} crosses {role} of {eid}"
            for other, points in wires.items():
                if net_of[other] != net_of[lead]:
                    assert all(_gap(segment, t) > STROKE_WIDTH for t in _segments(points)), \
                        f"lead {lead} ({net_of[lead]}) touches wire {other} ({net_of[other]})"
    for eid, role, box in texts:
        if eid == block.id:
            for wid, points in wires.items():
                assert not any(_enters(s, box, 0.0) for s in _segments(points)), \
                    f"wire {wid} runs through the block's {role}"
    # grounds and labels keep off the block's dashed frame by more than a stroke
    (dashed,) = [s for s in symbol("block", style, block.form).shapes
                 if isinstance(s, Polygon) and s.dashed]
    frame = shape_bounds(place(dashed, block.at, block.rotation, block.mirror))
    for label in doc.labels():
        x0, y0, x1, y1 = bodies[label.id]
        gap = max(x0 - frame[2], frame[0] - x1, y0 - frame[3], frame[1] - y1)
        assert gap > STROKE_WIDTH, f"marker {label.name} touches {block.designator}'s frame"
    # and no other element's text overlaps this block or its texts
    mine = [b for eid, _, b in texts if eid == block.id] + [bodies[block.id]]
    for eid, role, box in texts:
        if eid != block.id:
            assert not any(_overlap(box, b) for b in mine), \
                f"{role} of {eid} overlaps {block.designator}"


def _overlap(a, b) -> bool:
    return a[0] < b[2] and b[0] < a[2] and a[1] < b[3] and b[1] < a[3]


def _ladder(pitch: int, sections: int, inside: int, labelled: bool) -> Document:
    """A source and an R ladder drawn at ``pitch`` grid units (series parts on row 0, shunts
    down to the ground bus on row 4, a label on each node when ``labelled``), with a region
    around the source and the first ``inside`` sections."""
    doc = Document("ladder")

    def part(designator: str, at, rotation: int, kind: str = "resistor",
             value: str = "1k") -> None:
        doc.add(PlacedPart(doc.new_id(PlacedPart), kind, designator, at, rotation, value=value))

    part("V1", (0, 2), 90, "voltage_source", "5")
    for i in range(sections):
        x = i * pitch
        part(f"R{2 * i + 1}", (x + pitch // 2, 0), 0)
        for a, b in (((x, 0), (x + pitch // 2 - 2, 0)), ((x + pitch // 2 + 2, 0),
                                                         (x + pitch, 0))):
            if a != b:
                doc.add(Wire(doc.new_id(Wire), (a, b)))
        part(f"R{2 * i + 2}", (x + pitch, 2), 90)
        if labelled:
            doc.add(NetLabel(doc.new_id(NetLabel), f"n{i}", (x + pitch, 0), rotation=270))
    doc.add(Wire(doc.new_id(Wire), ((0, 4), (sections * pitch, 4))))
    doc.add(NetLabel(doc.new_id(NetLabel), GROUND, (0, 4), style="ground"))
    members = frozenset(p.id for p in doc.parts()
                        if p.designator == "V1" or int(p.designator[1:]) <= 2 * inside)
    right = pitch * inside + 0.5
    doc.add(Region(doc.new_id(Region), "source side", members,
                   ((-3.0, -2.0), (right, -2.0), (right, 5.0), (-3.0, 5.0))))
    return doc


@pytest.mark.parametrize("labelled", [False, True])
@pytest.mark.parametrize("inside", [1, 2, 3])
@pytest.mark.parametrize("pitch", [4, 5, 6])
def test_collapsed_ladders_at_every_pitch_draw_clear_leads(pitch, inside, labelled):
    doc = _ladder(pitch, 5, inside, labelled)
    (region,) = doc.regions()
    collapse_region(doc, region.id).apply(doc)
    for style in STYLES:
        _check_sheet(doc, style)


def test_a_second_block_keeps_clear_of_the_first():
    doc = _ladder(6, 5, 2, labelled=True)
    (source_side,) = doc.regions()
    collapse_region(doc, source_side.id).apply(doc)
    # the last section (R9 in series, R10 across) seen from node n3 and ground
    tail = frozenset(p.id for p in doc.parts() if p.designator in ("R9", "R10"))
    doc.add(Region(doc.new_id(Region), "load end", tail,
                   ((25.0, -2.0), (31.5, -2.0), (31.5, 5.0), (25.0, 5.0))))
    collapse_region(doc, doc.regions()[0].id).apply(doc)
    assert len(doc.blocks()) == 2
    for style in STYLES:
        _check_sheet(doc, style)


def test_route_goes_round_a_box_and_never_through_another_net():
    # a wall of another net's points at x = 3 from y = -3 to 3: the way round costs bends
    obstacles = Obstacles()
    obstacles.occupy([(3, y) for y in range(-3, 4)], "other")
    path = route([(0, 0)], [(6, 0)], lambda p: obstacles.blocked(p, frozenset({(6, 0)})),
                 (-10, -10, 10, 10))
    assert path is not None and path[0] == (0, 0) and path[-1] == (6, 0)
    walked = grid_walk(path)
    assert not any(p in obstacles.taken for p in walked)
    assert all(a[0] == b[0] or a[1] == b[1] for a, b in pairwise(path))  # orthogonal


def test_route_refuses_when_walled_in():
    obstacles = Obstacles()
    obstacles.occupy([(x, y) for x in range(-2, 3) for y in range(-2, 3)
                      if max(abs(x), abs(y)) == 2], "other")
    assert route([(0, 0)], [(5, 0)], lambda p: obstacles.blocked(p, frozenset()),
                 (-6, -6, 6, 6)) is None


def test_a_ground_marker_moves_out_along_its_stub_until_it_is_clear():
    obstacles = Obstacles(boxes=[(0.0, 1.2, 1.5, 4.0)])  # something just below right of the pin
    marker, stub = place_marker(obstacles, "ground", GROUND, (0, 0), [(0, 0)],
                                keep_out=(-5.0, -1.0, -0.5, 1.0))
    assert marker.style == "ground" and stub[0] == (0, 0) and stub[-1] == marker.at
    assert marker.at[0] - 1 > 1.5  # its bars start right of the box


def test_a_ground_marker_hangs_below_its_pin_when_another_net_runs_past_on_the_right():
    obstacles = Obstacles()
    obstacles.occupy([(1, y) for y in range(-6, 7)], "other")  # a lead of another net at x = 1
    marker, stub = place_marker(obstacles, "ground", GROUND, (0, 0), [(0, 0)],
                                keep_out=(-5.0, -1.0, -0.5, 1.0))
    assert stub[0] == (0, 0) and stub[-1] == marker.at and marker.at[0] == 0
    assert marker.at[1] > 0  # straight down from the pin, crossing nothing
    assert not any(p in obstacles.taken for p in grid_walk(stub))

