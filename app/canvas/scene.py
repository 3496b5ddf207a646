"""The scene: the document drawn, one item per element, following every Change.

Only the items named in a Change are touched; the sheet index (app/sheet.py) and the computed
junction dots are updated around the points those elements touch, so an edit of one part costs
the same on a sheet of ten parts or of thousands.
"""

from __future__ import annotations

from collections.abc import Iterable

from PySide6.QtCore import QLineF, QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QPainter, QPen
from PySide6.QtWidgets import QGraphicsEllipseItem, QGraphicsItem, QGraphicsScene

from portcut.engine.schematic import Change, Document, Element, PlacedPart
from portcut.engine.schematic.placement import Placement
from portcut.engine.schematic.symbols import Point

from ..sheet import SheetIndex
from ..theme import qcolor
from .grid import UNIT
from .items import Z_PREVIEW, DotTile, ElementItem, Look, PartItem, element_item, item_for

__all__ = ["SchematicScene"]

#: Room around the drawing, grid units, so the view can always scroll past the edges.
_MARGIN = 60.0
_EMPTY_SHEET = QRectF(-30 * UNIT, -20 * UNIT, 60 * UNIT, 40 * UNIT)
#: Side of the square tiles (grid units) whose junction dots are drawn together: a dot that
#: comes or goes repaints its tile, so a move repaints at most 8 × 8 units of dots (tiles of 32
#: made a nudge's repaint twice as long; smaller ones add items to every whole-sheet frame).
_TILE = 8
#: Grid lines closer than this on screen (device pixels) are thinned out.
_MIN_GRID_PX = 7.0


#: Radius (grid units) of the ring that marks where a move would join nets.
_JOIN_RING = 0.6


