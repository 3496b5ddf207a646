"""What the live analysis says about the current region, drawn over the sheet: + and − where the
two port nets cross the outline for a valid cut; for an invalid one the outline in the error
style and a glow under the nets and parts at fault. Also a warning triangle at each failed
sheet check (the checks panel keeps it up to date).

Two items the canvas owns beside the element items (they show no element): one under the wires
for the fault glow, one over the symbols for the port marks. Both are rebuilt from each analysis
and read their colours from the scene's Look when they paint.
"""

from __future__ import annotations

from collections.abc import Iterable

from PySide6.QtCore import QObject, QPointF, QRectF, Qt
from PySide6.QtGui import QBrush, QColor, QFont, QPainter, QPainterPath, QPen, QPolygonF
from PySide6.QtWidgets import QGraphicsItem, QStyleOptionGraphicsItem, QWidget
from shiboken6 import isValid

from portcut.engine.schematic import Block, PlacedPart, Region, Wire
from portcut.engine.schematic.reduction import RegionAnalysis
from portcut.engine.schematic.symbols import MARK_FONT_SIZE, MARK_TEXT, STROKE_WIDTH

from ..analysis import LiveAnalysis
from ..regions import PortMark, PortMarker, body_bounds
from ..theme import qcolor
from .grid import UNIT
from .items import Z_DOT, Z_REGION, Z_WIRE, Look

__all__ = ["CheckMarksItem", "CutMarks", "FaultItem", "PortMarksItem"]

#: Radius of a port mark, grid units.
MARK_RADIUS = 0.6
#: Half the base of a check's warning triangle, grid units.
CHECK_MARK_SIZE = 0.55
_GLOW_WIDTH = 0.7 * UNIT


def _tinted(hex_colour: str, alpha: int) -> QColor:
    colour = qcolor(hex_colour)
    colour.setAlpha(alpha)
    return colour


class FaultItem(QGraphicsItem):
    """An invalid cut: the outline in the error style, a glow under the wires and parts named."""

    def __init__(self, look: Look) -> None:
        super().__init__()
        self.look = look
        self.setZValue((Z_REGION + Z_WIRE) / 2)
        self.outline = QPolygonF()
        self.wires = QPainterPath()
        self.parts = QPainterPath()
        self._bounds = QRectF()

    def show_fault(self, outline: tuple, wires: list[Wire],
                   parts: list[PlacedPart | Block]) -> None:
        self.prepareGeometryChange()
        self.outline = QPolygonF([QPointF(x * UNIT, y * UNIT) for x, y in outline])
        self.wires = QPainterPath()
        for wire in wires:
            (x, y), *rest = wire.points
            self.wires.moveTo(x * UNIT, y * UNIT)
            for x, y in rest:
                self.wires.lineTo(x * UNIT, y * UNIT)
        self.parts = QPainterPath()
        for part in parts:
            x0, y0, x1, y1 = body_bounds(part, self.look.style)
            self.parts.addRoundedRect(QRectF((x0 - 0.5) * UNIT, (y0 - 0.5) * UNIT,
                                             (x1 - x0 + 1) * UNIT, (y1 - y0 + 1) * UNIT),
                                      0.4 * UNIT, 0.4 * UNIT)
        pad = _GLOW_WIDTH
        self._bounds = (self.outline.boundingRect() | self.wires.boundingRect()
                        | self.parts.boundingRect()).adjusted(-pad, -pad, pad, pad)
        self.update()

    def clear(self) -> None:
        if not (self.outline.isEmpty() and self.wires.isEmpty() and self.parts.isEmpty()):
            self.show_fault((), [], [])  # (an update repaints the whole region: only if shown)

    def boundingRect(self) -> QRectF:
        return self._bounds

    def paint(self, painter: QPainter, option: QStyleOptionGraphicsItem,
              widget: QWidget | None = None) -> None:
        theme = self.look.theme
        if not self.outline.isEmpty():
            # over the region's own accent drawing: paper first, so the tint reads as the error's
            painter.setPen(Qt.PenStyle.NoPen)
            painter.setBrush(qcolor(theme.sheet))
            painter.drawPolygon(self.outline)
            pen = QPen(qcolor(theme.error), STROKE_WIDTH * UNIT * 1.4, Qt.PenStyle.DashLine)
            painter.setPen(pen)
            painter.setBrush(_tinted(theme.error, 24))
            painter.drawPolygon(self.outline)
        glow = QPen(_tinted(theme.error, 110), _GLOW_WIDTH, Qt.PenStyle.SolidLine,
                    Qt.PenCapStyle.RoundCap, Qt.PenJoinStyle.RoundJoin)
        painter.setPen(glow)
        painter.setBrush(Qt.BrushStyle.NoBrush)
        painter.drawPath(self.wires)
        painter.setPen(QPen(_tinted(theme.error, 160), 0))
        painter.setBrush(_tinted(theme.error, 60))
        painter.drawPath(self.parts)


class _SpotMarksItem(QGraphicsItem):
    """Base of the items that draw one mark at each of some sheet points: the item's bounds are
    the union of the marks' boxes, :attr:`BOX` placed at each point."""

    #: A mark's box about its point, grid units: (left, top, width, height).
    BOX = (0.0, 0.0, 0.0, 0.0)

    def __init__(self, look: Look, z: float) -> None:
        super().__init__()
        self.look = look
        self.setZValue(z)
        self._bounds = QRectF()

    def _cover(self, points: Iterable[tuple[float, float]]) -> None:
        """Make the bounds cover a mark at each of ``points`` (grid units), and repaint."""
        self.prepareGeometryChange()
        left, top, width, height = (v * UNIT for v in self.BOX)
        bounds = QRectF()
        for x, y in points:
            bounds |= QRectF(x * UNIT + left, y * UNIT + top, width, height)
        self._bounds = bounds
        self.update()

    def boundingRect(self) -> QRectF:
        return self._bounds


