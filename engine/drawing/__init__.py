"""Drawing a schematic: its colours, the SVG writer, where its dots go, and the drawing check
(collisions of what is drawn).

Draws from the symbol geometry and caption placement of :mod:`portcut.engine.schematic`, as the
Qt canvas does; knows nothing of the command line.
"""

__all__ = ["check", "dots", "palette", "svg"]
