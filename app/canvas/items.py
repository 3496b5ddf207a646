"""Graphics items: one class per kind of document element, each drawing what the document holds.

An item keeps the id of its element and the last version it was given (:meth:`ElementItem.sync`);
it derives all geometry from that element, engine.symbols and the scene's :class:`Look`, and
holds no state of its own. Symbols come from engine.symbols only (painting.py turns them into Qt
paths); captions from engine.captions.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import (
    QBrush,
    QColor,
    QPainter,
    QPainterPath,
    QPainterPathStroker,
    QPen,
    QPolygonF,
)
from PySide6.QtWidgets import QGraphicsItem, QStyleOptionGraphicsItem, QWidget

from engine.captions import block_caption, value_caption
from engine.errors import CircuitError
from engine.schematic import Block, Element, Junction, NetLabel, PlacedPart, Region, Wire
from engine.symbols import (
    COUPLING_DOT_RADIUS,
    FONT_SIZE,
    JUNCTION_RADIUS,
    MARK_FONT_SIZE,
    MARK_TEXT,
    STROKE_WIDTH,
    Point,
    symbol,
)
from engine.units import parse_value

from ..theme import LIGHT, Theme, qcolor
from .grid import UNIT, to_scene
from .painting import Caption, caption_font, layout, orientation, symbol_paths

__all__ = [
    "BlockItem",
    "DotItem",
    "ElementItem",
    "JunctionItem",
    "LabelItem",
    "Look",
    "PartItem",
    "RegionItem",
    "WireItem",
    "item_for",
]

#: Stacking order: regions under wires under symbols under dots; previews on top.
Z_REGION, Z_WIRE, Z_SYMBOL, Z_DOT, Z_PREVIEW = 0.0, 1.0, 2.0, 3.0, 10.0
#: Smallest on-screen text height (device pixels) still worth drawing.
_MIN_TEXT_PX = 3.0
_PICK_WIDTH = 0.7 * UNIT  # how wide a wire is for the mouse


@dataclass
class Look:
    """What every item draws with, shared by all items of a scene: colours, symbol style, the
    analysis frequency in hertz (above DC sources caption as phasors, blocks show their values
    there), and which inductors a coupling names (they show a coupling dot)."""

    theme: Theme = LIGHT
    style: str = "iec"
    freq: float = 0.0
    coupled: frozenset[str] = field(default_factory=frozenset)

    @property
    def ac(self) -> bool:
        return self.freq > 0


def _pen(colour: QColor, dashed: bool = False) -> QPen:
    pen = QPen(colour, STROKE_WIDTH * UNIT, Qt.PenStyle.SolidLine, Qt.PenCapStyle.RoundCap,
               Qt.PenJoinStyle.RoundJoin)
    if dashed:
        pen.setStyle(Qt.PenStyle.DashLine)
    return pen


def _text_visible(painter: QPainter, option: QStyleOptionGraphicsItem) -> bool:
    lod = option.levelOfDetailFromTransform(painter.worldTransform())
    return lod * FONT_SIZE * UNIT >= _MIN_TEXT_PX


def _paint_captions(painter: QPainter, captions: list[Caption], colours: dict[str, QColor],
                    fallback: QColor) -> None:
    for c in captions:
        painter.setFont(caption_font(c.size))
        painter.setPen(colours.get(c.role, fallback))
        painter.drawText(c.origin, c.text)


class ElementItem(QGraphicsItem):
    """Base of the items that show one document element. ``preview`` items show an element
    not (yet) in the document: a part being placed, a wire being drawn."""

    Z = Z_SYMBOL

    def __init__(self, element: Element, look: Look, preview: bool = False) -> None:
        super().__init__()
        self.look = look
        self.preview = preview
        self.element = element
        self._bounds = QRectF()
        self.setZValue(Z_PREVIEW if preview else self.Z)
        if not preview:
            self.setFlag(QGraphicsItem.GraphicsItemFlag.ItemIsSelectable)
        self.sync(element)

    @property
    def element_id(self) -> str:
        return self.element.id

    def sync(self, element: Element) -> None:
        """Show ``element`` (the document's version, or a gesture's preview of it)."""
        self.prepareGeometryChange()
        self.element = element
        self.relayout()
        self.update()

    def relayout(self) -> None:
        """Recompute the geometry from ``self.element`` and ``self.look``."""
        raise NotImplementedError

    def colour(self) -> QColor:
        theme = self.look.theme
        if self.preview:
            return qcolor(theme.preview)
        if self.isSelected():
            return qcolor(theme.selection)
        return qcolor(self.base_colour(theme))

    def base_colour(self, theme: Theme) -> str:
        return theme.stroke

    def boundingRect(self) -> QRectF:
        return self._bounds


class SymbolItem(ElementItem):
    """A drawn symbol: parts, net markers and blocks."""

    def relayout(self) -> None:
        kind, form = self.symbol_key()
        rotation, mirror = self.orient()
        self._paths = symbol_paths(kind, self.look.style, form)
        self._xform = orientation(rotation, mirror)
        self.setPos(to_scene(self.element.at))
        sym = symbol(kind, self.look.style, form)
        texts = self.texts()
        captions: list[Caption] = []
        self._dots: list[QPointF] = []
        for anchor in sym.anchors:
            if anchor.role in MARK_TEXT:
                captions += layout(anchor, [MARK_TEXT[anchor.role]], MARK_FONT_SIZE,
                                   rotation, mirror)
            elif anchor.role == "dot":
                if self.shows_dot():
                    x, y = self._xform.map(anchor.at[0] * UNIT, anchor.at[1] * UNIT)
                    self._dots.append(QPointF(x, y))
            elif texts.get(anchor.role):
                captions += layout(anchor, texts[anchor.role], FONT_SIZE, rotation, mirror)
        self._captions = captions
        body = self._xform.mapRect(self._paths.strokes.boundingRect()
                                   | self._paths.dashed.boundingRect())
        self._body = body
        bounds = body.adjusted(-UNIT, -UNIT, UNIT, UNIT)
        for c in captions:
            bounds |= c.box
        self._bounds = bounds

    def symbol_key(self) -> tuple[str, str]:
        """(engine.symbols kind, block form)."""
        raise NotImplementedError

    def orient(self) -> tuple[int, bool]:
        return self.element.rotation, self.element.mirror

    def texts(self) -> dict[str, list[str]]:
        """Lines of text per anchor role (designator, value, name)."""
        return {}

    def text_colours(self, theme: Theme) -> dict[str, str]:
        return {"value": theme.value}

    def shows_dot(self) -> bool:
        return False

    def shape(self) -> QPainterPath:
        path = QPainterPath()
        path.addRect(self._body.adjusted(-0.3 * UNIT, -0.3 * UNIT, 0.3 * UNIT, 0.3 * UNIT))
        for c in self._captions:
            path.addRect(c.box)
        return path

    def paint(self, painter: QPainter, option: QStyleOptionGraphicsItem,
              widget: QWidget | None = None) -> None:
        colour = self.colour()
        painter.save()
        painter.setTransform(self._xform, True)
        painter.setPen(_pen(colour))
        painter.setBrush(Qt.BrushStyle.NoBrush)
        painter.drawPath(self._paths.strokes)
        if not self._paths.dashed.isEmpty():
            painter.setPen(_pen(colour, dashed=True))
            painter.drawPath(self._paths.dashed)
        if not self._paths.fills.isEmpty():
            painter.fillPath(self._paths.fills, QBrush(colour))
        painter.restore()
        painter.setPen(Qt.PenStyle.NoPen)
        painter.setBrush(QBrush(colour))
        for dot in self._dots:
            painter.drawEllipse(dot, COUPLING_DOT_RADIUS * UNIT, COUPLING_DOT_RADIUS * UNIT)
        if _text_visible(painter, option):
            theme = self.look.theme
            plain = self.preview or self.isSelected()
            colours = {} if plain else {k: qcolor(v)
                                        for k, v in self.text_colours(theme).items()}
            default = colour if plain else qcolor(theme.text)
            if not plain:
                colours.update({role: colour for role in MARK_TEXT})
            _paint_captions(painter, self._captions, colours, default)


def _readable(part: PlacedPart) -> bool:
    """Whether the part's value (and phase) can be read; an op-amp needs none."""
    if part.kind == "opamp":
        return True
    try:
        parse_value(part.value)
        if part.phase_deg.strip():
            parse_value(part.phase_deg)
    except CircuitError:
        return False
    return True


