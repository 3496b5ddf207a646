"""The schematic document: mutations, one notification per (outermost) batch, and its checks."""

from __future__ import annotations

import pytest

from portcut.engine import DocumentError
from portcut.engine.schematic import (
    Analysis,
    Block,
    Change,
    Contents,
    Document,
    Junction,
    NetLabel,
    PlacedPart,
    Region,
    Wire,
)


class Recorder:
    """Subscribes to a document and keeps every Change it is told of."""

    def __init__(self, doc: Document) -> None:
        self.changes: list[Change] = []
        self.unsubscribe = doc.subscribe(self.changes.append)


@pytest.fixture
def doc() -> Document:
    d = Document("Divider")
    d.add(PlacedPart("p1", "resistor", "R1", (0, 0), value="4k7"))
    d.add(PlacedPart("p2", "resistor", "R2", (4, 0), rotation=90, value="10k"))
    d.add(Wire("w1", ((2, 0), (2, 4), (6, 4))))
    d.add(NetLabel("n1", "gnd", (6, 4), style="ground"))
    return d


@pytest.fixture
def seen(doc: Document) -> Recorder:
    return Recorder(doc)


# -- reading ------------------------------------------------------------------------------------
def test_elements_by_id_and_by_type(doc: Document) -> None:
    assert len(doc) == 4
    assert "p1" in doc
    assert doc["p2"].designator == "R2"
    assert [p.id for p in doc.parts()] == ["p1", "p2"]
    assert [w.id for w in doc.wires()] == ["w1"]
    assert [n.id for n in doc.labels()] == ["n1"]
    assert doc.junctions() == doc.regions() == doc.blocks() == []
    assert doc.by_designator("R1") is doc["p1"]
    assert doc.by_designator("R9") is None


def test_regions_and_blocks_are_listed_in_the_documents_order(doc: Document) -> None:
    # they are kept in an index of their own: it must list what a pass over every element
    # would, in the same order, through adding, replacing, removing, re-adding, arranging and
    # snapshots
    def listed(d: Document) -> tuple[list[str], list[str]]:
        return [r.id for r in d.regions()], [b.id for b in d.blocks()]

    def passed_over(d: Document) -> tuple[list[str], list[str]]:
        return [r.id for r in d.of_type(Region)], [b.id for b in d.of_type(Block)]

    def block(bid: str, designator: str) -> Block:
        return Block(bid, designator, "thevenin", (10, 0), Region("rx", "A", frozenset()),
                     Contents(), ((0, 0), (0, 2)))

    for rid in ("ra", "rb", "rc"):
        doc.add(Region(rid, rid.upper(), frozenset({"p1"})))
    doc.add(block("b1", "EQ1"))
    doc.add(block("b2", "EQ2"))
    assert listed(doc) == passed_over(doc) == (["ra", "rb", "rc"], ["b1", "b2"])
    doc.replace_fields("rb", name="B2")
    doc.remove("ra")
    doc.add(Region("ra", "A", frozenset({"p2"})))  # back, last
    doc.remove("b1")
    snapshot = doc.snapshot()
    doc.remove("rc")
    assert listed(doc) == passed_over(doc) == (["rb", "ra"], ["b2"])
    assert listed(snapshot) == passed_over(snapshot) == (["rb", "rc", "ra"], ["b2"])
    snapshot.arrange(["ra", *(e.id for e in snapshot if e.id != "ra")])
    assert listed(snapshot) == passed_over(snapshot) == (["ra", "rb", "rc"], ["b2"])


def test_unknown_id_is_refused_by_name(doc: Document) -> None:
    with pytest.raises(DocumentError, match=r"^no element with id 'p9' in the document"):
        doc["p9"]
    with pytest.raises(DocumentError, match=r"'p9'"):
        doc.remove("p9")
    with pytest.raises(DocumentError, match=r"'p9'"):
        doc.replace(PlacedPart("p9", "resistor", "R9", (0, 0)))


# -- mutations and their notifications ----------------------------------------------------------
def test_add_remove_replace_each_notify_once(doc: Document, seen: Recorder) -> None:
    doc.add(Junction("j1", (2, 4)))
    removed = doc.remove("p2")
    old = doc.replace(PlacedPart("p1", "resistor", "R1", (0, 0), value="2k2"))
    assert removed.designator == "R2"
    assert old.value == "4k7"
    assert doc["p1"].value == "2k2"
    assert seen.changes == [Change(added=frozenset({"j1"})), Change(removed=frozenset({"p2"})),
                            Change(updated=frozenset({"p1"}))]


def test_replace_fields_is_a_replace(doc: Document, seen: Recorder) -> None:
    old = doc.replace_fields("p2", rotation=180, mirror=True)
    assert (old.rotation, old.mirror) == (90, False)
    assert (doc["p2"].rotation, doc["p2"].mirror) == (180, True)
    assert seen.changes == [Change(updated=frozenset({"p2"}))]


