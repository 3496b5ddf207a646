"""The scroll area a panel's body sits in, so a short panel scrolls instead of squeezing its
texts over one another."""

from __future__ import annotations

from PySide6.QtCore import QEvent, QObject, QSize, Qt
from PySide6.QtWidgets import QFrame, QScrollArea, QWidget

__all__ = ["scrolled"]


class _GrowingScroll(QScrollArea):
    """A scroll area that asks for the height its body needs at its width, up to ``share`` of
    the window's height, and scrolls beyond that: the panel grows with what it shows without
    ever pushing the window taller than it is."""

    def __init__(self, share: float) -> None:
        super().__init__()
        self.share = share

    def minimumSizeHint(self) -> QSize:
        hint = super().minimumSizeHint()
        body = self.widget()
        if body is None:
            return hint
        width = self.viewport().width()
        # a wrapped text is as tall as its width makes it: the body's own minimum ignores that
        need = body.heightForWidth(width) if body.hasHeightForWidth() else -1
        need = max(need, body.minimumSizeHint().height())
        cap = int(self.window().height() * self.share)
        return QSize(hint.width(), max(hint.height(), min(need, cap)))

    def eventFilter(self, watched: QObject, event: QEvent) -> bool:
        if watched is self.widget() and event.type() == QEvent.Type.LayoutRequest:
            self.updateGeometry()  # the body shows something else: ask again for its height
        return super().eventFilter(watched, event)

    def resizeEvent(self, event) -> None:
        super().resizeEvent(event)
        self.updateGeometry()  # texts wrap differently at another width; the window's share


def scrolled(body: QWidget, grow_share: float = 0.0) -> QScrollArea:
    """``body`` in a frameless vertical scroll area that follows the panel's width and is never
    narrower than ``body``'s widest row (a sideways scroll would only hide the first letters of
    texts that wrap instead). ``grow_share``: the area asks for the height ``body`` needs, up to
    that share of the window's height (0: it asks for none, the panel's height is the window's
    to give)."""
    scroll = _GrowingScroll(grow_share) if grow_share else QScrollArea()
    scroll.setWidgetResizable(True)
    scroll.setFrameShape(QFrame.Shape.NoFrame)
    scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
    scroll.setWidget(body)
    scroll.setMinimumWidth(body.minimumSizeHint().width()
                           + scroll.verticalScrollBar().sizeHint().width())
    return scroll
