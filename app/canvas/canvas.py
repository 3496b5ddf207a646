"""The canvas: scene, view and the current tool, and the edits tools and menus share.

The window builds one Canvas over a Workbench. Tools reach the document only through
:meth:`Canvas.push` (undo commands); the edit operations here (move, rotate, mirror, delete,
select all, step through elements) are what both the tools and the window's actions call.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import replace

from PySide6.QtCore import QMimeData, QObject, QPointF, Qt, Signal
from PySide6.QtGui import QUndoCommand

from portcut.engine.schematic import (
    Block,
    Connectivity,
    Document,
    Element,
    NetLabel,
    PlacedPart,
    Region,
    extract,
)
from portcut.engine.schematic.connectivity import joined_nets
from portcut.engine.schematic.placement import dragged
from portcut.engine.schematic.symbols import Point

from ..clipboard import copyable, elements_from, mime_for
from ..commands import AddElements, MoveElements, ReplaceElements, delete_command
from ..editing import RigidMap, anchor_points, center_of, paste, plan_delete, plan_placement
from ..sheet import element_pins
from ..workbench import Workbench
from .grid import UNIT, snap, to_grid, to_scene
from .items import Look
from .scene import SchematicScene
from .tools import CanvasEvent, PlaceTool, Tool, ToolSpec, builtin_tools
from .view import SchematicView

__all__ = ["Canvas"]

#: How close (device pixels) the pointer must come to a pin, wire or part to reach it.
_REACH_PX = 7.0


class Canvas(QObject):
    """Scene, view and tools over the workbench's document."""

    statusChanged = Signal(str)
    toolChanged = Signal(str)
    #: Ids of the selected elements, in document order.
    selectionChanged = Signal(list)
    #: The user asked to edit this element's value (double-click, F2).
    editRequested = Signal(str)

    def __init__(self, workbench: Workbench, look: Look | None = None,
                 parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.workbench = workbench
        self.scene = SchematicScene(workbench.doc, look, self)
        self.view = SchematicView(self)
        self.tools: dict[str, ToolSpec] = {}
        self.tool: Tool | None = None
        self.cursor: Point = (0, 0)
        for spec in builtin_tools():
            self.register_tool(spec)
        self.activate_named("select")
        workbench.documentReplaced.connect(self._on_document_replaced)
        self.scene.selectionChanged.connect(self._on_selection)

    @property
    def doc(self) -> Document:
        return self.workbench.doc

    def push(self, command: QUndoCommand) -> None:
        self.workbench.push(command)

    def _on_document_replaced(self, doc: Document) -> None:
        self.activate_named("select")
        self.scene.set_document(doc)
        self.view.fit()

    def _on_selection(self) -> None:
        self.selectionChanged.emit(self.scene.selected_ids())
        if self.tool is not None and self.tool.name == "select":
            self.tool.announce()

    # -- tools --------------------------------------------------------------------------------
    def register_tool(self, spec: ToolSpec) -> None:
        """Offer another tool (the window makes an action for each registered tool)."""
        self.tools[spec.name] = spec

    def activate(self, tool: Tool) -> None:
        """Make ``tool`` current; the previous one finishes."""
        if self.tool is not None:
            self.tool.finish()
        self.tool = tool
        tool.start()
        self.toolChanged.emit(tool.name)

    def activate_named(self, name: str) -> None:
        self.activate(self.tools[name].factory(self))

    def place(self, key: str, once: bool = False) -> None:
        """Start placing a catalog entry (a part kind, "ground", "label", "junction")."""
        self.activate(PlaceTool(self, key, once))
        self.view.setFocus()

    def set_status(self, text: str) -> None:
        self.statusChanged.emit(text)

    def cancel(self) -> None:
        """Esc: the tool drops its gesture, or the canvas goes back to selecting."""
        if not self.tool.cancel() and self.tool.name != "select":
            self.activate_named("select")

    # -- pointer geometry ---------------------------------------------------------------------
    def reach(self) -> float:
        """The pointer's reach in grid units at the current zoom (at least half a unit)."""
        return max(0.5, _REACH_PX / (self.view.zoom() * UNIT))

    def pick_tolerance(self) -> float:
        """The pointer's reach in scene units, for picking items."""
        return _REACH_PX / self.view.zoom()

    def pin_at(self, scene_pos: QPointF) -> Point | None:
        at = to_grid(scene_pos)
        return self.scene.index.pin_near(at[0], at[1], self.reach())

    def snap_point(self, at: tuple[float, float]) -> Point:
        """A pin within reach, else a wire point within reach, else the nearest grid point."""
        pin = self.scene.index.pin_near(at[0], at[1], self.reach())
        if pin is not None:
            return pin
        near = (round(at[0]), round(at[1]))
        if (self.scene.index.wires_through(near)
                and abs(near[0] - at[0]) + abs(near[1] - at[1]) <= self.reach()):
            return near
        return snap(at, self.scene.grid_step)

    def event_at(self, scene_pos: QPointF, button=Qt.MouseButton.NoButton,
                 modifiers=Qt.KeyboardModifier.NoModifier, keyboard: bool = False) -> CanvasEvent:
        at = to_grid(scene_pos)
        return CanvasEvent(scene_pos, at, snap(at, self.scene.grid_step), self.snap_point(at),
                           button, modifiers, keyboard)

    def joins_at(self, p: Point) -> bool:
        """Whether a wire ending at ``p`` joins something (a pin, a wire, a junction)."""
        index = self.scene.index
        return index.is_connection(p) or bool(index.wires_through(p))

    # -- edits --------------------------------------------------------------------------------
    def selected(self) -> list[Element]:
        return [self.doc[i] for i in self.scene.selected_ids()]

    def plan_move(self, offset: Point) -> list[Element]:
        return plan_placement(self.doc, self.scene.index, self.scene.selected_ids(),
                              RigidMap(offset=offset))

    def move_joins(self, plan: list[Element],
                   before: Connectivity | None = None) -> tuple[str, list[Point]]:
        """What applying ``plan`` (a move) would join: a sentence naming the nets ("" when the
        move changes no net) and the points to mark (the moved pins on a joined net).
        ``before``, the document's nets, saves extracting them again during a drag."""
        before = before or extract(self.doc)
        planned = {e.id: e for e in plan}
        elements = [planned.pop(e.id, e) for e in self.doc]
        after = extract([*elements, *planned.values()], previous=before)
        joins = joined_nets(before, after)
        if not joins:
            return "", []
        moved = {e.id: e for e in plan}
        points = sorted({p for (eid, k), net in after.net_of_pin.items()
                         if net in joins and eid in moved
                         for p in element_pins(moved[eid])[k:k + 1]})
        text = "; ".join(" and ".join(names) for names in joins.values())
        return f"dropping here joins nets {text}", points

    def move_selection(self, offset: Point) -> None:
        self._transform_selection(RigidMap(offset=offset), "Move")

    def rotate_selection(self) -> None:
        """Turn the selection a quarter turn clockwise about its centre (R)."""
        if not self.tool.rotate():
            self._transform_selection(RigidMap(turns=1), "Rotate")

    def mirror_selection(self) -> None:
        """Flip the selection left to right about its centre (M)."""
        if not self.tool.mirror():
            self._transform_selection(RigidMap(mirror=True), "Mirror")

    def _transform_selection(self, m: RigidMap, verb: str) -> None:
        ids = self.scene.selected_ids()
        if not ids:
            return
        if m.turns or m.mirror:
            m = RigidMap(m.offset, m.turns, m.mirror, center_of(self.selected()))
        plan = plan_placement(self.doc, self.scene.index, ids, m)
        self.push(MoveElements(self.doc, ids, plan, f"{verb} {self._describe(ids)}"))
        self.scene.select_ids(ids)

    def drag_caption(self, part_id: str, role: str, shift: tuple[float, float]) -> None:
        """Keep the caption ``role`` of a part where the user dropped it, ``shift`` grid units
        from where it was (one undo step; the file keeps the offset)."""
        part = self.doc[part_id]
        caption = self.scene.look.placement.captions.get(part_id, {}).get(role)
        if caption is None or shift == (0, 0):
            return
        new = replace(part, captions=dragged(part, caption, shift))
        self.push(ReplaceElements(self.doc, [new], f"Move {part.designator} {role} caption"))

    def delete_selection(self) -> None:
        ids = self.scene.selected_ids()
        if ids:
            plan = plan_delete(self.doc, self.scene.index, ids)
            self.push(delete_command(self.doc, plan, f"Delete {self._describe(ids)}"))

    def add_elements(self, elements: Iterable[Element], text: str) -> None:
        """Add new elements (a paste) and select them."""
        elements = list(elements)
        if elements:
            self.push(AddElements(self.doc, elements, text))
            self.scene.select_ids(e.id for e in elements)

    def copy(self) -> QMimeData | None:
        """Clipboard data of the selection (None when nothing copyable is selected)."""
        elements = copyable(self.selected())
        return mime_for(elements) if elements else None

    def paste(self, data: QMimeData) -> bool:
        """Paste clipboard data, centred on the keyboard/pointer cursor when it is in view,
        else in the middle of the view. False when the clipboard holds no elements."""
        elements = elements_from(data)
        if not elements:
            return False
        target = self.cursor
        if not self.view.mapToScene(self.view.viewport().rect()).boundingRect().contains(
                to_scene(target)):
            target = snap(to_grid(self.view.mapToScene(self.view.viewport().rect().center())))
        middle = center_of(elements)
        self.add_elements(paste(self.doc, elements, (target[0] - middle[0],
                                                     target[1] - middle[1])), "Paste")
        return True

    def duplicate(self) -> None:
        """Copies of the selection two grid units down and to the right."""
        self.add_elements(paste(self.doc, copyable(self.selected()), (2, 2)), "Duplicate")

    def select_all(self) -> None:
        self.scene.select_ids(e.id for e in self.doc if not isinstance(e, Region))

    def step_selection(self, step: int) -> None:
        """Select the next (or previous) element in reading order, and show it."""
        elements = sorted((e for e in self.doc if not isinstance(e, Region)),
                          key=lambda e: (min(anchor_points(e))[::-1], e.id))
        if not elements:
            return
        ids = [e.id for e in elements]
        current = self.scene.selected_ids()
        at = ids.index(current[0]) + step if current else (0 if step > 0 else -1)
        chosen = ids[at % len(ids)]
        self.scene.select_ids([chosen])
        item = self.scene.item(chosen)
        self.view.ensureVisible(item)
        self.view.set_cursor(snap(to_grid(item.sceneBoundingRect().center())))

    def request_edit(self, element_id: str) -> None:
        self.editRequested.emit(element_id)

    def _describe(self, ids: list[str]) -> str:
        if len(ids) > 1:
            return f"{len(ids)} elements"
        e = self.doc[ids[0]]
        if isinstance(e, PlacedPart | Block):
            return e.designator
        if isinstance(e, NetLabel):
            return "ground" if e.style == "ground" else f"label {e.name}"
        return type(e).__name__.lower()
