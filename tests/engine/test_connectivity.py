"""Connectivity: drawn pins, wires, junctions and labels -> nets, warnings and the engine Circuit.

The joining rules are checked case by case and, for random drawings, against a brute-force
reference that rasterises every wire and compares every pair of elements (networkx components).
"""

from __future__ import annotations

import itertools
import math
from dataclasses import replace
from functools import partial

import networkx as nx
import pytest
from drawing_strategies import orthogonal_polylines
from drawn import divider as drawn_divider
from hypothesis import given, settings
from hypothesis import strategies as st

from portcut.engine import CircuitError
from portcut.engine.schematic import (
    Block,
    Contents,
    Document,
    Junction,
    NetLabel,
    PlacedPart,
    Region,
    Wire,
    block_equivalent,
    build_circuit,
    extract,
    net_at,
)
from portcut.engine.schematic.symbols import pin_positions
from portcut.engine.solve.equivalent import equivalent


def sheet(*elements) -> Document:
    doc = Document()
    for e in elements:
        doc.add(e)
    return doc


def part(i: str, kind: str, at: tuple[int, int], rotation: int = 0, **fields) -> PlacedPart:
    return PlacedPart(f"p_{i}", kind, i, at, rotation, **fields)


def ground(i: str, at: tuple[int, int]) -> NetLabel:
    return NetLabel(i, "", at, style="ground")


#: V1 (vertical, p up) -> R1 (horizontal) -> node 'out' -> R2 (vertical) -> ground rail; ids
#: p1 V1, p2 R1, p3 R2, w4 V1-R1, w5 R1-R2, w6 the rail, n7 the ground, n8 the "out" label.
divider = partial(drawn_divider, r1="4k7", r2="10k", load=None, v="5")


def messages(doc: Document) -> list[str]:
    return [w.message for w in extract(doc).warnings]


# -- joining rules ------------------------------------------------------------------------------
def test_divider_nets_labels_ground_and_automatic_names() -> None:
    conn = extract(divider())
    assert conn.warnings == ()
    assert conn.net_of_pin == {
        ("p1", 0): "R1.a", ("p1", 1): "gnd",
        ("p2", 0): "R1.a", ("p2", 1): "out",
        ("p3", 0): "out", ("p3", 1): "gnd",
        ("n7", 0): "gnd", ("n8", 0): "out",
    }
    assert conn.net_of_wire == {"w4": "R1.a", "w5": "out", "w6": "gnd"}
    assert conn.nets == {
        "R1.a": frozenset({(0, 2), (2, 2)}),
        "out": frozenset({(6, 2), (7, 2), (8, 2)}),
        "gnd": frozenset({(0, 6), (8, 6)}),
    }


def test_a_pin_joins_a_wire_mid_segment_and_at_a_bend() -> None:
    doc = sheet(Wire("w1", ((0, 0), (10, 0), (10, 6))),
                part("R1", "resistor", (4, 2), 90),    # pin a at (4, 0): inside the segment
                part("R2", "resistor", (12, 0)),       # pin a at (10, 0): the bend
                part("R3", "resistor", (10, 8), 90))   # pin a at (10, 6): the far end
    conn = extract(doc)
    assert {conn.net_of_pin[f"p_R{i}", 0] for i in (1, 2, 3)} == {"R1.a"}
    assert conn.net_of_wire["w1"] == "R1.a"


def test_a_pin_joins_at_a_bend_that_closes_both_segments() -> None:
    # the bend (10, 0) is the far end of both segments in coordinate order
    doc = sheet(Wire("w1", ((0, 0), (10, 0), (10, -6))), part("R1", "resistor", (12, 0)))
    assert extract(doc).net_of_pin["p_R1", 0] == extract(doc).net_of_wire["w1"]


def test_a_wire_end_on_another_wire_makes_a_tee() -> None:
    doc = sheet(Wire("w1", ((0, 0), (10, 0))), Wire("w2", ((5, 0), (5, 5))),
                part("R1", "resistor", (12, 0)), part("R2", "resistor", (5, 7), 90))
    conn = extract(doc)
    assert conn.net_of_pin["p_R1", 0] == conn.net_of_pin["p_R2", 0]
    assert conn.net_of_wire["w1"] == conn.net_of_wire["w2"]


def crossing(*extra) -> Document:
    return sheet(Wire("w1", ((0, 0), (10, 0))), Wire("w2", ((5, -5), (5, 5))),
                 part("R1", "resistor", (12, 0)), part("R2", "resistor", (5, 7), 90), *extra)