class PartItem(SymbolItem):
    """A placed part: symbol, designator, value caption; the value in the error colour when it
    cannot be read; a coupling dot on an inductor that a coupling names."""

    def symbol_key(self) -> tuple[str, str]:
        return self.element.kind, "thevenin"

    def texts(self) -> dict[str, list[str]]:
        part: PlacedPart = self.element
        value = value_caption(part, ac=self.look.ac)
        if not value and part.kind != "opamp":
            value = "no value"
        if part.kind == "coupling" and part.couples:
            return {"designator": [part.designator], "value": [value, " · ".join(part.couples)]}
        return {"designator": [part.designator], "value": [value] if value else []}

    def text_colours(self, theme: Theme) -> dict[str, str]:
        return {"value": theme.value if _readable(self.element) else theme.error}

    def shows_dot(self) -> bool:
        return self.element.kind == "inductor" and self.element.designator in self.look.coupled


class LabelItem(SymbolItem):
    """A net label (its name beside a tag) or a ground marker."""

    def symbol_key(self) -> tuple[str, str]:
        return ("ground" if self.element.style == "ground" else "label"), "thevenin"

    def orient(self) -> tuple[int, bool]:
        return self.element.rotation, False

    def texts(self) -> dict[str, list[str]]:
        return {"name": [self.element.name]}


