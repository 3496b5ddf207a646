"""The SVG writer: valid XML, one symbol group per element placed by its transform attribute,
upright texts with SI-formatted values, junction dots, regions, blocks and the viewBox.

Outside references: the SVG 1.1 specification (W3C Recommendation, 2nd edition 2011), section 7.6
for transform lists (applied right to left: translate(...) rotate(a) scale(...) maps a point by the
scale first) and 8.3.8 for the elliptical arc flags; the SI Brochure, 9th edition, section 5.4.3
for "4.7 kΩ" (a space between number and unit, none between prefix and unit symbol).
"""

from __future__ import annotations

import math
import re
import xml.etree.ElementTree as ET
from dataclasses import replace
from itertools import pairwise

import numpy as np
import pytest

from portcut.engine.drawing.palette import PALETTE
from portcut.engine.drawing.svg import SCALE, document_svg, junction_points
from portcut.engine.errors import DocumentError, ValueParseError
from portcut.engine.schematic import (
    Analysis,
    Document,
    Junction,
    NetLabel,
    PlacedPart,
    Region,
    Wire,
)
from portcut.engine.schematic.captions import (
    above_extra_low_voltage,
    block_caption,
    drawn_form,
    value_caption,
)
from portcut.engine.schematic.reduction import collapse_region
from portcut.engine.schematic.symbols import pin_positions, symbol

NS = {"s": "http://www.w3.org/2000/svg"}


def _divider() -> Document:
    """V1 (5 V) feeding R1 (4k7) into R2 (10k) || C1 (100n) to ground; an inductor on to a label."""
    d = Document("Divider")
    d.add(PlacedPart("p1", "voltage_source", "V1", (0, 4), rotation=90, value="5"))
    d.add(PlacedPart("p2", "resistor", "R1", (4, 0), value="4k7"))
    d.add(PlacedPart("p3", "resistor", "R2", (8, 4), rotation=90, value="10k"))
    d.add(PlacedPart("p4", "capacitor", "C1", (12, 4), rotation=270, mirror=True, value="100n"))
    d.add(PlacedPart("p5", "inductor", "L1", (16, 0), value="10m"))
    d.add(Wire("w1", ((0, 2), (0, 0), (2, 0))))
    d.add(Wire("w2", ((6, 0), (14, 0))))
    d.add(Wire("w3", ((8, 2), (8, 0))))
    d.add(Wire("w4", ((12, 2), (12, 0))))
    d.add(Wire("w5", ((0, 6), (0, 8), (12, 8), (12, 6))))
    d.add(Wire("w6", ((8, 6), (8, 8))))
    d.add(NetLabel("n1", "gnd", (4, 8), style="ground"))
    d.add(NetLabel("n2", "out", (18, 0)))
    d.add(Region("r1", "source", frozenset({"p1", "p2"}), ((-3, -2), (6, -2), (6, 9), (-3, 9))))
    return d


def _parse(text: str) -> ET.Element:
    assert text.startswith('<?xml version="1.0" encoding="UTF-8"?>')
    return ET.fromstring(text)


def _groups(root: ET.Element, cls: str) -> list[ET.Element]:
    return [g for g in root.iter(f"{{{NS['s']}}}g") if g.get("class") == cls]


def _texts(element: ET.Element) -> list[str]:
    return ["".join(t.itertext()) for t in element.iter(f"{{{NS['s']}}}text")]


# -- SVG 1.1 transform lists, read independently of engine.schematic.symbols
# ---------------------------------
def _matrix(transform: str) -> np.ndarray:
    m = np.eye(3)
    for name, args in re.findall(r"(\w+)\(([^)]*)\)", transform or ""):
        v = [float(a) for a in re.split(r"[\s,]+", args.strip())]
        if name == "translate":
            step = np.array([[1, 0, v[0]], [0, 1, v[1] if len(v) > 1 else 0], [0, 0, 1]])
        elif name == "rotate":
            c, s = math.cos(math.radians(v[0])), math.sin(math.radians(v[0]))
            step = np.array([[c, -s, 0], [s, c, 0], [0, 0, 1]])
        elif name == "scale":
            step = np.diag([v[0], v[1] if len(v) > 1 else v[0], 1])
        else:
            raise AssertionError(f"unexpected transform {name}")
        m = m @ step
    return m


def _points(attr: str) -> list[tuple[float, float]]:
    nums = [float(n) for n in re.split(r"[\s,]+", attr.strip())]
    return list(zip(nums[::2], nums[1::2], strict=True))


