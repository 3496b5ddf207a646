"""A move or a value typed re-extracts only the nets it touches and swaps only the parts it
changed into the kept circuit (engine.schematic.connectivity.incremental, updated_circuit).

Exactness is judged against a fresh whole extraction and a fresh build of the same document
(those are held to a brute-force reference in test_connectivity.py); the numbers of a rewired
circuit against the closed form of a loaded divider.
"""

from __future__ import annotations

import itertools
import re
from dataclasses import replace

import pytest
from dense_sheets import ladder
from hypothesis import given, settings
from hypothesis import strategies as st
from test_connectivity import same_result

from portcut.engine import CircuitError, equivalent
from portcut.engine.schematic import (
    Block,
    Document,
    Junction,
    NetLabel,
    PlacedPart,
    Wire,
    build_circuit,
    extract,
)
from portcut.engine.schematic.connectivity import extraction, updated_circuit
from portcut.engine.schematic.symbols import pin_positions
from portcut.engine.solve.circuit import GROUND


def divider_with_spare() -> Document:
    """V1 (5 V) -> R1 (4k7) -> net 'out' -> R2 (10k) -> ground, and R3 (10k) one grid step
    below the end of the wire w3 from 'out': its top pin touches nothing until moved up by one,
    its bottom pin stays on the short ground wire w4 either way. Beside them, a row of parts
    that edits leave alone, as on a large sheet (where a re-extraction is patched)."""
    doc = quiet_row(Document())
    for e in (
        PlacedPart("v1", "voltage_source", "V1", (0, 4), 90, value="5"),
        PlacedPart("r1", "resistor", "R1", (4, 0), value="4k7"),
        PlacedPart("r2", "resistor", "R2", (8, 4), 90, value="10k"),
        PlacedPart("r3", "resistor", "R3", (12, 4), 90, value="10k"),
        Wire("w1", ((0, 2), (0, 0), (2, 0))),
        Wire("w2", ((6, 0), (8, 0), (8, 2))),
        Wire("w3", ((8, 0), (12, 0), (12, 1))),
        Wire("w4", ((12, 5), (12, 6))),
        NetLabel("g1", "", (0, 6), style="ground"),
        NetLabel("g2", "", (8, 6), style="ground"),
        NetLabel("g3", "", (12, 6), style="ground"),
        NetLabel("l1", "out", (8, 0)),
    ):
        doc.add(e)
    return doc


def quiet_row(doc: Document) -> Document:
    """``doc`` with 24 resistors in series far to the right, wired to nothing else."""
    for i in range(24):
        doc.add(PlacedPart(f"f{i}", "resistor", f"F{i + 1}", (100 + 4 * i, 0), value="1k"))
    return doc


def rejoined_counts(monkeypatch: pytest.MonkeyPatch) -> list[int]:
    """The number of graph nodes each patched re-extraction joins again, recorded as they run
    (a whole extraction records nothing)."""
    counts: list[int] = []
    patched = extraction.patched

    def spy(*args):
        found = patched(*args)
        if found is not None:
            counts.append(len(found.rejoined))
        return found

    monkeypatch.setattr(extraction, "patched", spy)
    return counts


def test_a_move_that_keeps_its_connections_reuses_the_circuit_as_it_is(monkeypatch) -> None:
    doc = divider_with_spare()
    conn = extract(doc)
    circuit = build_circuit(doc, conn)
    counts = rejoined_counts(monkeypatch)
    with doc.batch():  # R2 one step right; w2 gains a bend to reach it, its ground follows
        doc.replace_fields("r2", at=(9, 4))
        doc.replace_fields("w2", points=((6, 0), (8, 0), (8, 1), (9, 1), (9, 2)))
        doc.replace_fields("g2", at=(9, 6))
    again = extract(doc, previous=conn)
    assert same_result(again, extract(doc)) and again.net_of_pin == conn.net_of_pin
    # only the nets R2 and w2 touch (out and ground) are joined again, not V1's or R3's top
    assert counts == [len([k for k, n in again.net_of_pin.items() if n in {"out", GROUND}])
                      + len([w for w, n in again.net_of_wire.items() if n in {"out", GROUND}])]
    assert updated_circuit(circuit, doc, conn, again) is circuit


