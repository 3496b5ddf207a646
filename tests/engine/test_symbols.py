"""Symbol geometry: every kind drawn, leads reaching the pins, bounds, and the placement transform.

The screen convention (x right, y down; a clockwise turn maps +x onto +y) is common practice in
raster and vector graphics (SVG 1.1, section 7 "Coordinate Systems": rotate(a) turns clockwise
on screen for positive a because y points down).
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from portcut.engine.schematic.symbols import (
    ALIGNS,
    BLOCK_FORMS,
    FONT_SIZE,
    MARK_FONT_SIZE,
    PINS,
    ROLES,
    STROKE_WIDTH,
    STYLES,
    Arc,
    Circle,
    Line,
    Polygon,
    TextAnchor,
    pin_positions,
    place,
    placed_bounds,
    shape_bounds,
    symbol,
    text_baselines,
    text_bounds,
    transform,
)

EPS = 1e-9
ROTATIONS = (0, 90, 180, 270)
ALL = [(kind, style, form) for kind in PINS for style in STYLES
       for form in (BLOCK_FORMS if kind == "block" else ("thevenin",))]


def _contains(outer, inner) -> bool:
    return (outer[0] <= inner[0] + EPS and outer[1] <= inner[1] + EPS
            and outer[2] >= inner[2] - EPS and outer[3] >= inner[3] - EPS)


def _close(p, q, tol=1e-9) -> bool:
    return math.dist(p, q) <= tol


def _lead_ends(sym):
    return [p for s in sym.shapes if isinstance(s, Line) for p in (s.points[0], s.points[-1])]


@pytest.mark.parametrize(("kind", "style", "form"), ALL)
def test_every_kind_has_shapes_pins_and_bounds(kind, style, form):
    sym = symbol(kind, style, form)
    assert sym.kind == kind
    assert sym.shapes
    assert sym.pins == PINS[kind]
    for shape in sym.shapes:
        assert _contains(sym.bounds, shape_bounds(shape))
    for anchor in sym.anchors:
        assert anchor.role in ROLES and anchor.align in ALIGNS
    for role in ("designator", "value", "name"):
        assert sum(a.role == role for a in sym.anchors) <= 1


@pytest.mark.parametrize(("kind", "style", "form"), ALL)
def test_leads_end_exactly_at_the_pins(kind, style, form):
    sym = symbol(kind, style, form)
    ends = _lead_ends(sym)
    for pin in sym.pins:
        assert any(_close(pin, e, 0.0) for e in ends), f"{kind}/{style}: no lead ends at {pin}"


# a measured source is drawn as a Thevenin block, whose texts have a test of their own
@pytest.mark.parametrize("kind", [k for k in PINS if k not in ("ground", "label", "coupling",
                                                                "block", "measured_source")])
def test_parts_carry_designator_and_value_on_opposite_sides(kind):
    sym = symbol(kind)
    d, v = sym.anchor("designator"), sym.anchor("value")
    assert d is not None and v is not None
    # opposite sides stay opposite under any rotation, so the two texts never stack up
    vectors = {"n": (0, -1), "s": (0, 1), "e": (1, 0), "w": (-1, 0)}
    assert tuple(-c for c in vectors[d.align]) == vectors[v.align]


@pytest.mark.parametrize("form", BLOCK_FORMS)
def test_block_texts_stand_clear_of_its_frame_and_away_from_its_pins(form):
    sym = symbol("block", "iec", form)
    x0, y0, x1, _ = sym.bounds
    lines = ["Voc = 846.7 mV ∠ -32.14°", "Z = 717 Ω - j 450.5 Ω", "at 10 kHz"]
    value = text_bounds(sym.anchor("value").at, sym.anchor("value").align, lines, FONT_SIZE)
    name = text_bounds(sym.anchor("designator").at, sym.anchor("designator").align, ["EQ1"],
                       FONT_SIZE)
    assert value[2] < x0 and name[3] < y0  # values left of the frame, designator above it
    # the pins sit on the right edge, so leads leave away from both texts
    assert all(px == x1 for px, _ in sym.pins)
    # the port's + and - stand outside the dashed frame, a clear gap from its right side
    (frame,) = (s for s in sym.shapes if isinstance(s, Polygon) and s.dashed)
    right = max(x for x, _ in frame.points)
    for role, mark in (("plus", "+"), ("minus", "−")):
        outer = max((a for a in sym.anchors if a.role == role), key=lambda a: a.at[0])
        left = text_bounds(outer.at, outer.align, [mark], MARK_FONT_SIZE)[0]
        assert left - right > STROKE_WIDTH, (role, left, right)


def test_net_label_shows_its_name_and_ground_has_no_text():
    assert symbol("label").anchor("name") is not None
    assert symbol("ground").anchors == ()


def test_styles_differ_where_the_standards_differ():
    # IEC 60617 draws a resistor as a rectangle, IEEE 315 as a zigzag
    iec = symbol("resistor", "iec").shapes
    ieee = symbol("resistor", "ieee").shapes
    assert any(isinstance(s, Polygon) for s in iec)
    assert not any(isinstance(s, Polygon) for s in ieee)
    zigzag = max((s for s in ieee if isinstance(s, Line)), key=lambda s: len(s.points))
    assert sum(1 for p in zigzag.points if p[1] != 0) == 6
    assert symbol("inductor", "iec") != symbol("inductor", "ieee")
    assert symbol("capacitor", "iec").shapes == symbol("capacitor", "ieee").shapes


def _arrow_tip(sym, near):
    """The vertex of a filled triangle nearest ``near``, and that triangle's other vertices."""
    tips = [s for s in sym.shapes if isinstance(s, Polygon) and s.filled]
    assert tips, f"{sym.kind} has no arrowhead"
    best = min((p for t in tips for p in t.points), key=lambda p: math.dist(p, near))
    return best, tips


