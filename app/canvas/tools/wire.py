"""Drawing wires: orthogonal segments with a bend that follows the cursor.

The bend goes horizontal-first or vertical-first according to the axis along which the cursor
last lined up with the previous point, so leaving a point sideways or downwards chooses it. A
click adds the bend; a click on a pin or a wire ends the wire there (joined); a second click on
the same point ends it in free space; Backspace takes back a bend; Esc drops the wire.
"""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtGui import QKeyEvent

from portcut.engine.schematic import Wire
from portcut.engine.schematic.symbols import Point

from ...commands import AddElements
from ...editing import bend, simplify
from ..items import WireItem
from .base import CanvasEvent, Tool, ToolHost

__all__ = ["WireDraft", "WireTool"]


class WireDraft:
    """A wire being drawn from ``start``, shown as a preview until it is finished."""

    def __init__(self, canvas: ToolHost, start: Point) -> None:
        self.canvas = canvas
        self.start = start
        self.legs: list[list[Point]] = []  # the points each click added
        self.horizontal_first = True
        self.item = WireItem(Wire("draft", (start, start)), canvas.scene.look, preview=True)
        canvas.scene.addItem(self.item)

    @property
    def anchors(self) -> list[Point]:
        return [self.start, *(p for leg in self.legs for p in leg)]

    def path(self, p: Point) -> list[Point]:
        """The points so far and the bend to ``p``."""
        anchors = self.anchors
        last = anchors[-1]
        return anchors if p == last else [*anchors, *bend(last, p, self.horizontal_first)]

    def update(self, p: Point) -> None:
        last = self.anchors[-1]
        if p[1] == last[1] and p[0] != last[0]:
            self.horizontal_first = True
        elif p[0] == last[0] and p[1] != last[1]:
            self.horizontal_first = False
        points = self.path(p)
        self.item.sync(Wire("draft", tuple(points) if len(points) > 1 else (p, p)))

    def add(self, p: Point) -> bool:
        """A click at ``p``; True once the wire is finished (joined at ``p``, or ``p`` clicked
        twice)."""
        last = self.anchors[-1]
        if p == last:
            self.finish()
            return True
        self.legs.append(bend(last, p, self.horizontal_first))
        if self.canvas.joins_at(p):
            self.finish()
            return True
        self.update(p)
        return False

    def back(self) -> None:
        """Take back the last click's bend."""
        if self.legs:
            self.legs.pop()
        self.update(self.anchors[-1])

    def finish(self) -> None:
        """Add the wire drawn so far (nothing if it has no length)."""
        self._drop_preview()
        points = simplify(self.anchors)
        if len(points) >= 2:
            doc = self.canvas.doc
            wire = Wire(doc.new_id(Wire), points)
            self.canvas.push(AddElements(doc, [wire], "Draw wire"))

    def cancel(self) -> None:
        self._drop_preview()

    def _drop_preview(self) -> None:
        if self.item.scene() is not None:
            self.item.scene().removeItem(self.item)


class WireTool(Tool):
    """Click to start a wire at a pin, a wire or any grid point; then as :class:`WireDraft`."""

    name = "wire"

    def __init__(self, canvas: ToolHost) -> None:
        super().__init__(canvas)
        self.draft: WireDraft | None = None

    @property
    def status(self) -> str:
        if self.draft is None:
            return "Wire: click a pin, a wire or a grid point to start"
        return ("Wire: click to bend · click a pin or a wire to join and end · click the same "
                "point twice to end · Backspace takes back a bend · Esc drops the wire")

    def press(self, ev: CanvasEvent) -> None:
        if ev.button != Qt.MouseButton.LeftButton:
            return
        if self.draft is None:
            self.draft = WireDraft(self.canvas, ev.snapped)
        elif self.draft.add(ev.snapped):
            self.draft = None
        self.announce()

    def double_click(self, ev: CanvasEvent) -> None:
        # the press before it added the point; this second click ends the wire there (and
        # starts nothing when that press already ended it)
        if self.draft is not None:
            self.press(ev)

    def click(self, ev: CanvasEvent) -> None:
        self.press(ev)

    def move(self, ev: CanvasEvent) -> None:
        if self.draft is not None:
            self.draft.update(ev.snapped)

    def key(self, event: QKeyEvent) -> bool:
        if event.key() == Qt.Key.Key_Backspace and self.draft is not None:
            self.draft.back()
            return True
        return False

    def cancel(self) -> bool:
        if self.draft is None:
            return False
        self.draft.cancel()
        self.draft = None
        self.announce()
        return True

    def finish(self) -> None:
        self.cancel()
