"""A guard against a reference-counting fault of the Qt bindings on Python 3.11.

The PySide6 build in use returns ``None`` from every void C++ call without taking a reference
to it, which is harmless from Python 3.12 on, where ``None`` is immortal (PEP 683), but on 3.11
drains ``None``'s reference count by one per call (``QPainterPath.lineTo``, ``QPainter.setPen``,
``QGraphicsItem.update``...) until the interpreter aborts with "deallocating None" after a few
minutes of drawing. :func:`protect_none` gives ``None`` the same kind of huge reference count
that immortality means on later versions, so the drain never reaches zero.
"""

from __future__ import annotations

import ctypes
import sys

__all__ = ["protect_none"]

_HEADROOM = 1 << 48  # at a billion void calls a second, nine years of drawing


def protect_none() -> None:
    """Make ``None`` effectively immortal on Python versions where it is not (before 3.12)."""
    if sys.version_info >= (3, 12):
        return
    # ob_refcnt is the first field of every CPython object, a Py_ssize_t
    ctypes.c_ssize_t.from_address(id(None)).value += _HEADROOM
