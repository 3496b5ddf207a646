"""Tools are gesture objects: the canvas makes one current, feeds it events, and asks it to
start, finish or cancel.

The view turns mouse and keyboard input into :class:`CanvasEvent` (scene position, grid point,
snapped point, buttons); Enter at the keyboard cursor is a :meth:`Tool.click`, so every tool can
be used without a mouse. A tool changes the document only by pushing undo commands.

A tool sees the canvas through :class:`ToolHost`, the few things it may use of it, so the tools
never import the canvas module (which imports them to offer the built-in ones).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Protocol

from PySide6.QtCore import QPointF, Qt
from PySide6.QtGui import QKeyEvent, QUndoCommand
from PySide6.QtWidgets import QGraphicsView

from portcut.engine.schematic import Connectivity, Document, Element
from portcut.engine.schematic.symbols import Point

from ..scene import SchematicScene

__all__ = ["CanvasEvent", "Tool", "ToolHost", "ToolSpec"]


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


class ToolHost(Protocol):
    """What a tool may use of the canvas (app.canvas.Canvas is one): the document, the scene
    and view, the keyboard cursor (a grid point), pushing undo commands, the status line, and
    the canvas's own geometry and edits."""

    scene: SchematicScene
    view: QGraphicsView
    cursor: Point

    @property
    def doc(self) -> Document: ...

    def push(self, command: QUndoCommand) -> None: ...

    def set_status(self, text: str) -> None: ...

    def activate_named(self, name: str) -> None: ...

    def pick_tolerance(self) -> float: ...

    def pin_at(self, scene_pos: QPointF) -> Point | None: ...

    def joins_at(self, p: Point) -> bool: ...

    def plan_move(self, offset: Point) -> list[Element]: ...

    def move_joins(self, plan: list[Element],
                   before: Connectivity | None = None) -> tuple[str, list[Point]]: ...

    def move_selection(self, offset: Point) -> None: ...

    def drag_caption(self, part_id: str, role: str, shift: tuple[float, float]) -> None: ...

    def step_selection(self, step: int) -> None: ...

    def request_edit(self, element_id: str) -> None: ...


class Tool:
    """Base of every tool. Subclasses override the hooks they need.

    Life cycle: :meth:`start` when it becomes current; pointer hooks while it is; :meth:`cancel`
    on Esc (return False when nothing was in progress, and the canvas goes back to the select
    tool); :meth:`finish` when another tool takes over (drop any gesture in progress).
    """

    name = ""

    def __init__(self, canvas: ToolHost) -> None:
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
    factory: Callable[[ToolHost], Tool]