def test_a_move_that_connects_a_part_restamps_it_and_the_numbers_follow() -> None:
    doc = divider_with_spare()
    conn = extract(doc)
    circuit = build_circuit(doc, conn)
    doc.replace_fields("r3", at=(12, 3))  # its top pin now ends w3: R3 joins R2 across 'out'
    again = extract(doc, previous=conn)
    assert same_result(again, extract(doc))
    updated = updated_circuit(circuit, doc, conn, again)
    assert updated == build_circuit(doc, again)
    assert [updated[n] is circuit[n] for n in ("V1", "R1", "R2")] == [True] * 3
    # Thevenin equivalent of a divider (common practice): voc = V R2 / (R1 + R2) and
    # z = R1 R2 / (R1 + R2), here with R2 || R3 = 5 kΩ in place of R2
    eq = equivalent(updated, {"V1", "R1", "R2", "R3"}, port=("out", GROUND))
    assert eq.voc == pytest.approx(5 * 5e3 / 9.7e3, rel=1e-12)
    assert eq.z == pytest.approx(4.7e3 * 5e3 / 9.7e3, rel=1e-12)
    before = equivalent(circuit, {"V1", "R1", "R2", "R3"}, port=("out", GROUND))
    assert before.voc == pytest.approx(5 * 10e3 / 14.7e3, rel=1e-12)  # R3 hung from ground


def test_a_value_typed_restamps_that_part_alone() -> None:
    doc = divider_with_spare()
    conn = extract(doc)
    circuit = build_circuit(doc, conn)
    doc.replace_fields("r1", value="10k")
    again = extract(doc, previous=conn)
    updated = updated_circuit(circuit, doc, conn, again)
    assert updated == build_circuit(doc, again)
    assert updated["R1"].value == 10e3 and updated["R2"] is circuit["R2"]


def test_many_replacements_in_place_still_update_the_kept_circuit() -> None:
    # more elements replaced than a patched re-extraction takes: the sheet is flattened afresh,
    # but its nodes are numbered as before, so the circuit is still updated, not rebuilt
    doc = divider_with_spare()
    conn = extract(doc)
    circuit = build_circuit(doc, conn)
    with doc.batch():
        doc.replace_fields("r3", at=(12, 3))
        for i in range(5):
            doc.replace_fields(f"f{i}", value="2k2")
    again = extract(doc, previous=conn)
    assert again._sheet.keys is not conn._sheet.keys  # not patched
    updated = updated_circuit(circuit, doc, conn, again)
    assert updated == build_circuit(doc, again)
    assert updated["R1"] is circuit["R1"] and updated["F1"].value == 2200


def test_a_whole_extraction_around_parts_that_kept_their_nets_keeps_the_circuit() -> None:
    # on a sheet this small a move with its link wire is extracted whole (flattened afresh)
    doc = ladder(6, 3)
    conn = extract(doc)
    circuit = build_circuit(doc, conn)
    c = doc["c1"]  # pins (8, 0) on R2's right pin and wire s2, (8, 4) on the rail
    with doc.batch():  # one step right: its pins land on s2 and on the rail again
        doc.replace(replace(c, at=(9, 2)))
        doc.add(Wire("link", ((8, 0), (9, 0))))
    again = extract(doc, previous=conn)
    assert again._sheet.keys is not conn._sheet.keys
    assert updated_circuit(circuit, doc, conn, again) is circuit
    doc.replace(replace(c, at=(9, 3)))  # off both: C2 now touches nothing
    doc.remove("link")
    last = extract(doc, previous=again)
    updated = updated_circuit(circuit, doc, again, last)
    assert updated is not circuit and updated == build_circuit(doc, extract(doc))


