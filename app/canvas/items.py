"""Graphics items: one class per kind of document element, each drawing what the document holds.

An item keeps the last version of its element it was given (:meth:`ElementItem.sync`) and
derives all geometry from it, engine.schematic.symbols and the scene's :class:`Look`; it holds no
state of
its own. Items are Qt's native path, text and ellipse items, so painting runs in C++ and Python
is involved only when an element changes; symbols come from engine.schematic.symbols only
(painting.py
turns them into paths), caption texts from engine.schematic.captions and where a part's captions go
from
engine.schematic.placement (the scene keeps one :class:`~engine.schematic.placement.Placement` in
the Look).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field, replace
from functools import cache

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QBrush, QColor, QPainter, QPainterPath, QPen, QPolygonF
from PySide6.QtWidgets import (
    QGraphicsItem,
    QGraphicsPathItem,
    QGraphicsPolygonItem,
    QGraphicsSimpleTextItem,
    QStyle,
    QStyleOptionGraphicsItem,
    QWidget,
)

from portcut.engine.errors import CircuitError
from portcut.engine.schematic import Block, Element, Junction, NetLabel, PlacedPart, Region, Wire
from portcut.engine.schematic.captions import block_caption
from portcut.engine.schematic.placement import Placement, part_texts
from portcut.engine.schematic.symbols import (
    FONT_SIZE,
    JUNCTION_RADIUS,
    STROKE_WIDTH,
    Point,
    TextAnchor,
)
from portcut.engine.solve.devices import DEVICE_KINDS, make
from portcut.engine.solve.units import parse_value

from ..theme import LIGHT, Theme
from .grid import UNIT, to_scene
from .painting import Caption, caption_font, layout, placed_symbol

__all__ = [
    "BlockItem",
    "DotTile",
    "ElementItem",
    "JunctionItem",
    "LabelItem",
    "Look",
    "PartItem",
    "RegionItem",
    "WireItem",
    "element_item",
    "item_for",
]

#: Stacking order: regions under wires under symbols under dots; previews on top.
Z_REGION, Z_WIRE, Z_SYMBOL, Z_DOT, Z_PREVIEW = 0.0, 1.0, 2.0, 3.0, 10.0


@dataclass
class Look:
    """What every item draws with, shared by all items of a scene: colours, symbol style, the
    analysis frequency in hertz (above DC sources caption as phasors, blocks show their values
    there), which inductors a coupling names (they show a coupling dot), and whether captions
    are big enough on screen to be worth drawing."""

    theme: Theme = LIGHT
    style: str = "iec"
    freq: float = 0.0
    coupled: frozenset[str] = field(default_factory=frozenset)
    captions: bool = True
    placement: Placement = field(default_factory=Placement)

    @property
    def ac(self) -> bool:
        return self.freq > 0


@cache
def _colour(hex_colour: str) -> QColor:
    return QColor(hex_colour)


@cache
def _pen(hex_colour: str, dashed: bool = False) -> QPen:
    pen = QPen(_colour(hex_colour), STROKE_WIDTH * UNIT, Qt.PenStyle.SolidLine,
               Qt.PenCapStyle.RoundCap, Qt.PenJoinStyle.RoundJoin)
    if dashed:
        pen.setStyle(Qt.PenStyle.DashLine)
    return pen


@cache
def _brush(hex_colour: str) -> QBrush:
    return QBrush(_colour(hex_colour))


_NO_PEN = QPen(Qt.PenStyle.NoPen)


class ElementItem(QGraphicsPathItem):
    """Base of the items that show one document element. ``preview`` items show an element
    not (yet) in the document: a part being placed, a wire being drawn."""

    Z = Z_SYMBOL

    def __init__(self, element: Element, look: Look, preview: bool = False) -> None:
        super().__init__()
        self.look = look
        self.preview = preview
        self.element = element
        self.setZValue(Z_PREVIEW if preview else self.Z)
        if not preview and self.selectable():
            self.setFlag(QGraphicsItem.GraphicsItemFlag.ItemIsSelectable)
        self.sync(element)

    @property
    def element_id(self) -> str:
        return self.element.id

    def selectable(self) -> bool:
        return True

    def sync(self, element: Element) -> None:
        """Show ``element`` (the document's version, or a gesture's preview of it)."""
        self.element = element
        self.relayout()
        self.recolour()

    def relayout(self) -> None:
        """Recompute the geometry from ``self.element`` and ``self.look``."""
        raise NotImplementedError

    def colour(self) -> str:
        theme = self.look.theme
        if self.preview:
            return theme.preview
        if self.isSelected():
            return theme.selection
        return self.base_colour(theme)

    def base_colour(self, theme: Theme) -> str:
        return theme.stroke

    def recolour(self) -> None:
        """Apply the colours for the current theme and selection (the scene calls this when
        the selection changes)."""
        self.setPen(_pen(self.colour()))

    def show_captions(self, shown: bool) -> None:
        """Show or hide the item's texts (those that have any)."""