def test_crossing_wires_stay_apart_without_a_junction() -> None:
    conn = extract(crossing())
    assert conn.net_of_pin["p_R1", 0] == "R1.a"
    assert conn.net_of_pin["p_R2", 0] == "R2.a"
    assert conn.net_of_wire == {"w1": "R1.a", "w2": "R2.a"}


@pytest.mark.parametrize("joiner", [Junction("j1", (5, 0)), NetLabel("l1", "x", (5, 0)),
                                    Wire("w3", ((5, 0), (7, 0)))],
                         ids=["junction", "label pin", "third wire ending there"])
def test_anything_ending_at_a_crossing_joins_both_wires(joiner) -> None:
    conn = extract(crossing(joiner))
    assert conn.net_of_pin["p_R1", 0] == conn.net_of_pin["p_R2", 0]


def test_pins_touching_directly_join_without_a_wire() -> None:
    doc = sheet(part("R1", "resistor", (0, 0)), part("R2", "resistor", (4, 0)))
    conn = extract(doc)
    assert conn.net_of_pin["p_R1", 1] == conn.net_of_pin["p_R2", 0] == "R1.b"


def test_labels_join_by_name_across_the_sheet() -> None:
    doc = sheet(part("R1", "resistor", (0, 0)), NetLabel("l1", "sig", (2, 0)),
                part("R2", "resistor", (40, 30)), NetLabel("l2", "sig", (38, 30)),
                NetLabel("l3", "other", (42, 30)))
    conn = extract(doc)
    assert conn.net_of_pin["p_R1", 1] == conn.net_of_pin["p_R2", 0] == "sig"
    assert conn.net_of_pin["p_R2", 1] == "other"


def test_ground_markers_and_a_label_named_0_are_all_ground() -> None:
    doc = sheet(part("R1", "resistor", (0, 0)), ground("g1", (-2, 0)),
                NetLabel("g2", "anything", (2, 0), style="ground"),
                part("R2", "resistor", (20, 0)), NetLabel("l1", "gnd", (18, 0)))
    conn = extract(doc)
    assert conn.net_of_pin["p_R1", 0] == conn.net_of_pin["p_R1", 1] == "gnd"
    assert conn.net_of_pin["p_R2", 0] == "gnd"


def test_two_names_on_one_net_warn_and_the_first_in_natural_order_wins() -> None:
    doc = sheet(part("R1", "resistor", (0, 0)), Wire("w1", ((2, 0), (10, 0))),
                NetLabel("l1", "n10", (4, 0)), NetLabel("l2", "n9", (8, 0)))
    conn = extract(doc)
    assert conn.net_of_wire["w1"] == "n9"
    (warning,) = [w for w in conn.warnings if "two names" in w.message]
    assert warning.message == ("one net carries two names, 'n9' and 'n10'; it is called 'n9'. "
                               "Remove one label or separate the nets")
    assert (warning.element_id, warning.at) == ("l1", (4, 0))


def test_ground_wins_over_a_user_name() -> None:
    doc = sheet(Wire("w1", ((0, 0), (10, 0))), NetLabel("l1", "a", (0, 0)),
                ground("g1", (10, 0)), part("R1", "resistor", (5, 2), 90))
    assert extract(doc).net_of_wire["w1"] == "gnd"
    assert ("one net carries two names, ground (gnd) and 'a'; it is called ground (gnd). "
            "Remove one label or separate the nets") in messages(doc)


def test_automatic_names_use_the_lowest_designator_in_natural_order() -> None:
    doc = sheet(Wire("w1", ((0, 0), (30, 0))),
                part("R10", "resistor", (4, 2), 90), part("R9", "resistor", (8, 2), 90),
                part("C2", "capacitor", (12, 2), 90), part("U1", "opamp", (40, 10)))
    conn = extract(doc)
    assert conn.net_of_wire["w1"] == "C2.a"  # letters first (C < R), then numbers (9 < 10)
    assert conn.net_of_pin["p_R9", 1] == "R9.b"
    assert conn.net_of_pin["p_U1", 2] == "U1.out"


def test_automatic_names_survive_unrelated_edits() -> None:
    doc = divider()
    before = extract(doc).net_of_pin
    doc.add(part("R7", "resistor", (40, 40), value="1k"))
    doc.add(Wire("w9", ((42, 40), (50, 40))))
    doc.replace_fields("p3", value="22k")
    after = extract(doc).net_of_pin
    assert {k: v for k, v in after.items() if k in before} == before


