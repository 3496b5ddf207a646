"""Regions of a drawn document: analysis, collapse into a block, expand back exactly."""

from __future__ import annotations

import cmath
from dataclasses import replace

import pytest

from portcut import assets
from portcut.engine import Circuit, CircuitError, CutError, check_equivalence
from portcut.engine.schematic import (
    Document,
    NetLabel,
    PlacedPart,
    Region,
    Wire,
    block_equivalent,
    build_circuit,
    extract,
    fileformat,
)
from portcut.engine.schematic.ports import follow_renames
from portcut.engine.schematic.reduction import (
    analyse_region,
    collapse_region,
    equivalence,
    expand_block,
)

EXAMPLES = assets.example_names()


def _load(name: str) -> Document:
    return fileformat.load(assets.example_path(name))


def _divider(doc: Document | None = None) -> tuple[Document, dict[str, str]]:
    """V1 = 10 V behind R1 = 1 kΩ, R2 = 1 kΩ to ground, loaded by RL = 2 kΩ at net 'out'.

    Layout (grid units): V1 vertical at x=0, R1 horizontal on the top row, R2 vertical at x=8,
    RL vertical at x=16; the region is V1, R1, R2.
    """
    doc = doc or Document("divider")
    ids: dict[str, str] = {}

    def part(kind: str, designator: str, at, rotation: int, value: str) -> None:
        ids[designator] = doc.new_id(PlacedPart)
        doc.add(PlacedPart(ids[designator], kind, designator, at, rotation, value=value))

    part("voltage_source", "V1", (0, 4), 90, "10")   # pins (0, 2) top = plus, (0, 6) bottom
    part("resistor", "R1", (4, 2), 0, "1k")          # pins (2, 2), (6, 2)
    part("resistor", "R2", (8, 4), 90, "1k")         # pins (8, 2), (8, 6)
    part("resistor", "RL", (16, 4), 90, "2k")        # pins (16, 2), (16, 6)
    for points in (((0, 2), (2, 2)), ((6, 2), (16, 2)), ((0, 6), (16, 6))):
        doc.add(Wire(doc.new_id(Wire), points))
    doc.add(NetLabel(doc.new_id(NetLabel), "gnd", (0, 6), style="ground"))
    doc.add(NetLabel(doc.new_id(NetLabel), "out", (12, 2)))
    doc.add(Region(doc.new_id(Region), "source side", frozenset(ids[d] for d in ("V1", "R1",
                                                                                  "R2")),
                   outline=((-2, 0), (11, 0), (11, 8), (-2, 8))))
    return doc, ids


def test_divider_region_matches_the_closed_form():
    # common practice (voltage divider): Vth = V R2 / (R1 + R2) = 5 V, Zth = R1 || R2 = 500 Ω
    doc, _ = _divider()
    result = analyse_region(doc, doc.regions()[0].id)
    assert result.ok, result.message
    eq = result.equivalent
    assert eq.port == ("out", "gnd")
    assert eq.voc == pytest.approx(5.0, rel=1e-12)
    assert eq.z == pytest.approx(500.0, rel=1e-12)
    assert eq.isc == pytest.approx(0.01, rel=1e-12)


@pytest.mark.parametrize("turned", [{"swap": True}, {"port": ("gnd", "out")}],
                         ids=["swapped", "port chosen"])
def test_swap_or_a_chosen_port_exchanges_plus_and_minus(turned):
    # common practice: seen the other way round, Voc and Isc change sign, Z does not
    doc, _ = _divider()
    region = doc.regions()[0]
    doc.replace_fields(region.id, **turned)
    eq = analyse_region(doc, region.id).equivalent
    assert eq.port == ("gnd", "out")
    assert eq.voc == pytest.approx(-5.0, rel=1e-12)
    assert eq.isc == pytest.approx(-0.01, rel=1e-12)
    assert eq.z == pytest.approx(500.0, rel=1e-12)


def test_a_three_net_cut_is_refused_and_names_the_nets():
    doc, ids = _divider()
    region = doc.regions()[0]
    doc.replace_fields(region.id, members=frozenset({ids["R1"], ids["R2"]}))  # V1 left out
    result = analyse_region(doc, region.id)
    assert not result.ok
    assert "3 nets" in result.message
    assert result.equivalent is None


def test_an_empty_region_says_what_to_do():
    doc, _ = _divider()
    region = doc.regions()[0]
    doc.replace_fields(region.id, members=frozenset())
    result = analyse_region(doc, region.id)
    assert not result.ok and "draw the boundary" in result.message


