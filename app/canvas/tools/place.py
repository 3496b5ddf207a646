"""Placing a part, ground, net label or junction: a preview follows the snapped cursor, a click
places it, R rotates and M mirrors it while it is held."""

from __future__ import annotations

from dataclasses import replace

from PySide6.QtCore import Qt

from portcut.engine.schematic import PlacedPart

from ...catalog import entry, prototype
from ...commands import AddElements
from ...editing import RigidMap, moved
from ..items import item_for
from .base import CanvasEvent, Tool, ToolHost

__all__ = ["PlaceTool"]


class PlaceTool(Tool):
    """Places ``key`` (a catalog entry) at each click; ``once``: go back to selecting after one
    placement (a part dragged from the palette)."""

    name = "place"

    def __init__(self, canvas: ToolHost, key: str, once: bool = False) -> None:
        super().__init__(canvas)
        self.entry_key = key
        self.once = once
        self.proto = None
        self.item = None

    @property
    def status(self) -> str:
        what = getattr(self.proto, "designator", entry(self.entry_key).title)
        return f"Place {what}: click to place · R rotates · M mirrors · Esc stops placing"

    def start(self) -> None:
        couples = self._selected_inductors() if self.entry_key == "coupling" else ()
        self._new_proto(self.canvas.cursor, couples)
        super().start()

    def _selected_inductors(self) -> tuple[str, ...]:
        doc = self.canvas.doc
        names = tuple(doc[i].designator for i in self.canvas.scene.selected_ids()
                      if isinstance(doc[i], PlacedPart) and doc[i].kind == "inductor")
        return names if len(names) == 2 else ()

    def _new_proto(self, at, couples=()) -> None:
        fresh = prototype(self.canvas.doc, self.entry_key, at, couples)
        if self.proto is not None:  # the next one keeps the turns the user gave this one
            kept = ("rotation", "mirror")
            fresh = replace(fresh, **{f: getattr(self.proto, f) for f in kept
                                      if hasattr(fresh, f)})
        self.proto = fresh
        if self.item is None:
            self.item = item_for(self.proto, self.canvas.scene.look, preview=True)
            self.canvas.scene.addItem(self.item)
        else:
            self.item.sync(self.proto)
        self.item.show()

    def move(self, ev: CanvasEvent) -> None:
        self.proto = replace(self.proto, at=ev.grid)
        self.item.sync(self.proto)
        self.item.show()

    def leave(self) -> None:
        if self.item is not None:
            self.item.hide()

    def press(self, ev: CanvasEvent) -> None:
        if ev.button != Qt.MouseButton.LeftButton:
            return
        doc = self.canvas.doc
        element = replace(self.proto, at=ev.grid)
        if isinstance(element, PlacedPart):
            element = replace(element, designator=doc.next_designator(element.kind))
        what = getattr(element, "designator", entry(self.entry_key).title)
        self.canvas.push(AddElements(doc, [element], f"Place {what}"))
        self.canvas.scene.select_ids([element.id])
        if self.once:
            self.canvas.activate_named("select")
            return
        self._new_proto(ev.grid, getattr(element, "couples", ()))
        self.announce()

    def rotate(self) -> bool:
        self._turn(RigidMap(turns=1))
        return True

    def mirror(self) -> bool:
        self._turn(RigidMap(mirror=True))
        return True

    def _turn(self, m: RigidMap) -> None:
        self.proto = moved(self.proto, replace(m, center=self.proto.at))
        self.item.sync(self.proto)

    def finish(self) -> None:
        if self.item is not None and self.item.scene() is not None:
            self.item.scene().removeItem(self.item)
        self.item = None