@pytest.mark.parametrize("style", STYLES)
@pytest.mark.parametrize("kind", ["current_source", "cccs", "vccs"])
def test_current_arrows_point_at_the_to_node(kind, style):
    # the arrow of a current-type source points at its second node, n_to (docs/method.md)
    sym = symbol(kind, style)
    frm, to = sym.pins[0], sym.pins[1]
    tip, tips = _arrow_tip(sym, to)
    others = [p for t in tips for p in t.points if p != tip]
    assert all(math.dist(tip, to) < math.dist(p, to) for p in others)
    assert math.dist(tip, to) < math.dist(tip, frm)


@pytest.mark.parametrize("style", STYLES)
@pytest.mark.parametrize("kind", ["voltage_source", "ccvs", "vcvs", "opamp"])
def test_plus_mark_sits_at_the_plus_node(kind, style):
    sym = symbol(kind, style)
    # p is the first node of a voltage-type source; the op-amp's non-inverting input is inp
    plus_pin, minus_pin = sym.pins[0], sym.pins[1]
    plus = [a.at for a in sym.anchors if a.role == "plus"]
    minus = [a.at for a in sym.anchors if a.role == "minus"]
    nearest_plus = min(plus, key=lambda p: math.dist(p, plus_pin))
    nearest_minus = min(minus, key=lambda p: math.dist(p, minus_pin))
    assert math.dist(nearest_plus, plus_pin) < math.dist(nearest_plus, minus_pin)
    assert math.dist(nearest_minus, minus_pin) < math.dist(nearest_minus, plus_pin)


def test_opamp_inputs_match_the_pin_order():
    sym = symbol("opamp")
    assert sym.pins == ((-3, 1), (-3, -1), (3, 0))  # inp, inn, out
    plus = next(a for a in sym.anchors if a.role == "plus")
    minus = next(a for a in sym.anchors if a.role == "minus")
    assert plus.at[1] == 1 and minus.at[1] == -1


@pytest.mark.parametrize("style", STYLES)
def test_thevenin_block_is_a_voltage_source_in_series_with_a_box(style):
    sym = symbol("block", style, "thevenin")
    source = symbol("voltage_source", style)
    rings = [s for s in sym.shapes if isinstance(s, Circle) and s.radius == 1.0]
    assert len(rings) == 1
    # the source's + mark lies on the side of the plus terminal (top rail)
    plus = [a.at for a in sym.anchors if a.role == "plus"]
    assert any(p[1] < rings[0].center[1] and p[0] < 0 for p in plus)
    assert len([a for a in sym.anchors if a.role == "plus"]) == 1 + sum(
        a.role == "plus" for a in source.anchors)
    # the impedance sits on the upper rail (series): a box in IEC style, the resistor's zigzag
    # in IEEE 315 style, centred on y = -2
    assert any(abs((b[1] + b[3]) / 2 + 2) < EPS for b in _impedance_bounds(sym, style))


@pytest.mark.parametrize("style", STYLES)
def test_norton_block_drives_into_plus_with_a_box_across_the_port(style):
    sym = symbol("block", style, "norton")
    tip, _ = _arrow_tip(sym, sym.pins[0])
    assert tip[1] < 0  # the arrow points up, towards the plus rail: isc leaves by plus
    # taller than wide: across the rails
    assert any(b[2] - b[0] < b[3] - b[1] for b in _impedance_bounds(sym, style))


def _impedance_bounds(sym, style):
    """Bounds of the block's impedance drawing: IEC boxes, or IEEE zigzags (a Line of more
    than six points)."""
    if style == "iec":
        return [shape_bounds(s) for s in sym.shapes
                if isinstance(s, Polygon) and not s.dashed and not s.filled]
    zigzags = [shape_bounds(s) for s in sym.shapes if isinstance(s, Line) and len(s.points) > 6]
    assert zigzags, "IEEE 315 draws the block's impedance as a zigzag"
    assert not [s for s in sym.shapes if isinstance(s, Polygon) and not s.dashed
                and not s.filled], "no box left in IEEE style"
    return zigzags


