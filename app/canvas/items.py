"""Graphics items: one class per kind of document element, each drawing what the document holds.

Items are Qt's native path, text and ellipse items, so painting runs in C++ and Python is
involved only when an element changes. The base and the :class:`Look` are in element_item.py,
the symbol items (parts, labels, blocks) in symbol_items.py; this module holds the wires, dots
and regions, and :func:`item_for`, which picks the class for an element.
"""

from __future__ import annotations

from collections.abc import Iterable

from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QPainterPath, QPolygonF
from PySide6.QtWidgets import QGraphicsPathItem, QGraphicsPolygonItem, QGraphicsSimpleTextItem

from portcut.engine.schematic import Block, Element, Junction, NetLabel, PlacedPart, Region, Wire
from portcut.engine.schematic.symbols import FONT_SIZE, JUNCTION_RADIUS, Point

from ..theme import Theme
from .element_item import (
    NO_PEN,
    Z_DOT,
    Z_PREVIEW,
    Z_REGION,
    Z_SYMBOL,
    Z_WIRE,
    ElementItem,
    Look,
    brush,
    element_item,
    pen,
)
from .grid import UNIT, to_scene
from .painting import caption_font
from .symbol_items import BlockItem, LabelItem, PartItem, SymbolItem

__all__ = [
    "Z_DOT",
    "Z_PREVIEW",
    "Z_REGION",
    "Z_SYMBOL",
    "Z_WIRE",
    "BlockItem",
    "DotTile",
    "ElementItem",
    "JunctionItem",
    "LabelItem",
    "Look",
    "PartItem",
    "RegionItem",
    "SymbolItem",
    "WireItem",
    "element_item",
    "item_for",
]


class WireItem(ElementItem):
    """An orthogonal polyline."""

    Z = Z_WIRE

    def relayout(self) -> None:
        path = QPainterPath()
        first, *rest = self.element.points
        path.moveTo(to_scene(first))
        for p in rest:
            path.lineTo(to_scene(p))
        self.setPath(path)


def _dot_rect(at: Point) -> QRectF:
    r = JUNCTION_RADIUS * UNIT
    c = to_scene(at)
    return QRectF(c.x() - r, c.y() - r, 2 * r, 2 * r)


class JunctionItem(ElementItem):
    """An explicit junction element: a dot that joins every wire through its point."""

    Z = Z_DOT

    def relayout(self) -> None:
        path = QPainterPath()
        path.addEllipse(_dot_rect(self.element.at))
        self.setPath(path)

    def recolour(self) -> None:
        self.setPen(NO_PEN)
        self.setBrush(brush(self.colour()))


class DotTile(QGraphicsPathItem):
    """The computed junction dots (where three or more connections meet) of one square tile of
    the sheet, drawn as one path. Not elements: the scene works them out from the sheet's
    geometry; tiles keep a change local and the item count small on big sheets."""

    def __init__(self, look: Look) -> None:
        super().__init__()
        self.setZValue(Z_DOT)
        self.setPen(NO_PEN)
        self.recolour(look)

    def set_dots(self, points: Iterable[Point]) -> None:
        path = QPainterPath()
        for p in points:
            path.addEllipse(_dot_rect(p))
        self.setPath(path)

    def recolour(self, look: Look) -> None:
        self.setBrush(brush(look.theme.stroke))


class RegionItem(ElementItem):
    """A region's outline with a light fill, in the accent colour, and its name.

    Not selectable here: choosing regions belongs to the boundary tool, and a click inside
    reaches the parts."""

    Z = Z_REGION

    def __init__(self, element: Element, look: Look, preview: bool = False) -> None:
        self._outline = QGraphicsPolygonItem()
        self._name = QGraphicsSimpleTextItem()
        super().__init__(element, look, preview)
        self._outline.setParentItem(self)
        self._name.setParentItem(self)
        self._name.setFont(caption_font(FONT_SIZE))

    def selectable(self) -> bool:
        return False

    def base_colour(self, theme: Theme) -> str:
        return theme.accent

    def relayout(self) -> None:
        region: Region = self.element
        polygon = QPolygonF([QPointF(x * UNIT, y * UNIT) for x, y in region.outline])
        self._outline.setPolygon(polygon)
        self._name.setText(region.name)
        if polygon.size():
            top = min(polygon, key=lambda p: (p.y(), p.x()))
            self._name.setPos(top + QPointF(0, -1.6 * UNIT))

    def recolour(self) -> None:
        colour = self.colour()
        self._outline.setPen(pen(colour, dashed=True))
        self._outline.setBrush(brush(self.look.theme.accent_fill))
        self._name.setBrush(brush(colour))

    def show_captions(self, shown: bool) -> None:
        self._name.setVisible(shown)


_ITEM_CLASS: dict[type, type[ElementItem]] = {
    PlacedPart: PartItem, NetLabel: LabelItem, Block: BlockItem, Wire: WireItem,
    Junction: JunctionItem, Region: RegionItem,
}


def item_for(element: Element, look: Look, preview: bool = False) -> ElementItem:
    """A new item of the class that draws ``element``."""
    return _ITEM_CLASS[type(element)](element, look, preview)
