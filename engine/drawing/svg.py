"""SVG 1.1 drawing of a schematic document, headless: the export of Portcut.

Every symbol comes from engine.schematic.symbols and is drawn as one ``<g class="symbol">`` whose
``transform`` places it (translate, rotate clockwise, mirror), inside a ``<g>`` for its element
(``class`` "part", "block", "label" or "ground") that also holds its upright ``<text>``
elements, one per line: the designator, the value (engine.schematic.captions: 4.7 kΩ, 100 nF,
3.33 V ∠ 0°) where engine.schematic.placement puts them, and any polarity marks.
Wires are ``<polyline class="wire">``; junction dots ``<circle class="junction">`` sit on
explicit junctions and wherever three or more connections meet; regions are outlined in the
accent colour with a light fill; a collapsed block shows its equivalent at the analysis
frequency. Colours come from engine.drawing.palette, weights from engine.schematic.symbols.

Coordinates: :data:`SCALE` SVG user units (px) per grid unit; the viewBox encloses every shape
and every text with a margin.
"""

from __future__ import annotations

import math
import re
import xml.etree.ElementTree as ET
from collections.abc import Iterable, Sequence

from ..errors import CircuitError, ValueParseError
from ..schematic.captions import block_caption, drawn_form
from ..schematic.connectivity import block_equivalent
from ..schematic.document import Document
from ..schematic.model import Block, NetLabel, PlacedPart, Region
from ..schematic.placement import PlacedCaption, Placement
from ..schematic.symbols import (
    CAP_HEIGHT,
    COUPLING_DOT_RADIUS,
    FONT_SIZE,
    JUNCTION_RADIUS,
    LINE_PITCH,
    MARK_FONT_SIZE,
    MARK_TEXT,
    STROKE_WIDTH,
    STYLES,
    Arc,
    Bounds,
    Circle,
    Line,
    Polygon,
    Shape,
    TextAnchor,
    place,
    placed_bounds,
    symbol,
    text_baselines,
    text_bounds,
)
from ..solve.mna import describe_freq
from ..solve.units import parse_frequency
from .dots import coupling_dots, junction_points
from .palette import PALETTE, Palette

__all__ = ["SCALE", "document_svg", "junction_points"]

SVG_NS = "http://www.w3.org/2000/svg"
#: SVG user units (pixels at 100 %) per grid unit.
SCALE = 10.0
MARGIN = 2.0  # grid units around the drawing
TITLE_SIZE = 1.6
FONT_FAMILY = "DejaVu Sans, Helvetica, Arial, sans-serif"
#: Characters XML 1.0 does not allow anywhere in a document (control characters other than tab,
#: line feed and carriage return, lone surrogates, U+FFFE and U+FFFF); names and titles holding
#: them are drawn with U+FFFD in their place so that every export is well-formed.
_NOT_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")


def _n(value: float) -> str:
    """A coordinate in SVG user units, short and exact enough (0.01 px)."""
    text = f"{value * SCALE:.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def _points(points: Iterable[tuple[float, float]]) -> str:
    return " ".join(f"{_n(x)},{_n(y)}" for x, y in points)


class _SvgTree:
    """The SVG tree being written and the extent (grid units) of what is on it."""

    def __init__(self, palette: Palette) -> None:
        self.palette = palette
        self.root = ET.Element("svg", {"xmlns": SVG_NS, "version": "1.1"})
        self.layers: dict[str, ET.Element] = {}
        self.extent: list[Bounds] = []

    def layer(self, name: str, **attrs: str) -> ET.Element:
        if name not in self.layers:
            self.layers[name] = ET.SubElement(self.root, "g", {"id": name, **attrs})
        return self.layers[name]

    def grow(self, box: Bounds) -> None:
        self.extent.append(box)

    def text(self, parent: ET.Element, lines: Sequence[str], at: tuple[float, float],
             align: str, *, size: float = FONT_SIZE, colour: str | None = None,
             cls: str = "", bold: bool = False) -> None:
        """Upright text, one ``<text>`` per line (lines placed by text_baselines; separate
        elements rather than tspans, which not every SVG renderer positions)."""
        lines = [line for line in lines if line]
        if not lines:
            return
        anchor, baselines = text_baselines(at, align, len(lines), size)
        attrs = {"font-size": _n(size), "text-anchor": anchor, "stroke": "none",
                 "fill": colour or self.palette.text}
        if cls:
            attrs["class"] = cls
        if bold:
            attrs["font-weight"] = "bold"
        for line, (x, y) in zip(lines, baselines, strict=True):
            ET.SubElement(parent, "text", {"x": _n(x), "y": _n(y), **attrs}).text = line
        self.grow(text_bounds(at, align, lines, size))


