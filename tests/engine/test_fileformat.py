"""The schematic file: exact round trips, a named field path in every refusal, fuzzed input that
only ever meets DocumentError, and atomic saves."""

from __future__ import annotations

import itertools
import json
import os
import re
import signal
import stat
import string
import subprocess
import sys
from collections.abc import Iterator
from dataclasses import replace
from pathlib import Path
from typing import Any

import pytest
from drawing_strategies import orthogonal_polylines
from drawn import divider as drawn_divider
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

try:
    import fcntl
except ImportError:  # not POSIX
    fcntl = None

from portcut import assets
from portcut.engine import GROUND, DocumentError
from portcut.engine.schematic import (
    Analysis,
    Block,
    Contents,
    Document,
    Junction,
    NetLabel,
    PlacedPart,
    Region,
    Wire,
    atomic,
    dumps,
    fileformat,
    load,
    loads,
    save,
)
from portcut.engine.schematic.model import PART_KINDS


def divider_contents() -> Contents:
    """The drawn divider, its source at a phase of 30 degrees, as a block's contents."""
    doc = drawn_divider(r1="4k7", r2="10k", load=None, v="5")
    doc.replace_fields("p1", phase_deg="30")
    return Contents(parts=tuple(doc.parts()), wires=tuple(doc.wires()),
                    labels=tuple(doc.labels()))


def rich_document() -> Document:
    """Every kind of element, a block whose contents hold another block, and set analysis."""
    inner = Block("b1", "EQ1", "norton", (20, 0), Region("r9", "inner", frozenset({"p2"})),
                  divider_contents(), (((6, 0), (8, 2)), ((8, 6),)), stubs=("w7",))
    outer_contents = Contents(
        parts=(PlacedPart("p4", "vccs", "DS1", (0, 0), 270, True, value="40m"),
               PlacedPart("p5", "ccvs", "DS2", (10, 0), value="1k", control="R3"),
               PlacedPart("p6", "resistor", "R3", (10, 10), value="2R2")),
        junctions=(Junction("j1", (2, 2)),), blocks=(inner,))
    doc = Document("Bridge · 350 Ω gauges")
    doc.add(PlacedPart("p1", "inductor", "L1", (0, 0), 180, value="10 mH"))
    doc.add(PlacedPart("p2", "inductor", "L2", (0, 8), value="40m"))
    doc.add(PlacedPart("p3", "coupling", "CP1", (4, 4), value="0.95", couples=("L1", "L2")))
    doc.add(PlacedPart("p4", "opamp", "U1", (20, 4), mirror=True))
    doc.add(Wire("w1", ((2, 0), (12, 0), (12, 6))))
    doc.add(Junction("j1", (6, 0)))
    doc.add(NetLabel("n1", "v_out", (12, 6), rotation=90))
    doc.add(NetLabel("n2", "", (-2, 8), style="ground"))
    doc.add(Block("b1", "EQ2", "thevenin", (40, 0),
                  Region("r1", "stage", frozenset({"p4", "p5", "b1"}), ((-1.5, -2.0), (30, 4.25))),
                  outer_contents, (((2, -2),), ((2, 2), (8, 10))), rotation=90, stubs=("w8", "w9")))
    doc.add(Region("r2", "coupler", frozenset({"p1", "p2", "p3"}),
                   ((-3.5, -3), (6.5, -3), (6.5, 11), (-3.5, 11)), swap=True))
    doc.set_analysis(Analysis("10 kHz", "norton", "rms"))
    return doc


# -- round trips ---------------------------------------------------------------------------------
def test_a_rich_document_round_trips_exactly() -> None:
    doc = rich_document()
    back = loads(dumps(doc))
    assert back == doc
    assert back.blocks()[0].contents.blocks[0].contents == divider_contents()
    assert back.analysis == Analysis("10 kHz", "norton", "rms")


def test_the_text_is_stable_and_readable() -> None:
    text = dumps(rich_document())
    assert dumps(loads(text)) == text
    assert max(len(line) for line in text.splitlines()) <= 120
    data = json.loads(text)
    assert (data["format"], data["version"]) == ("portcut-schematic", 3)
    assert '"title": "Bridge · 350 Ω gauges"' in text  # unicode kept as written
    # defaults are left out: the opamp has no value, rotation or couples field
    assert data["parts"][3] == {"id": "p4", "kind": "opamp", "designator": "U1", "at": [20, 4],
                                "mirror": True}


def test_save_and_load_round_trip(tmp_path: Path) -> None:
    doc = rich_document()
    save(doc, tmp_path / "stage.json")
    assert load(tmp_path / "stage.json") == doc
    assert [p.name for p in tmp_path.iterdir()] == ["stage.json"]


@pytest.mark.parametrize("name", assets.example_names())
def test_every_example_round_trips(name: str, tmp_path: Path) -> None:
    doc = load(assets.example_path(name))
    save(doc, tmp_path / f"{name}.json")
    assert load(tmp_path / f"{name}.json") == doc
    assert dumps(doc) == assets.example_path(name).read_text(encoding="utf-8")


