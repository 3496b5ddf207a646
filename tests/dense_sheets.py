"""Generated dense sheets for the drawing tests: parts at the usual pitch of 4 to 6 grid units."""

from __future__ import annotations

from portcut.engine.schematic import Document, NetLabel, PlacedPart, Wire
from portcut.engine.solve.circuit import GROUND


def ladder(pitch: int, cells: int = 8) -> Document:
    """A dense RC ladder: series resistors ``pitch`` grid units apart along y = 0 (wired pin
    to pin where they do not touch), a capacitor from each joint down to a ground rail."""
    doc = Document(f"Ladder at pitch {pitch}")
    rail = 4
    for i in range(cells):
        x = i * pitch
        doc.add(PlacedPart(f"r{i}", "resistor", f"R{i + 1}", (x, 0), value="4k7"))
        if pitch > 4 and i:
            doc.add(Wire(f"s{i}", ((x - pitch + 2, 0), (x - 2, 0))))
        doc.add(PlacedPart(f"c{i}", "capacitor", f"C{i + 1}", (x + 2, rail // 2), rotation=90,
                           value="10n"))
    last = (cells - 1) * pitch + 2
    doc.add(Wire("rail", ((2, rail), (last, rail))))
    doc.add(NetLabel("g", GROUND, (2, rail), style="ground"))
    return doc
