"""Portcut's desktop workbench (PySide6): a thin view and editor over engine's document."""

from .compat import protect_none

protect_none()