def test_there_are_examples_to_round_trip() -> None:
    assert len(assets.example_names()) >= 6


def test_the_documented_example_is_read_and_written_back_verbatim() -> None:
    page = (Path(__file__).parents[2] / "docs" / "file-format.md").read_text(encoding="utf-8")
    example = page.split("```json\n", 1)[1].split("```", 1)[0]
    doc = loads(example)
    assert dumps(doc) == example
    assert [b.designator for b in doc.blocks()] == ["EQ1"]


def test_every_file_is_written_as_version_3_with_or_without_a_chosen_port() -> None:
    doc = rich_document()
    assert json.loads(dumps(doc))["version"] == fileformat.VERSION == 3
    doc.replace_fields("r2", swap=False, port=("v_out", GROUND))
    text = dumps(doc)
    data = json.loads(text)
    assert data["version"] == 3
    assert data["regions"][0]["port"] == {"plus": "v_out", "minus": "gnd"}
    assert "swap" not in data["regions"][0]  # the default, left out
    assert loads(text) == doc


def test_a_tolerance_is_written_as_version_3_and_older_versions_refuse_it() -> None:
    doc = rich_document()
    doc.replace_fields("p1", tolerance="F")
    text = dumps(doc)
    data = json.loads(text)
    assert data["version"] == fileformat.TOLERANCE_VERSION == 3
    assert data["parts"][0]["tolerance"] == "F"
    assert "tolerance" not in data["parts"][1]  # unset: left out
    assert loads(text) == doc
    data["version"] = 2
    with pytest.raises(DocumentError, match=r"parts\[0\].tolerance: a part's tolerance needs "
                                            "file version 3 or later; this file says version 2"):
        loads(json.dumps(data))


def test_a_chosen_port_kept_inside_a_collapsed_block_reads_back() -> None:
    doc = rich_document()
    block = doc.remove("b1")
    doc.add(replace(block, region=replace(block.region, port=("R3.a", GROUND))))
    assert loads(dumps(doc)).blocks()[0].region.port == ("R3.a", GROUND)


def _old_file(version: int) -> dict[str, Any]:
    """``rich_document`` as a version 1-2 file names it: ground "0", the coupling K1, a label
    named "0" inside a collapsed block, and (version 2) chosen ports with ground "0"."""
    data = json.loads(dumps(rich_document()))
    data["version"] = version
    data["parts"][2]["designator"] = "K1"
    data["blocks"][0]["contents"]["labels"] = [{"id": "n5", "name": "0", "at": [3, 3]}]
    if version >= 2:
        data["regions"][0].update(port={"plus": "v_out", "minus": "0"}, swap=False)
        data["blocks"][0]["region"]["port"] = {"plus": "0", "minus": "R3.a"}
    return data


@pytest.mark.parametrize("version", [1, 2])
def test_an_older_file_is_migrated_to_gnd_and_cp_on_load(version: int) -> None:
    doc = loads(json.dumps(_old_file(version)))
    assert doc.by_designator("CP1").kind == "coupling"
    assert [n.name for n in doc.blocks()[0].contents.labels] == [GROUND]
    if version == 2:
        assert doc.regions()[0].port == ("v_out", GROUND)
        assert doc.blocks()[0].region.port == (GROUND, "R3.a")
    assert json.loads(dumps(doc))["version"] == 3  # saved again: the new version


def test_an_old_coupling_keeps_its_designator_when_the_new_one_is_taken() -> None:
    data = _old_file(1)
    data["parts"][3]["designator"] = "CP1"  # the op-amp already holds CP1
    doc = loads(json.dumps(data))
    assert doc.by_designator("K1").kind == "coupling"


def test_a_version_3_file_is_not_migrated() -> None:
    data = json.loads(dumps(rich_document()))
    data["labels"][0]["name"] = "0"  # in version 3 a net named 0 is just a net
    assert loads(json.dumps(data)).labels()[0].name == "0"


def test_a_dragged_caption_is_written_as_version_3_and_read_back() -> None:
    doc = rich_document()
    part = doc.parts()[0]
    doc.replace_fields(part.id, captions=(("value", 1.5, -2.25),))
    text = dumps(doc)
    data = json.loads(text)
    assert data["version"] == fileformat.CAPTION_VERSION == fileformat.VERSION == 3
    assert data["parts"][0]["captions"] == {"value": [1.5, -2.25]}
    assert loads(text) == doc
    doc.replace_fields(part.id, captions=())  # placed automatically again: no field
    assert "captions" not in json.loads(dumps(doc))["parts"][0]


def test_a_caption_offset_for_an_unknown_role_is_refused_by_path() -> None:
    data = json.loads(dumps(rich_document()))
    data["version"] = 3
    data["parts"][0]["captions"] = {"name": [0, 1]}
    with pytest.raises(DocumentError, match=r'^parts\[0\]\.captions: expected one of '
                                            '"designator", "value", got "name"'):
        loads(json.dumps(data))