def _sheet_points(root: ET.Element):
    """Every coordinate drawn, mapped to the SVG's user space through its group transforms."""
    out = []

    def walk(node, m):
        m = m @ _matrix(node.get("transform", ""))
        tag = node.tag.split("}")[1]
        local = []
        if tag in ("polyline", "polygon"):
            local = _points(node.get("points"))
        elif tag == "circle":
            cx, cy, r = (float(node.get(k)) for k in ("cx", "cy", "r"))
            local = [(cx - r, cy - r), (cx + r, cy + r)]
        elif tag == "text":
            local = [(float(node.get("x")), float(node.get("y")))]
        elif tag == "path":
            local = _points(" ".join(re.findall(r"-?[\d.]+,-?[\d.]+", node.get("d"))))
        out.extend(tuple((m @ np.array([x, y, 1]))[:2]) for x, y in local)
        for child in node:
            walk(child, m)

    walk(root, np.eye(3))
    return out


def test_output_is_valid_svg_with_one_group_per_element():
    doc = _divider()
    root = _parse(document_svg(doc))
    assert root.tag == f"{{{NS['s']}}}svg" and root.get("version") == "1.1"
    assert len(_groups(root, "part")) == len(doc.parts())
    assert len(_groups(root, "ground")) == 1 and len(_groups(root, "label")) == 1
    assert len(_groups(root, "symbol")) == len(doc.parts()) + len(doc.labels())
    assert len([p for p in root.iter(f"{{{NS['s']}}}polyline") if p.get("class") == "wire"]) == 6


def test_designators_and_values_are_real_text_with_si_units():
    root = _parse(document_svg(_divider()))
    texts = _texts(root)
    for expected in ["V1", "R1", "R2", "C1", "L1", "out", "Divider",
                     "5 V", "4.7 kΩ", "10 kΩ", "100 nF", "10 mH"]:
        assert expected in texts
    # every part's group carries its own designator and value
    r1 = next(g for g in _groups(root, "part") if g.get("id") == "el-p2")
    assert {"R1", "4.7 kΩ"} <= set(_texts(r1))


def test_micro_is_the_micro_sign_and_sources_read_as_phasors_above_dc():
    doc = _divider()
    doc.replace_fields("p4", value="4u7")
    doc.replace_fields("p1", phase_deg="30")
    texts = _texts(_parse(document_svg(doc)))
    assert "4.7 \u00b5F" in texts  # U+00B5 MICRO SIGN, engine/solve/units.py
    assert "5 V ∠ 30°" in texts
    doc.replace_fields("p1", phase_deg="")
    assert "5 V ∠ 0°" in _texts(_parse(document_svg(doc, freq=1e3)))
    assert "5 V" in _texts(_parse(document_svg(doc, freq=0)))


def test_symbol_transform_places_every_pin_where_the_engine_says():
    doc = _divider()
    root = _parse(document_svg(doc))
    for part in doc.parts():
        group = next(g for g in _groups(root, "part") if g.get("id") == f"el-{part.id}")
        (shapes,) = _groups(group, "symbol")
        m = _matrix(shapes.get("transform"))
        ends = set()
        for line in shapes.iter(f"{{{NS['s']}}}polyline"):
            pts = _points(line.get("points"))
            for x, y in (pts[0], pts[-1]):
                gx, gy = (m @ np.array([x, y, 1]))[:2] / SCALE
                ends.add((round(gx, 6), round(gy, 6)))
        for pin in pin_positions(part.kind, part.at, part.rotation, part.mirror):
            assert (float(pin[0]), float(pin[1])) in ends, f"{part.designator} pin {pin}"


def test_text_stays_upright():
    root = _parse(document_svg(_divider()))

    def check(node, turned):
        turned = turned or bool(re.search(r"rotate|scale", node.get("transform", "")))
        if node.tag.endswith("}text"):
            assert not turned
        for child in node:
            check(child, turned)

    check(root, False)


def test_viewbox_encloses_everything_drawn():
    for doc in (_divider(), Document("empty")):
        root = _parse(document_svg(doc, style="ieee"))
        x, y, w, h = (float(v) for v in root.get("viewBox").split())
        assert float(root.get("width")) == w and float(root.get("height")) == h
        for px, py in _sheet_points(root):
            assert x <= px <= x + w and y <= py <= y + h