def element_item(item: QGraphicsItem | None) -> ElementItem | None:
    """The element item that ``item`` is, or belongs to (a caption, a fill)."""
    while item is not None and not isinstance(item, ElementItem):
        item = item.parentItem()
    return item


class SymbolItem(ElementItem):
    """A drawn symbol: parts, net markers and blocks. Strokes are this item's path; fills,
    dashed outlines, coupling dots and captions are child items."""

    def __init__(self, element: Element, look: Look, preview: bool = False) -> None:
        self._fill: QGraphicsPathItem | None = None   # made when a symbol has fills
        self._dash: QGraphicsPathItem | None = None   # made when it has dashed outlines
        self._texts: list[tuple[QGraphicsSimpleTextItem, str]] = []
        self._body = QRectF()
        super().__init__(element, look, preview)

    def _child_path(self, current: QGraphicsPathItem | None,
                    path: QPainterPath) -> QGraphicsPathItem | None:
        if path.isEmpty() and current is None:
            return None
        if current is None:
            current = QGraphicsPathItem(self)
        current.setPath(path)
        return current

    def relayout(self) -> None:
        kind, form = self.symbol_key()
        rotation, mirror = self.orient()
        placed = placed_symbol(kind, self.look.style, form, rotation, mirror)
        self.setPos(to_scene(self.element.at))
        self.setPath(placed.strokes)
        self._dash = self._child_path(self._dash, placed.dashed)
        self._fill = self._child_path(self._fill, placed.fills_with_dot if self.shows_dot()
                                      else placed.fills)
        captions = self.caption_layout(placed.anchors, rotation, mirror)
        # the body (for picking) stays inside the stroke's bounds, so that Qt's index, which
        # goes by bounds, finds every pick (the pointer's reach covers the edge)
        self._body = placed.strokes.boundingRect()
        self._set_captions(captions)

    def caption_layout(self, anchors: tuple[TextAnchor, ...], rotation: int,
                       mirror: bool) -> list[Caption]:
        """The captions at the symbol's own anchors (item coordinates)."""
        texts = self.texts()
        captions: list[Caption] = []
        for anchor in anchors:
            if texts.get(anchor.role):
                captions += layout(anchor, tuple(texts[anchor.role]), FONT_SIZE, rotation,
                                   mirror)
        return captions

    def _set_captions(self, captions: list[Caption]) -> None:
        """Reuse the caption items (a sync usually changes one text, or none)."""
        while len(self._texts) < len(captions):
            text = QGraphicsSimpleTextItem(self)
            text.setPen(_NO_PEN)
            self._texts.append((text, ""))
        for i, (text, _) in enumerate(self._texts):
            if i < len(captions):
                c = captions[i]
                text.setFont(caption_font(c.size))
                text.setText(c.text)
                text.setPos(c.box.topLeft())
                text.setVisible(self.look.captions)
                self._texts[i] = (text, c.role)
            else:
                text.setVisible(False)
                self._texts[i] = (text, "")

    def show_captions(self, shown: bool) -> None:
        for text, role in self._texts:
            text.setVisible(shown and bool(role))

    def recolour(self) -> None:
        colour = self.colour()
        self.setPen(_pen(colour))
        if self._dash is not None:
            self._dash.setPen(_pen(colour, dashed=True))
        if self._fill is not None:
            self._fill.setPen(_NO_PEN)
            self._fill.setBrush(_brush(colour))
        theme = self.look.theme
        plain = self.preview or self.isSelected()
        roles = {} if plain else self.text_colours(theme)
        for text, role in self._texts:
            text.setBrush(_brush(colour if plain else roles.get(role, theme.text)))

    def symbol_key(self) -> tuple[str, str]:
        """(engine.schematic.symbols kind, block form)."""
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
        """The symbol's body as a solid box, so a click between its strokes still hits it
        (captions and dashed frames are child items and hit on their own)."""
        path = QPainterPath()
        path.addRect(self._body)
        return path

    def caption_role(self, child: QGraphicsItem) -> str:
        """The role of the caption ``child`` ("" when it is not one of this item's captions)."""
        return next((role for text, role in self._texts if text is child and role), "")

    def shift_caption(self, role: str, offset: QPointF) -> None:
        """Draw the caption of ``role`` ``offset`` scene units from where it is laid out (a
        caption being dragged); a relayout puts it back."""
        self.relayout()
        for text, r in self._texts:
            if r == role:
                text.setPos(text.pos() + offset)

    def captions(self) -> list[str]:
        """The texts shown beside the symbol."""
        return [text.text() for text, role in self._texts if role]


