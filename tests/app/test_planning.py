"""Edit planning without Qt: rigid maps carry pins with their parts, moves lose no connection
(engine.schematic.connectivity.extract) and every wire orthogonal, deletes take dangling wires,
pastes rename, and the fields refuse bad entries with the reason. Also the safety thresholds and
the region controls' choices (port nets, names)."""

from __future__ import annotations

import math
from dataclasses import replace
from itertools import pairwise

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from sheets import divider

from portcut import assets
from portcut.app.editing import (
    RigidMap,
    bend,
    link_route,
    moved,
    paste,
    plan_delete,
    plan_placement,
    simplify,
)
from portcut.app.fields import fields_for
from portcut.app.region_edits import renamed, with_port_net
from portcut.app.safety import above_extra_low_voltage
from portcut.app.sheet import SheetIndex, element_pins
from portcut.engine.errors import CircuitError, DocumentError, ValueParseError
from portcut.engine.schematic import Analysis, Document, NetLabel, PlacedPart, Region, Wire
from portcut.engine.schematic.connectivity import extract
from portcut.engine.schematic.fileformat import load

KINDS = ("resistor", "vcvs", "opamp")
_EXAMPLES = {name: load(assets.example_path(name)) for name in assets.example_names()}


def _partition(doc) -> set[frozenset]:
    nets: dict[str, set] = {}
    for key, net in extract(doc).net_of_pin.items():
        nets.setdefault(net, set()).add(key)
    return {frozenset(v) for v in nets.values()}


def _apply(doc: Document, elements) -> Document:
    out = Document(doc.title)
    for e in doc:
        out.add(e)
    with out.batch():
        for e in elements:
            out.replace(e)
    return out


maps = st.builds(RigidMap, offset=st.tuples(st.integers(-9, 9), st.integers(-9, 9)),
                 turns=st.integers(0, 3), mirror=st.booleans(),
                 center=st.tuples(st.integers(-5, 5), st.integers(-5, 5)))


@given(kind=st.sampled_from(KINDS), rotation=st.sampled_from((0, 90, 180, 270)),
       mirror=st.booleans(), m=maps)
def test_a_rigid_map_carries_the_pins_with_the_part(kind, rotation, mirror, m):
    part = PlacedPart("p1", kind, "X1", (3, -2), rotation, mirror)
    assert element_pins(moved(part, m)) == tuple(m.point(p) for p in element_pins(part))


@given(rotation=st.sampled_from((0, 90, 180, 270)), style=st.sampled_from(("label", "ground")),
       m=maps)
def test_net_markers_keep_their_pin_under_any_map(rotation, style, m):
    label = NetLabel("n1", "x", (1, 1), rotation, style)
    assert element_pins(moved(label, m)) == (m.point(label.at),)


@settings(max_examples=60, deadline=None)
@given(name=st.sampled_from(sorted(_EXAMPLES)), pick=st.integers(0, 50), m=maps)
def test_moving_any_part_loses_no_connection_and_keeps_wires_orthogonal(name, pick, m):
    doc = _EXAMPLES[name]
    parts = [p for p in doc.parts() if element_pins(p)]
    part = parts[pick % len(parts)]
    m = RigidMap(m.offset, m.turns, m.mirror, part.at)
    after = _apply_new(doc, plan_placement(doc, SheetIndex(doc), [part.id], m))
    # every net survives whole (a part dropped onto another wire may join more, as drawn)
    merged = _partition(after)
    assert all(any(net <= bigger for bigger in merged) for net in _partition(doc))
    for wire in after.wires():
        assert all(a[0] == b[0] or a[1] == b[1] for a, b in pairwise(wire.points))


def test_an_attached_lead_bends_to_follow_and_a_held_end_stays():
    doc = Document()
    doc.add(PlacedPart("p1", "resistor", "R1", (0, 0)))
    doc.add(PlacedPart("p2", "resistor", "R2", (10, 0)))
    doc.add(Wire("w1", ((2, 0), (8, 0))))
    plan = {e.id: e for e in plan_placement(doc, SheetIndex(doc), ["p2"], RigidMap((0, 4)))}
    assert plan["w1"].points == ((2, 0), (5, 0), (5, 4), (8, 4))  # leaves and meets head on
    plan = {e.id: e for e in plan_placement(doc, SheetIndex(doc), ["w1"], RigidMap((0, 4)))}
    assert set(plan) == {"w1"}                                    # a wire alone moves alone