def test_symbol_is_cached_and_rejects_unknown_names():
    assert symbol("resistor") is symbol("resistor", "iec")
    with pytest.raises(KeyError, match="transistor"):
        symbol("transistor")
    with pytest.raises(ValueError, match="din"):
        symbol("resistor", "din")
    with pytest.raises(ValueError, match="star"):
        symbol("block", "iec", "star")


# -- the transform --------------------------------------------------------------------------------
points = st.tuples(st.integers(-20, 20), st.integers(-20, 20))


@given(points)
def test_clockwise_quarter_turn_maps_right_to_down(p):
    assert transform((1, 0), 90) == (0, 1)  # +x -> +y: clockwise on a y-down screen
    assert transform(p, 360) == p
    x = p
    for _ in range(4):
        x = transform(x, 90)
    assert x == p
    assert transform(transform(p, 0, True), 0, True) == p
    assert transform(p, 180) == (-p[0], -p[1])


@given(points, st.sampled_from(ROTATIONS), st.booleans())
def test_transform_is_an_isometry(p, rotation, mirror):
    q = transform(p, rotation, mirror)
    assert math.hypot(*q) == pytest.approx(math.hypot(*p))


@given(st.sampled_from(list(PINS)), points, st.sampled_from(ROTATIONS), st.booleans())
def test_pin_positions_follow_the_transform(kind, at, rotation, mirror):
    placed = pin_positions(kind, at, rotation, mirror)
    for pin, got in zip(PINS[kind], placed, strict=True):
        dx, dy = transform(pin, rotation, mirror)
        assert got == (at[0] + dx, at[1] + dy)


def _sample(arc: Arc, n: int = 16):
    return [arc.point_at(arc.start_deg + arc.span_deg * i / n) for i in range(n + 1)]


@given(st.floats(-360, 360), st.floats(-359, 359).filter(lambda s: abs(s) > 1),
       st.sampled_from(ROTATIONS), st.booleans(), points)
def test_placed_arc_passes_through_the_transformed_points(start, span, rotation, mirror, at):
    arc = Arc((0.5, -0.25), 0.75, start, span)
    moved = place(arc, at, rotation, mirror)
    assert isinstance(moved, Arc)
    for p, q in zip(_sample(arc), _sample(moved), strict=True):
        dx, dy = transform(p, rotation, mirror)
        assert _close((at[0] + dx, at[1] + dy), q, 1e-5)


def test_arc_angles_are_counterclockwise_on_screen():
    arc = Arc((0, 0), 1, 0, 90)
    assert _close(arc.start, (1, 0)) and _close(arc.end, (0, -1))  # 90 degrees is up on screen
    assert shape_bounds(Arc((0, 0), 1, 180, -180)) == pytest.approx((-1, -1, 1, 0))


@pytest.mark.parametrize(("kind", "style", "form"), ALL)
@pytest.mark.parametrize("rotation", ROTATIONS)
@pytest.mark.parametrize("mirror", [False, True])
def test_placed_bounds_contain_the_placed_shapes_and_pins(kind, style, form, rotation, mirror):
    at = (7, -3)
    box = placed_bounds(kind, at, rotation, mirror, style=style, form=form)
    for shape in symbol(kind, style, form).shapes:
        assert _contains(box, shape_bounds(place(shape, at, rotation, mirror)))
    for px, py in pin_positions(kind, at, rotation, mirror):
        assert _contains(box, (px, py, px, py))


def test_anchor_alignment_turns_with_the_part_and_text_stays_upright():
    above = TextAnchor("designator", (0, -1.4), "n")
    assert place(above, (10, 10), 90).align == "e"  # beside a vertical part, reading rightwards
    assert place(above, (10, 10), 90).at == pytest.approx((11.4, 10))
    assert place(TextAnchor("name", (2, 0), "e"), (0, 0), 0, True).align == "w"
    assert place(TextAnchor("plus", (1, 1), "c"), (0, 0), 270).align == "c"


def test_text_baselines_stack_lines_away_from_the_anchor():
    h, lines = text_baselines((0, 0), "s", 3, 1.0)
    assert h == "middle" and all(y > 0 for _, y in lines)
    assert lines == sorted(lines, key=lambda p: p[1])
    h, lines = text_baselines((0, 0), "n", 2, 1.0)
    assert all(y < 0 for _, y in lines)
    assert text_baselines((0, 0), "e", 1, 1.0)[0] == "start"
    assert text_baselines((0, 0), "w", 1, 1.0)[0] == "end"
    _, (only,) = text_baselines((0, 0), "c", 1, 1.0)
    assert only[1] > 0  # baseline below the centre line, so the capitals straddle it