def test_a_bad_value_is_reported_not_raised():
    doc, ids = _divider()
    doc.replace_fields(ids["R1"], value="4k7k")
    result = analyse_region(doc, doc.regions()[0].id)
    assert not result.ok and "R1" in result.message and "4k7k" in result.message


@pytest.mark.parametrize("name", EXAMPLES)
def test_collapse_then_expand_restores_the_exact_document(name):
    doc, original = _load(name), _load(name)
    edit = collapse_region(doc, doc.regions()[0].id)
    edit.apply(doc)
    assert len(doc.blocks()) == 1 and not doc.regions()
    expand_block(doc, doc.blocks()[0].id).apply(doc)
    assert doc == original


@pytest.mark.parametrize("name", EXAMPLES)
@pytest.mark.parametrize("back", ["expand", "undo"])
def test_collapse_then_back_gives_a_byte_identical_file(name, back):
    # the file lists elements in the document's order: expanding (or undoing the collapse)
    # must put the region's elements back in their places, not at the end
    text = assets.example_path(name).read_text(encoding="utf-8")
    doc = fileformat.loads(text)
    edit = collapse_region(doc, doc.regions()[0].id)
    edit.apply(doc)
    if back == "expand":
        expand_block(doc, doc.blocks()[0].id).apply(doc)
    else:
        edit.inverse().apply(doc)
    assert doc == fileformat.loads(text)
    assert fileformat.dumps(doc) == text


def _renamed(reduced: Circuit, original: Circuit, outside: set[str]) -> Circuit:
    """``reduced`` with its nets renamed to ``original``'s, read off the outside parts' pins
    (automatic net names follow the lowest pin, which the collapse may have taken away)."""
    names: dict[str, str] = {}
    for name in outside:
        for new, old in zip(reduced[name].nodes, original[name].nodes, strict=True):
            assert names.setdefault(new, old) == old, f"{name}: net {new} became two nets"
    out = Circuit()
    for part in reduced:
        nodes = tuple(names.get(n, n) for n in part.nodes)
        out.add(type(part)(part.name, part.kind, nodes, part.value, part.refs))
    return out


@pytest.mark.parametrize("name", EXAMPLES)
def test_the_collapsed_sheet_behaves_like_the_original_from_outside(name):
    # The theorem itself: every net outside the region and the port current are unchanged,
    # for the outside as drawn and with extra loads across the port.
    doc = _load(name)
    analysis = analyse_region(doc, doc.regions()[0].id)
    original = analysis.circuit
    collapse_region(doc, doc.regions()[0].id).apply(doc)
    outside = set(original.names) - set(analysis.part_names)
    reduced = _renamed(build_circuit(doc, freq=analysis.freq), original, outside)
    report = check_equivalence(original, reduced, set(analysis.part_names),
                               port=analysis.equivalent.port, freq=analysis.freq,
                               loads=[1e3, 0])
    assert report.within(1e-9), report


def test_block_values_follow_the_analysis_frequency():
    doc = _load("rc_antialias")
    collapse_region(doc, doc.regions()[0].id).apply(doc)
    block_names = {"EQ1.src", "EQ1.z"}
    z = {}
    for freq in ("1k", "100k"):
        doc.set_analysis(type(doc.analysis)(freq=freq))
        circuit = build_circuit(doc, freq=1e3 if freq == "1k" else 1e5)
        assert block_names <= set(circuit.names)
        z[freq] = complex(circuit["EQ1.z"].value)
    assert not cmath.isclose(z["1k"], z["100k"])


def test_nested_collapse_expands_back_in_two_steps():
    doc, ids = _divider()
    original = fileformat.loads(fileformat.dumps(doc))
    collapse_region(doc, doc.regions()[0].id).apply(doc)
    inner = doc.blocks()[0]
    # a new region holding the block and the load: the whole circuit, port given by its nets
    doc.add(Region(doc.new_id(Region), "all", frozenset({inner.id, ids["RL"]}),
                   outline=((-4, -2), (20, -2), (20, 10), (-4, 10))))
    outer_region = doc.regions()[0]
    result = analyse_region(doc, outer_region.id)
    assert not result.ok  # the whole circuit meets nothing outside: no port to choose
    doc.remove(outer_region.id)
    expand_block(doc, inner.id).apply(doc)
    assert doc == original


