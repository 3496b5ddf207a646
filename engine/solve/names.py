"""Names in messages and names for new things: a list shortened to its first few, a word
in singular or plural, a name not yet taken."""

from __future__ import annotations

from collections.abc import Sequence

__all__ = ["listing", "plural", "unused_name"]


def listing(items: Sequence[str], most: int = 6) -> str:
    """``items`` joined by commas, the first ``most`` of them and a count of the rest
    ("nothing" when there are none).

    >>> listing(["R1", "R2", "R3"], 2)
    'R1, R2 and 1 more'
    """
    if not items:
        return "nothing"
    shown = ", ".join(items[:most])
    return shown if len(items) <= most else f"{shown} and {len(items) - most} more"


def plural(count: int, one: str, many: str) -> str:
    """``one`` when ``count`` is 1, else ``many``."""
    return one if count == 1 else many


def unused_name(base: str, taken: set[str]) -> str:
    """``base``, primed (``'``) as often as needed to be none of ``taken``; the name is added
    to ``taken``.

    >>> taken = {"R1", "R1'"}
    >>> unused_name("R1", taken), sorted(taken)
    ("R1''", ['R1', "R1'", "R1''"])
    """
    name = base
    while name in taken:
        name += "'"
    taken.add(name)
    return name