def test_an_automatic_name_never_takes_a_user_label() -> None:
    doc = sheet(part("R1", "resistor", (0, 0)), part("R2", "resistor", (20, 0)),
                NetLabel("l1", "R1.a", (22, 0)))
    conn = extract(doc)
    assert conn.net_of_pin["p_R2", 1] == "R1.a"
    assert conn.net_of_pin["p_R1", 0] == "R1.a'"


def test_a_net_without_part_pins_is_named_after_its_lowest_wire() -> None:
    doc = sheet(Wire("w12", ((0, 0), (4, 0))), Wire("w3", ((4, 0), (4, 4))),
                Junction("j1", (20, 20)))
    conn = extract(doc)
    assert conn.net_of_wire == {"w12": "w3.net", "w3": "w3.net"}
    assert conn.nets["j1.net"] == frozenset({(20, 20)})


def test_rotated_and_mirrored_pins_come_from_the_symbol_geometry() -> None:
    for rotation, mirror in itertools.product((0, 90, 180, 270), (False, True)):
        amp = PlacedPart("u", "vccs", "DS1", (10, 10), rotation, mirror)
        doc = sheet(amp, *(NetLabel(f"l{i}", f"n{i}", at) for i, at in
                           enumerate(pin_positions("vccs", (10, 10), rotation, mirror))))
        conn = extract(doc)
        assert [conn.net_of_pin["u", i] for i in range(4)] == ["n0", "n1", "n2", "n3"]


def test_far_apart_coordinates_keep_their_joins() -> None:
    big = 10**15
    doc = sheet(Wire("w1", ((-big, 0), (big, 0))), part("R1", "resistor", (7, 2), 90),
                part("R2", "resistor", (big + 2, 0)), Wire("w2", ((0, -big), (0, big))),
                part("R3", "resistor", (0, big + 2), 90))
    conn = extract(doc)
    assert conn.net_of_pin["p_R1", 0] == conn.net_of_pin["p_R2", 0] == "R1.a"
    assert conn.net_of_pin["p_R3", 0] == conn.net_of_wire["w2"] == "R3.a"  # crossing, no join


def test_an_empty_document_has_no_nets() -> None:
    conn = extract(Document())
    assert (conn.net_of_pin, conn.net_of_wire, conn.nets, conn.warnings) == ({}, {}, {}, ())


def test_net_at_finds_pins_then_wire_segments() -> None:
    doc = divider()
    conn = extract(doc)
    assert net_at(doc, conn, (8, 6)) == "gnd"  # R2's pin
    assert net_at(doc, conn, (4, 6)) == "gnd"  # the middle of the ground rail
    assert net_at(doc, conn, (7, 1)) is None
    assert net_at(doc, conn, (30, 30)) is None


# -- warnings -----------------------------------------------------------------------------------
def test_unconnected_pins_name_the_part_role_and_position() -> None:
    doc = sheet(part("V1", "voltage_source", (0, 0), 90), ground("g1", (0, 2)))
    (warning,) = extract(doc).warnings
    assert warning.message == "V1 pin p at (0, -2) is not connected"
    assert (warning.element_id, warning.at) == ("p_V1", (0, -2))


def test_a_pin_on_a_dangling_wire_is_still_unconnected() -> None:
    doc = sheet(part("R1", "resistor", (0, 0)), ground("g1", (-2, 0)),
                Wire("w1", ((2, 0), (6, 0))))
    assert messages(doc) == ["R1 pin b at (2, 0) is not connected"]


def test_zero_length_wires_and_segments() -> None:
    doc = sheet(Wire("w1", ((3, 3), (3, 3))), Wire("w2", ((0, 0), (4, 0), (4, 0), (4, 4))))
    assert messages(doc) == [
        "wire w1 at (3, 3) has zero length; delete it or drag an end",
        "wire w2 has a zero-length segment at (4, 0)",
    ]


def test_parts_stacked_on_one_another() -> None:
    doc = sheet(part("R2", "resistor", (0, 0)), part("R1", "resistor", (0, 0)),
                part("C1", "capacitor", (0, 0)), Wire("w1", ((-4, 0), (4, 0))))
    found = [w for w in extract(doc).warnings if "on top" in w.message]
    assert [(w.message, w.element_id, w.at) for w in found] == [
        ("R1 and R2 lie on top of each other at (0, 0); move one of them", "p_R2", (0, 0))]


