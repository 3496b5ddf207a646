"""Placing a whole sheet at once (Placement.of) against placing its parts one after another
(Placement.update as each part is added): the definition of the placing order, where each
caption sees only the captions placed before it. Crowded random sheets make captions push
one another along, so the shortcut of the whole-sheet pass is exercised where it can go wrong.
"""

from __future__ import annotations

import random

import pytest

from portcut.engine.schematic import Document, PlacedPart, Wire
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