def test_delete_follows_chains_of_dangling_wires_only():
    doc = Document()
    doc.add(PlacedPart("p1", "resistor", "R1", (0, 0)))
    doc.add(PlacedPart("p2", "resistor", "R2", (20, 0)))
    doc.add(Wire("w1", ((2, 0), (6, 0))))
    doc.add(Wire("w2", ((6, 0), (6, 5), (10, 5))))    # R1 -> w1 -> w2: a chain to nowhere
    doc.add(Wire("w3", ((18, 0), (14, 0))))
    plan = plan_delete(doc, SheetIndex(doc), ["p1"])
    assert plan.removed == ("p1",) and set(plan.dangling) == {"w1", "w2"}


def test_paste_renames_and_follows_references_inside_the_copy():
    doc = Document()
    doc.add(PlacedPart("p1", "resistor", "R1", (0, 0), value="1k"))
    doc.add(PlacedPart("p2", "ccvs", "DS1", (0, 6), value="100", control="R1"))
    doc.add(PlacedPart("p3", "ccvs", "DS2", (0, 12), value="100", control="R1"))
    copies = paste(doc, [doc["p1"], doc["p2"]], (10, 0))
    by = {c.kind: c for c in copies}
    assert by["resistor"].designator == "R2" and by["ccvs"].designator == "DS3"
    assert by["ccvs"].control == "R2"
    assert paste(doc, [doc["p3"]], (0, 5))[0].control == "R1"   # its controller stayed behind
    assert {c.id for c in copies}.isdisjoint(e.id for e in doc)


def test_bend_and_simplify():
    assert bend((0, 0), (4, 3), True) == [(4, 0), (4, 3)]
    assert bend((0, 0), (4, 3), False) == [(0, 3), (4, 3)]
    assert simplify([(0, 0), (2, 0), (2, 0), (5, 0), (5, 4)]) == ((0, 0), (5, 0), (5, 4))
    # doubling back loses (3, 0)..(5, 0); kept when something is joined there
    assert simplify([(0, 0), (5, 0), (3, 0)]) == ((0, 0), (3, 0))
    assert simplify([(0, 0), (5, 0), (3, 0)], lambda p: p == (4, 0)) == ((0, 0), (5, 0), (3, 0))


def _field(element, name):
    return next(f for f in fields_for(element) if f.name == name)


def test_value_fields_read_si_and_iec_60062_and_refuse_the_rest():
    doc = Document()
    r = PlacedPart("p1", "resistor", "R1", (0, 0), value="1k")
    doc.add(r)
    value = _field(r, "value")
    # IEC 60062 letter codes (R stands for the decimal point) and SI prefixes are both taken
    for text in ("4k7", "2R2", "R47", "4.7k", "1M0", "470 Ω"):
        assert value.write(doc, r, text)[0].value == text.strip()
    with pytest.raises(ValueParseError, match=r"R1 resistance.*'4x7'"):
        value.write(doc, r, "4x7")
    with pytest.raises(ValueParseError, match="enter a value"):
        value.write(doc, r, "  ")
    with pytest.raises(DocumentError, match="designator 'R 1'"):
        _field(r, "designator").write(doc, r, "R 1")


def test_couples_needs_two_inductors_on_the_sheet():
    doc = Document()
    doc.add(PlacedPart("p1", "inductor", "L1", (0, 0), value="1m"))
    doc.add(PlacedPart("p2", "capacitor", "C1", (0, 4), value="1n"))
    k = PlacedPart("p3", "coupling", "CP1", (4, 0), value="0.5")
    doc.add(k)
    couples = _field(k, "couples")
    with pytest.raises(CircuitError, match="'C1' is not an inductor"):
        couples.write(doc, k, "L1, C1")
    doc.add(PlacedPart("p4", "inductor", "L2", (0, 8), value="1m"))
    assert couples.write(doc, k, "L1 L2")[0].couples == ("L1", "L2")


# Extra-low voltage: 50 V AC rms, 120 V ripple-free DC (common practice; IEC 61140, IEC 60449
# band I).
@pytest.mark.parametrize(("value", "freq", "basis", "high"), [
    ("120", "DC", "peak", False), ("121", "DC", "peak", True), ("-150", "DC", "peak", True),
    (f"{50 * math.sqrt(2) - 0.1:.3f}", "50", "peak", False),   # 49.9 V rms
    (f"{50 * math.sqrt(2) + 0.1:.3f}", "50", "peak", True),    # 50.1 V rms
    ("50", "1k", "rms", False), ("51", "1k", "rms", True),
])
def test_extra_low_voltage_limits(value, freq, basis, high):
    doc = Document()
    doc.set_analysis(Analysis(freq=freq, basis=basis))
    doc.add(PlacedPart("p1", "voltage_source", "V1", (0, 0), value=value))
    assert above_extra_low_voltage(doc) == (["V1"] if high else [])


