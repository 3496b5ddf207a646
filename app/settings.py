"""User settings kept with QSettings: canvas theme, symbol style, snapping grid, recent files,
window layout."""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import QByteArray, QSettings

from portcut.engine.schematic.symbols import STYLES

from .theme import THEMES

__all__ = ["GRID_STEPS", "MAX_RECENT", "Settings"]

#: Snapping steps offered, in grid units (pins sit on the unit grid; a coarser step keeps
#: drawings tidy, and pins still attract the pointer).
GRID_STEPS = (1, 2, 4)
MAX_RECENT = 8


class Settings:
    """Typed access to the settings store; values that are missing or not understood fall back
    to the defaults."""

    def __init__(self, store: QSettings | None = None) -> None:
        self.store = store if store is not None else QSettings()

    def _choice(self, key: str, options, default):
        value = self.store.value(key, default)
        return value if value in options else default

    @property
    def theme(self) -> str:
        return self._choice("canvas/theme", tuple(THEMES), "light")

    @theme.setter
    def theme(self, name: str) -> None:
        self.store.setValue("canvas/theme", name)

    @property
    def style(self) -> str:
        return self._choice("canvas/symbols", STYLES, "iec")

    @style.setter
    def style(self, name: str) -> None:
        self.store.setValue("canvas/symbols", name)

    @property
    def grid_step(self) -> int:
        try:
            step = int(self.store.value("canvas/grid", 1))
        except (TypeError, ValueError):
            return 1
        return step if step in GRID_STEPS else 1

    @grid_step.setter
    def grid_step(self, step: int) -> None:
        self.store.setValue("canvas/grid", int(step))

    @property
    def recent_files(self) -> list[Path]:
        value = self.store.value("files/recent", [])
        if isinstance(value, str):  # QSettings hands back a lone entry as a string
            value = [value]
        return [Path(p) for p in value or [] if isinstance(p, str)]

    def add_recent(self, path: Path) -> None:
        path = path.resolve()
        paths = [path, *(p for p in self.recent_files if p != path)][:MAX_RECENT]
        self.store.setValue("files/recent", [str(p) for p in paths])

    def clear_recent(self) -> None:
        self.store.setValue("files/recent", [])

    def window_layout(self) -> tuple[QByteArray | None, QByteArray | None]:
        """Saved (geometry, dock state), or None where nothing was saved."""
        return self.store.value("window/geometry"), self.store.value("window/state")

    def save_window_layout(self, geometry: QByteArray, state: QByteArray) -> None:
        self.store.setValue("window/geometry", geometry)
        self.store.setValue("window/state", state)