def test_an_in_memory_region_with_a_bad_port_is_refused_by_name() -> None:
    doc = rich_document()
    with pytest.raises(DocumentError, match=r"^Region r2: swap: a chosen port gives plus and "
                                            "minus in order"):
        doc.replace_fields("r2", port=("v_out", "gnd"))  # r2 has swap set
    with pytest.raises(DocumentError, match="plus and minus are both net 'x'"):
        doc.replace_fields("r2", swap=False, port=("x", "x"))
    assert doc.regions()[0].port is None


# generated documents ----------------------------------------------------------------------------
#: Text a sheet can hold (engine/schematic/text.py): no surrogates, no control characters, not
#: U+FFFE or U+FFFF.
storable = st.characters(exclude_categories=("Cs", "Cc"), exclude_characters="\ufffe\uffff")
ident = st.text(string.ascii_letters + string.digits + "_-·Ω ", min_size=1, max_size=6)
designator = st.from_regex(r"[A-Za-z][A-Za-z0-9_]{0,4}", fullmatch=True)
coordinate = st.integers(-fileformat.COORD_LIMIT, fileformat.COORD_LIMIT)
grid_point = st.tuples(coordinate, coordinate)
rotation = st.sampled_from((0, 90, 180, 270))
value_text = st.sampled_from(("", "4k7", "100n", "1.5e-3", "2R2", "10 mH", "47K", "-3", "1µ0"))
phase_text = st.sampled_from(("", "0", "30", "-127.5"))
outline_point = st.tuples(*[st.floats(-1e6, 1e6, allow_nan=False) | coordinate] * 2)


@st.composite
def scope_elements(draw, depth: int, numbers: Iterator[int]) -> list[Any]:
    """One level's elements; ``numbers`` keeps designators unique across all levels."""
    n = draw(st.integers(0, 7))
    ids = draw(st.lists(ident, min_size=n, max_size=n, unique=True))
    out: list[Any] = []
    for element_id in ids:
        what = draw(st.sampled_from(("part", "wire", "junction", "label")
                                    + (("block",) if depth else ())))
        if what == "part":
            out.append(PlacedPart(element_id, draw(st.sampled_from(PART_KINDS)),
                                  f"{draw(designator)}_{next(numbers)}",
                                  draw(grid_point), draw(rotation), draw(st.booleans()),
                                  draw(value_text), draw(phase_text),
                                  draw(st.text(storable, max_size=3)),
                                  tuple(draw(st.lists(designator, max_size=2)))))
        elif what == "wire":
            out.append(Wire(element_id, draw(orthogonal_polylines(coordinate))))
        elif what == "junction":
            out.append(Junction(element_id, draw(grid_point)))
        elif what == "label":
            out.append(NetLabel(element_id, draw(st.text(storable, max_size=8)), draw(grid_point),
                                draw(rotation), draw(st.sampled_from(("label", "ground")))))
        else:
            inner = draw(scope_elements(depth - 1, numbers))
            groups = {t: tuple(e for e in inner if type(e) is t)
                      for t in (PlacedPart, Wire, Junction, NetLabel, Block)}
            contents = Contents(groups[PlacedPart], groups[Wire], groups[Junction],
                                groups[NetLabel], groups[Block])
            out.append(Block(element_id, f"{draw(designator)}_{next(numbers)}",
                             draw(st.sampled_from(("thevenin", "norton"))),
                             draw(grid_point), draw(regions(inner)), contents,
                             (tuple(draw(st.lists(grid_point, max_size=3))),
                              tuple(draw(st.lists(grid_point, max_size=3)))),
                             draw(rotation), draw(st.booleans()),
                             tuple(draw(st.lists(ident, max_size=2)))))
    return out


net_name = st.text(storable, min_size=1, max_size=5).filter(str.strip)
chosen = st.none() | st.tuples(net_name, net_name).filter(lambda port: port[0] != port[1])


@st.composite
def regions(draw, members_from: list[Any], element_id: str | None = None) -> Region:
    ids = [e.id for e in members_from]
    members = draw(st.sets(st.sampled_from(ids))) if ids else set()
    port = draw(chosen)
    return Region(element_id or draw(ident), draw(st.text(storable, max_size=6)),
                  frozenset(members),
                  tuple(draw(st.lists(outline_point, max_size=4))),
                  port is None and draw(st.booleans()), port)


@st.composite
def documents(draw) -> Document:
    doc = Document(draw(st.text(storable, max_size=12)))
    elements = draw(scope_elements(2, itertools.count()))
    for e in elements:
        doc.add(e)
    for i in range(draw(st.integers(0, 2))):  # ids longer than any generated element id
        doc.add(draw(regions(elements, element_id=f"region {i}")))
    doc.set_analysis(Analysis(draw(st.sampled_from(("DC", "1k", "50", "2.5 MHz", "0"))),
                              draw(st.sampled_from(("thevenin", "norton"))),
                              draw(st.sampled_from(("peak", "rms")))))
    return doc


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(documents())
def test_generated_documents_round_trip(doc: Document) -> None:
    text = dumps(doc)
    assert loads(text) == doc
    assert dumps(loads(text)) == text