def test_arcs_end_where_the_symbol_says():
    # SVG 1.1 8.3.8: "A rx,ry rot large,sweep x,y" ends at (x, y)
    doc = Document()
    doc.add(PlacedPart("p1", "inductor", "L1", (0, 0), value="1m"))
    root = _parse(document_svg(doc))
    arcs = [s for s in symbol("inductor").shapes if hasattr(s, "span_deg")]
    paths = [p.get("d") for p in root.iter(f"{{{NS['s']}}}path")]
    assert len(paths) == len(arcs)
    for arc, d in zip(arcs, paths, strict=True):
        *_, end = _points(" ".join(re.findall(r"-?[\d.]+,-?[\d.]+", d)))
        assert end == pytest.approx((arc.end[0] * SCALE, arc.end[1] * SCALE))
        # a positive span (counterclockwise on screen) is SVG sweep-flag 0
        assert d.split()[-2].endswith(",0" if arc.span_deg > 0 else ",1")


def test_ieee_style_draws_a_zigzag_resistor():
    doc = Document()
    doc.add(PlacedPart("p1", "resistor", "R1", (0, 0), value="1k"))
    iec = _parse(document_svg(doc, style="iec"))
    ieee = _parse(document_svg(doc, style="ieee"))
    assert len(list(_groups(iec, "part")[0].iter(f"{{{NS['s']}}}polygon"))) == 1
    assert len(list(_groups(ieee, "part")[0].iter(f"{{{NS['s']}}}polygon"))) == 0
    with pytest.raises(ValueParseError, match="style"):
        document_svg(doc, style="din")


def test_regions_are_outlined_in_the_accent_colour_only_when_shown():
    doc = _divider()
    shown = _groups(_parse(document_svg(doc)), "region")
    assert len(shown) == 1
    (outline,) = shown[0].iter(f"{{{NS['s']}}}polygon")
    assert outline.get("stroke") == PALETTE.accent and outline.get("fill") == PALETTE.accent_fill
    assert "source" in _texts(shown[0])
    assert _groups(_parse(document_svg(doc, show_regions=False)), "region") == []


def test_title_defaults_to_the_document_and_can_be_given():
    root = _parse(document_svg(_divider(), title="Review A & B <rev 2>"))
    assert "Review A & B <rev 2>" in _texts(root)
    assert root.find("s:title", NS).text == "Review A & B <rev 2>"


def _dots(text: str) -> set[tuple[float, float]]:
    root = _parse(text)
    return {(float(c.get("cx")) / SCALE, float(c.get("cy")) / SCALE)
            for c in root.iter(f"{{{NS['s']}}}circle") if c.get("class") == "junction"}


def test_junction_dots_where_three_connections_meet_and_not_at_crossings():
    doc = Document()
    doc.add(Wire("w1", ((0, 0), (10, 0))))
    doc.add(Wire("w2", ((5, 0), (5, 5))))      # a T onto w1's middle: dot at (5, 0)
    doc.add(Wire("w3", ((2, -3), (2, 3))))     # crosses w1 without a junction: no dot
    doc.add(Wire("w4", ((8, -3), (8, 3))))     # crosses w1 with an explicit junction: dot
    doc.add(Junction("j1", (8, 0)))
    doc.add(Wire("w5", ((0, 0), (0, 5))))      # a corner of two wire ends: no dot
    doc.add(PlacedPart("p1", "resistor", "R1", (5, 7), rotation=90, value="1"))
    doc.add(Wire("w6", ((3, 5), (7, 5))))      # R1's pin (5, 5) on the end of w2 and mid w6
    assert set(junction_points(doc)) == {(5, 0), (8, 0), (5, 5)}
    assert _dots(document_svg(doc)) == {(5.0, 0.0), (8.0, 0.0), (5.0, 5.0)}


def test_divider_dots():
    # R2's and C1's wires meet the top rail in Ts, R2's the bottom rail, and the ground pin
    # sits mid-rail; the corners at (0, 0), (0, 8) and (12, 8) are two ends only
    assert set(junction_points(_divider())) == {(8, 0), (12, 0), (8, 8), (4, 8)}


