"""The items that draw a symbol: placed parts, net labels and ground markers, collapsed blocks.

Symbols come from engine.schematic.symbols only (painting.py turns them into paths), caption
texts from engine.schematic.captions, and where a part's captions go from
engine.schematic.placement (the scene keeps one Placement in the :class:`Look`).
"""

from __future__ import annotations

from dataclasses import replace
from functools import cache

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QPainter, QPainterPath, QPen
from PySide6.QtWidgets import (
    QGraphicsItem,
    QGraphicsPathItem,
    QGraphicsSimpleTextItem,
    QStyle,
    QStyleOptionGraphicsItem,
    QWidget,
)

from portcut.engine.errors import CircuitError
from portcut.engine.schematic import Block, Element, PlacedPart
from portcut.engine.schematic.captions import block_caption
from portcut.engine.schematic.placement import part_texts
from portcut.engine.schematic.symbols import FONT_SIZE, STROKE_WIDTH, TextAnchor
from portcut.engine.solve.devices import DEVICE_KINDS, make
from portcut.engine.solve.units import parse_value

from ..theme import Theme
from .element_item import NO_PEN, ElementItem, Look, brush, pen, qt_colour
from .grid import UNIT, to_scene
from .painting import Caption, caption_font, layout, placed_symbol

__all__ = ["BlockItem", "LabelItem", "PartItem", "SymbolItem"]


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
            text.setPen(NO_PEN)
            # drawn from a pixmap kept at the view's scale: laying the text out again at every
            # repaint was the largest part of repainting a crowded sheet (its setters redraw it)
            text.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
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
        self.setPen(pen(colour))
        if self._dash is not None:
            self._dash.setPen(pen(colour, dashed=True))
        if self._fill is not None:
            self._fill.setPen(NO_PEN)
            self._fill.setBrush(brush(colour))
        theme = self.look.theme
        plain = self.preview or self.isSelected()
        roles = {} if plain else self.text_colours(theme)
        for text, role in self._texts:
            text.setBrush(brush(colour if plain else roles.get(role, theme.text)))

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
        """The captions where engine.schematic.placement put them; a part not yet in the
        document (a preview of a new part) has them at its symbol's anchors."""
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
            painter.setPen(QPen(qt_colour(self.look.theme.selection), 0, Qt.PenStyle.DashLine))
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