def test_analysis_and_title_notify_with_their_flags(doc: Document, seen: Recorder) -> None:
    old = doc.set_analysis(Analysis(freq="1 kHz", form="norton", basis="rms"))
    assert old == Analysis()
    assert doc.analysis.form == "norton"
    assert doc.set_title("Bridge") == "Divider"
    assert doc.title == "Bridge"
    assert seen.changes == [Change(analysis=True), Change(title=True)]


def test_batch_merges_into_one_notification_after_the_outermost(doc: Document,
                                                                 seen: Recorder) -> None:
    with doc.batch():
        doc.add(Junction("j1", (2, 4)))
        with doc.batch():
            doc.replace_fields("p1", value="1k")
            doc.remove("w1")
        assert seen.changes == []  # nothing is told until the outermost batch ends
        doc.set_title("Edited")
    assert seen.changes == [Change(added=frozenset({"j1"}), removed=frozenset({"w1"}),
                                   updated=frozenset({"p1"}), title=True)]


def test_a_batch_that_replaces_then_removes_notifies_a_removal(doc: Document,
                                                              seen: Recorder) -> None:
    with doc.batch():
        doc.replace_fields("p1", value="1k")
        doc.remove("p1")
    assert seen.changes == [Change(removed=frozenset({"p1"}))]


def test_a_batch_that_adds_then_removes_notifies_nothing_of_it(doc: Document,
                                                              seen: Recorder) -> None:
    with doc.batch():
        doc.add(Junction("j1", (2, 4)))
        doc.remove("j1")
        doc.set_title("Edited")
    assert seen.changes == [Change(title=True)]


def test_a_batch_that_removes_then_adds_back_notifies_a_replacement(doc: Document,
                                                                   seen: Recorder) -> None:
    with doc.batch():
        wire = doc.remove("w1")
        doc.add(wire)
        doc.add(Junction("j1", (2, 4)))
        doc.replace_fields("j1", at=(4, 4))
    assert seen.changes == [Change(added=frozenset({"j1"}), updated=frozenset({"w1"}))]


def test_empty_batch_tells_nobody(doc: Document, seen: Recorder) -> None:
    with doc.batch():
        pass
    assert seen.changes == []


def test_batch_still_notifies_what_was_done_when_it_fails(doc: Document, seen: Recorder) -> None:
    with pytest.raises(DocumentError), doc.batch():
        doc.remove("p1")
        doc.remove("p9")
    assert seen.changes == [Change(removed=frozenset({"p1"}))]
    with doc.batch():  # the failure left no batch open
        doc.remove("p2")
    assert seen.changes[-1] == Change(removed=frozenset({"p2"}))


def test_clear_removes_everything_in_one_notification(doc: Document, seen: Recorder) -> None:
    doc.clear()
    assert len(doc) == 0
    assert seen.changes == [Change(removed=frozenset({"p1", "p2", "w1", "n1"}))]


def test_unsubscribe_stops_notifications(doc: Document, seen: Recorder) -> None:
    other = Recorder(doc)
    seen.unsubscribe()
    seen.unsubscribe()  # a second call is harmless
    doc.set_title("x")
    assert seen.changes == []
    assert other.changes == [Change(title=True)]


def test_a_refused_mutation_changes_nothing_and_tells_nobody(doc: Document,
                                                             seen: Recorder) -> None:
    before = [*doc]
    for bad in (lambda: doc.add(PlacedPart("p1", "capacitor", "C1", (9, 9))),
                lambda: doc.add(PlacedPart("p3", "resistor", "R1", (9, 9))),
                lambda: doc.replace(Wire("p1", ((0, 0), (1, 0)))),
                lambda: doc.set_analysis(Analysis(form="mixed"))):
        with pytest.raises(DocumentError):
            bad()
    assert [*doc] == before
    assert doc.analysis == Analysis()
    assert seen.changes == []


# -- checks -------------------------------------------------------------------------------------
def test_duplicate_id(doc: Document) -> None:
    with pytest.raises(DocumentError, match=r"^an element with id 'p1' is already in the document"):
        doc.add(PlacedPart("p1", "capacitor", "C1", (8, 8)))


def test_designators_are_unique_across_parts_and_blocks(doc: Document) -> None:
    with pytest.raises(DocumentError, match=r"^PlacedPart p3: designator 'R1' is already used by"):
        doc.add(PlacedPart("p3", "capacitor", "R1", (8, 8)))
    block = Block("b1", "R2", "thevenin", (10, 0), Region("r1", "A", frozenset()), Contents(),
                  ((0, 0), (0, 2)))
    with pytest.raises(DocumentError, match=r"^Block b1: designator 'R2' is already used by p2"):
        doc.add(block)
    with pytest.raises(DocumentError, match=r"^PlacedPart p2: designator 'R1' is already used"):
        doc.replace_fields("p2", designator="R1")
    doc.replace_fields("p2", value="22k")  # keeping its own designator is no clash