# -- region controls ------------------------------------------------------------------------------
def test_choosing_one_port_net_completes_or_exchanges_the_other():
    region = Region("r1", "stage", frozenset(), swap=True)
    nets = ("gnd", "R1.a", "out")
    # with the automatic port shown, the other side keeps its net; the swap goes
    assert with_port_net(region, ("out", "gnd"), nets, "plus", "R1.a").port == ("R1.a", "gnd")
    assert not with_port_net(region, ("out", "gnd"), nets, "plus", "R1.a").swap
    # choosing the other side's net exchanges the two
    assert with_port_net(region, ("out", "gnd"), nets, "minus", "out").port == ("gnd", "out")
    # no port shown (the cut has none): ground where the region has it, else the first net
    assert with_port_net(region, None, nets, "plus", "out").port == ("out", "gnd")
    assert with_port_net(region, None, ("a", "b"), "minus", "a").port == ("b", "a")
    chosen = replace(region, swap=False, port=("out", "gnd"))
    assert with_port_net(chosen, chosen.port, nets, "plus", None).port is None
    with pytest.raises(DocumentError, match="has no net besides out; a port needs two"):
        with_port_net(region, None, ("out",), "plus", "out")


def test_a_region_name_must_be_one_line_of_its_own():
    doc = Document()
    for rid, name in (("r1", "input"), ("r2", "output")):
        doc.add(Region(rid, name, frozenset()))
    assert renamed(doc, doc["r2"], " load ").name == "load"
    assert renamed(doc, doc["r2"], "output").name == "output"  # its own name is no clash
    for text, reason in (("", "enter a name"), ("in\nput", "one line of text"),
                         ("input", "another region is already called “input”")):
        with pytest.raises(DocumentError, match=reason):
            renamed(doc, doc["r2"], text)


def test_renaming_a_part_in_its_field_carries_a_chosen_port_along():
    doc = divider()
    r1 = doc.by_designator("R1")
    doc.add(Region("r1", "src", frozenset({r1.id}), port=("R1.a", "out")))
    (designator,) = [f for f in fields_for(r1) if f.name == "designator"]
    new = designator.write(doc, r1, "R7")
    assert [e.port for e in new if isinstance(e, Region)] == [("R7.a", "out")]
    assert designator.write(doc, r1, "R1") == [r1]  # unchanged: nothing follows


def test_a_tap_keeps_its_wire_through_a_link_when_its_part_moves():
    # R2 sits with both pins in the middle of wires (taps); moving it must keep both nets whole
    doc = divider()
    r2 = doc.by_designator("R2")
    before = _partition(doc)
    plan = plan_placement(doc, SheetIndex(doc), [r2.id], RigidMap((3, 1)))
    links = [e for e in plan if e.id not in doc]
    assert len(links) == 2 and all(isinstance(e, Wire) for e in links)
    assert {(w.points[0], w.points[-1]) for w in links} == {((8, 2), (11, 3)), ((8, 6), (11, 7))}
    after = _apply_new(doc, plan)
    assert _partition(after) == before
    for wire in links:  # the link turns first where a straight run would lie along the wire
        assert wire.points == (wire.points[0], (8, wire.points[0][1] + 1), wire.points[-1])


def test_link_route_takes_the_first_clear_orthogonal_path():
    blocked = {(1, 0), (2, 0)}.__contains__
    assert link_route((0, 0), (3, 2), blocked) == ((0, 0), (0, 2), (3, 2))
    assert link_route((0, 0), (3, 2), lambda p: False) == ((0, 0), (3, 0), (3, 2))
    # nothing clear: the straight run, for the net check to judge
    assert link_route((0, 0), (3, 0), blocked) == ((0, 0), (3, 0))


def _apply_new(doc: Document, elements) -> Document:
    elements = list(elements)
    out = _apply(doc, [e for e in elements if e.id in doc])
    for e in elements:
        if e.id not in doc:
            out.add(e)
    return out
