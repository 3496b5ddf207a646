"""SVG export benchmark: engine.drawing.svg.document_svg on generated ladder sheets of 2,000
and 20,000 parts (benchmarks/canvas.py's generator: two parts, two wires and a tee per cell),
laid out in rows of 40 cells and as one long row (every tee on one rail: where a count of the
segments through each point per line grows with the square of the line's length).

For each size it prints the export's time per part beside a floor measured in the same run: an
ElementTree tree with one group, one polyline and one text per part and one polyline per wire,
serialised the same way. The figure that matters is the growth: the export's time per part on
the large sheet over that on the small one (1.0 is linear; the target is below 2).

Run from the repository root: ``python3 benchmarks/svg_export.py [--sizes 2000,20000]``.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
import xml.etree.ElementTree as ET
from collections.abc import Callable
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from canvas import generated_sheet

from portcut.engine.drawing.svg import document_svg
from portcut.engine.schematic import Document


def _seconds(fn: Callable[[], object], repeats: int) -> float:
    """Median CPU seconds of ``fn`` over ``repeats`` runs (steadier than wall time here)."""
    times = []
    for _ in range(repeats):
        start = time.process_time()
        fn()
        times.append(time.process_time() - start)
    return statistics.median(times)


def _floor(doc: Document) -> str:
    """The least an export of ``doc`` writes: a bare element per part and per wire."""
    root = ET.Element("svg", {"xmlns": "http://www.w3.org/2000/svg"})
    for part in doc.parts():
        group = ET.SubElement(root, "g", {"id": f"el-{part.id}"})
        ET.SubElement(group, "polyline", {"points": f"{part.at[0]},{part.at[1]} 0,0"})
        ET.SubElement(group, "text", {"x": "0", "y": "0"}).text = part.designator
    for wire in doc.wires():
        ET.SubElement(root, "polyline", {"points": " ".join(f"{x},{y}" for x, y in wire.points)})
    return ET.tostring(root, "unicode")


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--sizes", default="2000,20000",
                        help="part counts, comma-separated (default 2000,20000)")
    args = parser.parse_args(argv)
    sizes = [int(s) for s in args.sizes.split(",")]
    print(f"{'layout':<12} {'parts':>7}  {'export':>9}  {'per part':>9}  {'floor/part':>10}  ratio")
    for layout, columns in (("rows of 40", lambda n: 40), ("one row", lambda n: n // 2)):
        per_part = {}
        for n in sizes:
            doc = generated_sheet(n, columns(n))
            parts = len(doc.parts())
            repeats = max(1, 20_000 // parts)
            export = _seconds(lambda doc=doc: document_svg(doc), repeats)
            floor = _seconds(lambda doc=doc: _floor(doc), repeats)
            per_part[n] = export / parts
            print(f"{layout:<12} {parts:>7}  {export * 1e3:>7.0f}ms  {export / parts * 1e6:>7.1f}µs"
                  f"  {floor / parts * 1e6:>8.1f}µs  {export / floor:.1f}x")
        small, large = sizes[0], sizes[-1]
        print(f"{layout}: time per part, {large} over {small} parts: "
              f"{per_part[large] / per_part[small]:.2f} (1.00 is linear; target below 2)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