def test_a_part_with_both_pins_on_one_net_is_shorted_out() -> None:
    doc = sheet(Wire("w1", ((0, 0), (10, 0))), part("R1", "resistor", (5, 0)),
                part("R2", "resistor", (5, 2), 90), ground("g1", (5, 4)))
    assert messages(doc) == ["R1 has both pins on net R1.a, so it is shorted out"]


@pytest.mark.parametrize(("extra", "message"), [
    (part("CP1", "coupling", (0, 9), couples=("L1", "L3"), value="0.9"),
     "CP1 couples L3, which is not on the sheet"),
    (part("CP1", "coupling", (0, 9), couples=("L1", "R1"), value="0.9"),
     "CP1 couples R1, which is a resistor, not an inductor"),
    (part("CP1", "coupling", (0, 9), couples=("L1",), value="0.9"),
     "CP1 must name two different inductors to couple"),
    (part("DS1", "ccvs", (0, 9), control="R5", value="100"),
     "DS1 is controlled by the current of R5, which is not on the sheet"),
    (part("DS1", "cccs", (0, 9), value="100"),
     "DS1 names no part whose current controls it"),
], ids=["missing inductor", "not an inductor", "one inductor", "missing controller",
        "no controller"])
def test_references_to_missing_parts_warn_and_refuse_to_build(extra, message) -> None:
    doc = sheet(part("L1", "inductor", (0, 0), value="1m"),
                part("R1", "resistor", (0, 4), value="1k"),
                ground("g1", (-2, 0)), ground("g2", (2, 0)), ground("g3", (-2, 4)),
                ground("g4", (2, 4)), extra)
    found = [w for w in extract(doc).warnings if w.element_id == extra.id
             and "connected" not in w.message]
    assert [w.message for w in found] == [message]
    with pytest.raises(CircuitError, match=f"^{message}$"):
        build_circuit(doc)


def test_a_reference_into_a_collapsed_block_says_where_the_part_went() -> None:
    doc = loaded(divider_block())
    doc.add(part("DS1", "ccvs", (0, 20), control="R2", value="100"))
    doc.add(part("DS2", "cccs", (0, 30), control="EQ1", value="2"))
    found = {w.element_id: w.message for w in extract(doc).warnings if "control" in w.message}
    assert found == {
        "p_DS1": "DS1 is controlled by the current of R2, which is inside the collapsed block "
                 "EQ1; expand the block",
        "p_DS2": "DS2 is controlled by the current of EQ1, which is a collapsed block; expand "
                 "it and name a part inside",
    }


def test_an_unnamed_label_warns() -> None:
    doc = sheet(part("R1", "resistor", (0, 0)), NetLabel("l1", " ", (2, 0)), ground("g", (-2, 0)))
    assert "net label at (2, 0) has no name, so it joins only what touches it" in messages(doc)


# -- brute-force reference ----------------------------------------------------------------------
def _raster(points: tuple[tuple[int, int], ...]) -> set[tuple[int, int]]:
    cells = set()
    for (x0, y0), (x1, y1) in itertools.pairwise(points):
        for x in range(min(x0, x1), max(x0, x1) + 1):
            for y in range(min(y0, y1), max(y0, y1) + 1):
                cells.add((x, y))
    return cells


def reference_components(doc: Document) -> list[set[object]]:
    """Nets by the rules stated literally, element pair by element pair (independent of the
    indexed implementation): pins and wire ends join what passes through their point, junctions
    join everything at theirs, labels join by name."""
    g = nx.Graph()
    pins = []
    for e in doc:
        if isinstance(e, PlacedPart):
            for i, at in enumerate(pin_positions(e.kind, e.at, e.rotation, e.mirror)):
                pins.append(((e.id, i), at))
        elif isinstance(e, NetLabel):
            pins.append(((e.id, 0), e.at))
            g.add_edge((e.id, 0), ("name", e.name))
    wires = {w.id: (_raster(w.points), {w.points[0], w.points[-1]}) for w in doc.wires()}
    g.add_nodes_from(key for key, _ in pins)
    g.add_nodes_from(wires)
    for (k1, a1), (k2, a2) in itertools.combinations(pins, 2):
        if a1 == a2:
            g.add_edge(k1, k2)
    for key, at in pins:
        g.add_edges_from((key, w) for w, (cells, _) in wires.items() if at in cells)
    for (w1, (cells1, ends1)), (w2, (cells2, ends2)) in itertools.combinations(wires.items(), 2):
        if ends1 & cells2 or ends2 & cells1:
            g.add_edge(w1, w2)
    for j in doc.junctions():
        g.add_node(j.id)
        g.add_edges_from((j.id, w) for w, (cells, _) in wires.items() if j.at in cells)
        g.add_edges_from((j.id, key) for key, at in pins if at == j.at)
        g.add_edges_from((j.id, k.id) for k in doc.junctions() if k.at == j.at and k is not j)
    return [{n for n in c if not (isinstance(n, tuple) and n[0] == "name")}
            for c in nx.connected_components(g)]