def _dots_by_definition(doc: Document) -> set[tuple[int, int]]:
    """The dot rule read literally, point by point over every segment (slow, obviously right):
    a wire end counts one, a bend or a segment passing strictly through counts two, a pin one."""
    wires = [w.points for w in doc.wires() if len(set(w.points)) > 1]
    points = {p for w in wires for p in (w[0], w[-1])} | {p for w in wires for p in w[1:-1]}
    pins = [p for e in doc.parts() for p in pin_positions(e.kind, e.at, e.rotation, e.mirror)]
    points |= set(pins)

    def connections(p):
        n = pins.count(p)
        for w in wires:
            n += (w[0] == p) + (w[-1] == p) + 2 * w[1:-1].count(p)
            for (x0, y0), (x1, y1) in pairwise(w):
                inside_h = y0 == y1 == p[1] and min(x0, x1) < p[0] < max(x0, x1)
                inside_v = x0 == x1 == p[0] and min(y0, y1) < p[1] < max(y0, y1)
                n += 2 * (inside_h or inside_v)
        return n

    return {p for p in points if connections(p) >= 3} | {j.at for j in doc.junctions()}


@pytest.mark.parametrize("seed", range(20))
def test_junction_dots_match_the_rule_on_random_crowded_sheets(seed):
    # overlapping, touching and crossing segments on a few rows and columns, with parts on them
    rng = np.random.default_rng(seed)
    doc = Document()
    for i in range(40):
        x, y = (int(v) for v in rng.integers(0, 8, 2))
        length = int(rng.integers(1, 6))
        points = [(x, y), (x + length, y)] if rng.random() < 0.5 else [(x, y), (x, y + length)]
        if rng.random() < 0.3:  # a bend
            points.append((points[-1][0], points[-1][1] + 2) if points[0][1] == points[1][1]
                          else (points[-1][0] + 2, points[-1][1]))
        doc.add(Wire(f"w{i}", tuple(points)))
    for i in range(6):
        x, y = (int(v) for v in rng.integers(0, 10, 2))
        doc.add(PlacedPart(f"p{i}", "resistor", f"R{i}", (x, y), rotation=int(rng.choice([0, 90])),
                           value="1"))
    assert set(junction_points(doc)) == _dots_by_definition(doc)


@pytest.mark.parametrize("char", ["\x00", "\x01", "\x1f", "\ufffe", "\uffff", "\udfff"])
def test_characters_xml_cannot_hold_never_break_the_drawing(char):
    # XML 1.0 section 2.2, Char production (from memory): these are outside the characters a
    # document may hold
    doc = _divider()
    for element, name in (("n2", f"o{char}ut"), ("r1", f"src{char}")):
        with pytest.raises(DocumentError):  # a document refuses them in its own text
            doc.replace_fields(element, name=name)
    text = document_svg(doc, title=f"T{char}itle")  # a title given to the export alone
    root = _parse(text)
    assert char not in text
    assert "T\ufffditle" in _texts(root)
    text.encode("utf-8")  # every character can be written to the file


def test_coupled_inductors_get_a_dot_at_their_first_node():
    doc = Document()
    doc.add(PlacedPart("p1", "inductor", "L1", (0, 0), value="1m"))
    doc.add(PlacedPart("p2", "inductor", "L2", (0, 6), rotation=180, value="4m"))
    doc.add(PlacedPart("p3", "coupling", "CP1", (0, 3), value="0.9", couples=("L1", "L2")))
    root = _parse(document_svg(doc))
    dots = [(float(c.get("cx")) / SCALE, float(c.get("cy")) / SCALE)
            for c in root.iter(f"{{{NS['s']}}}circle") if c.get("class") == "coupling-dot"]
    assert len(dots) == 2
    first_l1 = pin_positions("inductor", (0, 0))[0]
    first_l2 = pin_positions("inductor", (0, 6), 180)[0]
    assert min(dots, key=lambda p: math.dist(p, first_l1)) != min(
        dots, key=lambda p: math.dist(p, first_l2))
    for dot, pin in ((min(dots, key=lambda p: math.dist(p, first_l1)), first_l1),
                     (min(dots, key=lambda p: math.dist(p, first_l2)), first_l2)):
        assert math.dist(dot, pin) < 1.0
    assert "k = 0.9 (L1, L2)" in _texts(root)


def test_unreadable_frequency_is_a_clear_error():
    doc = _divider()
    doc.set_analysis(Analysis(freq="fast"))
    with pytest.raises(ValueParseError, match="fast"):
        document_svg(doc)


# -- captions --------------------------------------------------------------------------------------
@pytest.mark.parametrize(("kind", "value", "expected"), [
    ("resistor", "4k7", "4.7 kΩ"), ("capacitor", "100n", "100 nF"), ("inductor", "10m", "10 mH"),
    ("current_source", "2m", "2 mA"), ("vccs", "40m", "40 mS"), ("vcvs", "10", "10 V/V"),
    ("resistor", "fourty", "fourty"),  # unreadable text is shown as typed
])
def test_value_captions(kind, value, expected):
    assert value_caption(PlacedPart("p", kind, "X1", (0, 0), value=value)) == expected


