"""The schematic canvas: scene, view, items, tools.

* :class:`Canvas` — scene + view + current tool over a Workbench; the edits menus and tools share;
* :class:`SchematicScene`, :class:`SchematicView`, :class:`Look`;
* tools: :class:`Tool`, :class:`ToolSpec` (register more with ``Canvas.register_tool``).
"""

from .canvas import Canvas
from .items import Look
from .scene import SchematicScene
from .tools import CanvasEvent, PlaceTool, SelectTool, Tool, ToolSpec, WireTool
from .view import ENTRY_MIME, SchematicView

__all__ = [
    "ENTRY_MIME",
    "Canvas",
    "CanvasEvent",
    "Look",
    "PlaceTool",
    "SchematicScene",
    "SchematicView",
    "SelectTool",
    "Tool",
    "ToolSpec",
    "WireTool",
]
