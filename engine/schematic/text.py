"""Which text a schematic can hold: what a UTF-8 file can store and an XML drawing can show.

Python strings may hold a lone UTF-16 surrogate (U+D800 to U+DFFF not in a pair), for example
from a ``\\udfff`` escape in a hand-edited file; no UTF-8 file can store one, so a sheet holding
it could never be saved, autosaved or exported. Control characters (U+0000 to U+001F) and the
non-characters U+FFFE and U+FFFF are not allowed anywhere in XML 1.0 (tab, line feed and carriage
return aside), so an SVG of a sheet naming a part with one would not be well-formed; and tab, line
feed and carriage return belong only in text that may run over several lines (a table of
readings), never in a name or a title. The file reader, the document and the window's text
fields refuse such text with :func:`text_problem`'s reason.
"""

from __future__ import annotations

import re

__all__ = ["text_problem"]

_NEVER = "\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff"
_FORBIDDEN = {False: re.compile(f"[{_NEVER}\t\n\r]"), True: re.compile(f"[{_NEVER}]")}
_SPACING = {"\t": "a tab", "\n": "a line feed", "\r": "a carriage return"}


def text_problem(text: str, lines: bool = False) -> str:
    """Why ``text`` cannot be stored ("" when it can), naming the first character at fault and
    where it is (counting from 1). ``lines``: the text may hold tabs and line breaks."""
    found = _FORBIDDEN[lines].search(text)
    if found is None:
        return ""
    char = found.group()
    where = f"character {found.start() + 1} is U+{ord(char):04X}"
    if "\ud800" <= char <= "\udfff":
        return (f"{where}, half of a UTF-16 surrogate pair, which no file can store; delete it "
                "or type the character again")
    if char in _SPACING:
        return (f"{where} ({_SPACING[char]}), but this text is one line of text; use a space "
                "instead")
    return (f"{where}, a control character or non-character that a drawing cannot show; "
            "delete it")
