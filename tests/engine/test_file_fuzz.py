"""Thousands of seeded mangled variants of the bundled examples, through everything a file meets.

Each variant is a bundled example changed the way damage, hand edits and other programs change
files: bytes flipped, cut, doubled or inserted; one JSON value replaced (by another type, an
extreme number, text with control characters, lone surrogates or U+FFFE), a field deleted, a
list item repeated. For every variant: loading either succeeds or raises DocumentError; a loaded
sheet saves and reloads to the same document; its SVG export (both symbol styles) parses as XML.
On a sample, the command line's reduce and export run in-process and end with an exit code and
a one-line message, never an uncaught exception (which is what prints a traceback).
"""

from __future__ import annotations

import io
import json
import random
import xml.etree.ElementTree as ET
from contextlib import redirect_stderr, redirect_stdout
from pathlib import Path
from typing import Any

import pytest

from portcut import assets
from portcut.engine.cli import commands as cli
from portcut.engine.drawing.svg import document_svg
from portcut.engine.errors import DocumentError
from portcut.engine.schematic.fileformat import dumps, loads, save

VARIANTS = 3000
CLI_EVERY = 25  # one variant in this many also goes through the command line
EXAMPLES = {name: assets.example_path(name).read_text(encoding="utf-8")
            for name in assets.example_names()}
# text XML cannot hold (XML 1.0 section 2.2, from memory), no UTF-8 file can store (lone
# surrogates), or that often breaks parsers and formatters
NASTY_TEXT = ["\x00", "\x01", "\x1f", "\ufffe", "\uffff", "\udfff", "\ud800x", "<&>\"'", "]]>",
              "\u202e", "𝄞", "", " ", "\n", "R1", "0", "1e308", "-1e308", "1e-320", "nan", "inf",
              "4k7", "1T", "1e160", "1e-300", "100p", "∠", "µ"]
NASTY_NUMBERS = [0, -1, 1, 45, 90, 360, 2**63, -(2**63), 10**400, 1e308, -1e308, 5e-324, 0.5,
                 1_000_000, 1_000_001, True, False, None]


def _json_value(rng: random.Random, depth: int = 0) -> Any:
    pick = rng.random()
    if pick < 0.4:
        return rng.choice(NASTY_TEXT) + (rng.choice(NASTY_TEXT) if rng.random() < 0.3 else "")
    if pick < 0.75 or depth > 2:
        return rng.choice(NASTY_NUMBERS)
    if pick < 0.9:
        return [_json_value(rng, depth + 1) for _ in range(rng.randrange(4))]
    return {rng.choice(["id", "kind", "at", "x", "plus", "minus", "name"]):
            _json_value(rng, depth + 1) for _ in range(rng.randrange(3))}


def _alike(rng: random.Random, value: Any) -> Any:
    """A value of the same JSON type: what a careless hand edit or another program writes."""
    if isinstance(value, bool):
        return not value
    if isinstance(value, int):
        if rng.random() < 0.7:
            return value + rng.randint(-6, 6)  # a part or wire moved
        return rng.choice([rng.choice(NASTY_NUMBERS), rng.choice([0, 90, 180, 270, 1, 2, 3])])
    if isinstance(value, str):
        nasty = rng.choice(NASTY_TEXT)
        return rng.choice([nasty, value + nasty, nasty + value, value[:rng.randint(0, 3)]])
    return _json_value(rng)


def _paths(data: Any, prefix: tuple = ()) -> list[tuple]:
    out = [prefix] if prefix else []
    items = data.items() if isinstance(data, dict) else enumerate(data) \
        if isinstance(data, list) else ()
    for key, value in items:
        out += _paths(value, (*prefix, key))
    return out


def _structural(rng: random.Random, text: str) -> str:
    data = json.loads(text)
    path = rng.choice(_paths(data))
    parent = data
    for key in path[:-1]:
        parent = parent[key]
    how = rng.random()
    if how < 0.5:
        parent[path[-1]] = _alike(rng, parent[path[-1]])
    elif how < 0.75:
        parent[path[-1]] = _json_value(rng)
    elif how < 0.9 or not isinstance(parent, list):
        del parent[path[-1]]
    else:
        parent.insert(path[-1], json.loads(json.dumps(parent[path[-1]])))  # a repeated item
    return json.dumps(data, ensure_ascii=rng.random() < 0.5)


def _bytewise(rng: random.Random, text: str) -> bytes:
    raw = bytearray(text.encode("utf-8"))
    for _ in range(rng.randrange(1, 4)):
        at = rng.randrange(len(raw))
        how = rng.random()
        if how < 0.25:
            raw[at] = rng.randrange(256)
        elif how < 0.45:
            del raw[at:at + rng.randrange(1, 40)]
        elif how < 0.6:
            raw[at:at] = raw[at:at + rng.randrange(1, 40)]
        elif how < 0.8:
            escape = rng.choice(["\\u0000", "\\u0001", "\\udfff", "\\ud800", "\\ufffe", "\\\\"])
            raw[at:at] = escape.encode("ascii")
        else:
            del raw[at:]
    return bytes(raw)


def _variant(seed: int) -> tuple[str, str | bytes]:
    rng = random.Random(seed)
    name = rng.choice(sorted(EXAMPLES))
    text = EXAMPLES[name]
    if rng.random() < 0.75:
        for _ in range(rng.choice([1, 1, 2])):
            text = _structural(rng, text)
        return name, text
    return name, _bytewise(rng, text)


def _cli(*argv: str) -> tuple[int, str]:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        code = cli.main(list(argv))
    return code, err.getvalue()


@pytest.mark.parametrize("block", range(10))
def test_every_mangled_example_loads_or_is_refused_and_what_loads_saves_and_draws(
        block: int, tmp_path: Path) -> None:
    loaded = 0
    for seed in range(block, VARIANTS, 10):
        name, text = _variant(seed)
        where = f"variant {seed} of {name}"
        if seed % CLI_EVERY == 0:
            _check_the_command_line(text, tmp_path, where)
        try:
            doc = loads(text)
        except DocumentError as e:
            str(e).encode("utf-8")  # the message can be shown and stored
            continue
        loaded += 1
        path = tmp_path / "sheet.json"
        save(doc, path)
        assert loads(path.read_bytes()) == doc, where
        assert loads(dumps(doc)) == doc, where
        for style in ("iec", "ieee"):
            svg = document_svg(doc, style=style)
            ET.fromstring(svg)  # well-formed XML, or this raises
            svg.encode("utf-8")
    assert loaded > 0  # the mangling leaves some files loadable, so the later checks ran


def _check_the_command_line(text: str | bytes, folder: Path, where: str) -> None:
    path = folder / "variant.json"
    path.write_bytes(text if isinstance(text, bytes) else text.encode("utf-8", "surrogatepass"))
    out = folder / "out.svg"
    for argv in (("reduce", str(path)), ("reduce", str(path), "--json"),
                 ("sweep", str(path), "--from", "10", "--to", "1M", "--points", "4"),
                 ("export", str(path), "-o", str(out))):
        code, err = _cli(*argv)
        assert code in (0, 1), (where, argv, err)
        assert "Traceback" not in err, (where, argv, err)
        if code == 1:  # a refusal is one line naming the command
            assert err.startswith(f"portcut {argv[0]}: ") and err.count("\n") == 1, err
    if out.exists():
        ET.parse(out)
        out.unlink()