# -- refusals, each naming the field path ---------------------------------------------------------
def mangled(change) -> str:
    data = json.loads(dumps(rich_document()))
    change(data)
    return json.dumps(data, ensure_ascii=False)


def setter(*path: object, value: object):
    def change(data: Any) -> None:
        for key in path[:-1]:
            data = data[key]
        data[path[-1]] = value
    return change


def deleter(*path: object):
    def change(data: Any) -> None:
        for key in path[:-1]:
            data = data[key]
        del data[path[-1]]
    return change


def version_1(change_more):
    """A version 1 file, changed further by ``change_more``."""
    def change(data: Any) -> None:
        data["version"] = 1
        change_more(data)
    return change


def version_1_port(port: object):
    """A version 1 file whose first region has ``port``."""
    def change(data: Any) -> None:
        data["version"] = 1
        data["regions"][0].update(port=port, swap=False)
    return change


def chosen_port(port: object, swap: bool = False):
    """A version 2 file whose first region has ``port`` (and ``swap``)."""
    def change(data: Any) -> None:
        data["version"] = 2
        data["regions"][0].update(port=port, swap=swap)
    return change


REFUSALS = [
    (setter("parts", 3, "rotation", value=45),
     "parts[3].rotation: expected one of 0, 90, 180, 270, got 45"),
    (setter("parts", 0, "rotation", value=90.0),
     "parts[0].rotation: expected one of 0, 90, 180, 270, got 90.0"),
    (setter("parts", 1, "kind", value="diode"),
     'parts[1].kind: expected one of "resistor", "capacitor", "inductor", "impedance", '
     '"voltage_source", "current_source", "vcvs", "vccs", "ccvs", "cccs", "opamp", "coupling", '
     '"bjt", "mosfet", "opamp_finite", "measured_source", got "diode"'),
    (setter("parts", 1, "value", value="40 furlongs"),
     "parts[1].value: L2 value: cannot read '40 furlongs'; use a number"),
    (setter("parts", 1, "value", value="1e999999999"), "parts[1].value: L2 value: "),
    (setter("blocks", 0, "contents", "blocks", 0, "contents", "parts", 0, "phase_deg",
            value="east"),
     "blocks[0].contents.blocks[0].contents.parts[0].phase_deg: V1 phase: cannot read 'east'"),
    (setter("parts", 1, "designator", value="L1"),
     "parts[1].designator: 'L1' is already the designator of parts[0]"),
    (setter("blocks", 0, "designator", value="U1"),
     "blocks[0].designator: 'U1' is already the designator of parts[3]"),
    (setter("labels", 0, "id", value="p2"), "labels[0].id: 'p2' is already the id of parts[1]"),
    (setter("wires", 0, "id", value=""), 'wires[0].id: expected a non-empty id, got ""'),
    (setter("blocks", 0, "contents", "parts", 2, "designator", value="DS1"),
     "blocks[0].contents.parts[2].designator: 'DS1' is already the designator of "
     "blocks[0].contents.parts[0]"),
    (setter("blocks", 0, "contents", "blocks", 0, "contents", "parts", 1, "designator",
            value="L2"),
     "blocks[0].contents.blocks[0].contents.parts[1].designator: 'L2' is already the "
     "designator of parts[1]"),
    (setter("blocks", 0, "contents", "parts", 0, "id", value="b1"),
     "blocks[0].contents.blocks[0].id: 'b1' is already the id of blocks[0].contents.parts[0]"),
    (setter("parts", 0, "designator", value="1st"),
     "parts[0]: PlacedPart p1: designator '1st' must start with a letter"),
    (deleter("parts", 2, "designator"), "parts[2]: the field 'designator' is missing"),
    (deleter("blocks", 0, "port"), "blocks[0]: the field 'port' is missing"),
    (setter("parts", 2, "colour", value="red"), "parts[2]: unknown field 'colour'; expected 'id'"),
    (setter("wires", 0, "points", value=[[0, 0], [3, 4]]),
     "wires[0]: Wire w1: segment (0, 0)-(3, 4) is not horizontal or vertical"),
    (setter("wires", 0, "points", value=[[0, 0]]),
     "wires[0].points: expected at least two points, got 1"),
    (setter("wires", 0, "points", 1, value=[2, "0"]),
     'wires[0].points[1]: expected a grid point [x, y] of whole numbers from -1000000 to '
     '1000000, got [2, "0"]'),
    (setter("junctions", 0, "at", value=[10**400, 0]),
     "junctions[0].at: expected a grid point [x, y] of whole numbers from -1000000 to 1000000, "
     "got [1000000000"),
    (setter("parts", 0, "mirror", value="yes"),
     'parts[0].mirror: expected true or false, got "yes"'),
    (setter("labels", 0, "style", value="power"),
     'labels[0].style: expected one of "label", "ground", got "power"'),
    (setter("labels", 1, "name", value=None), "labels[1].name: expected text, got null"),
    (setter("regions", 0, "members", value=["p1", "p9"]),
     "regions[0]: Region r2: members p9 are not in the document"),
    (setter("regions", 0, "outline", 0, value=[1e300, 0]),
     "regions[0].outline[0]: expected a point [x, y] of numbers from -1000000 to 1000000"),
    (setter("regions", 0, "outline", 1, value=[0, -10**400]),
     "regions[0].outline[1]: expected a point [x, y] of numbers from -1000000 to 1000000"),
    (setter("blocks", 0, "region", "members", value=["p4", "p1"]),
     "blocks[0].region.members: 'p1' not in the block's contents"),
    (setter("blocks", 0, "form", value="both"),
     'blocks[0].form: expected one of "thevenin", "norton", got "both"'),
    (setter("blocks", 0, "port", value={"plus": [[0, 0]]}),
     "blocks[0].port: the field 'minus' is missing"),
    (setter("analysis", "frequency", value="-5"),
     "analysis.frequency: frequency: '-5' must be a real number of hertz, 0 or more"),
    (setter("analysis", "basis", value="average"),
     'analysis.basis: expected one of "peak", "rms", got "average"'),
    (setter("parts", value={}), "parts: expected a list, got {}"),
    (setter("title", value=7), "title: expected text, got 7"),
    (setter("version", value=4),
     "written by a newer Portcut (version 4); this program reads up to version 3"),
    (setter("parts", 0, "tolerance", value="Q"),
     "parts[0].tolerance: L1: tolerance 'Q' is neither a letter code (B C D F G J K M) nor a "
     "percentage such as 1 % or 0.5"),
    (setter("version", value="1"), 'version: expected a whole number from 1 to 3, got "1"'),
    (version_1(setter("parts", 0, "captions", value={"value": [1, -2]})),
     "parts[0].captions: caption offsets need file version 3 or later; this file says "
     "version 1"),
    (setter("parts", 0, "captions", value=[1, 2]),
     "parts[0].captions: expected an object of caption offsets, got [1, 2]"),
    (version_1_port({"plus": "v_out", "minus": "gnd"}),
     "regions[0].port: a chosen port needs file version 2 or later; this file says version 1"),
    (chosen_port({"plus": "v_out", "minus": "gnd"}, swap=True),
     "regions[0].swap: a chosen port gives plus and minus in order; swap is for the automatic "
     "port only"),
    (chosen_port({"plus": "v_out", "minus": "v_out"}),
     "regions[0].port: plus and minus are both net 'v_out'; choose two different nets"),
    (chosen_port({"plus": "v_out"}), "regions[0].port: the field 'minus' is missing"),
    (chosen_port({"plus": "v_out", "minus": 0}), "regions[0].port.minus: expected text, got 0"),
    (chosen_port({"plus": "", "minus": "gnd"}),
     "regions[0].port: expected two net names (plus, minus), got ('', 'gnd')"),
    (chosen_port(["v_out", "gnd"]), 'regions[0].port: expected an object, got ["v_out", "gnd"]'),
    (setter("format", value="something-else"),
     "format: expected 'portcut-schematic', got \"something-else\"; this is not a Portcut "
     "schematic"),
    (deleter("format"), "format: missing; this is not a Portcut schematic"),
    (setter("extra", value=1), "the file: unknown field 'extra'"),
]


