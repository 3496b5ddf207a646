"""Placing a whole sheet at once (Placement.of) against placing its parts one after another
(Placement.update as each part is added): the definition of the placing order, where each
caption sees only the captions placed before it. Crowded random sheets make captions push
one another along, so the shortcut of the whole-sheet pass is exercised where it can go wrong.
"""

from __future__ import annotations

import random
from dataclasses import replace

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from portcut.engine.schematic import Document, PlacedPart, Wire
from portcut.engine.schematic.caption_spots import spots
from portcut.engine.schematic.placement import Placement

KINDS = ("resistor", "capacitor", "inductor", "voltage_source")
VALUES = ("1k", "47n", "10u", "220", "4.7M")


def _crowded(seed: int, parts: int = 50) -> Document:
    rng = random.Random(seed)
    doc = Document(f"Crowded {seed}")
    for n in range(8):
        x, y = rng.randrange(0, 28), rng.randrange(0, 18)
        doc.add(Wire(f"w{n}", ((x, y), (x + rng.randrange(1, 9), y))))
    for n in range(parts):
        doc.add(PlacedPart(f"p{n}", rng.choice(KINDS), f"X{n}",
                           (rng.randrange(0, 28), rng.randrange(0, 18)),
                           rotation=rng.choice((0, 90)), value=rng.choice(VALUES),
                           captions=(("value", 1.0, 2.0),) if n % 13 == 0 else ()))
    return doc


@pytest.mark.parametrize("style", ["iec", "ieee"])
@pytest.mark.parametrize("seed", range(6))
def test_placing_a_sheet_at_once_matches_placing_part_after_part(seed: int,
                                                                 style: str) -> None:
    doc = _crowded(seed)
    growing = Document(doc.title)
    for wire in doc.wires():
        growing.add(wire)
    placement = Placement.of(growing, style)
    for part in doc.parts():
        growing.add(part)
        placement.update(growing, [part.id])
    at_once = Placement.of(doc, style).captions
    assert placement.captions == at_once
    assert any(c.crowded for roles in at_once.values() for c in roles.values())


# -- edits one after another --------------------------------------------------------------------
# Placement.update after each edit must give what Placement.of gives for the edited document,
# and name every part whose captions changed (the canvas redraws only those).

_EDIT = st.tuples(st.sampled_from(("value", "move", "rotate", "add", "remove", "drag", "rename",
                                   "wire", "again", "pair")),
                  st.integers(0, 10_000), st.integers(-3, 3), st.integers(-3, 3))


def _edit(doc: Document, what: str, n: int, dx: int, dy: int, fresh: str) -> None:
    """One edit of ``doc`` (``n`` picks the part, ``fresh`` is an unused name)."""
    parts = doc.parts()
    if what == "add" or not parts:
        doc.add(PlacedPart(fresh, KINDS[n % len(KINDS)], fresh.upper(), (n % 28, n % 18),
                           rotation=(0, 90)[n % 2], value=VALUES[n % len(VALUES)]))
        return
    part = parts[n % len(parts)]
    if what == "value":
        doc.replace(replace(part, value=VALUES[n % len(VALUES)]))
    elif what == "move":
        doc.replace(replace(part, at=(part.at[0] + dx, part.at[1] + dy)))
    elif what == "rotate":
        doc.replace(replace(part, rotation=(part.rotation + 90) % 360))
    elif what == "remove":
        doc.remove(part.id)
    elif what == "drag":  # the value caption kept where dropped, or let go again
        doc.replace(replace(part, captions=() if part.captions else (("value", dx, dy),)))
    elif what == "rename":
        doc.replace(replace(part, designator=fresh.upper()))
    elif what == "wire":
        doc.add(Wire(fresh, ((n % 28, n % 18), (n % 28 + dx + 4, n % 18))))
    elif what == "again":  # taken off and put back in one step: now last in placing order
        with doc.batch():
            doc.remove(part.id)
            doc.add(part)
    else:  # two parts moved in one step, the second where the first was
        other = parts[(n + 1 + dx % 3) % len(parts)]
        with doc.batch():
            doc.replace(replace(part, at=(part.at[0] + dx, part.at[1] + dy)))
            if other.id != part.id:
                doc.replace(replace(other, at=part.at))


@settings(max_examples=40, deadline=None)
@given(st.integers(0, 99), st.sampled_from(["iec", "ieee"]), st.lists(_EDIT, max_size=25))
def test_placing_again_after_each_edit_matches_placing_at_once(seed: int, style: str,
                                                               edits: list) -> None:
    doc = _crowded(seed, parts=30)
    placement = Placement.of(doc, style)
    named: list[set[str]] = []
    doc.subscribe(lambda change: named.append(placement.update(
        doc, (*change.removed, *change.updated, *change.added))))
    for k, (what, n, dx, dy) in enumerate(edits):
        before = dict(placement.captions)
        _edit(doc, what, n, dx, dy, f"e{k}")
        assert placement.captions == Placement.of(doc, style).captions, (k, what)
        changed = {eid for eid in before.keys() | placement.captions.keys()
                   if before.get(eid) != placement.captions.get(eid)}
        assert changed <= set().union(*named), (k, what)
        named.clear()


@pytest.mark.parametrize("style", ["iec", "ieee"])
@pytest.mark.parametrize("kind", KINDS)
def test_a_captions_reach_holds_every_room_it_is_scored_in(kind: str, style: str) -> None:
    # update looks for the captions a moved box can change through their reach; a room sticking
    # out of it would go unseen
    for rotation in (0, 90, 180, 270):
        for role, lines in (("designator", 1), ("value", 1), ("value", 2)):
            found = spots(kind, rotation, False, style, role, lines, 3.5)
            x0, y0, x1, y1 = found.reach
            assert all(x0 <= r[0] and y0 <= r[1] and r[2] <= x1 and r[3] <= y1
                       for r in found.rooms), (rotation, role, lines)
