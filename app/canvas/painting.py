"""Qt paths and text layout for engine.schematic.symbols drawings; no geometry of its own.

Symbol shapes become cached QPainterPaths in the symbol's local frame (scene units); a placed
symbol is drawn through :func:`orientation`, and its texts stay upright at the anchors that
engine.schematic.symbols.place and text_baselines give, exactly as the SVG writer sets them.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache

from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QFont, QFontMetricsF, QPainterPath, QTransform

from portcut.engine.schematic.symbols import (
    COUPLING_DOT_RADIUS,
    MARK_FONT_SIZE,
    MARK_TEXT,
    Arc,
    Circle,
    Line,
    Polygon,
    TextAnchor,
    place,
    symbol,
    text_baselines,
    transform,
)

from .grid import UNIT

__all__ = ["Caption", "PlacedSymbol", "SymbolPaths", "caption_font", "layout", "orientation",
           "placed_symbol", "symbol_paths"]


@dataclass(frozen=True)
class SymbolPaths:
    """A symbol's shapes as paths in its local frame: stroked, filled with the stroke colour,
    and stroked dashed."""

    strokes: QPainterPath
    fills: QPainterPath
    dashed: QPainterPath


@cache
def symbol_paths(kind: str, style: str, form: str = "thevenin") -> SymbolPaths:
    strokes, fills, dashed = QPainterPath(), QPainterPath(), QPainterPath()
    for shape in symbol(kind, style, form).shapes:
        if isinstance(shape, Line):
            (x, y), *rest = shape.points
            strokes.moveTo(x * UNIT, y * UNIT)
            for x, y in rest:
                strokes.lineTo(x * UNIT, y * UNIT)
        elif isinstance(shape, Arc):
            (cx, cy), r = shape.center, shape.radius
            box = QRectF((cx - r) * UNIT, (cy - r) * UNIT, 2 * r * UNIT, 2 * r * UNIT)
            # Qt's arc angles, like engine.schematic.symbols', are counterclockwise on screen from
            # +x
            strokes.arcMoveTo(box, shape.start_deg)
            strokes.arcTo(box, shape.start_deg, shape.span_deg)
        elif isinstance(shape, Circle):
            target = fills if shape.filled else strokes
            centre = QPointF(shape.center[0] * UNIT, shape.center[1] * UNIT)
            target.addEllipse(centre, shape.radius * UNIT, shape.radius * UNIT)
            if shape.filled:
                strokes.addEllipse(centre, shape.radius * UNIT, shape.radius * UNIT)
        elif isinstance(shape, Polygon):
            path = QPainterPath()
            (x, y), *rest = shape.points
            path.moveTo(x * UNIT, y * UNIT)
            for x, y in rest:
                path.lineTo(x * UNIT, y * UNIT)
            path.closeSubpath()
            (dashed if shape.dashed else strokes).addPath(path)
            if shape.filled:
                fills.addPath(path)
    return SymbolPaths(strokes, fills, dashed)


@cache
def orientation(rotation: int, mirror: bool) -> QTransform:
    """The linear map of engine.schematic.symbols.transform (mirror x, then turn clockwise) as a
    QTransform, for painting a symbol's local paths on the sheet."""
    ex, ey = transform((1, 0), rotation, mirror), transform((0, 1), rotation, mirror)
    return QTransform(ex[0], ex[1], ey[0], ey[1], 0.0, 0.0)


@cache
def caption_font(size: float) -> QFont:
    """The font for text of ``size`` grid units (such as engine.schematic.symbols.FONT_SIZE)."""
    font = QFont()
    font.setPixelSize(round(size * UNIT))
    return font


@cache
def _metrics(size: float) -> QFontMetricsF:
    return QFontMetricsF(caption_font(size))


@dataclass(frozen=True)
class Caption:
    """One line of upright text in item coordinates: its baseline start and its box."""

    text: str
    origin: QPointF
    box: QRectF
    size: float
    role: str


@cache
def layout(anchor: TextAnchor, lines: tuple[str, ...], size: float, rotation: int = 0,
           mirror: bool = False) -> tuple[Caption, ...]:
    """Captions for ``lines`` at a symbol's anchor once placed with ``rotation``/``mirror``
    (relative to the symbol's origin, in scene units). Cached: sheets repeat their values."""
    placed = place(anchor, (0, 0), rotation, mirror)
    how, baselines = text_baselines(placed.at, placed.align, len(lines), size)
    metrics = _metrics(size)
    out = []
    for text, (x, y) in zip(lines, baselines, strict=True):
        width = metrics.horizontalAdvance(text)
        left = x * UNIT - {"start": 0.0, "middle": width / 2, "end": width}[how]
        origin = QPointF(left, y * UNIT)
        box = QRectF(left, y * UNIT - metrics.ascent(), width, metrics.height())
        out.append(Caption(text, origin, box, size, anchor.role))
    return tuple(out)


@dataclass(frozen=True)
class PlacedSymbol:
    """A symbol turned for one rotation and mirror, relative to its origin (scene units):
    strokes, dashed strokes, fills (polarity marks included, as outlines of their text), the
    fills with the coupling dot added, and the anchors of its designator, value and name."""

    strokes: QPainterPath
    dashed: QPainterPath
    fills: QPainterPath
    fills_with_dot: QPainterPath
    anchors: tuple[TextAnchor, ...]


@cache
def placed_symbol(kind: str, style: str, form: str, rotation: int,
                  mirror: bool) -> PlacedSymbol:
    """Cached: a sheet has few distinct (kind, orientation) pairs."""
    paths = symbol_paths(kind, style, form)
    xform = orientation(rotation, mirror)
    fills = xform.map(paths.fills)
    with_dot = QPainterPath(fills)
    texts = []
    for anchor in symbol(kind, style, form).anchors:
        if anchor.role in MARK_TEXT:
            for c in layout(anchor, (MARK_TEXT[anchor.role],), MARK_FONT_SIZE, rotation, mirror):
                fills.addText(c.origin, caption_font(c.size), c.text)
                with_dot.addText(c.origin, caption_font(c.size), c.text)
        elif anchor.role == "dot":
            x, y = xform.map(anchor.at[0] * UNIT, anchor.at[1] * UNIT)
            r = COUPLING_DOT_RADIUS * UNIT
            with_dot.addEllipse(QPointF(x, y), r, r)
        else:
            texts.append(anchor)
    return PlacedSymbol(xform.map(paths.strokes), xform.map(paths.dashed), fills, with_dot,
                        tuple(texts))