def _shape_node(parent: ET.Element, shape: Shape, colour: str) -> ET.Element:
    """One shape in the symbol's local frame (the group's transform places it); a filled
    shape is filled with its stroke colour."""
    fill = colour if getattr(shape, "filled", False) else "none"
    if isinstance(shape, Line):
        return ET.SubElement(parent, "polyline", {"points": _points(shape.points)})
    if isinstance(shape, Polygon):
        attrs = {"points": _points(shape.points), "fill": fill}
        if shape.dashed:
            attrs["stroke-dasharray"] = f"{_n(0.5)},{_n(0.3)}"
        return ET.SubElement(parent, "polygon", attrs)
    if isinstance(shape, Circle):
        return ET.SubElement(parent, "circle", {"cx": _n(shape.center[0]),
                                                "cy": _n(shape.center[1]),
                                                "r": _n(shape.radius), "fill": fill})
    return ET.SubElement(parent, "path", {"d": _arc_path(shape)})


def _arc_path(arc: Arc) -> str:
    """SVG path of an arc. Our spans are counterclockwise on screen and SVG's sweep flag 1 is
    clockwise on screen (y down), so a positive span has sweep 0. One elliptical-arc command
    cannot close a full turn, so longer sweeps are split in halves."""
    pieces = max(1, math.ceil(abs(arc.span_deg) / 180 - 1e-9))
    step = arc.span_deg / pieces
    r = _n(arc.radius)
    sweep = 0 if arc.span_deg > 0 else 1
    d = [f"M {_n(arc.start[0])},{_n(arc.start[1])}"]
    for i in range(1, pieces + 1):
        x, y = arc.point_at(arc.start_deg + step * i)
        d.append(f"A {r},{r} 0 0,{sweep} {_n(x)},{_n(y)}")
    return " ".join(d)


def _placement(at: tuple[float, float], rotation: int, mirror: bool) -> str:
    """SVG transform for the symbols' convention: mirror x first, then rotate clockwise
    (SVG's rotate turns clockwise on a y-down screen), then move to ``at``."""
    parts = [f"translate({_n(at[0])},{_n(at[1])})"]
    if rotation % 360:
        parts.append(f"rotate({rotation % 360})")
    if mirror:
        parts.append("scale(-1,1)")
    return " ".join(parts)


def _draw_symbol(sheet: _SvgTree, group: ET.Element, kind: str, at: tuple[int, int], rotation: int,
                 mirror: bool, style: str, *, form: str = "thevenin",
                 texts: dict[str, Sequence[str]], colours: dict[str, str] | None = None) -> None:
    """The symbol's shapes under its placement, then its upright texts and marks."""
    sym = symbol(kind, style, form)
    colours = colours or {}
    ink = sheet.palette.ink
    shapes = ET.SubElement(group, "g", {"class": "symbol",
                                        "transform": _placement(at, rotation, mirror)})
    for shape in sym.shapes:
        if isinstance(shape, Polygon) and shape.dashed and "frame" in colours:
            _shape_node(shapes, shape, colours["frame"]).set("stroke", colours["frame"])
        else:
            _shape_node(shapes, shape, ink)
    sheet.grow(placed_bounds(kind, at, rotation, mirror, style=style, form=form))
    for anchor in sym.anchors:
        placed = place(anchor, at, rotation, mirror)
        assert isinstance(placed, TextAnchor)
        if anchor.role in MARK_TEXT:
            sheet.text(group, [MARK_TEXT[anchor.role]], placed.at, placed.align,
                       size=MARK_FONT_SIZE, colour=ink, cls="mark")
        elif anchor.role in texts:
            colour = colours.get(anchor.role, sheet.palette.muted if anchor.role == "value"
                                 else sheet.palette.text)
            sheet.text(group, texts[anchor.role], placed.at, placed.align, colour=colour,
                       cls=anchor.role)