def test_a_block_inside_a_new_region_reduces_again():
    # common practice: reducing in two steps gives the same equivalent as in one.
    # V1 R1 R2 collapse to 5 V behind 500 Ω; with a series 500 Ω (R3) added later the
    # new region (block + R3) must show 5 V behind 1 kΩ.
    doc, ids = _divider()
    collapse_region(doc, doc.regions()[0].id).apply(doc)
    block = doc.blocks()[0]
    conn = extract(doc)
    plus_net = conn.net_of_pin[block.id, 0]
    assert plus_net == "out"
    # insert R3 in the wire from the block to the load: move RL right and put R3 between
    rl = doc[ids["RL"]]
    wire_to_load = next(w for w in doc.wires() if (16, 2) in w.points)
    with doc.batch():
        doc.remove(wire_to_load.id)
        doc.replace_fields(rl.id, at=(24, 4))
        r3 = PlacedPart(doc.new_id(PlacedPart), "resistor", "R3", (18, 2), value="500")
        doc.add(r3)  # pins (16, 2) and (20, 2)
        doc.add(Wire(doc.new_id(Wire), ((20, 2), (24, 2))))
        doc.add(Wire(doc.new_id(Wire), ((16, 6), (24, 6))))
        rest = [p for p in wire_to_load.points if p != (16, 2)]
        doc.add(Wire(doc.new_id(Wire), (*rest, (16, 2))))
    region = Region(doc.new_id(Region), "two steps", frozenset({block.id, r3.id}))
    doc.add(region)
    eq = analyse_region(doc, region.id).equivalent
    assert eq.voc == pytest.approx(5.0, rel=1e-12)
    assert eq.z == pytest.approx(1000.0, rel=1e-12)


def test_collapse_refuses_an_invalid_cut():
    doc, ids = _divider()
    region = doc.regions()[0]
    doc.replace_fields(region.id, members=frozenset({ids["R1"], ids["R2"]}))
    with pytest.raises(CutError, match="cannot collapse"):
        collapse_region(doc, region.id)


def test_equivalence_line_for_the_current_load():
    doc, _ = _divider()
    analysis = analyse_region(doc, doc.regions()[0].id)
    for form in ("thevenin", "norton"):
        report = equivalence(analysis, form, loads=[100, 0])
        assert report.within(1e-12), report


def test_a_reloaded_sheet_never_hands_out_the_collapsed_regions_id():
    # the block keeps the region it was collapsed from; a new region drawn after the file is
    # read again must not take that id, or the block could never be expanded
    doc = _load("rc_antialias")
    region_id = doc.regions()[0].id
    collapse_region(doc, region_id).apply(doc)
    again = fileformat.loads(fileformat.dumps(doc))
    fresh = again.new_id(Region)
    assert fresh != region_id
    block = again.blocks()[0]
    again.add(Region(fresh, "around the block", frozenset({block.id})))
    expand_block(again, block.id).apply(again)
    assert {r.id for r in again.regions()} == {region_id, fresh}


# -- a chosen port --------------------------------------------------------------------------------
def _chosen(doc: Document, port, members=None) -> str:
    """Give the divider's region the chosen ``port`` (and ``members``); its id."""
    region = doc.regions()[0]
    doc.replace_fields(region.id, port=port,
                       members=region.members if members is None else frozenset(members))
    return region.id


def test_the_whole_circuit_seen_between_two_of_its_own_nets():
    # The region holds every part, so it meets the rest at no net and only a chosen port
    # says where to look. Common practice (voltage divider, sources zeroed for Z):
    # across R2 (out, 0): Voc = V (R2 || RL) / (R1 + R2 || RL) = 10 * 2/3k / (5/3k) = 4 V,
    #   Z = R1 || R2 || RL = 400 Ω;
    # across R1 (R1.a, out): Voc = V - 4 V = 6 V, Z = R1 || (R2 || RL) = 400 Ω (V1 shorted).
    doc, ids = _divider()
    region_id = _chosen(doc, None, members=ids.values())
    assert "0 nets" in analyse_region(doc, region_id).message  # automatic: nothing to take
    for port, voc in ((("out", "gnd"), 4.0), (("R1.a", "out"), 6.0)):
        doc.replace_fields(region_id, port=port)
        result = analyse_region(doc, region_id)
        assert result.ok, result.message
        eq = result.equivalent
        assert eq.port == port
        assert eq.voc == pytest.approx(voc, rel=1e-12)
        assert eq.z == pytest.approx(400.0, rel=1e-12)
        assert eq.voc == pytest.approx(eq.z * eq.isc, rel=1e-12)


