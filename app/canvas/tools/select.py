"""Selecting and moving: click, Shift/Ctrl-click, rubber band, drag to move (wires follow), drag
from a pin to draw a wire, drag a part's caption to keep it elsewhere; arrows nudge the
selection, Tab steps through elements.

A rubber band dragged to the right selects what lies wholly inside it; dragged to the left, what
it touches (common practice in drawing tools). A move shows a preview while dragging and becomes
one undo step on release. Where the drop would join nets (a pin landing on another net's wire)
the preview rings the pins concerned and the status line names the nets before the release (once
the pointer rests a moment).
"""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF, Qt, QTimer
from PySide6.QtGui import QBrush, QColor, QKeyEvent, QPen
from PySide6.QtWidgets import QApplication, QGraphicsRectItem, QToolTip

from portcut.engine.schematic import Connectivity, Element, extract

from ...theme import qcolor
from ..grid import UNIT, snap
from ..items import Z_PREVIEW, ElementItem
from .base import CanvasEvent, Tool, ToolHost
from .wire import WireDraft

__all__ = ["SelectTool"]

#: How long (ms) the pointer must rest during a drag before the drop's net joins are worked
#: out (a re-extraction of the sheet: tens of milliseconds at 2,000 parts).
JOIN_PAUSE_MS = 40

_ARROWS = {Qt.Key.Key_Left: (-1, 0), Qt.Key.Key_Right: (1, 0), Qt.Key.Key_Up: (0, -1),
           Qt.Key.Key_Down: (0, 1)}


