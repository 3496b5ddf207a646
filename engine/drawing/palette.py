"""The colours of a Portcut drawing, defined once for the Qt canvas and the SVG writer.

A light, calm sheet with dark ink; one accent colour for regions and collapsed blocks; one
colour for errors. Colours are ``#rrggbb`` text, which both QColor and SVG read.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["PALETTE", "Palette"]


@dataclass(frozen=True, slots=True)
class Palette:
    """Named colours of the drawing."""

    paper: str = "#fbfaf6"        # sheet background, a warm off-white
    grid: str = "#e6e2d8"         # grid dots and lines
    ink: str = "#2b3038"          # symbols, wires, junctions
    text: str = "#2b3038"         # designators, net names, title
    muted: str = "#646a73"        # values and secondary text
    accent: str = "#2e7d88"       # region outlines, collapsed blocks and their values
    accent_fill: str = "#e2eff0"  # light fill inside a shown region
    error: str = "#b5452b"        # parts or nets at fault, messages
    selection: str = "#d38b26"    # selected elements on the canvas


PALETTE = Palette()
