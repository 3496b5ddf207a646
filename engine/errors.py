"""The one exception hierarchy of the engine: every error a user can see is a CircuitError.

Each message names what is at fault (the part, the net, the field) and, where it can, the fix.
"""

from collections.abc import Iterable

__all__ = [
    "CircuitError",
    "CutError",
    "DocumentError",
    "SingularCircuitError",
    "ValueParseError",
]


class CircuitError(ValueError):
    """Base of every error the engine raises on bad input or an unsolvable circuit."""


class ValueParseError(CircuitError):
    """A component value or frequency could not be read; the message quotes the text."""


class CutError(CircuitError):
    """The region is not a valid two-terminal cut; the message names the nets or parts at fault.

    ``nets`` and ``parts`` carry the same names for views that highlight them.
    """

    def __init__(self, message: str, *, nets: Iterable[str] = (),
                 parts: Iterable[str] = ()) -> None:
        super().__init__(message)
        self.nets: tuple[str, ...] = tuple(nets)
        self.parts: tuple[str, ...] = tuple(parts)


class SingularCircuitError(CircuitError):
    """The circuit has no unique solution; the message names the parts or nets involved."""


class DocumentError(CircuitError):
    """A schematic document or file is malformed; the message names the field path."""