def test_an_edit_it_cannot_patch_is_built_afresh() -> None:
    doc = divider_with_spare()
    conn = extract(doc)
    circuit = build_circuit(doc, conn)
    doc.add(PlacedPart("r4", "resistor", "R4", (20, 0), value="1k"))  # a part added
    again = extract(doc, previous=conn)
    circuit = updated_circuit(circuit, doc, conn, again)
    assert circuit == build_circuit(doc, again)
    doc.replace_fields("r4", value="")  # and a value it cannot read is refused as a build is
    with pytest.raises(CircuitError, match="R4 value: none given"):
        updated_circuit(circuit, doc, again, extract(doc, previous=again))


# -- random moves and edits on generated sheets ---------------------------------------------------
LABELS = ("a", "b", GROUND, "R1.a", "")  # "R1.a" meets an automatic name; "" warns


@st.composite
def generated_sheets(draw) -> Document:
    """A dense RC ladder (tests/dense_sheets.py) with a source at its left end, a few net
    labels and a junction, a current-controlled source sensing R1, and the quiet row."""
    doc = quiet_row(ladder(draw(st.sampled_from((4, 5, 6))), draw(st.integers(3, 8))))
    doc.add(PlacedPart("v", "voltage_source", "V1", (-2, 2), 90, value="1"))
    doc.add(PlacedPart("h", "ccvs", "DS1", (2, 8), control="R1", value="100"))
    for i in range(draw(st.integers(0, 3))):
        doc.add(NetLabel(f"n{i}", draw(st.sampled_from(LABELS)),
                         (draw(st.integers(-2, 12)), draw(st.sampled_from((0, 4, 8))))))
    doc.add(Junction("j", (draw(st.integers(0, 12)), 0)))
    return doc


def step(doc: Document, draw) -> None:
    """One edit that adds and removes nothing: a move by up to two grid steps, a turn, a value
    typed (or cleared), a label renamed."""
    e = draw(st.sampled_from([e for e in doc if not e.id.startswith("f")]))
    dx, dy = draw(st.integers(-2, 2)), draw(st.integers(-2, 2))
    action = draw(st.sampled_from(("move", "move", "turn", "value")))
    if isinstance(e, Wire):
        doc.replace(replace(e, points=tuple((x + dx, y + dy) for x, y in e.points)))
    elif isinstance(e, NetLabel) and action == "value":
        doc.replace(replace(e, name=draw(st.sampled_from(LABELS))))
    elif isinstance(e, PlacedPart) and action == "value":
        doc.replace(replace(e, value=draw(st.sampled_from(("2k2", "47n", "3", "")))))
    elif isinstance(e, PlacedPart) and action == "turn":
        doc.replace(replace(e, rotation=draw(st.sampled_from((0, 90, 180, 270)))))
    else:
        doc.replace(replace(e, at=(e.at[0] + dx, e.at[1] + dy)))


def rewire(doc: Document, draw) -> None:
    """One edit that adds or removes a wire or a junction (a move's link wire laid or taken
    back), anywhere on the sheet: on a pin, a wire's end or bend, mid-segment or in the air."""
    action = draw(st.sampled_from(("wire", "wire", "junction", "remove")))
    x, y = draw(st.integers(-2, 12)), draw(st.sampled_from((0, 1, 2, 4, 6, 8)))
    if action == "remove":
        found = [e for e in doc if isinstance(e, Wire | Junction)]
        if found:
            doc.remove(draw(st.sampled_from(found)).id)
    elif action == "junction":
        doc.add(Junction(doc.new_id(Junction), (x, y)))
    else:
        dx, dy = draw(st.sampled_from(((1, 0), (0, 1), (3, 0), (0, 4), (-2, 0))))
        doc.add(Wire(doc.new_id(Wire), ((x, y), (x + dx, y + dy))))


def _pin_at(element, index: int) -> tuple[float, float]:
    kind = element.kind if isinstance(element, PlacedPart) else \
        "block" if isinstance(element, Block) else \
        "ground" if element.style == "ground" else "label"
    return pin_positions(kind, element.at, element.rotation,
                         getattr(element, "mirror", False))[index]


