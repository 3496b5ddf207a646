"""Canvas tools (gesture objects) and the list the window offers.

Further tools register through :meth:`app.canvas.Canvas.register_tool` with a :class:`ToolSpec`.
"""

from .base import CanvasEvent, Tool, ToolSpec
from .place import PlaceTool
from .select import SelectTool
from .wire import WireDraft, WireTool

__all__ = [
    "CanvasEvent",
    "PlaceTool",
    "SelectTool",
    "Tool",
    "ToolSpec",
    "WireDraft",
    "WireTool",
    "builtin_tools",
]


def builtin_tools() -> list[ToolSpec]:
    """The tools every canvas has."""
    return [
        ToolSpec("select", "&Select", "S", "Select, move and box-select; drag from a pin to "
                 "draw a wire (S)", SelectTool),
        ToolSpec("wire", "&Wire", "W", "Draw orthogonal wires between pins and wires (W)",
                 WireTool),
    ]