def test_current_controlled_captions_name_their_control():
    part = PlacedPart("p", "ccvs", "DS1", (0, 0), value="100", control="R1")
    assert value_caption(part) == "100 Ω × current in R1"
    assert value_caption(PlacedPart("p", "opamp", "U1", (0, 0))) == ""


class _Eq:
    def __init__(self, voc, isc, z, has_thevenin=True, has_norton=True):
        self.voc, self.isc, self.z = voc, isc, z
        self.has_thevenin, self.has_norton = has_thevenin, has_norton


def test_block_captions_follow_the_form_that_exists():
    eq = _Eq(5.0, 0.01, 500.0)
    assert block_caption(eq, "thevenin", 0.0) == ("Voc = 5 V", "Z = 500 Ω", "at DC")
    assert block_caption(eq, "norton", 1e3) == ("Isc = 10 mA ∠ 0°", "Z = 500 Ω", "at 1 kHz")
    no_thevenin = _Eq(complex("nan"), 1e-3, complex("inf"), has_thevenin=False)
    assert drawn_form(no_thevenin, "thevenin") == "norton"
    no_norton = _Eq(2.0, complex("nan"), 0.0, has_norton=False)
    assert drawn_form(no_norton, "norton") == "thevenin"


# -- collapsed blocks ----------------------------------------------------------------------------
def _collapsed(form: str = "thevenin") -> Document:
    doc = _divider()
    collapse_region(doc, "r1", form).apply(doc)
    return doc


@pytest.mark.parametrize("form", ["thevenin", "norton"])
def test_a_collapsed_block_shows_its_equivalent_and_the_frequency(form):
    # V1 = 5 V behind R1 = 4.7 kΩ is its own Thevenin equivalent: Voc = 5 V, Z = 4.7 kΩ and
    # Isc = 5 V / 4.7 kΩ = 1.064 mA (Thevenin's and Norton's theorems, any circuits text)
    doc = _collapsed(form)
    root = _parse(document_svg(doc))
    (block,) = _groups(root, "block")
    texts = _texts(block)
    assert "EQ1" in texts and "Z = 4.7 kΩ" in texts and "at DC" in texts
    assert ("Voc = 5 V" if form == "thevenin" else "Isc = 1.064 mA") in texts
    assert "Equivalents at DC, peak values" in _texts(root)
    (frame,) = [p for p in block.iter(f"{{{NS['s']}}}polygon") if p.get("stroke-dasharray")]
    assert frame.get("stroke") == PALETTE.accent
    assert len(_groups(root, "symbol")) == len(doc.parts()) + len(doc.labels()) + 1
    at_1k = _texts(_parse(document_svg(doc, freq=1e3)))
    assert "at 1 kHz" in at_1k and "Equivalents at 1 kHz, peak values" in at_1k


def test_a_block_without_an_equivalent_says_why_in_the_error_colour():
    doc = _collapsed()
    (block,) = doc.blocks()
    # port points that touch nothing in the contents: the block cannot be evaluated
    doc.replace(replace(block, port=(((999, 999),), ((998, 998),))))
    root = _parse(document_svg(doc))
    (group,) = _groups(root, "block")
    lines = [t for t in group.iter(f"{{{NS['s']}}}text") if t.get("class") == "value"]
    assert lines[0].text == "no equivalent:" and "EQ1" in lines[1].text
    assert all(t.get("fill") == PALETTE.error for t in lines)


# -- the extra-low voltage check -----------------------------------------------------------------
@pytest.mark.parametrize(("volts", "freq", "basis", "above"), [
    ([120.0], 0.0, "peak", False), ([-120.5], 0.0, "peak", True),     # 120 V ripple-free DC
    ([70.7], 50.0, "peak", False), ([70.8], 50.0, "peak", True),      # 50 V rms = 70.71 V peak
    ([50.0], 50.0, "rms", False), ([50.1], 50.0, "rms", True),
    ([complex("inf"), 1.0], 1e3, "peak", False),                      # undefined values skipped
])
def test_extra_low_voltage_limits(volts, freq, basis, above):
    # limits: 50 V AC rms / 120 V ripple-free DC (common practice, IEC 61140 / IEC 60449 band I)
    assert above_extra_low_voltage(volts, freq, basis) is above