@pytest.mark.parametrize(("change", "message"), REFUSALS,
                         ids=[m.split(":")[0] + f" #{i}" for i, (_, m) in enumerate(REFUSALS)])
def test_refusals_name_the_field_path_and_what_was_expected(change, message) -> None:
    with pytest.raises(DocumentError) as caught:
        loads(mangled(change))
    assert str(caught.value).startswith(message)


def test_blocks_nested_too_deep_are_refused() -> None:
    block: dict[str, Any] = {"id": "b", "designator": "EQ1", "form": "thevenin", "at": [0, 0],
                             "region": {"id": "r", "name": "", "members": []},
                             "contents": {}, "port": {"plus": [], "minus": []}}
    for _ in range(fileformat.MAX_BLOCK_NESTING):
        block = {**block, "contents": {"blocks": [block]}}
    text = json.dumps({"format": "portcut-schematic", "version": 1, "blocks": [block]})
    with pytest.raises(DocumentError, match=r"^blocks\[0\](\.contents\.blocks\[0\]){32}: "
                                            r"collapsed blocks nest more than 32 deep$"):
        loads(text)


@pytest.mark.parametrize(("text", "message"), [
    ("", r"^not valid JSON \(line 1, column 1: Expecting value\)"),
    ('{"format": "portcut-schematic", "version": 1', r"^not valid JSON \(line 1, column 45"),
    ("[1, 2]", r"^the file holds a JSON list, not a Portcut schematic$"),
    ('{"format": "portcut-schematic", "version": 1, "title": NaN}',
     r"^not valid JSON: NaN is not a number a schematic can hold$"),
    ('{"format": "portcut-schematic", "format": "x", "version": 1}',
     r"^the field 'format' appears twice in one JSON object$"),
    ("[" * 100_000 + "]" * 100_000, r"^not a Portcut schematic: the JSON is nested too deeply$"),
    ('{"version": ' + "9" * 5000 + "}",
     r"^not a Portcut schematic: it holds a number too long to read$"),
    (b"\xff\xfe{}", r"^not UTF-8 text \(byte 0xff at offset 0\)"),
], ids=["empty", "truncated", "a list", "NaN", "repeated field", "deep", "long integer",
        "not UTF-8"])
