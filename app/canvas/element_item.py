"""The base of the canvas items: the :class:`Look` every item draws with, the stacking order,
cached pens and brushes, and :class:`ElementItem`, which shows one document element.

An item keeps the last version of its element it was given (:meth:`ElementItem.sync`) and
derives all geometry from it and the scene's Look; it holds no state of its own.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cache

from PySide6.QtCore import Qt
from PySide6.QtGui import QBrush, QColor, QPen
from PySide6.QtWidgets import QGraphicsItem, QGraphicsPathItem

from portcut.engine.schematic import Element
from portcut.engine.schematic.placement import Placement
from portcut.engine.schematic.symbols import STROKE_WIDTH

from ..theme import LIGHT, Theme
from .grid import UNIT

__all__ = ["NO_PEN", "Z_DOT", "Z_PREVIEW", "Z_REGION", "Z_SYMBOL", "Z_WIRE", "ElementItem", "Look",
           "brush", "element_item", "pen", "qt_colour"]

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
def qt_colour(hex_colour: str) -> QColor:
    """The QColor of a ``#rrggbb`` text, made once."""
    return QColor(hex_colour)


@cache
def pen(hex_colour: str, dashed: bool = False) -> QPen:
    """The stroke pen of every drawn line, in ``hex_colour``, made once."""
    pen = QPen(qt_colour(hex_colour), STROKE_WIDTH * UNIT, Qt.PenStyle.SolidLine,
               Qt.PenCapStyle.RoundCap, Qt.PenJoinStyle.RoundJoin)
    if dashed:
        pen.setStyle(Qt.PenStyle.DashLine)
    return pen


@cache
def brush(hex_colour: str) -> QBrush:
    """A solid brush of ``hex_colour``, made once."""
    return QBrush(qt_colour(hex_colour))


#: The pen of fills and texts, which have no outline.
NO_PEN = QPen(Qt.PenStyle.NoPen)


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
        self.setPen(pen(self.colour()))

    def show_captions(self, shown: bool) -> None:
        """Show or hide the item's texts (those that have any)."""



def element_item(item: QGraphicsItem | None) -> ElementItem | None:
    """The element item that ``item`` is, or belongs to (a caption, a fill)."""
    while item is not None and not isinstance(item, ElementItem):
        item = item.parentItem()
    return item