class SchematicScene(QGraphicsScene):
    """Items for every element of ``doc``; ``look`` is shared with every item."""

    def __init__(self, doc: Document, look: Look | None = None, parent=None) -> None:
        super().__init__(parent)
        self.look = look or Look()
        self.grid_step = 1
        self.doc = doc
        self.index = SheetIndex()
        self._items: dict[str, ElementItem] = {}
        self._dots: dict[tuple[int, int], set[Point]] = {}   # by tile
        self._tiles: dict[tuple[int, int], DotTile] = {}
        self._couplings: dict[str, tuple[str, ...]] = {}
        self._previewed: set[str] = set()
        self._preview_items: list[QGraphicsItem] = []
        self._extent = QRectF(_EMPTY_SHEET)
        self._unsubscribe = lambda: None
        self._selected: set[ElementItem] = set()
        self.selectionChanged.connect(self._recolour_selection)
        self.set_document(doc)

    def _recolour_selection(self) -> None:
        now = {i for i in self.selectedItems() if isinstance(i, ElementItem)}
        for item in now ^ self._selected:
            item.recolour()
        self._selected = now

    # -- the document -------------------------------------------------------------------------
    def set_document(self, doc: Document) -> None:
        """Show another document (a file opened, a new sheet)."""
        self._unsubscribe()
        self._selected = set()
        self.clear()
        self._items.clear()
        self._dots.clear()
        self._tiles.clear()
        self._previewed.clear()
        self._preview_items.clear()  # clear() removed them
        self.doc = doc
        self.index = SheetIndex(doc)
        self.look.placement = Placement.of(doc, self.look.style, self.look.ac)
        self._couplings = {p.id: p.couples for p in doc.parts() if p.kind == "coupling"}
        self.look.coupled = self._coupled()
        self.look.freq = doc.frequency()
        for element in doc:
            self._add_item(element)
        self._update_dots(self.index.points_of_interest())
        self._extent = QRectF(_EMPTY_SHEET)
        for item in self._items.values():
            self._extent |= item.sceneBoundingRect()
        self._apply_extent()
        self._unsubscribe = doc.subscribe(self._on_change)

    def _add_item(self, element: Element) -> ElementItem:
        item = item_for(element, self.look)
        self._items[element.id] = item
        self.addItem(item)
        return item

    def _on_change(self, change: Change) -> None:
        self.end_preview()
        if change.analysis:
            self.look.freq = self.doc.frequency()
        recaptioned = self.look.placement.update(
            self.doc, (*change.removed, *change.updated, *change.added))
        touched: set[Point] = set()
        couplings_before = dict(self._couplings)
        renamed_inductor = False
        for eid in change.removed:
            old = self.index.remove(eid)
            touched |= self.index.touch_points(old)
            self._couplings.pop(eid, None)
            gone = self._items.pop(eid)
            self._selected.discard(gone)
            self.removeItem(gone)
        for eid in change.updated:
            old = self.index.remove(eid)
            new = self.doc[eid]
            touched |= self.index.touch_points(old)
            self.index.add(new)
            touched |= self.index.touch_points(new)
            renamed_inductor |= _renamed_inductor(old, new)
            self._track_coupling(new)
            self._items[eid].sync(new)
            self._extent |= self._items[eid].sceneBoundingRect()
        for eid in change.added:
            new = self.doc[eid]
            self.index.add(new)
            touched |= self.index.touch_points(new)
            self._track_coupling(new)
            self._extent |= self._add_item(new).sceneBoundingRect()
        for eid in recaptioned.difference(change.updated, change.added):
            if eid in self._items:
                self._items[eid].relayout()
        self._update_dots(touched)
        if self._couplings != couplings_before or renamed_inductor:
            self._refresh_coupled()
        if change.analysis:
            self.relayout()
        self._apply_extent()

    def _track_coupling(self, element: Element) -> None:
        if isinstance(element, PlacedPart) and element.kind == "coupling":
            self._couplings[element.id] = element.couples

    def _coupled(self) -> frozenset[str]:
        return frozenset(name for names in self._couplings.values() for name in names)

    def _refresh_coupled(self) -> None:
        self.look.coupled = self._coupled()
        for item in self._items.values():
            if isinstance(item, PartItem) and item.element.kind == "inductor":
                item.sync(item.element)

    def _update_dots(self, points: Iterable[Point]) -> None:
        changed: set[tuple[int, int]] = set()
        for p in points:
            tile = (p[0] // _TILE, p[1] // _TILE)
            dots = self._dots.get(tile, set())
            wanted = self.index.is_dot(p)
            if wanted != (p in dots):
                (dots.add if wanted else dots.discard)(p)
                self._dots[tile] = dots
                changed.add(tile)
        for tile in changed:
            item = self._tiles.get(tile)
            if item is None:
                item = self._tiles[tile] = DotTile(self.look)
                self.addItem(item)
            item.set_dots(self._dots[tile])

    def _apply_extent(self) -> None:
        m = _MARGIN * UNIT
        rect = self._extent.adjusted(-m, -m, m, m)
        if rect != self.sceneRect():
            self.setSceneRect(rect)

    # -- looks --------------------------------------------------------------------------------
    def relayout(self) -> None:
        """Redraw every item after a change of theme, symbol style or frequency."""
        self.look.placement = Placement.of(self.doc, self.look.style, self.look.ac)
        for item in self._items.values():
            item.sync(item.element)
        for tile in self._tiles.values():
            tile.recolour(self.look)
        self.update()

    def set_captions(self, shown: bool) -> None:
        """Show or hide every caption (texts too small to read are not worth drawing)."""
        if shown == self.look.captions:
            return
        self.look.captions = shown
        for item in self._items.values():
            item.show_captions(shown)

    # -- reading ------------------------------------------------------------------------------
    def item(self, element_id: str) -> ElementItem | None:
        return self._items.get(element_id)

    def dot_points(self) -> set[Point]:
        """Where computed junction dots are drawn."""
        return set().union(*self._dots.values())

    def drawing_rect(self) -> QRectF:
        """The scene rectangle of everything drawn, captions included (for fit to sheet)."""
        rect = QRectF()
        for item in self._items.values():
            rect |= item.sceneBoundingRect() | item.mapRectToScene(item.childrenBoundingRect())
        return rect

    def element_at(self, pos: QPointF, tolerance: float) -> ElementItem | None:
        """The topmost selectable element item within ``tolerance`` scene units of ``pos``: a
        body or wire first, else the part whose caption is there."""
        box = QRectF(pos.x() - tolerance, pos.y() - tolerance, 2 * tolerance, 2 * tolerance)
        by_caption: ElementItem | None = None
        for hit in self.items(box, Qt.ItemSelectionMode.IntersectsItemShape,
                              Qt.SortOrder.DescendingOrder):
            item = element_item(hit)
            if item is None or item.preview or not (
                    item.flags() & item.GraphicsItemFlag.ItemIsSelectable):
                continue
            if hit is item:
                return item
            # a caption (a child item) picks its part only where no body is under the pointer
            by_caption = by_caption or item
        return by_caption

    def caption_at(self, pos: QPointF, tolerance: float) -> tuple[PartItem, str] | None:
        """The part and caption role picked at ``pos`` when it is a part's caption that is
        picked there (no body under the pointer), else None."""
        item = self.element_at(pos, tolerance)
        if not isinstance(item, PartItem):
            return None
        box = QRectF(pos.x() - tolerance, pos.y() - tolerance, 2 * tolerance, 2 * tolerance)
        for hit in self.items(box, Qt.ItemSelectionMode.IntersectsItemShape,
                              Qt.SortOrder.DescendingOrder):
            if hit is item:
                return None
            role = item.caption_role(hit)
            if role:
                return item, role
        return None

    # -- selection ----------------------------------------------------------------------------
    def selected_ids(self) -> list[str]:
        """Ids of the selected elements, in document order."""
        chosen = {i.element_id for i in self.selectedItems() if isinstance(i, ElementItem)}
        if len(chosen) < 2:  # no order to find: no pass over the sheet (asked at every key)
            return list(chosen)
        return [e.id for e in self.doc if e.id in chosen]

    def select_ids(self, ids: Iterable[str], add: bool = False) -> None:
        """Select these elements (and, unless ``add``, only these), with one notification."""
        ids = set(ids)
        self.blockSignals(True)
        try:
            if not add:
                self.clearSelection()
            for eid in ids:
                item = self._items.get(eid)
                if item is not None and item.flags() & item.GraphicsItemFlag.ItemIsSelectable:
                    item.setSelected(True)
        finally:
            self.blockSignals(False)
        self.selectionChanged.emit()

    # -- gesture previews ---------------------------------------------------------------------
    def show_preview(self, elements: Iterable[Element]) -> None:
        """Draw new versions of elements without changing the document (a move being dragged):
        an existing element's item shows its new version, a new one (a link wire) gets a
        preview item; :meth:`end_preview` puts the document's versions back."""
        for e in elements:
            item = self._items.get(e.id)
            if item is not None:
                item.sync(e)
                self._previewed.add(e.id)
            else:
                extra = item_for(e, self.look, preview=True)
                self.addItem(extra)
                self._preview_items.append(extra)

    def previewing(self) -> bool:
        """Whether a gesture's preview is showing."""
        return bool(self._previewed or self._preview_items)

    def show_join_marks(self, points: Iterable[Point]) -> None:
        """Rings in the error colour where a move being dragged would join nets (gone with
        :meth:`end_preview`)."""
        colour = qcolor(self.look.theme.error)
        fill = QColor(colour)
        fill.setAlpha(60)
        r = _JOIN_RING * UNIT
        for x, y in points:
            ring = QGraphicsEllipseItem(x * UNIT - r, y * UNIT - r, 2 * r, 2 * r)
            ring.setPen(QPen(colour, 0.15 * UNIT))
            ring.setBrush(fill)
            ring.setZValue(Z_PREVIEW)
            self.addItem(ring)
            self._preview_items.append(ring)

    def end_preview(self) -> None:
        for eid in self._previewed:
            item = self._items.get(eid)
            if item is not None and eid in self.doc:
                item.sync(self.doc[eid])
        self._previewed.clear()
        for extra in self._preview_items:
            self.removeItem(extra)
        self._preview_items.clear()

    # -- background ---------------------------------------------------------------------------
    def drawBackground(self, painter: QPainter, rect: QRectF) -> None:
        theme = self.look.theme
        painter.fillRect(rect, qcolor(theme.sheet))
        scale = painter.worldTransform().m11() or 1.0
        step = self.grid_step * UNIT
        while step * scale < _MIN_GRID_PX:
            step *= 5
        major = step * 5
        minor_lines: list[QLineF] = []
        major_lines: list[QLineF] = []
        x = (rect.left() // step) * step
        while x <= rect.right():
            line = QLineF(x, rect.top(), x, rect.bottom())
            (major_lines if abs(x / major - round(x / major)) < 1e-6 else minor_lines).append(line)
            x += step
        y = (rect.top() // step) * step
        while y <= rect.bottom():
            line = QLineF(rect.left(), y, rect.right(), y)
            (major_lines if abs(y / major - round(y / major)) < 1e-6 else minor_lines).append(line)
            y += step
        pen = QPen(qcolor(theme.grid), 0)  # cosmetic: one device pixel at any zoom
        painter.setPen(pen)
        painter.drawLines(minor_lines)
        pen.setColor(qcolor(theme.grid_major))
        painter.setPen(pen)
        painter.drawLines(major_lines)


def _renamed_inductor(old: Element, new: Element) -> bool:
    return (isinstance(new, PlacedPart) and new.kind == "inductor"
            and getattr(old, "designator", None) != new.designator)