def test_text_that_is_not_a_schematic_is_refused(text, message) -> None:
    with pytest.raises(DocumentError, match=message):
        loads(text)


def test_nesting_near_the_decoder_limit_is_refused_cleanly() -> None:
    # around the interpreter's recursion limit the decoder may succeed and the message fail
    for depth in range(sys.getrecursionlimit() - 120, sys.getrecursionlimit() + 5):
        nested = "[" * depth + "]" * depth
        with pytest.raises(DocumentError, match=r"^(title: expected text|not a Portcut schem)"):
            loads('{"format": "portcut-schematic", "version": 1, "title": ' + nested + "}")


def test_dumps_refuses_what_loads_would_refuse() -> None:
    doc = rich_document()
    doc.replace_fields("p2", value="forty")
    with pytest.raises(DocumentError, match=r"^parts\[1\]\.value: L2 value: cannot read 'forty'"):
        dumps(doc)


# -- fuzzing: mangled files meet DocumentError and nothing else ----------------------------------
json_values = st.recursive(
    st.none() | st.booleans() | st.integers() | st.integers(10**20, 10**1000)
    | st.floats(allow_nan=False) | st.text(max_size=5),
    lambda inner: st.lists(inner, max_size=3) | st.dictionaries(st.text(max_size=4), inner,
                                                                max_size=3),
    max_leaves=8)


def _paths(data: Any, prefix: tuple = ()) -> list[tuple]:
    out = [prefix]
    if isinstance(data, dict):
        for k, v in data.items():
            out += _paths(v, (*prefix, k))
    elif isinstance(data, list):
        for i, v in enumerate(data):
            out += _paths(v, (*prefix, i))
    return out


BASE = dumps(rich_document())
BASE_PATHS = _paths(json.loads(BASE))[1:]


@st.composite
def mangled_texts(draw) -> str | bytes:
    how = draw(st.sampled_from(("truncate", "replace", "delete", "splice", "bytes", "deep")))
    if how == "truncate":
        return BASE[:draw(st.integers(0, len(BASE) - 1))]
    if how == "bytes":
        return draw(st.binary(max_size=200))
    if how == "splice":
        at = draw(st.integers(0, len(BASE)))
        return BASE[:at] + draw(st.text(max_size=5)) + BASE[at + draw(st.integers(0, 5)):]
    if how == "deep":  # spliced in as text: the encoder itself refuses such depth
        depth = draw(st.integers(1, 3000))
        text = mangled(setter(*draw(st.sampled_from(BASE_PATHS)), value="@deep@"))
        return text.replace('"@deep@"', "[" * depth + "]" * depth)
    path = draw(st.sampled_from(BASE_PATHS))
    if how == "delete":
        return mangled(deleter(*path))
    return mangled(setter(*path, value=draw(json_values)))


@settings(max_examples=300, deadline=None)
@given(mangled_texts())
def test_mangled_files_meet_only_document_error(text: str | bytes) -> None:
    try:
        doc = loads(text)
    except DocumentError:
        return
    assert loads(dumps(doc)) == doc  # what was accepted is a valid document


def _value_at(data: Any, path: tuple) -> Any:
    for key in path:
        data = data[key]
    return data


TEXT_PATHS = [p for p in BASE_PATHS
              if isinstance(_value_at(json.loads(BASE), p), str) and p != ("format",)]


@pytest.mark.parametrize("path", TEXT_PATHS, ids=lambda p: ".".join(map(str, p)))
def test_a_lone_surrogate_in_any_text_is_refused_by_its_path(path: tuple) -> None:
    # a lone surrogate has no UTF-8 encoding (Unicode 15, 3.9 D92; from memory): no file holds it
    text = mangled(setter(*path, value=_value_at(json.loads(BASE), path) + "\udfff"))
    with pytest.raises(DocumentError) as caught:
        loads(text)
    message = str(caught.value)
    message.encode("utf-8")  # the message itself can be shown and stored
    where = re.escape(path[0] + "".join(f"[{k}]" if isinstance(k, int) else f".{k}"
                                        for k in path[1:]))
    assert re.match(rf"^{where}: (character \d+ is U\+DFFF|expected one of)", message), message


#: Characters no name or title may hold: XML 1.0 section 2.2 (Char production, from memory)
#: allows none of U+0000-U+0008, U+000B, U+000C, U+000E-U+001F, U+FFFE, U+FFFF; tab, line
#: feed and carriage return it allows, but a one-line name or title cannot hold them.
UNSHOWABLE = ["\x00", "\x01", "\x08", "\x0b", "\x1f", "\ufffe", "\uffff", "\t", "\n", "\r"]