def built(doc: Document, conn, freq: float):
    try:
        return build_circuit(doc, conn, freq)
    except CircuitError as e:
        return e


@settings(max_examples=150, deadline=None)
@given(generated_sheets(), st.data())
def test_random_moves_and_edits_give_a_fresh_extraction_and_build(doc: Document,
                                                                   data: st.DataObject) -> None:
    freq = data.draw(st.sampled_from((0.0, 1e3)))
    conn = extract(doc)
    circuit = built(doc, conn, freq)
    for _ in range(data.draw(st.integers(1, 6))):
        with doc.batch():
            for _ in range(data.draw(st.integers(1, 3))):
                data.draw(st.sampled_from((step, step, rewire)))(doc, data.draw)
        again = extract(doc, previous=conn)
        assert same_result(again, extract(doc))
        # the nets of some elements' pins, read off the sheet, as net_of_pin lists them
        chosen = data.draw(st.sets(st.sampled_from(sorted(e.id for e in doc))))
        assert again.pin_nets(chosen) == {net for (eid, _), net in again.net_of_pin.items()
                                          if eid in chosen and isinstance(doc[eid], PlacedPart)}
        # the pins on one net, with where the symbols put them (engine.schematic.symbols)
        net = data.draw(st.sampled_from(sorted(set(again.net_of_pin.values()) or {"none"})))
        assert sorted(again.pins_on(net)) == sorted(
            (key, _pin_at(doc[key[0]], key[1])) for key, name in again.net_of_pin.items()
            if name == net)
        fresh = built(doc, again, freq)
        if isinstance(circuit, CircuitError):  # nothing kept to update: a live view builds
            circuit = fresh
        elif isinstance(fresh, CircuitError):
            with pytest.raises(CircuitError, match=f"^{re.escape(str(fresh))}$"):
                updated_circuit(circuit, doc, conn, again, freq)
            circuit = fresh
        else:
            circuit = updated_circuit(circuit, doc, conn, again, freq)
            assert circuit == fresh
        conn = again


def test_a_link_wire_laid_and_taken_back_rejoins_only_its_nets(monkeypatch) -> None:
    """A part moved one step along its wire with a link wire laid from its old pin point, then
    moved back with the link taken away: both re-extractions are patched (the wires numbered
    again) and each joins again only the nets the part sits on."""
    counts = rejoined_counts(monkeypatch)
    doc = ladder(6, 8)
    conn = extract(doc)
    nodes = len(conn.net_of_pin) + len(conn.net_of_wire)
    c = doc["c3"]  # pins (20, 0) on R4's left pin and (20, 4) on the rail
    for _ in range(3):
        with doc.batch():
            doc.replace(replace(c, at=(21, 2)))
            doc.add(Wire("link", ((20, 0), (21, 0))))
        moved = extract(doc, previous=conn)
        assert same_result(moved, extract(doc)) and moved.net_of_pin == conn.net_of_pin
        with doc.batch():
            doc.remove("link")
            doc.replace(c)
        back = extract(doc, previous=moved)
        assert same_result(back, extract(doc)) and back.net_of_pin == conn.net_of_pin
        conn = back
    assert len(counts) == 6 and max(counts) < nodes / 2


def test_resistors_moved_in_turn_on_a_ladder_rejoin_only_their_nets(monkeypatch) -> None:
    """Each move is patched (not extracted whole) and joins again under half the sheet."""
    counts = rejoined_counts(monkeypatch)
    doc = ladder(6, 8)
    conn = extract(doc)
    nodes = len(conn.net_of_pin) + len(conn.net_of_wire)
    for i in itertools.islice(itertools.cycle(range(1, 8)), 20):
        doc.replace_fields(f"r{i}", at=(doc[f"r{i}"].at[0], 1 if doc[f"r{i}"].at[1] == 0 else 0))
        conn = extract(doc, previous=conn)
        assert same_result(conn, extract(doc))
    assert len(counts) == 20 and max(counts) < nodes / 2
