"""Canvas colours: the light theme is the shared drawing palette (engine.drawing.palette, which the
SVG writer uses too); the dark theme is its night counterpart, our own.

A calm, neutral sheet with dark strokes; one accent colour kept for regions and blocks, one error
colour, and a selection colour distinct from both. Colours are hex strings so that the themes
stay plain data; :func:`qcolor` turns one into a QColor.
"""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtGui import QColor

from portcut.engine.drawing.palette import PALETTE

__all__ = ["DARK", "LIGHT", "THEMES", "Theme", "qcolor"]


@dataclass(frozen=True)
class Theme:
    """The colours the canvas paints with."""

    name: str
    sheet: str          # canvas background
    grid: str           # grid dots
    grid_major: str     # every fifth grid dot
    stroke: str         # symbol strokes, wires, junction dots
    text: str           # designators and net names
    value: str          # values, a little quieter than designators
    selection: str      # selected elements, the rubber band, the pin a wire would join
    accent: str         # regions and collapsed blocks (and nothing else)
    accent_fill: str    # region fill
    error: str          # invalid values, error states
    preview: str        # parts and wires being placed or drawn


LIGHT = Theme(
    name="light",
    sheet=PALETTE.paper, grid=PALETTE.grid, grid_major="#dcd7ca",
    stroke=PALETTE.ink, text=PALETTE.text, value=PALETTE.muted,
    selection=PALETTE.selection, accent=PALETTE.accent, accent_fill=PALETTE.accent_fill,
    error=PALETTE.error, preview=PALETTE.muted,
)

DARK = Theme(
    name="dark",
    sheet="#1c1f23", grid="#272b30", grid_major="#363b42",
    stroke="#d9dce1", text="#e4e6e9", value="#a3a9b2",
    selection="#e3a04a", accent="#5fb3bf", accent_fill="#1f3538",
    error="#e8775c", preview="#8a919b",
)

THEMES: dict[str, Theme] = {t.name: t for t in (LIGHT, DARK)}


def qcolor(hex_colour: str) -> QColor:
    """QColor of a ``#rrggbb`` text."""
    return QColor(hex_colour)