@pytest.mark.parametrize("char", UNSHOWABLE, ids=lambda c: f"U+{ord(c):04X}")
@pytest.mark.parametrize("path", TEXT_PATHS, ids=lambda p: ".".join(map(str, p)))
def test_a_control_character_in_any_text_is_refused_by_its_path(path: tuple, char: str) -> None:
    text = mangled(setter(*path, value=_value_at(json.loads(BASE), path) + char))
    with pytest.raises(DocumentError) as caught:
        loads(text)
    where = re.escape(path[0] + "".join(f"[{k}]" if isinstance(k, int) else f".{k}"
                                        for k in path[1:]))
    assert re.match(rf"^{where}: (character \d+ is U\+{ord(char):04X}|expected one of)",
                    str(caught.value)), str(caught.value)


@pytest.mark.parametrize("char", UNSHOWABLE, ids=lambda c: f"U+{ord(c):04X}")
def test_a_control_character_is_refused_by_every_document_edit(char: str) -> None:
    doc = rich_document()
    with pytest.raises(DocumentError, match=rf"^title: character 2 is U\+{ord(char):04X}"):
        doc.set_title(f"x{char}")
    part = doc.parts()[0]
    with pytest.raises(DocumentError, match=rf"^PlacedPart {part.id}: designator: "):
        doc.replace(replace(part, designator=f"R{char}9"))
    with pytest.raises(DocumentError, match=r"^PlacedPart q1: params: character 2 is "):
        doc.add(PlacedPart("q1", "measured_source", "MS9", (40, 40),
                           params=(("voc", f"1{char}"),)))
    with pytest.raises(DocumentError, match=r"^analysis: freq: character 3 is "):
        doc.set_analysis(Analysis(f"1k{char}"))
    assert doc == rich_document()  # nothing was taken


def test_a_table_of_readings_may_run_over_lines_and_round_trips() -> None:
    # a table's rows may be separated by line breaks and its columns by tabs, as a pasted
    # spreadsheet range is (common practice); every other character refused elsewhere stays
    # refused there too
    doc = rich_document()
    table = "1k\t2.5\n10k\t4.5\r\nopen\t5"
    doc.add(PlacedPart("q1", "measured_source", "MS9", (40, 40), params=(("table", table),)))
    assert loads(dumps(doc)) == doc
    with pytest.raises(DocumentError, match=r"params: character 3 is U\+0000"):
        doc.add(PlacedPart("q2", "measured_source", "MS8", (40, 50),
                           params=(("table", "1k\x00, 2"),)))


def test_a_lone_surrogate_escaped_in_the_file_bytes_is_refused_and_saving_never_fails(
        tmp_path: Path) -> None:
    raw = BASE.replace('"title": "', '"title": "\\ud800', 1).encode("utf-8")
    with pytest.raises(DocumentError, match=r"^title: character 1 is U\+D800, half of a UTF-16 "
                                            r"surrogate pair"):
        loads(raw)
    with pytest.raises(DocumentError, match=r"^title: character 3 is U\+DFFF"):
        Document("ab\udfff")
    doc = rich_document()
    with pytest.raises(DocumentError, match=r"^title: "):
        doc.set_title("x\udfff")
    part = doc.parts()[0]
    with pytest.raises(DocumentError, match=rf"^PlacedPart {part.id}: value: character 2 is "):
        doc.replace(replace(part, value="1\udfff"))
    with pytest.raises(DocumentError, match=r"^analysis: freq: character 3 is U\+DFFF"):
        doc.set_analysis(Analysis("1k\udfff"))
    assert doc == rich_document()  # nothing was taken
    save(doc, tmp_path / "kept.json")


# -- loading from disk --------------------------------------------------------------------------
def test_load_names_the_file_in_every_refusal(tmp_path: Path) -> None:
    path = tmp_path / "bad.json"
    path.write_text(mangled(setter("parts", 3, "rotation", value=45)), encoding="utf-8")
    with pytest.raises(DocumentError,
                       match=rf"^{re.escape(str(path))}: parts\[3\]\.rotation: expected one of"):
        load(path)
    with pytest.raises(DocumentError, match=r"^cannot open .*missing\.json: No such file"):
        load(tmp_path / "missing.json")
    with pytest.raises(DocumentError, match=r"^cannot open .*: Is a directory"):
        load(tmp_path)


