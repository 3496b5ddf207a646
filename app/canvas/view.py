"""The view: zoom (wheel, keys), pan (middle drag, Space-drag, Ctrl+arrows), fit to the drawing,
a keyboard cursor, and the hand-off of pointer and key input to the current tool.

Keys on the canvas: arrows move the keyboard cursor (Shift: five steps) unless the tool uses them;
Enter clicks at it; Esc cancels; + and - zoom; Tab steps through elements (Ctrl+Tab leaves the
canvas, as in Qt's text editors).
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Protocol

from PySide6.QtCore import QEvent, QLineF, QPoint, QPointF, QRectF, Qt, Signal
from PySide6.QtGui import (
    QDragEnterEvent,
    QDragMoveEvent,
    QDropEvent,
    QKeyEvent,
    QMouseEvent,
    QPainter,
    QPen,
    QWheelEvent,
)
from PySide6.QtWidgets import QGraphicsView

from portcut.engine.schematic.symbols import FONT_SIZE, Point

from ..theme import qcolor
from .grid import UNIT, to_scene

if TYPE_CHECKING:
    from .scene import SchematicScene
    from .tools import CanvasEvent, Tool

__all__ = ["ENTRY_MIME", "SchematicView"]

#: Drag-and-drop format of a palette entry (its catalog key, UTF-8).
ENTRY_MIME = "application/x-portcut-entry"
ZOOM_LIMITS = (0.05, 20.0)
_WHEEL_BASE = 1.0015  # zoom factor per eighth of a degree of wheel turn
_KEY_ZOOM = 1.25
_MIN_TEXT_PX = 6.0  # captions smaller than this on screen (px) are hidden
_ARROWS = {Qt.Key.Key_Left: (-1, 0), Qt.Key.Key_Right: (1, 0), Qt.Key.Key_Up: (0, -1),
           Qt.Key.Key_Down: (0, 1)}


class ViewHost(Protocol):
    """What the view uses of the canvas (app.canvas.Canvas is one): its scene, current tool and
    keyboard cursor (a grid point), the pointer event at a scene point, and two gestures."""

    scene: SchematicScene
    tool: Tool
    cursor: Point

    def event_at(self, scene_pos: QPointF, button: Qt.MouseButton = ...,
                 modifiers: Qt.KeyboardModifier = ..., keyboard: bool = ...) -> CanvasEvent: ...

    def place(self, key: str, once: bool = False) -> None: ...

    def cancel(self) -> None: ...


class SchematicView(QGraphicsView):
    """Shows the canvas's scene and feeds its current tool."""

    zoomChanged = Signal(float)
    #: Grid point under the pointer or keyboard cursor.
    cursorMoved = Signal(tuple)

    def __init__(self, canvas: ViewHost) -> None:
        super().__init__(canvas.scene)
        self.canvas = canvas
        self.setRenderHints(QPainter.RenderHint.Antialiasing
                            | QPainter.RenderHint.TextAntialiasing)
        self.setTransformationAnchor(QGraphicsView.ViewportAnchor.NoAnchor)
        self.setResizeAnchor(QGraphicsView.ViewportAnchor.AnchorViewCenter)
        self.setCacheMode(QGraphicsView.CacheModeFlag.CacheBackground)
        self.setFrameShape(QGraphicsView.Shape.NoFrame)
        self.setFocusPolicy(Qt.FocusPolicy.StrongFocus)
        self.setAcceptDrops(True)
        self.viewport().setMouseTracking(True)
        self.setToolTip("")
        self._pan_from: QPoint | None = None
        self._space = False
        self._show_cursor = False

    # -- zoom and pan -------------------------------------------------------------------------
    def zoom(self) -> float:
        """Device-independent pixels per scene unit."""
        return self.transform().m11()

    def zoom_by(self, factor: float, at: QPoint | None = None) -> None:
        """Zoom by ``factor`` keeping the scene point under ``at`` (viewport pixels; default
        the middle of the view) where it is."""
        lo, hi = ZOOM_LIMITS
        factor = min(max(self.zoom() * factor, lo), hi) / self.zoom()
        anchor = at if at is not None else self.viewport().rect().center()
        before = self.mapToScene(anchor)
        self.scale(factor, factor)
        self.pan_by(self.mapFromScene(before) - anchor)
        self._zoomed()

    def _zoomed(self) -> None:
        self.canvas.scene.set_captions(self.zoom() * FONT_SIZE * UNIT >= _MIN_TEXT_PX)
        self.zoomChanged.emit(self.zoom())

    def zoom_in(self) -> None:
        self.zoom_by(_KEY_ZOOM)

    def zoom_out(self) -> None:
        self.zoom_by(1 / _KEY_ZOOM)

    def actual_size(self) -> None:
        self.zoom_by(1 / self.zoom())

    def pan_by(self, delta: QPoint) -> None:
        """Scroll the view by ``delta`` viewport pixels."""
        h, v = self.horizontalScrollBar(), self.verticalScrollBar()
        h.setValue(h.value() + delta.x())
        v.setValue(v.value() + delta.y())

    def fit(self) -> None:
        """Show the whole drawing (not beyond three times actual size)."""
        rect = self.canvas.scene.drawing_rect()
        if rect.isEmpty():
            rect = QRectF(-20 * UNIT, -12 * UNIT, 40 * UNIT, 24 * UNIT)
        rect = rect.adjusted(-2 * UNIT, -2 * UNIT, 2 * UNIT, 2 * UNIT)
        self.fitInView(rect, Qt.AspectRatioMode.KeepAspectRatio)
        if self.zoom() > 3.0:
            self.zoom_by(3.0 / self.zoom())
        self.centerOn(rect.center())
        self._zoomed()

    def wheelEvent(self, event: QWheelEvent) -> None:
        delta = event.angleDelta().y() or event.pixelDelta().y()
        if delta:
            self.zoom_by(_WHEEL_BASE ** delta, event.position().toPoint())
        event.accept()

    # -- the keyboard cursor ------------------------------------------------------------------
    def set_cursor(self, p: Point, visible: bool = True) -> None:
        self.canvas.cursor = p
        if visible or self._show_cursor:
            self._show_cursor = visible
            self.viewport().update()
        self.cursorMoved.emit(p)

    def _keyboard_event(self, modifiers: Qt.KeyboardModifier) -> CanvasEvent:
        return self.canvas.event_at(to_scene(self.canvas.cursor), Qt.MouseButton.LeftButton,
                                    modifiers, keyboard=True)

    def drawForeground(self, painter: QPainter, rect: QRectF) -> None:
        if not self._show_cursor:
            return
        c = to_scene(self.canvas.cursor)
        arm = 0.8 * UNIT
        painter.setPen(QPen(qcolor(self.canvas.scene.look.theme.selection), 0))
        painter.drawLines([QLineF(c.x() - arm, c.y(), c.x() + arm, c.y()),
                           QLineF(c.x(), c.y() - arm, c.x(), c.y() + arm)])
        painter.drawEllipse(c, 0.35 * UNIT, 0.35 * UNIT)

    # -- pointer ------------------------------------------------------------------------------
    def _event(self, event: QMouseEvent) -> CanvasEvent:
        pos = self.mapToScene(event.position().toPoint())
        return self.canvas.event_at(pos, event.button(), event.modifiers())

    def _pans(self, event: QMouseEvent) -> bool:
        return (event.button() == Qt.MouseButton.MiddleButton
                or (event.button() == Qt.MouseButton.LeftButton and self._space))

    def mousePressEvent(self, event: QMouseEvent) -> None:
        self.setFocus(Qt.FocusReason.MouseFocusReason)
        if self._pans(event):
            self._pan_from = event.position().toPoint()
            self.viewport().setCursor(Qt.CursorShape.ClosedHandCursor)
            return
        self.canvas.tool.press(self._event(event))

    def mouseMoveEvent(self, event: QMouseEvent) -> None:
        if self._pan_from is not None:
            now = event.position().toPoint()
            self.pan_by(self._pan_from - now)
            self._pan_from = now
            return
        ev = self._event(event)
        self.set_cursor(ev.grid, visible=False)
        self.canvas.tool.move(ev)

    def mouseReleaseEvent(self, event: QMouseEvent) -> None:
        if self._pan_from is not None and self._pans(event):
            self._pan_from = None
            self.viewport().setCursor(Qt.CursorShape.OpenHandCursor if self._space
                                      else Qt.CursorShape.ArrowCursor)
            return
        self.canvas.tool.release(self._event(event))

    def mouseDoubleClickEvent(self, event: QMouseEvent) -> None:
        if event.button() == Qt.MouseButton.LeftButton:
            self.canvas.tool.double_click(self._event(event))

    def leaveEvent(self, event: QEvent) -> None:
        self.canvas.tool.leave()
        super().leaveEvent(event)

    # -- keys ---------------------------------------------------------------------------------
    def event(self, event: QEvent) -> bool:
        # Tab belongs to the canvas (stepping through elements); Ctrl+Tab still leaves it
        if (event.type() == QEvent.Type.KeyPress
                and event.key() in (Qt.Key.Key_Tab, Qt.Key.Key_Backtab)
                and not event.modifiers() & Qt.KeyboardModifier.ControlModifier):
            self.keyPressEvent(event)
            return True
        return super().event(event)

    def keyPressEvent(self, event: QKeyEvent) -> None:
        key, mods = event.key(), event.modifiers()
        if key == Qt.Key.Key_Space and not event.isAutoRepeat():
            self._space = True
            self.viewport().setCursor(Qt.CursorShape.OpenHandCursor)
            return
        if self.canvas.tool.key(event):
            return
        if key == Qt.Key.Key_Escape:
            self.canvas.cancel()
        elif key in _ARROWS and mods & Qt.KeyboardModifier.ControlModifier:
            dx, dy = _ARROWS[key]
            step = self.viewport().width() // 8
            self.pan_by(QPoint(dx * step, dy * step))
        elif key in _ARROWS:
            dx, dy = _ARROWS[key]
            n = self.canvas.scene.grid_step * (5 if mods & Qt.KeyboardModifier.ShiftModifier
                                               else 1)
            x, y = self.canvas.cursor
            self.set_cursor((x + dx * n, y + dy * n))
            self.ensureVisible(QRectF(to_scene(self.canvas.cursor), to_scene(self.canvas.cursor)),
                               40, 40)
            self.canvas.tool.move(self._keyboard_event(mods))
        elif key in (Qt.Key.Key_Return, Qt.Key.Key_Enter):
            self._show_cursor = True
            self.canvas.tool.click(self._keyboard_event(mods))
            self.viewport().update()
        elif key in (Qt.Key.Key_Plus, Qt.Key.Key_Equal):
            self.zoom_in()
        elif key == Qt.Key.Key_Minus:
            self.zoom_out()
        else:
            super().keyPressEvent(event)

    def keyReleaseEvent(self, event: QKeyEvent) -> None:
        if event.key() == Qt.Key.Key_Space and not event.isAutoRepeat():
            self._space = False
            if self._pan_from is None:
                self.viewport().setCursor(Qt.CursorShape.ArrowCursor)
            return
        super().keyReleaseEvent(event)

    # -- drag and drop from the palette -------------------------------------------------------
    def _drop_point(self, event: QDropEvent) -> QPointF:
        return self.mapToScene(event.position().toPoint())

    def dragEnterEvent(self, event: QDragEnterEvent) -> None:
        if event.mimeData().hasFormat(ENTRY_MIME):
            key = bytes(event.mimeData().data(ENTRY_MIME)).decode()
            self.canvas.place(key, once=True)
            event.acceptProposedAction()
        else:
            event.ignore()

    def dragMoveEvent(self, event: QDragMoveEvent) -> None:
        if event.mimeData().hasFormat(ENTRY_MIME):
            self.canvas.tool.move(self.canvas.event_at(self._drop_point(event)))
            event.acceptProposedAction()

    def dragLeaveEvent(self, event: QEvent) -> None:
        self.canvas.cancel()

    def dropEvent(self, event: QDropEvent) -> None:
        if event.mimeData().hasFormat(ENTRY_MIME):
            self.canvas.tool.press(self.canvas.event_at(self._drop_point(event),
                                                         Qt.MouseButton.LeftButton))
            event.acceptProposedAction()
