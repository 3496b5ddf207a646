"""Which text a schematic can hold: anything a UTF-8 file can store.

Python strings may hold a lone UTF-16 surrogate (U+D800 to U+DFFF not in a pair), for example
from a ``\\udfff`` escape in a hand-edited file; no UTF-8 file can store one, so a sheet holding
it could never be saved, autosaved or exported. The file reader, the document and the window's
text fields refuse such text with :func:`text_problem`'s reason.
"""

from __future__ import annotations

import re

__all__ = ["text_problem"]

_SURROGATE = re.compile("[\ud800-\udfff]")


def text_problem(text: str) -> str:
    """Why ``text`` cannot be stored in a file ("" when it can), naming the first character at
    fault and where it is (counting from 1)."""
    found = _SURROGATE.search(text)
    if found is None:
        return ""
    return (f"character {found.start() + 1} is U+{ord(found.group()):04X}, half of a UTF-16 "
            "surrogate pair, which no file can store; delete it or type the character again")
