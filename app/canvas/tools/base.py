"""Tools are gesture objects: the canvas makes one current, feeds it events, and asks it to
start, finish or cancel.

The view turns mouse and keyboard input into :class:`CanvasEvent` (scene position, grid point,
snapped point, buttons); Enter at the keyboard cursor is a :meth:`Tool.click`, so every tool can
be used without a mouse. A tool changes the document only by pushing undo commands.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING

from PySide6.QtCore import QPointF, Qt
from PySide6.QtGui import QKeyEvent

from portcut.engine.schematic.symbols import Point

if TYPE_CHECKING:
    from ..canvas import Canvas

__all__ = ["CanvasEvent", "Tool", "ToolSpec"]


@dataclass(frozen=True)
class CanvasEvent:
    """A pointer event in sheet terms.

    ``at`` is the grid position (unsnapped, grid units); ``grid`` the nearest point of the
    snapping grid; ``snapped`` the point a click means: a pin or wire within reach, else ``grid``.
    ``keyboard`` is true when the event comes from the keyboard cursor.
    """

    scene_pos: QPointF
    at: tuple[float, float]
    grid: Point
    snapped: Point
    button: Qt.MouseButton = Qt.MouseButton.NoButton
    modifiers: Qt.KeyboardModifier = Qt.KeyboardModifier.NoModifier
    keyboard: bool = False

    @property
    def adds(self) -> bool:
        """Shift or Ctrl held: add to or toggle the selection."""
        return bool(self.modifiers & (Qt.KeyboardModifier.ShiftModifier
                                      | Qt.KeyboardModifier.ControlModifier))


class Tool:
    """Base of every tool. Subclasses override the hooks they need.

    Life cycle: :meth:`start` when it becomes current; pointer hooks while it is; :meth:`cancel`
    on Esc (return False when nothing was in progress, and the canvas goes back to the select
    tool); :meth:`finish` when another tool takes over (drop any gesture in progress).
    """

    name = ""

    def __init__(self, canvas: Canvas) -> None:
        self.canvas = canvas

    @property
    def status(self) -> str:
        """What the tool expects next, for the status bar."""
        return ""

    def announce(self) -> None:
        """Show :attr:`status` (call after a state change)."""
        self.canvas.set_status(self.status)

    def start(self) -> None:
        self.announce()

    def finish(self) -> None:
        """Leave no preview behind."""

    def cancel(self) -> bool:
        return False

    def press(self, ev: CanvasEvent) -> None: ...

    def move(self, ev: CanvasEvent) -> None: ...

    def release(self, ev: CanvasEvent) -> None: ...

    def double_click(self, ev: CanvasEvent) -> None: ...

    def leave(self) -> None:
        """The pointer left the canvas."""

    def click(self, ev: CanvasEvent) -> None:
        """A click at the keyboard cursor (Enter)."""
        self.press(ev)
        self.release(ev)

    def key(self, event: QKeyEvent) -> bool:
        """Handle a key first; True when used."""
        return False

    def rotate(self) -> bool:
        """Rotate what the tool holds (a part being placed); False to rotate the selection."""
        return False

    def mirror(self) -> bool:
        return False


@dataclass(frozen=True)
class ToolSpec:
    """A tool the window offers as an action: ``factory(canvas)`` makes it."""

    name: str
    text: str
    shortcut: str
    tip: str
    factory: Callable[[Canvas], Tool]
