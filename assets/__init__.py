"""Bundled data: example documents (``examples/*.json``) and icons.

The demo document is :data:`DEMO`; :func:`example_path` finds any bundled example by stem.
"""

from importlib.resources import files
from pathlib import Path

__all__ = ["DEMO", "example_names", "example_path", "icon_path"]

_EXAMPLES = files(__name__) / "examples"
_ICONS = files(__name__) / "icons"

DEMO = "strain_gauge_bridge"


def example_names() -> list[str]:
    """Stems of every bundled example, sorted."""
    stems = (p.name.removesuffix(".json") for p in _EXAMPLES.iterdir() if p.name.endswith(".json"))
    return sorted(stems)


def example_path(name: str = DEMO) -> Path:
    """Path of the bundled example ``name`` (a stem such as ``"rc_antialias"``)."""
    return Path(str(_EXAMPLES / f"{name}.json"))


def icon_path(name: str = "portcut") -> Path:
    """Path of the bundled SVG icon ``name`` (the window's icon by default)."""
    return Path(str(_ICONS / f"{name}.svg"))
