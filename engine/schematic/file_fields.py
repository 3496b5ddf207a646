"""Readers of single JSON values in a schematic file: each checks one value and names its JSON
path in the DocumentError it raises (``parts[3].rotation: expected one of 0, 90, ...``)."""

from __future__ import annotations

import json
from typing import Any

from ..errors import DocumentError
from .text import text_problem

__all__ = ["COORD_LIMIT", "Data", "bool_field", "choice_field", "fields", "id_field", "json_type",
           "list_field", "outline_point_field", "point_field", "shown", "text_field"]

#: Largest grid coordinate (in either direction) a file may hold.
COORD_LIMIT = 1_000_000

Data = dict[str, Any]


def fields(data: Any, path: str, required: tuple[str, ...] = (),
           defaults: Data | None = None, optional: tuple[str, ...] = ()) -> Data:
    """The object ``data`` with its absent optional fields set to ``defaults``; refuses a
    missing required field and an unknown one."""
    where = path or "the file"
    if not isinstance(data, dict):
        raise DocumentError(f"{where}: expected an object, got {shown(data)}")
    for key in required:
        if key not in data:
            raise DocumentError(f"{where}: the field {key!r} is missing")
    known = (*required, *(defaults or {}), *optional)
    for key in data:
        if key not in known:
            raise DocumentError(f"{where}: unknown field {key!r}; expected "
                                f"{', '.join(map(repr, known))}")
    return {**(defaults or {}), **data}


def text_field(value: Any, path: str, lines: bool = False) -> str:
    """``value`` as storable text (line breaks only where ``lines``), else DocumentError at
    ``path``."""
    if not isinstance(value, str):
        raise DocumentError(f"{path}: expected text, got {shown(value)}")
    problem = text_problem(value, lines)
    if problem:
        raise DocumentError(f"{path}: {problem}")
    return value


def id_field(value: Any, path: str) -> str:
    if not text_field(value, path):
        raise DocumentError(f"{path}: expected a non-empty id, got \"\"")
    return value


def bool_field(value: Any, path: str) -> bool:
    if not isinstance(value, bool):
        raise DocumentError(f"{path}: expected true or false, got {shown(value)}")
    return value


def list_field(value: Any, path: str) -> list[Any]:
    if not isinstance(value, list):
        raise DocumentError(f"{path}: expected a list, got {shown(value)}")
    return value


def choice_field(value: Any, path: str, options: tuple[Any, ...]) -> Any:
    # type-exact, so that true is not taken for 1 nor 90.0 for 90
    if not any(type(value) is type(o) and value == o for o in options):
        raise DocumentError(f"{path}: expected one of {', '.join(map(shown, options))}, "
                            f"got {shown(value)}")
    return value


def point_field(value: Any, path: str) -> tuple[int, int]:
    pair = list_field(value, path)
    if len(pair) != 2 or not all(type(c) is int and abs(c) <= COORD_LIMIT for c in pair):
        raise DocumentError(f"{path}: expected a grid point [x, y] of whole numbers from "
                            f"-{COORD_LIMIT} to {COORD_LIMIT}, got {shown(value)}")
    return (pair[0], pair[1])


def outline_point_field(value: Any, path: str) -> tuple[float, float]:
    pair = list_field(value, path)
    # the bound also refuses nan and infinities; ints are compared exactly, however long
    if len(pair) != 2 or not all(type(c) in (int, float) and abs(c) <= COORD_LIMIT
                                 for c in pair):
        raise DocumentError(f"{path}: expected a point [x, y] of numbers from -{COORD_LIMIT} "
                            f"to {COORD_LIMIT}, got {shown(value)}")
    return (pair[0], pair[1])


def json_type(value: Any) -> str:
    return {dict: "object", list: "list", str: "text", bool: "boolean", int: "number",
            float: "number", type(None): "null"}.get(type(value), type(value).__name__)


def shown(value: Any) -> str:
    """A short JSON rendering of a value for a message."""
    if isinstance(value, int) and not isinstance(value, bool) and abs(value) >= 10**15:
        return f"a {len(str(abs(value)))}-digit number"
    try:
        text = json.dumps(value, ensure_ascii=False)
    except RecursionError:  # nested almost as deep as the decoder allows
        return f"a deeply nested {json_type(value)}"
    if text_problem(text):  # a message must be printable and storable itself
        text = json.dumps(value)
    return text if len(text) <= 40 else text[:37] + "..."