coord = st.integers(0, 4)
point = st.tuples(coord, coord)


@st.composite
def drawings(draw) -> Document:
    doc = Document()
    for i, pts in enumerate(draw(st.lists(orthogonal_polylines(coord), max_size=6))):
        doc.add(Wire(f"w{i}", pts))
    for i in range(draw(st.integers(0, 5))):
        doc.add(PlacedPart(f"p{i}", "resistor", f"R{i}", draw(point),
                           draw(st.sampled_from((0, 90, 180, 270)))))
    for i, at in enumerate(draw(st.lists(point, max_size=3))):
        doc.add(Junction(f"j{i}", at))
    for i, at in enumerate(draw(st.lists(point, max_size=3))):
        doc.add(NetLabel(f"n{i}", draw(st.sampled_from(("a", "b"))), at))
    return doc


def partition(conn) -> set[frozenset[object]]:
    groups: dict[str, set[object]] = {}
    for key, net in conn.net_of_pin.items():
        groups.setdefault(net, set()).add(key)
    for wire, net in conn.net_of_wire.items():
        groups.setdefault(net, set()).add(wire)
    return {frozenset(g) for g in groups.values()}


def scaled(doc: Document, factor: int) -> Document:
    """The drawing's wires, junctions and labels with every coordinate multiplied (parts are
    left out: their pin offsets do not scale)."""
    out = Document()
    for e in doc:
        if isinstance(e, Wire):
            out.add(Wire(e.id, tuple((x * factor, y * factor) for x, y in e.points)))
        elif isinstance(e, Junction):
            out.add(Junction(e.id, (e.at[0] * factor, e.at[1] * factor)))
        elif isinstance(e, NetLabel):
            out.add(NetLabel(e.id, e.name, (e.at[0] * factor, e.at[1] * factor)))
    return out


@settings(max_examples=150, deadline=None)
@given(drawings())
def test_nets_match_a_brute_force_reference(doc: Document) -> None:
    junctions = {j.id for j in doc.junctions()}
    expected = {frozenset(c - junctions) for c in reference_components(doc)} - {frozenset()}
    conn = extract(doc)
    assert partition(conn) == expected
    for label in doc.labels():
        assert conn.net_of_pin[label.id, 0] in {"a", "b"}


@settings(max_examples=60, deadline=None)
@given(drawings())
def test_far_apart_coordinates_give_the_same_joins(doc: Document) -> None:
    # multiplying every coordinate keeps order and equality, so every join is unchanged;
    # 10**14 forces the ranked-coordinate path of the index
    assert partition(extract(scaled(doc, 10**14))) == partition(extract(scaled(doc, 1)))


# -- building the Circuit -----------------------------------------------------------------------
def test_build_circuit_names_parts_by_designator_on_their_nets() -> None:
    circuit = build_circuit(divider())
    assert [(p.name, p.kind, p.nodes, p.value) for p in circuit] == [
        ("V1", "voltage_source", ("R1.a", "gnd"), 5.0),
        ("R1", "resistor", ("R1.a", "out"), 4700.0),
        ("R2", "resistor", ("out", "gnd"), 10000.0),
    ]


def test_build_circuit_reads_phase_control_couplings_and_four_terminal_parts() -> None:
    doc = sheet(
        part("V1", "voltage_source", (0, 0), value="2", phase_deg="90"),
        part("L1", "inductor", (0, 10), value="1m"), part("L2", "inductor", (0, 20), value="4m"),
        part("CP1", "coupling", (10, 40), value="0.5", couples=("L1", "L2")),
        part("DS1", "ccvs", (20, 0), value="100", control="L1"),
        part("DS2", "vccs", (20, 10), value="40m"),
        part("U1", "opamp", (20, 30)),
    )
    circuit = build_circuit(doc)
    assert circuit["V1"].value == pytest.approx(2j)
    assert circuit["CP1"].refs == ("L1", "L2") and circuit["CP1"].value == 0.5
    assert circuit["DS1"].refs == ("L1",) and circuit["DS1"].nodes == ("DS1.p", "DS1.n")
    assert circuit["DS2"].nodes == ("DS2.from", "DS2.to", "DS2.cp", "DS2.cn")
    assert circuit["DS2"].value == pytest.approx(0.04)
    assert circuit["U1"].nodes == ("U1.inp", "U1.inn", "U1.out")
    assert circuit.names[-1] == "CP1"  # couplings follow their inductors


