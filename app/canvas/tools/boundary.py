"""The boundary tool: draw the region to reduce.

* Drag: a freehand lasso; Ctrl+drag: a rectangle. On release the parts and blocks whose body's
  middle lies inside become a new region (one undo step), and it becomes the current region.
* Shift+click a part: add it to the current region or take it out (the outline follows).
* Click inside a region's outline: make that region the current one.
* Enter at the keyboard cursor starts a rectangle, the arrows stretch it, Enter closes it.
* Esc drops the boundary being drawn.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import replace
from typing import TYPE_CHECKING

from PySide6.QtCore import QPointF, Qt
from PySide6.QtGui import QColor, QPainterPath, QPen, QPolygonF
from PySide6.QtWidgets import QApplication, QGraphicsPathItem

from portcut.engine.schematic import Block, PlacedPart, Region
from portcut.engine.schematic.outline import inside

from ...commands import AddElements, ReplaceElements
from ...regions import enclosed, outline_with, outline_without, region_name
from ...theme import qcolor
from ..grid import UNIT
from ..items import Z_PREVIEW
from .base import CanvasEvent, Tool, ToolHost

if TYPE_CHECKING:
    from ...analysis import LiveAnalysis

__all__ = ["BoundaryTool"]

#: Lasso points closer than this (grid units) to the last one are skipped.
_LASSO_STEP = 0.4


class BoundaryTool(Tool):
    """Draws regions; ``live`` holds which region is current."""

    name = "boundary"

    def __init__(self, canvas: ToolHost, live: LiveAnalysis) -> None:
        super().__init__(canvas)
        self.live = live
        self._shape = ""          # "", "lasso", "rect"
        self._points: list[tuple[float, float]] = []
        self._origin: CanvasEvent | None = None
        self._toggle = False
        self._preview: QGraphicsPathItem | None = None
        self._note = ""           # the outcome of the last gesture, shown until the next one

    @property
    def status(self) -> str:
        if self._shape == "lasso":
            return "Boundary: release to close the lasso · Esc drops it"
        if self._shape == "rect":
            return "Boundary: release (or Enter) to close the rectangle · Esc drops it"
        if self._note:
            return self._note
        return ("Boundary: drag a lasso around the parts to reduce · Ctrl+drag for a rectangle · "
                "Shift+click adds or removes a part · click a region to show it")

    # -- pointer ------------------------------------------------------------------------------
    def press(self, ev: CanvasEvent) -> None:
        if ev.button != Qt.MouseButton.LeftButton:
            return
        self._origin = ev
        self._note = ""
        self._toggle = bool(ev.modifiers & Qt.KeyboardModifier.ShiftModifier)
        rect = ev.keyboard or bool(ev.modifiers & Qt.KeyboardModifier.ControlModifier)
        self._shape = "rect" if rect else "lasso"
        self._points = [ev.at]
        self.announce()

    def move(self, ev: CanvasEvent) -> None:
        if not self._shape:
            return
        if self._shape == "lasso":
            if math.dist(ev.at, self._points[-1]) >= _LASSO_STEP:
                self._points.append(ev.at)
        else:
            self._points = [self._points[0], ev.at]
        self._draw_preview()

    def release(self, ev: CanvasEvent) -> None:
        if not self._shape:
            return
        if ev.keyboard and self._dragged(ev) is None:
            return  # a keyboard rectangle not stretched yet: the arrows come first
        self.move(ev)
        outline = self._outline()
        dragged = self._dragged(ev)
        self._drop()
        if dragged:
            self._close(outline)
        elif self._toggle:
            self._toggle_at(ev)
        else:
            self._choose_at(ev)
        self.announce()

    def click(self, ev: CanvasEvent) -> None:
        """Enter: the first starts a rectangle at the cursor, the next closes it."""
        if self._shape == "rect":
            self.release(ev)
        else:
            self.press(ev)

    def _dragged(self, ev: CanvasEvent) -> bool | None:
        """Whether the pointer went far enough to draw (None: a keyboard rectangle not yet
        stretched)."""
        if ev.keyboard:
            a, b = self._points[0], ev.at
            return None if a == b else True
        view = self.canvas.view
        d = view.mapFromScene(ev.scene_pos) - view.mapFromScene(self._origin.scene_pos)
        return d.manhattanLength() >= QApplication.startDragDistance() and len(self._outline()) >= 3

    def _outline(self) -> tuple[tuple[float, float], ...]:
        if self._shape == "rect":
            (x0, y0), (x1, y1) = self._points[0], self._points[-1]
            if x0 == x1 or y0 == y1:
                return ()
            return ((x0, y0), (x1, y0), (x1, y1), (x0, y1))
        return tuple((round(x, 2), round(y, 2)) for x, y in self._points)

    # -- outcomes -----------------------------------------------------------------------------
    def _close(self, outline: tuple[tuple[float, float], ...]) -> None:
        doc = self.canvas.doc
        members = enclosed(doc, outline, self.canvas.scene.look.style)
        if not members:
            self._note = "Boundary: no part lies inside; draw around the parts' bodies"
            return
        region = Region(doc.new_id(Region), region_name(doc), members, outline)
        self.canvas.push(AddElements(doc, [region], f"Draw region “{region.name}”"))
        self.live.set_region(region.id)

    def _toggle_at(self, ev: CanvasEvent) -> None:
        doc = self.canvas.doc
        item = self.canvas.scene.element_at(ev.scene_pos, self.canvas.pick_tolerance())
        element = doc[item.element_id] if item is not None else None
        if not isinstance(element, PlacedPart | Block):
            return
        style = self.canvas.scene.look.style
        current = self.live.region_id
        region = doc[current] if current is not None and current in doc else None
        if not isinstance(region, Region):
            outline = outline_with((), element, style)
            new = Region(doc.new_id(Region), region_name(doc), frozenset({element.id}), outline)
            self.canvas.push(AddElements(doc, [new], f"Draw region “{new.name}”"))
            self.live.set_region(new.id)
            return
        if element.id in region.members:
            change: Callable = outline_without
            members, verb = region.members - {element.id}, "Take {} out of"
        else:
            change = outline_with
            members, verb = region.members | {element.id}, "Add {} to"
        new = replace(region, members=members, outline=change(region.outline, element, style))
        text = f"{verb.format(element.designator)} region “{region.name}”"
        self.canvas.push(ReplaceElements(doc, [new], text))

    def _choose_at(self, ev: CanvasEvent) -> None:
        for region in reversed(self.canvas.doc.regions()):
            if inside(region.outline, ev.at):
                self.live.set_region(region.id)
                self._note = f"Boundary: showing region “{region.name}”"
                return

    # -- preview ------------------------------------------------------------------------------
    def _draw_preview(self) -> None:
        path = QPainterPath()
        outline = self._outline() if self._shape == "rect" else tuple(self._points)
        if outline:
            path.addPolygon(QPolygonF([QPointF(x * UNIT, y * UNIT) for x, y in outline]))
            path.closeSubpath()
        if self._preview is None:
            theme = self.canvas.scene.look.theme
            self._preview = QGraphicsPathItem()
            pen = QPen(qcolor(theme.accent), 0, Qt.PenStyle.DashLine)
            self._preview.setPen(pen)
            fill = QColor(qcolor(theme.accent))
            fill.setAlpha(30)
            self._preview.setBrush(fill)
            self._preview.setZValue(Z_PREVIEW)
            self.canvas.scene.addItem(self._preview)
        self._preview.setPath(path)

    def _drop(self) -> None:
        self._shape = ""
        self._origin = None
        if self._preview is not None:
            self.canvas.scene.removeItem(self._preview)
            self._preview = None

    def cancel(self) -> bool:
        if not self._shape:
            return False
        self._drop()
        self.announce()
        return True

    def finish(self) -> None:
        if self._shape:
            self._drop()
