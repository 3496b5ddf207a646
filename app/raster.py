"""PNG drawings of a sheet: the SVG writer's drawing rasterised by Qt, for ``export -o x.png``."""

from __future__ import annotations

import os
from pathlib import Path

from portcut.engine.schematic.atomic import write_atomically

__all__ = ["PNG_WRITERS", "svg_to_png"]

#: Pixels per SVG user unit: drawings are laid out at screen scale, so twice that is sharp on
#: a report page.
SCALE = 2.0


def svg_to_png(svg_text: str, path: Path) -> None:
    """Rasterise ``svg_text`` and write the PNG to ``path`` atomically (``-`` is stdout)."""
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    from PySide6.QtCore import QBuffer, QByteArray, QIODevice
    from PySide6.QtGui import QColor, QGuiApplication, QImage, QPainter
    from PySide6.QtSvg import QSvgRenderer

    _app = QGuiApplication.instance() or QGuiApplication(["portcut"])  # fonts need one
    renderer = QSvgRenderer(QByteArray(svg_text.encode("utf-8")))
    size = renderer.defaultSize() * SCALE
    image = QImage(size, QImage.Format.Format_ARGB32)
    image.fill(QColor("white"))
    painter = QPainter(image)
    renderer.render(painter)
    painter.end()
    buffer = QBuffer()
    buffer.open(QIODevice.OpenModeFlag.WriteOnly)
    image.save(buffer, "PNG")
    data = bytes(buffer.data())
    if str(path) == "-":
        import sys

        sys.stdout.buffer.write(data)
        sys.stdout.buffer.flush()
    else:
        write_atomically(path, data)


#: The export formats the window's libraries add to the headless command line, by suffix.
PNG_WRITERS = {".png": svg_to_png}