@pytest.mark.parametrize(("element_id", "fields", "message"), [
    ("p2", {"value": "4k7x"}, r"^R1 value: cannot read '4k7x'"),
    ("p2", {"value": ""}, r"^R1 value: none given; enter the resistance, e\.g\. 4k7$"),
    ("p2", {"value": "1k", "phase_deg": "30"},
     r"^R1 phase: only independent sources take a phase; clear the field$"),
    ("p1", {"phase_deg": "north"}, r"^V1 phase: cannot read 'north'"),
])
def test_bad_values_name_the_designator_and_field(element_id, fields, message) -> None:
    doc = divider()
    doc.replace_fields(element_id, **fields)
    with pytest.raises(CircuitError, match=message):
        build_circuit(doc)


# -- collapsed blocks ---------------------------------------------------------------------------
def divider_block(form: str = "thevenin", at: tuple[int, int] = (20, 0)) -> Block:
    """The divider collapsed: the port nets' wires (w2 and the ground) stayed on the sheet, so
    the contents pins on each port net are listed in ``port``."""
    contents = Contents(
        parts=(PlacedPart("c1", "voltage_source", "V1", (0, 4), 90, value="5"),
               PlacedPart("c2", "resistor", "R1", (4, 0), value="4k7"),
               PlacedPart("c3", "resistor", "R2", (8, 4), 90, value="10k")),
        wires=(Wire("cw1", ((0, 2), (0, 0), (2, 0))),))
    return Block("b1", "EQ1", form, at, Region("r1", "divider", frozenset({"c1", "c2", "c3"})),
                 contents, (((6, 0), (8, 2)), ((0, 6), (8, 6))))


def loaded(block: Block) -> Document:
    """The block's plus pin (23, -2) to a 1 kΩ load, its minus pin (23, 2) to ground."""
    return sheet(block, part("R9", "resistor", (27, -2), value="1k"),
                 Wire("w1", ((23, -2), (25, -2))), ground("g1", (23, 2)), ground("g2", (29, -2)))


# common practice: a voltage divider's Thevenin equivalent is V R2 / (R1 + R2) behind R1 || R2
VTH, RTH = 5 * 10e3 / 14.7e3, 4.7e3 * 10e3 / 14.7e3


def test_a_thevenin_block_becomes_a_source_behind_its_impedance() -> None:
    doc = loaded(divider_block())
    assert extract(doc).warnings == ()
    circuit = build_circuit(doc)
    plus = circuit["R9"].nodes[0]
    assert plus == "EQ1.plus"
    src, z = circuit["EQ1.src"], circuit["EQ1.z"]
    assert (src.kind, src.nodes, z.nodes) == ("voltage_source", (plus, "EQ1.mid"),
                                             ("EQ1.mid", "gnd"))
    assert src.value == pytest.approx(VTH, rel=1e-12)
    assert complex(z.value) == pytest.approx(RTH, rel=1e-12)
    seen = equivalent(circuit, region={"EQ1.src", "EQ1.z"}, port=(plus, "gnd"))
    assert seen.voc == pytest.approx(VTH, rel=1e-12)
    assert seen.z == pytest.approx(RTH, rel=1e-12)


def test_the_internal_net_of_a_block_avoids_the_sheet_s_names() -> None:
    doc = loaded(divider_block())
    doc.add(part("R8", "resistor", (40, 40), value="1k"))
    doc.add(NetLabel("l9", "EQ1.mid", (42, 40)))
    circuit = build_circuit(doc)
    assert circuit["EQ1.src"].nodes[1] == circuit["EQ1.z"].nodes[0] == "EQ1.mid'"
    assert circuit["R8"].nodes[1] == "EQ1.mid"