def _element_group(parent: ET.Element, cls: str, element_id: str, tooltip: str) -> ET.Element:
    group = ET.SubElement(parent, "g", {"class": cls, "id": f"el-{element_id}"})
    ET.SubElement(group, "title").text = tooltip
    return group


def _draw_part(sheet: _SvgTree, part: PlacedPart, style: str,
               captions: Iterable[PlacedCaption]) -> None:
    """The part's symbol and its captions where engine.schematic.placement put them."""
    group = _element_group(sheet.layer("parts"), "part", part.id, part.designator)
    _draw_symbol(sheet, group, part.kind, part.at, part.rotation, part.mirror, style, texts={})
    for c in captions:
        colour = sheet.palette.muted if c.role == "value" else sheet.palette.text
        sheet.text(group, c.lines, c.at, c.align, colour=colour, cls=c.role)


def _draw_block(sheet: _SvgTree, block: Block, style: str, freq: float) -> None:
    palette = sheet.palette
    group = _element_group(sheet.layer("blocks"), "block", block.id, block.designator)
    try:
        eq = block_equivalent(block, freq)
    except CircuitError as e:
        form, caption, colour = block.form, ("no equivalent:", str(e)), palette.error
    else:
        form, caption, colour = drawn_form(eq, block.form), block_caption(eq, block.form,
                                                                          freq), palette.accent
    texts = {"designator": [block.designator], "value": caption}
    _draw_symbol(sheet, group, "block", block.at, block.rotation, block.mirror, style, form=form,
                 texts=texts, colours={"frame": palette.accent, "value": colour})


def _draw_label(sheet: _SvgTree, label: NetLabel, style: str) -> None:
    kind = "ground" if label.style == "ground" else "label"
    name = "ground" if kind == "ground" else label.name
    group = _element_group(sheet.layer("nets"), kind, label.id, name)
    _draw_symbol(sheet, group, kind, label.at, label.rotation, False, style,
                 texts={"name": [label.name]})


def _draw_region(sheet: _SvgTree, region: Region, doc: Document, style: str) -> None:
    outline = list(region.outline) or _outline_around(region, doc, style)
    if len(outline) < 3:
        return
    palette = sheet.palette
    group = _element_group(sheet.layer("regions"), "region", region.id, region.name)
    ET.SubElement(group, "polygon", {"points": _points(outline), "fill": palette.accent_fill,
                                     "stroke": palette.accent})
    xs = [p[0] for p in outline]
    ys = [p[1] for p in outline]
    sheet.grow((min(xs), min(ys), max(xs), max(ys)))
    sheet.text(group, [region.name], (min(xs), min(ys) - 0.7), "e", colour=palette.accent,
               cls="region-name")


def _outline_around(region: Region, doc: Document, style: str) -> list[tuple[float, float]]:
    """A rectangle one grid unit around the members, for a region saved without an outline."""
    members = (doc[m] for m in region.members if m in doc)  # by id: no pass over the sheet
    boxes = [placed_bounds(e.kind, e.at, e.rotation, e.mirror, style=style)
             for e in members if isinstance(e, PlacedPart)]
    if not boxes:
        return []
    x0, y0 = min(b[0] for b in boxes) - 1, min(b[1] for b in boxes) - 1
    x1, y1 = max(b[2] for b in boxes) + 1, max(b[3] for b in boxes) + 1
    return [(x0, y0), (x1, y0), (x1, y1), (x0, y1)]


def _dot(parent: ET.Element, at: tuple[float, float], radius: float, cls: str,
         colour: str) -> None:
    ET.SubElement(parent, "circle", {"class": cls, "cx": _n(at[0]), "cy": _n(at[1]),
                                     "r": _n(radius), "fill": colour, "stroke": "none"})


