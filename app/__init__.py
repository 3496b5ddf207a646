"""Portcut's desktop workbench (PySide6): a thin view and editor over engine's document."""
