"""The drawn divider that engine and app tests alike open, extract and reduce, written once.

Layouts are in grid units.
"""

from __future__ import annotations

from portcut.engine import GROUND
from portcut.engine.schematic import Document, NetLabel, PlacedPart, Wire


def divider(r1: str = "1k", r2: str = "3k", load: str | None = "2k", second: str = "resistor",
            second_value: str | None = None, v: str = "10") -> Document:
    """V1 = ``v`` behind R1, then R2 (or a capacitor, ``second``) to ground at net "out", loaded
    by RL (None: no load, and the wires end at R2). V1 vertical at x=0 (plus on top), R1
    horizontal on the top row, R2 vertical at x=8, RL vertical at x=16; ground along the bottom
    row (y=6). Ids are handed out in that order: without the load p1 V1, p2 R1, p3 R2, w4
    V1-R1, w5 R1-R2, w6 the ground rail, n7 the ground, n8 "out"."""
    doc = Document("divider")

    def part(kind: str, designator: str, at, rotation: int, value: str) -> None:
        doc.add(PlacedPart(doc.new_id(PlacedPart), kind, designator, at, rotation, value=value))

    part("voltage_source", "V1", (0, 4), 90, v)
    part("resistor", "R1", (4, 2), 0, r1)
    part(second, "R2" if second == "resistor" else "C1", (8, 4), 90, second_value or r2)
    end = 8 if load is None else 16
    if load is not None:
        part("resistor", "RL", (16, 4), 90, load)
    for points in (((0, 2), (2, 2)), ((6, 2), (end, 2)), ((0, 6), (end, 6))):
        doc.add(Wire(doc.new_id(Wire), points))
    doc.add(NetLabel(doc.new_id(NetLabel), GROUND, (0, 6), style="ground"))
    doc.add(NetLabel(doc.new_id(NetLabel), "out", (7 if load is None else 12, 2)))
    return doc