@pytest.mark.parametrize("designator", ["", "1R", "R 1", "R-1", "Ω1"])
def test_designator_must_be_a_name(doc: Document, designator: str) -> None:
    with pytest.raises(DocumentError, match=rf"^PlacedPart p3: designator {designator!r} must"):
        doc.add(PlacedPart("p3", "resistor", designator, (8, 8)))


def test_next_designator_is_the_lowest_free_one(doc: Document) -> None:
    assert doc.next_designator("resistor") == "R3"
    doc.remove("p1")
    assert doc.next_designator("resistor") == "R1"
    assert doc.next_designator("vccs") == "DS1"
    doc.add(PlacedPart("p5", "cccs", "DS1", (8, 8), control="R2"))
    assert doc.next_designator("vcvs") == "DS2"  # the four dependent sources share DS
    assert doc.next_designator("block") == "EQ1"


def test_new_ids_are_fresh_and_typed(doc: Document) -> None:
    ids = {doc.new_id(PlacedPart) for _ in range(5)}
    assert len(ids) == 5
    assert all(i.startswith("p") and i not in doc for i in ids)
    assert doc.new_id(Wire).startswith("w")
    assert doc.new_id(Region).startswith("r")


def test_replace_keeps_the_element_type(doc: Document) -> None:
    with pytest.raises(DocumentError, match=r"^p1: cannot replace a PlacedPart with a Junction"):
        doc.replace(Junction("p1", (0, 0)))


@pytest.mark.parametrize("rotation", [45, -90, 360])
def test_rotation_is_a_quarter_turn(doc: Document, rotation: int) -> None:
    with pytest.raises(DocumentError, match=rf"^PlacedPart p1: rotation must be .*{rotation}"):
        doc.replace_fields("p1", rotation=rotation)


def test_wire_segments_are_horizontal_or_vertical(doc: Document) -> None:
    with pytest.raises(DocumentError, match=r"^Wire w2: segment \(2, 4\)-\(5, 6\) is not "
                                            "horizontal or vertical"):
        doc.add(Wire("w2", ((2, 0), (2, 4), (5, 6))))
    with pytest.raises(DocumentError, match=r"^Wire w2: a wire needs at least two points"):
        doc.add(Wire("w2", ((2, 0),)))
    with pytest.raises(DocumentError, match=r"segment \(6, 4\)-\(7, 5\)"):
        doc.replace(Wire("w1", ((2, 0), (2, 4), (6, 4), (7, 5))))


def test_region_members_must_be_in_the_document(doc: Document) -> None:
    doc.add(Region("r1", "Source", frozenset({"p1", "p2"})))
    with pytest.raises(DocumentError, match=r"^Region r2: members p8, p9 are not in the document"):
        doc.add(Region("r2", "Load", frozenset({"p1", "p9", "p8"})))


@pytest.mark.parametrize(("analysis", "field"), [
    (Analysis(form="mixed"), "analysis.form"), (Analysis(basis="avg"), "analysis.basis"),
])
def test_analysis_settings_are_checked(doc: Document, analysis: Analysis, field: str) -> None:
    with pytest.raises(DocumentError, match=rf"^{field}: expected"):
        doc.set_analysis(analysis)


# -- equality -----------------------------------------------------------------------------------
def _rebuilt(doc: Document) -> Document:
    """A new document with the same title, analysis and elements, added in reverse order."""
    other = Document(doc.title)
    other.set_analysis(doc.analysis)
    for element in reversed([*doc]):
        other.add(element)
    return other


def test_equal_when_elements_analysis_and_title_are(doc: Document) -> None:
    assert _rebuilt(doc) == doc
    changed = _rebuilt(doc)
    changed.replace_fields("p1", at=(1, 0))
    assert changed != doc
    retitled = _rebuilt(doc)
    retitled.set_title("Other")
    assert retitled != doc
    reanalysed = _rebuilt(doc)
    reanalysed.set_analysis(Analysis(freq="50"))
    assert reanalysed != doc
    assert doc != "Divider"


def test_a_document_is_not_hashable(doc: Document) -> None:
    with pytest.raises(TypeError):
        hash(doc)


def test_a_snapshot_is_not_reached_by_later_mutations(doc: Document, seen: Recorder) -> None:
    # what a background reader holds: equal to the document when taken, untouched afterwards
    copy = doc.snapshot()
    assert copy == doc and copy.by_designator("R2").id == "p2"
    doc.replace_fields("p2", value="22k", designator="R9")
    doc.remove("w1")
    doc.set_analysis(Analysis(freq="1k"))
    assert copy["p2"].value == "10k" and copy.by_designator("R2").id == "p2"
    assert copy.by_designator("R9") is None and "w1" in copy and copy.analysis == Analysis()
    copy.add(Wire("w9", ((0, 0), (0, 2))))  # its own indexes and no subscribers of its own
    assert "w9" not in doc and len(seen.changes) == 3