def test_a_norton_block_drives_its_current_into_plus() -> None:
    circuit = build_circuit(loaded(divider_block("norton")))
    plus = circuit["R9"].nodes[0]
    src, z = circuit["EQ1.src"], circuit["EQ1.z"]
    assert (src.kind, src.nodes, z.nodes) == ("current_source", ("gnd", plus), (plus, "gnd"))
    assert src.value == pytest.approx(5 / 4.7e3, rel=1e-12)  # the short-circuit current V / R1
    assert complex(z.value) == pytest.approx(RTH, rel=1e-12)


def test_a_block_without_its_drawn_form_uses_the_other_one() -> None:
    # an ideal source straight across the port has z = 0: no Norton form exists
    contents = Contents(parts=(PlacedPart("c1", "voltage_source", "V1", (0, 0), 90, value="3"),))
    block = Block("b1", "EQ1", "norton", (20, 0), Region("r1", "source", frozenset({"c1"})),
                  contents, (((0, -2),), ((0, 2),)))
    circuit = build_circuit(loaded(block))
    assert [(p.name, p.kind, p.value) for p in circuit if p.name.startswith("EQ1")] == [
        ("EQ1.src", "voltage_source", 3.0)]


def test_blocks_nest_and_follow_the_frequency() -> None:
    # the divider block behind a 100 nF capacitor, collapsed again
    inner = divider_block(at=(0, 0))
    contents = Contents(parts=(PlacedPart("c9", "capacitor", "C1", (5, -2), value="100n"),),
                        blocks=(inner,))
    outer = Block("b2", "EQ2", "thevenin", (20, 0),
                  Region("r2", "filter", frozenset({"c9", "b1"})), contents,
                  (((7, -2),), ((3, 2),)))
    for freq in (0.0, 1e3):
        eq = block_equivalent(outer, freq)
        if freq == 0:  # the capacitor is open at DC: the port floats behind it
            assert not eq.has_thevenin
            continue
        zc = 1 / (2j * math.pi * freq * 100e-9)  # common practice: Z_C = 1 / (j w C)
        assert eq.voc == pytest.approx(VTH, rel=1e-12)
        assert eq.z == pytest.approx(RTH + zc, rel=1e-12)


def test_a_block_port_point_on_nothing_is_reported() -> None:
    block = replace(divider_block(), port=(((6, 0), (50, 50)), ((0, 6),)))
    with pytest.raises(CircuitError, match=r"^EQ1: its plus port point touches nothing in its "
                                           r"contents; expand and collapse the region again$"):
        build_circuit(loaded(block))


def test_a_block_whose_contents_fail_names_the_block() -> None:
    block = divider_block()
    bad = replace(block.contents.parts[1], value="lots")
    block = replace(block, contents=replace(block.contents,
                                            parts=(block.contents.parts[0], bad,
                                                   block.contents.parts[2])))
    with pytest.raises(CircuitError, match=r"^EQ1 \(collapsed region\): R1 value: cannot read"):
        build_circuit(loaded(block))


# -- re-extraction from a previous result ----------------------------------------------------------
# A re-extraction must give exactly what a first extraction of the same document gives (that one
# is held to the brute-force reference above): nets, names, warnings, and their order.
def same_result(a, b) -> bool:
    return (list(a.net_of_pin.items()) == list(b.net_of_pin.items())
            and list(a.net_of_wire.items()) == list(b.net_of_wire.items())
            and a.warnings == b.warnings and list(a.nets.items()) == list(b.nets.items()))


def test_a_move_with_its_wires_following_re_extracts_as_a_first_extraction() -> None:
    doc = divider()
    conn = extract(doc)
    with doc.batch():  # R2 one step right; both its wires gain a step to reach its pins
        doc.replace_fields("p3", at=(9, 4))
        doc.replace_fields("w5", points=((6, 2), (9, 2)))
        doc.replace_fields("w6", points=((0, 6), (9, 6)))
    again = extract(doc, previous=conn)
    assert same_result(again, extract(doc))
    assert again.net_of_wire["w5"] == "out"
    assert same_result(conn, extract(divider()))  # the previous result is left as it was


def test_a_previous_result_of_another_document_is_only_a_head_start() -> None:
    other = divider()
    doc = crossing(Junction("j1", (5, 0)))
    assert same_result(extract(doc, previous=extract(other)), extract(doc))
    assert same_result(extract(other, previous=extract(doc)), extract(other))


def test_a_re_extraction_of_an_unchanged_document_is_the_previous_result() -> None:
    doc = divider()
    conn = extract(doc)
    assert extract(doc, previous=conn) is conn