def _second_stage(doc: Document) -> None:
    """Take RL away and draw a second circuit, V2 = 3 V across R3 = 1 kΩ, sharing only
    ground with the divider: the divider's region then meets the rest at net 0 alone."""
    with doc.batch():
        doc.remove(doc.by_designator("RL").id)
        doc.add(PlacedPart(doc.new_id(PlacedPart), "voltage_source", "V2", (24, 4), 90,
                           value="3"))
        doc.add(PlacedPart(doc.new_id(PlacedPart), "resistor", "R3", (28, 4), 90, value="1k"))
        doc.add(Wire(doc.new_id(Wire), ((24, 2), (28, 2))))
        doc.add(Wire(doc.new_id(Wire), ((24, 6), (28, 6))))
        doc.add(NetLabel(doc.new_id(NetLabel), "gnd", (28, 6), style="ground"))


def test_a_region_meeting_the_rest_at_one_net_is_seen_at_a_chosen_port():
    doc, _ = _divider()
    _second_stage(doc)
    region_id = doc.regions()[0].id
    result = analyse_region(doc, region_id)
    assert not result.ok and "1 net: gnd" in result.message
    # common practice (voltage divider): R1 = R2 = 1 kΩ halve 10 V behind 500 Ω
    doc.replace_fields(region_id, port=("out", "gnd"))
    eq = analyse_region(doc, region_id).equivalent
    assert eq.voc == pytest.approx(5.0, rel=1e-12) and eq.z == pytest.approx(500.0, rel=1e-12)
    # the net it meets the rest at must be one of the port's
    doc.replace_fields(region_id, port=("R1.a", "out"))
    result = analyse_region(doc, region_id)
    assert not result.ok
    assert "net gnd besides its port (R1.a, out)" in result.message
    assert result.bad_nets == {"gnd"}


def test_a_chosen_net_that_goes_away_is_named_not_raised():
    doc, _ = _divider()
    region_id = _chosen(doc, ("out", "gnd"))
    label = next(lab for lab in doc.labels() if lab.name == "out")
    doc.remove(label.id)  # the net stays, its name becomes automatic (R1.b)
    result = analyse_region(doc, region_id)
    assert not result.ok and result.equivalent is None
    assert result.message.startswith("the chosen port's plus net out is no longer a net of "
                                     "the region")
    assert "go back to the automatic port" in result.message
    doc.replace_fields(region_id, port=None)
    assert analyse_region(doc, region_id).equivalent.port == ("R1.b", "gnd")


def test_collapse_with_a_chosen_port_keeps_its_polarity_and_expands_back():
    doc, _ = _divider()
    region_id = _chosen(doc, ("gnd", "out"))
    original = fileformat.loads(fileformat.dumps(doc))
    analysis = analyse_region(doc, region_id)
    assert equivalence(analysis, "thevenin", loads=[100, 0]).within(1e-12)
    collapse_region(doc, region_id).apply(doc)
    (block,) = doc.blocks()
    conn = extract(doc)
    assert (conn.net_of_pin[block.id, 0], conn.net_of_pin[block.id, 1]) == ("gnd", "out")
    # common practice: the block's plus pin on ground sees -5 V behind 500 Ω
    eq = block_equivalent(block)
    assert eq.voc == pytest.approx(-5.0, rel=1e-12) and eq.z == pytest.approx(500.0, rel=1e-12)
    expand_block(doc, block.id).apply(doc)
    assert doc == original and doc.regions()[0].port == ("gnd", "out")


def test_collapse_refuses_a_port_net_only_the_region_uses():
    doc, _ = _divider()
    _second_stage(doc)
    region_id = _chosen(doc, ("out", "gnd"))
    assert analyse_region(doc, region_id).ok
    with pytest.raises(CircuitError, match=r"^cannot collapse: the port's plus net out is used "
                                           "only inside the region"):
        collapse_region(doc, region_id)


def test_renaming_a_label_or_a_part_carries_a_chosen_port_along():
    doc, ids = _divider()
    region_id = _chosen(doc, ("R1.a", "out"))
    label = next(lab for lab in doc.labels() if lab.name == "out")
    (followed,) = follow_renames(doc, [replace(label, name="vout")])
    assert followed.port == ("R1.a", "vout")
    (followed,) = follow_renames(doc, [replace(doc[ids["R1"]], designator="R7")])
    assert followed.port == ("R7.a", "out")
    # an edit that renames no net leaves the port alone, and so does a region without one
    assert follow_renames(doc, [replace(doc[ids["RL"]], value="10k")]) == []
    doc.replace_fields(region_id, port=None)
    assert follow_renames(doc, [replace(label, name="vout")]) == []