def _valued(part: PlacedPart) -> PlacedPart:
    """The part reduced to what its caption depends on, so sheets that repeat values (most
    do) read each value once."""
    return PlacedPart("", part.kind, "", (0, 0), value=part.value, phase_deg=part.phase_deg,
                      control=part.control, tolerance=part.tolerance, params=part.params)


@cache
def _texts(valued: PlacedPart, ac: bool) -> dict[str, tuple[str, ...]]:
    return part_texts(valued, ac=ac)


@cache
def _readable(part: PlacedPart) -> bool:
    """Whether the part's value (and phase) can be read; an op-amp needs none."""
    if part.kind == "opamp":
        return True
    try:
        if part.kind in DEVICE_KINDS:  # complete and consistent, or drawn as at fault
            make(part.designator or part.kind, part.kind, ("a", "b", "c")[:len(
                DEVICE_KINDS[part.kind])], {k: v for k, v in part.params if v.strip()})
            return True
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
        valued = replace(_valued(part), designator=part.designator, couples=part.couples)
        return {role: list(lines) for role, lines in _texts(valued, self.look.ac).items()}

    def caption_layout(self, anchors: tuple[TextAnchor, ...], rotation: int,
                       mirror: bool) -> list[Caption]:
        """The captions where engine.schematic.placement put them; a part not yet in the document (a
        preview of a new part) has them at its symbol's anchors."""
        placed = None if self.preview else self.look.placement.around(self.element.id)
        if placed is None:
            return super().caption_layout(anchors, rotation, mirror)
        return [c for p in placed
                for c in layout(TextAnchor(p.role, p.at, p.align), p.lines, FONT_SIZE)]

    def text_colours(self, theme: Theme) -> dict[str, str]:
        return {"value": theme.value if _readable(_valued(self.element)) else theme.error}

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

    def __init__(self, element: Element, look: Look, preview: bool = False) -> None:
        self._frame = QRectF()
        super().__init__(element, look, preview)

    def symbol_key(self) -> tuple[str, str]:
        return "block", self.element.form

    def base_colour(self, theme: Theme) -> str:
        return theme.accent

    def relayout(self) -> None:
        super().relayout()
        frame = self._dash.path().boundingRect() if self._dash is not None else QRectF()
        pad = STROKE_WIDTH * UNIT / 2
        self.prepareGeometryChange()
        self._frame = frame.adjusted(-pad, -pad, pad, pad)
        self._body = self._body.united(frame)  # a click anywhere inside the frame picks it

    def boundingRect(self) -> QRectF:
        return super().boundingRect().united(self._frame)

    def paint(self, painter: QPainter, option: QStyleOptionGraphicsItem,
              widget: QWidget | None = None) -> None:
        """The strokes, and when selected the selection mark on the dashed frame itself rather
        than around the strokes' bounds, so the mark and the block coincide."""
        plain = QStyleOptionGraphicsItem(option)
        plain.state &= ~QStyle.StateFlag.State_Selected
        super().paint(painter, plain, widget)
        if option.state & QStyle.StateFlag.State_Selected:
            painter.setPen(QPen(_colour(self.look.theme.selection), 0, Qt.PenStyle.DashLine))
            painter.setBrush(Qt.BrushStyle.NoBrush)
            painter.drawRect(self._frame)

    def texts(self) -> dict[str, list[str]]:
        from portcut.engine.schematic.connectivity import block_equivalent

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
        self.setPen(_NO_PEN)
        self.setBrush(_brush(self.colour()))


class DotTile(QGraphicsPathItem):
    """The computed junction dots (where three or more connections meet) of one square tile of
    the sheet, drawn as one path. Not elements: the scene works them out from the sheet's
    geometry; tiles keep a change local and the item count small on big sheets."""

    def __init__(self, look: Look) -> None:
        super().__init__()
        self.setZValue(Z_DOT)
        self.setPen(_NO_PEN)
        self.recolour(look)

    def set_dots(self, points: Iterable[Point]) -> None:
        path = QPainterPath()
        for p in points:
            path.addEllipse(_dot_rect(p))
        self.setPath(path)

    def recolour(self, look: Look) -> None:
        self.setBrush(_brush(look.theme.stroke))


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
        self._outline.setPen(_pen(colour, dashed=True))
        self._outline.setBrush(_brush(self.look.theme.accent_fill))
        self._name.setBrush(_brush(colour))

    def show_captions(self, shown: bool) -> None:
        self._name.setVisible(shown)


_ITEM_CLASS: dict[type, type[ElementItem]] = {
    PlacedPart: PartItem, NetLabel: LabelItem, Block: BlockItem, Wire: WireItem,
    Junction: JunctionItem, Region: RegionItem,
}


def item_for(element: Element, look: Look, preview: bool = False) -> ElementItem:
    """A new item of the class that draws ``element``."""
    return _ITEM_CLASS[type(element)](element, look, preview)
