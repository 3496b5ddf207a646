"""The part palette: every placeable thing, grouped, with its symbol as icon. Click (or Enter) to
place it with a preview on the canvas; or drag it onto the canvas."""

from __future__ import annotations

from PySide6.QtCore import QMimeData, QRectF, QSize, Qt
from PySide6.QtGui import QBrush, QColor, QIcon, QPainter, QPen, QPixmap
from PySide6.QtWidgets import QDockWidget, QListWidget, QListWidgetItem, QWidget

from portcut.engine.schematic.symbols import JUNCTION_RADIUS, STROKE_WIDTH, placed_bounds

from ..canvas import ENTRY_MIME, Canvas
from ..canvas.grid import UNIT
from ..canvas.painting import symbol_paths
from ..catalog import ENTRIES, GROUPS, Entry

__all__ = ["PaletteDock", "entry_icon"]

_ICON = 32
_KEY_ROLE = Qt.ItemDataRole.UserRole


def _pixmap(entry: Entry, style: str, colour: QColor, size: int, ratio: float) -> QPixmap:
    pixmap = QPixmap(round(size * ratio), round(size * ratio))
    pixmap.setDevicePixelRatio(ratio)
    pixmap.fill(Qt.GlobalColor.transparent)
    painter = QPainter(pixmap)
    painter.setRenderHint(QPainter.RenderHint.Antialiasing)
    if entry.icon:
        x0, y0, x1, y1 = placed_bounds(entry.icon, (0, 0), style=style)
        span = max(x1 - x0, y1 - y0, 2.0) + 2 * STROKE_WIDTH
        scale = (size - 4) / (span * UNIT)
        painter.translate(size / 2, size / 2)
        painter.scale(scale, scale)
        painter.translate(-(x0 + x1) / 2 * UNIT, -(y0 + y1) / 2 * UNIT)
        paths = symbol_paths(entry.icon, style)
        # keep strokes legible at icon size: at least 1.2 device-independent pixels
        painter.setPen(QPen(colour, max(STROKE_WIDTH * UNIT, 1.2 / scale)))
        painter.drawPath(paths.strokes)
        painter.fillPath(paths.fills, QBrush(colour))
    else:
        r = JUNCTION_RADIUS * size / 2
        painter.setPen(Qt.PenStyle.NoPen)
        painter.setBrush(colour)
        painter.drawEllipse(QRectF(size / 2 - r, size / 2 - r, 2 * r, 2 * r))
    painter.end()
    return pixmap


def entry_icon(entry: Entry, style: str, colour: QColor, size: int = _ICON) -> QIcon:
    """The entry's symbol as an icon, drawn at 1x, 2x and 3x so it stays sharp on high-DPI
    screens."""
    icon = QIcon()
    for ratio in (1.0, 2.0, 3.0):
        icon.addPixmap(_pixmap(entry, style, colour, size, ratio))
    return icon


class _EntryList(QListWidget):
    """Entries that drag as ENTRY_MIME."""

    def mimeData(self, items: list[QListWidgetItem]) -> QMimeData:
        data = QMimeData()
        if items:
            data.setData(ENTRY_MIME, items[0].data(_KEY_ROLE).encode())
        return data

    def mimeTypes(self) -> list[str]:
        return [ENTRY_MIME]


class PaletteDock(QDockWidget):
    """Lists every catalog entry under its group heading."""

    def __init__(self, canvas: Canvas, parent: QWidget | None = None) -> None:
        super().__init__("Parts", parent)
        self.setObjectName("palette")
        self.canvas = canvas
        self.list = _EntryList()
        self.list.setIconSize(QSize(_ICON, _ICON))
        self.list.setDragEnabled(True)
        self.list.setDragDropMode(QListWidget.DragDropMode.DragOnly)
        self.list.setAccessibleName("Part palette")
        self.list.itemClicked.connect(self._place)
        self.list.itemActivated.connect(self._place)
        self.setWidget(self.list)
        self.fill("iec")

    def fill(self, style: str) -> None:
        """(Re)build the list with icons in ``style``."""
        self.list.clear()
        colour = self.palette().color(self.foregroundRole())
        for group in GROUPS:
            heading = QListWidgetItem(group)
            heading.setFlags(Qt.ItemFlag.NoItemFlags)
            font = heading.font()
            font.setBold(True)
            heading.setFont(font)
            self.list.addItem(heading)
            for e in ENTRIES:
                if e.group == group:
                    item = QListWidgetItem(entry_icon(e, style, colour), e.title)
                    item.setData(_KEY_ROLE, e.key)
                    item.setToolTip(f"{e.title}: {e.tip}. Click to place, or drag onto the "
                                    "sheet.")
                    self.list.addItem(item)

    def item_for(self, key: str) -> QListWidgetItem:
        return next(self.list.item(i) for i in range(self.list.count())
                    if self.list.item(i).data(_KEY_ROLE) == key)

    def _place(self, item: QListWidgetItem) -> None:
        key = item.data(_KEY_ROLE)
        if key:
            self.canvas.place(key)