class BlockItem(SymbolItem):
    """A collapsed region drawn as its equivalent, in the accent colour, with its values at the
    document's analysis frequency (or the reason it has none)."""

    def symbol_key(self) -> tuple[str, str]:
        return "block", self.element.form

    def base_colour(self, theme: Theme) -> str:
        return theme.accent

    def texts(self) -> dict[str, list[str]]:
        from engine.schematic.connectivity import block_equivalent

        block: Block = self.element
        try:
            eq = block_equivalent(block, self.look.freq)
            lines = list(block_caption(eq, block.form, self.look.freq))
        except CircuitError as exc:
            lines = [str(exc)]
        return {"designator": [block.designator], "value": lines}

    def text_colours(self, theme: Theme) -> dict[str, str]:
        return {"value": theme.accent, "designator": theme.accent}


class WireItem(ElementItem):
    """An orthogonal polyline."""

    Z = Z_WIRE

    def relayout(self) -> None:
        path = QPainterPath()
        first, *rest = self.element.points
        path.moveTo(to_scene(first))
        for p in rest:
            path.lineTo(to_scene(p))
        self._path = path
        stroker = QPainterPathStroker()
        stroker.setWidth(_PICK_WIDTH)
        stroker.setCapStyle(Qt.PenCapStyle.RoundCap)
        self._shape = stroker.createStroke(path)
        self._bounds = self._shape.boundingRect()

    def shape(self) -> QPainterPath:
        return self._shape

    def paint(self, painter: QPainter, option: QStyleOptionGraphicsItem,
              widget: QWidget | None = None) -> None:
        painter.setPen(_pen(self.colour()))
        painter.drawPath(self._path)


def _dot_rect(at: Point) -> QRectF:
    r = JUNCTION_RADIUS * UNIT
    c = to_scene(at)
    return QRectF(c.x() - r, c.y() - r, 2 * r, 2 * r)


class JunctionItem(ElementItem):
    """An explicit junction element: a dot that joins every wire through its point."""

    Z = Z_DOT

    def relayout(self) -> None:
        self._dot = _dot_rect(self.element.at)
        self._bounds = self._dot.adjusted(-2, -2, 2, 2)

    def shape(self) -> QPainterPath:
        path = QPainterPath()
        path.addEllipse(self._dot.adjusted(-0.2 * UNIT, -0.2 * UNIT, 0.2 * UNIT, 0.2 * UNIT))
        return path

    def paint(self, painter: QPainter, option: QStyleOptionGraphicsItem,
              widget: QWidget | None = None) -> None:
        painter.setPen(Qt.PenStyle.NoPen)
        painter.setBrush(self.colour())
        painter.drawEllipse(self._dot)


class DotItem(QGraphicsItem):
    """A computed junction dot where three or more connections meet (not an element: the
    scene places and removes these from the sheet's geometry)."""

    def __init__(self, at: Point, look: Look) -> None:
        super().__init__()
        self.look = look
        self.at = at
        self._dot = _dot_rect(at)
        self.setZValue(Z_DOT)

    def boundingRect(self) -> QRectF:
        return self._dot

    def paint(self, painter: QPainter, option: QStyleOptionGraphicsItem,
              widget: QWidget | None = None) -> None:
        painter.setPen(Qt.PenStyle.NoPen)
        painter.setBrush(qcolor(self.look.theme.stroke))
        painter.drawEllipse(self._dot)


class RegionItem(ElementItem):
    """A region's outline with a light fill, in the accent colour, and its name."""

    Z = Z_REGION

    def __init__(self, element: Element, look: Look, preview: bool = False) -> None:
        super().__init__(element, look, preview)
        # choosing regions belongs to the boundary tool; a click here reaches the parts inside
        self.setFlag(QGraphicsItem.GraphicsItemFlag.ItemIsSelectable, False)

    def base_colour(self, theme: Theme) -> str:
        return theme.accent

    def relayout(self) -> None:
        region: Region = self.element
        self._polygon = QPolygonF([QPointF(x * UNIT, y * UNIT) for x, y in region.outline])
        self._bounds = self._polygon.boundingRect().adjusted(-UNIT, -2 * UNIT, UNIT, UNIT)

    def paint(self, painter: QPainter, option: QStyleOptionGraphicsItem,
              widget: QWidget | None = None) -> None:
        colour = self.colour()
        painter.setPen(_pen(colour, dashed=True))
        painter.setBrush(qcolor(self.look.theme.accent_fill))
        painter.drawPolygon(self._polygon)
        if self._polygon.size() and _text_visible(painter, option):
            top = min(self._polygon, key=lambda p: (p.y(), p.x()))
            painter.setFont(caption_font(FONT_SIZE))
            painter.setPen(colour)
            painter.drawText(top + QPointF(0, -0.4 * UNIT), self.element.name)


_ITEM_CLASS: dict[type, type[ElementItem]] = {
    PlacedPart: PartItem, NetLabel: LabelItem, Block: BlockItem, Wire: WireItem,
    Junction: JunctionItem, Region: RegionItem,
}


def item_for(element: Element, look: Look, preview: bool = False) -> ElementItem:
    """A new item of the class that draws ``element``."""
    return _ITEM_CLASS[type(element)](element, look, preview)