class PortMarksItem(_SpotMarksItem):
    """Circled + and − where the port nets cross the outline."""

    _R = MARK_RADIUS + 0.2  # the circle and its stroke
    BOX = (-_R, -_R, 2 * _R, 2 * _R)

    def __init__(self, look: Look) -> None:
        super().__init__(look, Z_DOT + 0.5)
        self.marks: tuple[PortMark, ...] = ()

    def show_marks(self, marks: tuple[PortMark, ...]) -> None:
        if marks != self.marks:  # bounds over + and − span the region: repaint only a change
            self.marks = marks
            self._cover(m.at for m in marks)

    def paint(self, painter: QPainter, option: QStyleOptionGraphicsItem,
              widget: QWidget | None = None) -> None:
        theme = self.look.theme
        font = QFont(painter.font())
        font.setPixelSize(max(1, round(MARK_FONT_SIZE * UNIT * 1.2)))
        font.setBold(True)
        painter.setFont(font)
        r = MARK_RADIUS * UNIT
        for m in self.marks:
            centre = QPointF(m.at[0] * UNIT, m.at[1] * UNIT)
            painter.setPen(QPen(qcolor(theme.accent), STROKE_WIDTH * UNIT))
            painter.setBrush(QBrush(qcolor(theme.sheet)))
            painter.drawEllipse(centre, r, r)
            painter.setPen(qcolor(theme.accent))
            painter.drawText(QRectF(centre.x() - r, centre.y() - r, 2 * r, 2 * r),
                             Qt.AlignmentFlag.AlignCenter, MARK_TEXT[m.role])


class CheckMarksItem(_SpotMarksItem):
    """A warning triangle at each point where a sheet check fails (app/panels/checks.py)."""

    _R = CHECK_MARK_SIZE + 0.3  # the triangle, which stands above and right of its point
    BOX = (-_R, -2 * _R, 2 * _R, 2 * _R)

    def __init__(self, look: Look) -> None:
        super().__init__(look, Z_DOT + 0.6)
        self.points: tuple[tuple[int, int], ...] = ()

    def show_points(self, points: tuple[tuple[int, int], ...]) -> None:
        if points != self.points:
            self.points = points
            self._cover(points)

    def paint(self, painter: QPainter, option: QStyleOptionGraphicsItem,
              widget: QWidget | None = None) -> None:
        theme = self.look.theme
        s = CHECK_MARK_SIZE * UNIT
        font = QFont(painter.font())
        font.setPixelSize(max(1, round(s)))
        font.setBold(True)
        painter.setFont(font)
        for x, y in self.points:
            # the triangle stands just above and right of the point, clear of the pin itself
            cx, base = x * UNIT + 0.5 * s, y * UNIT - 0.3 * s
            triangle = QPolygonF([QPointF(cx, base - 1.6 * s), QPointF(cx + s, base),
                                  QPointF(cx - s, base)])
            painter.setPen(QPen(qcolor(theme.error), STROKE_WIDTH * UNIT))
            painter.setBrush(_tinted(theme.error, 200))
            painter.drawPolygon(triangle)
            painter.setPen(qcolor(theme.sheet))
            painter.drawText(QRectF(cx - s, base - 1.25 * s, 2 * s, 1.25 * s),
                             Qt.AlignmentFlag.AlignCenter, "!")


class CutMarks(QObject):
    """Keeps the fault glow and the port marks in step with the live analysis."""

    def __init__(self, scene, live: LiveAnalysis, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.scene = scene
        self.live = live
        self._fault: FaultItem | None = None
        self._ports: PortMarksItem | None = None
        # the marks depend on the drawing only: kept while the connectivity, region and port
        # are the same (nothing was redrawn since), else each net's worked out again only
        # where what it depends on changed
        self._read_from: tuple | None = None
        self._marker = PortMarker()
        self._marks: tuple[PortMark, ...] = ()
        live.analysed.connect(self.show)

    def items(self) -> tuple[FaultItem, PortMarksItem]:
        """The two items, made again where the scene was cleared (a document replaced)."""
        if self._fault is None or not isValid(self._fault):
            self._fault = FaultItem(self.scene.look)
            self.scene.addItem(self._fault)
        if self._ports is None or not isValid(self._ports):
            self._ports = PortMarksItem(self.scene.look)
            self.scene.addItem(self._ports)
        return self._fault, self._ports

    def show(self, analysis: RegionAnalysis | None) -> None:
        fault, ports = self.items()
        doc = self.live.doc
        region = doc[analysis.region_id] if analysis is not None and \
            analysis.region_id in doc else None
        if not isinstance(region, Region):
            fault.clear()
            ports.show_marks(())
            return
        if analysis.ok:
            fault.clear()
            port, conn = analysis.equivalent.port, self.live.conn
            if self._read_from is None or self._read_from[0] is not conn or \
                    self._read_from[1:] != (region, port):
                self._read_from = (conn, region, port)
                self._marks = self._marker.marks(doc, conn, region, port)
            ports.show_marks(self._marks)
            return
        ports.show_marks(())
        named = [doc[i] for i in analysis.bad_elements if i in doc]
        fault.show_fault(region.outline, [e for e in named if isinstance(e, Wire)],
                         [e for e in named if isinstance(e, PlacedPart | Block)])
