"""Copy and paste of sheet elements through the system clipboard.

The clipboard holds a small document in Portcut's own file format (engine's fileformat) under
:data:`MIME`, so a copy pastes into another window or a later session; a paste gets fresh ids
and designators (app/editing.paste). Regions and collapsed blocks are not copied.
"""

from __future__ import annotations

import atexit
from collections.abc import Iterable
from functools import cache

from PySide6.QtCore import QMimeData
from PySide6.QtWidgets import QApplication

from portcut.engine.errors import CircuitError
from portcut.engine.schematic import Block, Document, Element, Region
from portcut.engine.schematic.fileformat import dumps, loads

__all__ = ["MIME", "copyable", "elements_from", "mime_for", "put"]

MIME = "application/x-portcut-elements"


def copyable(elements: Iterable[Element]) -> list[Element]:
    return [e for e in elements if not isinstance(e, Region | Block)]


def mime_for(elements: Iterable[Element]) -> QMimeData:
    """Clipboard data holding ``elements``."""
    sheet = Document("Clipboard")
    for e in copyable(elements):
        sheet.add(e)
    data = QMimeData()
    data.setData(MIME, dumps(sheet).encode("utf-8"))
    return data


def put(data: QMimeData) -> None:
    """Hand ``data`` to the system clipboard."""
    _clear_at_exit()
    QApplication.clipboard().setMimeData(data)


@cache
def _clear_at_exit() -> None:
    # Qt's clipboard still owning our data while the interpreter shuts down crashes the
    # process on exit (seen with the offscreen platform), so it is emptied first.
    def clear() -> None:
        app = QApplication.instance()
        if app is not None:
            app.clipboard().clear()

    atexit.register(clear)


def elements_from(data: QMimeData) -> list[Element]:
    """The elements on the clipboard ([] when it holds none of ours or cannot be read)."""
    if not data.hasFormat(MIME):
        return []
    try:
        return list(loads(bytes(data.data(MIME))))
    except CircuitError:
        return []
