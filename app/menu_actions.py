"""How the window's actions describe themselves: tooltips that give the shortcut, Undo and Redo
that name the step they would take, and menus of exclusive choices."""

from __future__ import annotations

from collections.abc import Callable

from PySide6.QtCore import SignalInstance
from PySide6.QtGui import QAction, QActionGroup, QKeySequence
from PySide6.QtWidgets import QMenu

__all__ = ["choice_menu", "describe", "follow_step", "keys_of"]


def keys_of(action: QAction) -> str:
    """The action's shortcut as the platform writes it ("" when it has none)."""
    return action.shortcut().toString(QKeySequence.SequenceFormat.NativeText)


def describe(action: QAction, what: str) -> None:
    """Tooltip ``what (keys)`` and status tip ``what``."""
    keys = keys_of(action)
    action.setToolTip(f"{what} ({keys})" if keys else what)
    action.setStatusTip(what)


def follow_step(action: QAction, can: SignalInstance, changed: SignalInstance,
                current: Callable[[], str]) -> None:
    """Undo or Redo: the label stays fixed, so the toolbar never shifts; the step it would take
    goes in the tooltip and the status tip, and the action is enabled while there is one."""
    plain = action.text().replace("&", "")

    def step(text: str) -> None:
        describe(action, f"{plain} {text}" if text else f"Nothing to {plain.lower()}")

    can.connect(action.setEnabled)
    changed.connect(step)
    action.setEnabled(False)
    step(current())


def choice_menu(parent: QMenu, title: str, options: list, current,
                choose: Callable[[object], None]) -> QMenu:
    """A sub-menu of ``parent`` offering ``options`` (value, text) as exclusive checked actions,
    ``current`` checked; picking one calls ``choose(value)``."""
    menu = parent.addMenu(title)
    group = QActionGroup(menu)
    for value, text in options:
        action = menu.addAction(text, lambda v=value: choose(v))
        action.setCheckable(True)
        action.setChecked(value == current)
        group.addAction(action)
    return menu