def test_load_refuses_a_huge_file_before_reading_it_all(tmp_path: Path,
                                                         monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(fileformat, "MAX_FILE_BYTES", 1024)
    path = tmp_path / "big.json"
    path.write_text(" " * 2000, encoding="utf-8")
    with pytest.raises(DocumentError, match=r"big\.json: larger than the 1024-byte limit of a "
                                            r"schematic file$"):
        load(path)


# -- atomic save --------------------------------------------------------------------------------
@pytest.fixture
def saved(tmp_path: Path) -> Path:
    path = tmp_path / "circuit.json"
    save(rich_document(), path)
    return path


def _fail(*_args, **_kwargs):
    raise OSError(28, "No space left on device")


@pytest.mark.parametrize("where", ["os.replace", "os.fsync"])
def test_a_failed_save_keeps_the_old_file_and_leaves_no_temporary(
        saved: Path, where: str, monkeypatch: pytest.MonkeyPatch) -> None:
    before = saved.read_bytes()
    other = Document("Another")
    monkeypatch.setattr(where, _fail)
    with pytest.raises(DocumentError, match=r"^cannot save .*circuit\.json: No space left on "
                                            r"device; the file on disk is unchanged$"):
        save(other, saved)
    monkeypatch.undo()
    assert saved.read_bytes() == before
    assert [p.name for p in saved.parent.iterdir()] == ["circuit.json"]
    assert load(saved) == rich_document()


def _killed_during_save(target: Path) -> None:
    """Save to ``target`` in a child process that is killed (SIGKILL) once its bytes are
    written but before the rename, as a crash or a power cut would stop it."""
    script = ("import os, signal, sys\n"
              "from engine.schematic import Document\n"
              "from portcut.engine.schematic.fileformat import save\n"
              "os.fsync = lambda fd: os.kill(os.getpid(), signal.SIGKILL)\n"
              "save(Document('Killed'), sys.argv[1])\n")
    done = subprocess.run([sys.executable, "-c", script, str(target)], check=False,
                          cwd=Path(__file__).resolve().parents[2], capture_output=True)
    assert done.returncode == -signal.SIGKILL, done.stderr


@pytest.mark.skipif(not hasattr(signal, "SIGKILL") or fcntl is None, reason="POSIX only")
def test_the_next_save_removes_what_a_killed_save_left(saved: Path) -> None:
    _killed_during_save(saved)
    left = [p.name for p in saved.parent.iterdir() if p.name != "circuit.json"]
    assert len(left) == 1 and re.fullmatch(r"\.circuit\.json\.[0-9a-f]{12}\.tmp", left[0])
    assert load(saved) == rich_document()  # the kill changed nothing
    folder = saved.parent
    others = [".other.json.0123456789ab.tmp", ".circuit.json.0123456789aZ.tmp", "notes.tmp"]
    for name in others:
        (folder / name).write_text("x", encoding="utf-8")
    live = folder / ".circuit.json.00000000000f.tmp"  # a save of another process, under way
    fd = os.open(live, os.O_WRONLY | os.O_CREAT)
    fcntl.flock(fd, fcntl.LOCK_EX)
    try:
        save(Document("Next"), saved)
        assert sorted(p.name for p in folder.iterdir()) == sorted(
            ["circuit.json", live.name, *others])
    finally:
        os.close(fd)
    assert load(saved).title == "Next"
    assert atomic.remove_stale_temporaries(folder) == 2  # any target's, the lock now released
    assert sorted(p.name for p in folder.iterdir()) == sorted(
        ["circuit.json", ".circuit.json.0123456789aZ.tmp", "notes.tmp"])


def test_a_failed_write_keeps_the_old_file(saved: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    before = saved.read_bytes()
    real_fdopen = os.fdopen

    class Full:
        def __init__(self, fd: int, *args: Any, **kwargs: Any) -> None:
            self.f = real_fdopen(fd, *args, **kwargs)

        def __enter__(self):
            return self

        def __exit__(self, *exc: object) -> None:
            self.f.close()

        def write(self, data: bytes) -> int:
            self.f.write(data[: len(data) // 2])
            _fail()
            return 0

    monkeypatch.setattr(os, "fdopen", Full)
    with pytest.raises(DocumentError, match="No space left on device"):
        save(Document("Another"), saved)
    monkeypatch.undo()
    assert saved.read_bytes() == before
    assert [p.name for p in saved.parent.iterdir()] == ["circuit.json"]


def test_an_invalid_document_is_refused_before_touching_the_disk(saved: Path) -> None:
    before = saved.read_bytes()
    doc = rich_document()
    doc.replace_fields("p1", value="lots")
    with pytest.raises(DocumentError, match=r"^parts\[0\]\.value"):
        save(doc, saved)
    assert saved.read_bytes() == before


def test_save_into_a_missing_folder_says_so(tmp_path: Path) -> None:
    with pytest.raises(DocumentError, match=r"^cannot save .*: No such file or directory"):
        save(Document(), tmp_path / "nowhere" / "x.json")


@pytest.mark.skipif(os.name != "posix", reason="POSIX permission bits")
def test_save_keeps_the_file_mode_and_writes_through_a_symlink(saved: Path) -> None:
    saved.chmod(0o640)
    link = saved.parent / "link.json"
    link.symlink_to(saved)
    save(Document("Through the link"), link)
    assert link.is_symlink()
    assert load(saved).title == "Through the link"
    assert stat.S_IMODE(saved.stat().st_mode) == 0o640
