"""The sheet's wiring checks: each fault the checks list shows, found on a small sheet built to
have it, and none on the bundled examples. The faults are those of nodal analysis (common
practice): a node joined to nothing has no equation, a part with both ends on one node carries
nothing, an island with no path to the reference node has an undefined potential, and two ideal
voltage sources in parallel leave the loop current undetermined."""

from __future__ import annotations

import pytest

from portcut import assets
from portcut.engine.schematic import Document, NetLabel, PlacedPart, Wire, extract
from portcut.engine.schematic.checks import sheet_checks
from portcut.engine.schematic.fileformat import load
from portcut.engine.solve.circuit import GROUND


def _loop(doc: Document, kind: str, designator: str, x: int, value: str = "1k") -> None:
    """A vertical part at column ``x`` between a top wire at y=0 and ground at y=4."""
    doc.add(PlacedPart(doc.new_id(PlacedPart), kind, designator, (x, 2), 90, value=value))


def _source_and_load() -> Document:
    doc = Document("checks")
    _loop(doc, "voltage_source", "V1", 0, "5")
    _loop(doc, "resistor", "R1", 6)
    doc.add(Wire(doc.new_id(Wire), ((0, 0), (6, 0))))
    doc.add(Wire(doc.new_id(Wire), ((0, 4), (6, 4))))
    doc.add(NetLabel(doc.new_id(NetLabel), GROUND, (0, 4), style="ground"))
    return doc


def _kinds(doc: Document) -> list[tuple[str, str]]:
    found = sheet_checks(doc, extract(doc))
    return [(c.kind, doc[c.element_id].designator) for c in found]


def test_a_clean_sheet_has_no_checks():
    assert _kinds(_source_and_load()) == []


@pytest.mark.parametrize("name", assets.example_names())
def test_the_examples_pass_every_check(name):
    doc = load(assets.example_path(name))
    assert sheet_checks(doc, extract(doc)) == []


def test_a_shorted_part_and_an_unconnected_pin():
    doc = _source_and_load()
    # R2 lies along the top wire: both its pins are taps on one net
    doc.add(PlacedPart(doc.new_id(PlacedPart), "resistor", "R2", (3, 0), value="1k"))
    # R3 hangs from the top wire by one pin only
    doc.add(PlacedPart(doc.new_id(PlacedPart), "resistor", "R3", (6, -2), 90, value="1k"))
    found = sheet_checks(doc, extract(doc))
    kinds = [(c.kind, doc[c.element_id].designator) for c in found]
    assert ("shorted", "R2") in kinds and ("unconnected", "R3") in kinds
    shorted = next(c for c in found if c.kind == "shorted")
    assert "shorted out" in shorted.message


def test_an_island_with_no_path_to_ground_floats():
    doc = _source_and_load()
    _loop(doc, "resistor", "R4", 12)
    _loop(doc, "resistor", "R5", 16)
    doc.add(Wire(doc.new_id(Wire), ((12, 0), (16, 0))))
    doc.add(Wire(doc.new_id(Wire), ((12, 4), (16, 4))))
    assert _kinds(doc) == [("floating", "R4")]


def test_two_ideal_sources_in_parallel_are_named():
    doc = _source_and_load()
    _loop(doc, "voltage_source", "V2", 3, "3")  # its pins sit on V1's two wires
    kinds = _kinds(doc)
    assert kinds[-1][0] == "sources" and kinds[-1][1] in {"V1", "V2"}


def test_a_part_joined_to_nothing_is_listed_by_its_pins_only():
    doc = _source_and_load()
    _loop(doc, "resistor", "R6", 20)
    assert _kinds(doc) == [("unconnected", "R6"), ("unconnected", "R6")]