def document_svg(doc: Document, *, style: str = "iec", title: str | None = None,
                 show_regions: bool = True, freq: float | None = None,
                 palette: Palette = PALETTE) -> str:
    """The SVG 1.1 text of ``doc``.

    ``style``: "iec" (IEC 60617) or "ieee" (IEEE 315) symbols. ``title``: drawn at the top
    (default the document's title). ``show_regions``: outline regions. ``freq``: hertz at which
    collapsed blocks are evaluated (default the document's analysis frequency). Raises
    ValueParseError for an unreadable analysis frequency; a block whose contents cannot be
    solved is drawn with the reason in the error colour instead of its values.
    """
    if style not in STYLES:
        raise ValueParseError(f"style: expected one of {', '.join(STYLES)}, got {style!r}")
    freq_hz = parse_frequency(doc.analysis.freq if freq is None else freq)
    sheet = _SvgTree(palette)
    background = ET.SubElement(sheet.root, "rect", {"class": "paper", "fill": palette.paper})
    ET.SubElement(sheet.root, "title").text = title if title is not None else doc.title
    if show_regions:
        for region in doc.regions():
            _draw_region(sheet, region, doc, style)
    ink = {"stroke": palette.ink, "stroke-width": _n(STROKE_WIDTH), "fill": "none",
           "stroke-linecap": "round", "stroke-linejoin": "round", "font-family": FONT_FAMILY}
    wires = sheet.layer("wires", **ink)
    for wire in doc.wires():
        ET.SubElement(wires, "polyline", {"class": "wire", "id": f"el-{wire.id}",
                                          "points": _points(wire.points)})
        xs, ys = zip(*wire.points, strict=True)
        sheet.grow((min(xs), min(ys), max(xs), max(ys)))
    sheet.layer("parts", **ink)
    placement = Placement.of(doc, style, ac=freq_hz > 0)
    for part in doc.parts():
        _draw_part(sheet, part, style, placement.captions[part.id].values())
    sheet.layer("blocks", **ink)
    for block in doc.blocks():
        _draw_block(sheet, block, style, freq_hz)
    sheet.layer("nets", **ink)
    for label in doc.labels():
        _draw_label(sheet, label, style)
    dots = sheet.layer("dots")
    for at in junction_points(doc):
        _dot(dots, at, JUNCTION_RADIUS, "junction", palette.ink)
    for at in coupling_dots(doc, style):
        _dot(dots, at, COUPLING_DOT_RADIUS, "coupling-dot", palette.ink)
    _heading(sheet, title if title is not None else doc.title, doc, freq_hz)
    _frame(sheet, background)
    text = ET.tostring(sheet.root, "unicode")
    # only text and attribute values can hold such characters: markup never does
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + _NOT_XML.sub("\ufffd", text) + "\n"


def _heading(sheet: _SvgTree, title: str, doc: Document, freq: float) -> None:
    """The title above the drawing, left-aligned with it, and where blocks are shown a line
    with the frequency and basis their values hold at."""
    x0, y0 = _union(sheet.extent)[:2] if sheet.extent else (0.0, 0.0)
    head = ET.SubElement(sheet.root, "g", {"id": "heading", "font-family": FONT_FAMILY})
    baseline = y0 - 1.2
    if doc.blocks():
        note = f"Equivalents at {describe_freq(freq)}, {doc.analysis.basis} values"
        sheet.text(head, [note], (x0, baseline - CAP_HEIGHT * FONT_SIZE / 2), "e",
                   colour=sheet.palette.muted, cls="subtitle")
        baseline -= LINE_PITCH * FONT_SIZE + 0.4
    sheet.text(head, [title], (x0, baseline - CAP_HEIGHT * TITLE_SIZE / 2), "e",
               size=TITLE_SIZE, bold=True, cls="title")


def _union(boxes: list[Bounds]) -> Bounds:
    return (min(b[0] for b in boxes), min(b[1] for b in boxes),
            max(b[2] for b in boxes), max(b[3] for b in boxes))


def _frame(sheet: _SvgTree, background: ET.Element) -> None:
    """Size the viewBox to everything drawn, with a margin, and the paper to the viewBox."""
    x0, y0, x1, y1 = _union(sheet.extent)
    x0, y0, x1, y1 = x0 - MARGIN, y0 - MARGIN, x1 + MARGIN, y1 + MARGIN
    box = {"x": _n(x0), "y": _n(y0), "width": _n(x1 - x0), "height": _n(y1 - y0)}
    sheet.root.set("viewBox", " ".join(box.values()))
    sheet.root.set("width", box["width"])
    sheet.root.set("height", box["height"])
    for key, value in box.items():
        background.set(key, value)