class SelectTool(Tool):
    """The default tool."""

    name = "select"

    def __init__(self, canvas: ToolHost) -> None:
        super().__init__(canvas)
        self._mode = ""          # "", "pending", "move", "band", "pin", "wire"
        self._origin: CanvasEvent | None = None
        self._offset = (0, 0)
        self._band: QGraphicsRectItem | None = None
        self._draft: WireDraft | None = None
        self._pin = (0, 0)
        self._nets_before: Connectivity | None = None  # the document's nets while dragging
        self._joins = ""
        self._plan: list[Element] = []
        self._pointer = QPointF()
        self._join_timer = QTimer(canvas, singleShot=True, interval=JOIN_PAUSE_MS)
        self._join_timer.timeout.connect(self._check_joins)
        self._caption: tuple[ElementItem, str] | None = None

    @property
    def status(self) -> str:
        if self._mode == "band":
            return "Select: drag right for what lies inside, left for what the box touches"
        if self._mode == "wire":
            return "Wire: release on a pin or a wire to join it"
        if self._mode == "move":
            if self._joins:
                return f"Move: {self._joins} · release to drop anyway · Esc puts it back"
            return "Move: release to drop · Esc puts it back"
        if self._mode == "caption":
            return "Caption: release to keep it there (the file keeps the spot)"
        if self.canvas.scene.selected_ids():
            return ("Drag to move · arrows nudge · R rotates · M mirrors · Delete removes · "
                    "double-click or F2 edits the value · Esc clears the selection")
        return ("Click or box-select · drag from a pin to draw a wire · Tab steps through "
                "elements · Enter at the cursor clicks")

    # -- pointer ------------------------------------------------------------------------------
    def press(self, ev: CanvasEvent) -> None:
        if ev.button != Qt.MouseButton.LeftButton:
            return
        self._origin = ev
        scene = self.canvas.scene
        pin = None if ev.keyboard else self.canvas.pin_at(ev.scene_pos)
        if pin is not None:
            self._mode, self._pin = "pin", pin
            return
        item = scene.element_at(ev.scene_pos, self.canvas.pick_tolerance())
        caption = None if ev.keyboard or ev.adds else scene.caption_at(
            ev.scene_pos, self.canvas.pick_tolerance())
        if caption is not None:
            scene.select_ids([caption[0].element_id])
            self._mode, self._caption = "caption-pending", caption
        elif item is None:
            if not ev.adds:
                scene.select_ids([])
            self._mode = "band"
            self._start_band(ev)
        else:
            if ev.adds:
                item.setSelected(not item.isSelected())
            elif not item.isSelected():
                scene.select_ids([item.element_id])
            self._mode = "pending" if item.isSelected() else ""
        self.announce()

    def move(self, ev: CanvasEvent) -> None:
        if self._origin is None:
            return
        if self._mode == "caption-pending" and self._dragged(ev):
            self._mode = "caption"
            self.announce()
        if self._mode == "caption":
            item, role = self._caption
            item.shift_caption(role, ev.scene_pos - self._origin.scene_pos)
            return
        if self._mode in ("pending", "pin") and self._dragged(ev):
            if self._mode == "pin":
                self._mode = "wire"
                self._draft = WireDraft(self.canvas, self._pin)
            else:
                self._mode = "move"
            self.announce()
        if self._mode == "move":
            self._preview_move(ev)
        elif self._mode == "wire":
            self._draft.update(ev.snapped)
        elif self._mode == "band":
            self._band.setRect(self._band_rect(ev))

    def release(self, ev: CanvasEvent) -> None:
        mode, self._mode = self._mode, ""
        caption, self._caption = self._caption, None
        if mode == "caption":
            item, role = caption
            d = ev.scene_pos - self._origin.scene_pos
            item.relayout()
            self.canvas.drag_caption(item.element_id, role, (d.x() / UNIT, d.y() / UNIT))
        elif mode == "move":
            if self._offset != (0, 0):
                self.canvas.move_selection(self._offset)
            else:
                self.canvas.scene.end_preview()
        elif mode == "wire":
            draft, self._draft = self._draft, None
            if not draft.add(ev.snapped):
                draft.finish()
        elif mode == "band":
            self._finish_band(ev)
        elif mode == "pin":
            item = self.canvas.scene.element_at(ev.scene_pos, self.canvas.pick_tolerance())
            self.canvas.scene.select_ids([item.element_id] if item else [], add=ev.adds)
        self._origin = None
        self._offset = (0, 0)
        self._forget_joins()
        self.announce()

    def double_click(self, ev: CanvasEvent) -> None:
        item = self.canvas.scene.element_at(ev.scene_pos, self.canvas.pick_tolerance())
        if item is not None:
            self.canvas.scene.select_ids([item.element_id])
            self.canvas.request_edit(item.element_id)

    def click(self, ev: CanvasEvent) -> None:
        """Enter: select what is under the cursor; on empty sheet, Enter starts a box that the
        arrows stretch and the next Enter closes."""
        if self._mode == "band":
            self.release(ev)
            return
        item = self.canvas.scene.element_at(ev.scene_pos, self.canvas.pick_tolerance())
        self.press(ev)
        if item is not None:
            self.release(ev)

    def _dragged(self, ev: CanvasEvent) -> bool:
        if ev.keyboard:
            return True
        d = self.canvas.view.mapFromScene(ev.scene_pos) - self.canvas.view.mapFromScene(
            self._origin.scene_pos)
        return d.manhattanLength() >= QApplication.startDragDistance()

    def _preview_move(self, ev: CanvasEvent) -> None:
        step = self.canvas.scene.grid_step
        start, now = self._origin.at, ev.at
        offset = snap((now[0] - start[0], now[1] - start[1]), step)
        if offset == self._offset and self.canvas.scene.previewing():
            return
        self._offset = offset
        plan = self.canvas.plan_move(offset)
        scene = self.canvas.scene
        scene.end_preview()
        scene.show_preview(plan)
        # which nets the drop would join: a re-extraction of the planned sheet, run once the
        # pointer rests so that a long drag on a large sheet stays fluid
        self._plan, self._pointer = plan, ev.scene_pos
        self._join_timer.start()

    def _check_joins(self) -> None:
        if self._mode != "move":
            return
        if self._nets_before is None:
            self._nets_before = extract(self.canvas.doc)
        joins, points = self.canvas.move_joins(self._plan, self._nets_before)
        self.canvas.scene.show_join_marks(points)
        if joins != self._joins:
            self._joins = joins
            self.announce()
            # beside the pointer too, where the eye is during a drag
            view = self.canvas.view
            where = view.viewport().mapToGlobal(view.mapFromScene(self._pointer))
            if joins:
                QToolTip.showText(where, joins[0].upper() + joins[1:], view)
            else:
                QToolTip.hideText()

    def _forget_joins(self) -> None:
        self._join_timer.stop()
        if self._joins:
            QToolTip.hideText()
        self._nets_before, self._joins, self._plan = None, "", []

    # -- rubber band --------------------------------------------------------------------------
    def _start_band(self, ev: CanvasEvent) -> None:
        theme = self.canvas.scene.look.theme
        band = QGraphicsRectItem(QRectF(ev.scene_pos, ev.scene_pos))
        colour = qcolor(theme.selection)
        pen = QPen(colour, 0)
        pen.setStyle(Qt.PenStyle.DashLine)
        band.setPen(pen)
        fill = QColor(colour)
        fill.setAlpha(28)
        band.setBrush(QBrush(fill))
        band.setZValue(Z_PREVIEW)
        self.canvas.scene.addItem(band)
        self._band = band

    def _band_rect(self, ev: CanvasEvent) -> QRectF:
        return QRectF(self._origin.scene_pos, ev.scene_pos).normalized()

    def _finish_band(self, ev: CanvasEvent) -> None:
        rect = self._band_rect(ev)
        self._drop_band()
        if rect.width() == 0 and rect.height() == 0:
            return
        inside = ev.scene_pos.x() >= self._origin.scene_pos.x()
        mode = (Qt.ItemSelectionMode.ContainsItemShape if inside
                else Qt.ItemSelectionMode.IntersectsItemShape)
        scene = self.canvas.scene
        ids = [i.element_id for i in scene.items(rect, mode)
               if isinstance(i, ElementItem) and not i.preview]
        scene.select_ids(ids, add=ev.adds)

    def _drop_band(self) -> None:
        if self._band is not None:
            self.canvas.scene.removeItem(self._band)
            self._band = None

    # -- keys ---------------------------------------------------------------------------------
    def key(self, event: QKeyEvent) -> bool:
        if event.key() in (Qt.Key.Key_Tab, Qt.Key.Key_Backtab):
            backwards = (event.key() == Qt.Key.Key_Backtab
                         or bool(event.modifiers() & Qt.KeyboardModifier.ShiftModifier))
            self.canvas.step_selection(-1 if backwards else 1)
            self.announce()
            return True
        arrow = _ARROWS.get(event.key())
        if (arrow and not self._mode and self.canvas.scene.selected_ids()
                and not event.modifiers() & Qt.KeyboardModifier.ControlModifier):
            big = bool(event.modifiers() & Qt.KeyboardModifier.ShiftModifier)
            n = self.canvas.scene.grid_step * (5 if big else 1)
            self.canvas.move_selection((arrow[0] * n, arrow[1] * n))
            return True
        return False

    def cancel(self) -> bool:
        mode, self._mode = self._mode, ""
        self._origin = None
        self._forget_joins()
        if mode == "move":
            self.canvas.scene.end_preview()
        elif mode == "band":
            self._drop_band()
        elif mode == "wire":
            self._draft.cancel()
            self._draft = None
        elif mode in ("caption", "caption-pending"):
            self._caption[0].relayout()
            self._caption = None
        elif self.canvas.scene.selected_ids():
            self.canvas.scene.select_ids([])
        else:
            return False
        self.announce()
        return True

    def finish(self) -> None:
        if self._mode:
            self.cancel()