LABEL_NAMES = ("a", "b", "gnd", "P1.a", "", "P10")  # "P1.a" takes an automatic name; "" warns
DRAWN_KINDS = ("resistor", "capacitor", "opamp", "vcvs", "ccvs", "coupling")
rotation = st.sampled_from((0, 90, 180, 270))


def drawn_part(draw, element_id: str, designator: str) -> PlacedPart:
    kind = draw(st.sampled_from(DRAWN_KINDS))
    return PlacedPart(element_id, kind, designator, draw(point), draw(rotation),
                      draw(st.booleans()), value="1k", control="P1" if kind == "ccvs" else "",
                      couples=("P1", "P2") if kind == "coupling" else ())


def edit(doc: Document, draw, fresh: itertools.count) -> None:
    """One random edit: a move, a turn, a new shape of wire, a renamed label, a new designator,
    kind or value, a removal or an addition."""
    drawn = [e for e in doc if not e.id.startswith("f")]  # the quiet row: one edit in ten
    elements = drawn if drawn and draw(st.integers(0, 9)) else list(doc)
    if not elements or draw(st.integers(0, 9)) == 0:
        n = next(fresh)
        doc.add(draw(st.sampled_from([
            Wire(f"w{n}", draw(orthogonal_polylines(coord))), Junction(f"j{n}", draw(point)),
            NetLabel(f"n{n}", draw(st.sampled_from(LABEL_NAMES)), draw(point)),
            drawn_part(draw, f"p{n}", f"P{n}")])))
        return
    e = draw(st.sampled_from(elements))
    action = draw(st.sampled_from(("move", "turn", "rename", "retype", "remove")))
    if action == "remove":
        doc.remove(e.id)
    elif isinstance(e, Wire):
        points = draw(orthogonal_polylines(coord)) if action == "turn" else tuple(
            (x + 1, y) for x, y in e.points)
        doc.replace(replace(e, points=points))
    elif isinstance(e, Junction) or action == "move":
        doc.replace(replace(e, at=draw(point)))
    elif action == "turn" or isinstance(e, Block):
        doc.replace(replace(e, rotation=draw(rotation)))
    elif isinstance(e, NetLabel):
        doc.replace(replace(e, name=draw(st.sampled_from(LABEL_NAMES)),
                            style=draw(st.sampled_from(("label", "ground")))))
    elif draw(st.booleans()):
        doc.replace(replace(e, value=draw(st.sampled_from(("2k", "")))))
    else:
        designator = draw(st.sampled_from(("P0", "P3", "P11", "Q2", e.designator)))
        kind = drawn_part(draw, e.id, designator).kind
        if doc.by_designator(designator) in (None, e):
            doc.replace(replace(e, designator=designator, kind=kind))


@st.composite
def large_drawings(draw) -> Document:
    """A random drawing of all kinds of element, a collapsed block among them, beside a row of
    resistors that edits seldom touch (as on a large sheet)."""
    doc = Document()
    for i in range(draw(st.integers(0, 6))):
        doc.add(drawn_part(draw, f"p{i}", f"P{i + 1}"))
    for i, pts in enumerate(draw(st.lists(orthogonal_polylines(coord), max_size=6))):
        doc.add(Wire(f"w{i}", pts))
    for i, at in enumerate(draw(st.lists(point, max_size=3))):
        doc.add(Junction(f"j{i}", at))
    for i, at in enumerate(draw(st.lists(point, max_size=4))):
        doc.add(NetLabel(f"n{i}", draw(st.sampled_from(LABEL_NAMES)), at,
                         style=draw(st.sampled_from(("label", "ground")))))
    if draw(st.booleans()):
        doc.add(divider_block(at=draw(point)))
    for i in range(40):
        doc.add(PlacedPart(f"f{i}", "resistor", f"F{i + 1}", (100 + 4 * i, 0)))
    return doc


@settings(max_examples=120, deadline=None)
@given(large_drawings(), st.data())
def test_re_extraction_after_random_edits_equals_a_first_extraction(doc: Document,
                                                                    data: st.DataObject) -> None:
    fresh = itertools.count(100)
    conn = extract(doc)
    for _ in range(data.draw(st.integers(1, 5))):
        first = extract(doc)
        with doc.batch():
            for _ in range(data.draw(st.integers(1, 3))):
                edit(doc, data.draw, fresh)
        again = extract(doc, previous=conn)
        # the previous result is left as it was, its lazily gathered net points included
        assert same_result(conn, first)
        conn = again
    assert same_result(conn, extract(doc))
