"""The Portcut schematic file: versioned JSON, validated field by field on load and before save.

Described field by field in docs/file-format.md. :func:`loads` and :func:`load` return a new
:class:`Document` or raise :class:`DocumentError` whose message starts with the JSON path of the
offending field (``parts[3].rotation: expected one of 0, 90, 180, 270, got 45``); they change
nothing else. :func:`dumps` checks the document by the same rules, so every file written reads
back. :func:`save` is atomic: the text goes to a temporary file beside the target, is flushed and
synced to disk, and replaces the target in one rename; on any failure the old file is untouched.
"""

from __future__ import annotations

import json
import os
import re
from collections.abc import Iterator
from typing import Any

from ..errors import DocumentError
from ..solve.circuit import GROUND
from .atomic import write_atomically
from .document import Document
from .file_fields import COORD_LIMIT, Data, fields, json_type, shown, text_field
from .file_records import (
    BLOCK_DEFAULTS,
    CAPTION_VERSION,
    LABEL_DEFAULTS,
    MAX_BLOCK_NESTING,
    PART_DEFAULTS,
    PORT_VERSION,
    REGION_DEFAULTS,
    TOLERANCE_VERSION,
    Scope,
    analysis_record,
    each,
    elements,
    region_record,
)
from .model import Block, Region

# The file's records are read in file_records.py, its single values in file_fields.py; the
# versions and limits they keep are re-exported here, where the file format is described.
__all__ = [
    "CAPTION_VERSION",
    "COORD_LIMIT",
    "FORMAT",
    "MAX_BLOCK_NESTING",
    "MAX_FILE_BYTES",
    "NAMES_VERSION",
    "PORT_VERSION",
    "TOLERANCE_VERSION",
    "VERSION",
    "dumps",
    "load",
    "loads",
    "save",
]

FORMAT = "portcut-schematic"
#: The file version this program writes (every file) and the newest it reads.
VERSION = 3
#: The first version that names ground ``"gnd"`` and couplings ``CP<n>``; older files (ground
#: ``"0"``, couplings ``K<n>``) are migrated on load.
NAMES_VERSION = 3
MAX_FILE_BYTES = 64 * 1024 * 1024
_OLD_GROUND = "0"  # the ground net's name before NAMES_VERSION
_WIDTH = 120  # characters per line of the file: one element a line, mostly


# -- writing ------------------------------------------------------------------------------------
def dumps(doc: Document) -> str:
    """The file text of ``doc``. Raises DocumentError (with the field path) for anything
    :func:`loads` would refuse, such as a value that cannot be read."""
    data = _document_data(doc)
    _read_document(data)
    return _pretty(data) + "\n"


def save(doc: Document, path: str | os.PathLike[str]) -> None:
    """Write ``doc`` to ``path`` atomically; the old file survives any failure unchanged."""
    text = dumps(doc)
    try:
        write_atomically(path, text)
    except OSError as e:
        raise DocumentError(f"cannot save {os.fspath(path)}: {e.strerror or e}; "
                            "the file on disk is unchanged") from None


def _document_data(doc: Document) -> Data:
    contents = _contents_data(doc.parts(), doc.wires(), doc.junctions(), doc.labels(),
                              doc.blocks())
    a = doc.analysis
    return {"format": FORMAT, "version": VERSION, "title": doc.title,
            "analysis": {"frequency": a.freq, "form": a.form, "basis": a.basis},
            **contents, "regions": [_region_data(r) for r in doc.regions()]}


def _trimmed(data: Data, defaults: Data) -> Data:
    return {k: v for k, v in data.items() if k not in defaults or v != defaults[k]}


def _points(points) -> list[list[float]]:
    return [list(p) for p in points]


def _contents_data(parts, wires, junctions, labels, blocks) -> Data:
    return {
        "parts": [_trimmed({"id": p.id, "kind": p.kind, "designator": p.designator,
                            "at": list(p.at), "rotation": p.rotation, "mirror": p.mirror,
                            "value": p.value, "phase_deg": p.phase_deg, "control": p.control,
                            "couples": list(p.couples),
                            "captions": {role: [dx, dy] for role, dx, dy in p.captions},
                            "tolerance": p.tolerance, "params": dict(p.params)},
                           PART_DEFAULTS) for p in parts],
        "wires": [{"id": w.id, "points": _points(w.points)} for w in wires],
        "junctions": [{"id": j.id, "at": list(j.at)} for j in junctions],
        "labels": [_trimmed({"id": n.id, "name": n.name, "at": list(n.at),
                             "rotation": n.rotation, "style": n.style}, LABEL_DEFAULTS)
                   for n in labels],
        "blocks": [_block_data(b) for b in blocks],
    }


def _region_data(r: Region) -> Data:
    port = None if r.port is None else {"plus": r.port[0], "minus": r.port[1]}
    return _trimmed({"id": r.id, "name": r.name, "members": sorted(r.members),
                     "outline": _points(r.outline), "swap": r.swap, "port": port},
                    REGION_DEFAULTS)


def _block_data(b: Block) -> Data:
    c = b.contents
    plus, minus = b.port
    return _trimmed({"id": b.id, "designator": b.designator, "form": b.form, "at": list(b.at),
                     "rotation": b.rotation, "mirror": b.mirror, "region": _region_data(b.region),
                     "contents": _contents_data(c.parts, c.wires, c.junctions, c.labels,
                                                c.blocks),
                     "port": {"plus": _points(plus), "minus": _points(minus)},
                     "stubs": list(b.stubs)}, BLOCK_DEFAULTS)


def _pretty(value: Any, indent: int = 0, lead: int = 0) -> str:
    """JSON with anything that fits on its line kept on one line (points, short records);
    ``lead`` is how many characters precede the value on its line."""
    flat = json.dumps(value, ensure_ascii=False)
    if (indent and lead + len(flat) <= _WIDTH) or not isinstance(value, dict | list) or not value:
        return flat
    inner = " " * (indent + 2)
    if isinstance(value, dict):
        items = []
        for k, v in value.items():
            key = f"{inner}{json.dumps(k, ensure_ascii=False)}: "
            items.append(key + _pretty(v, indent + 2, len(key)))
        return "{\n" + ",\n".join(items) + "\n" + " " * indent + "}"
    items = [inner + _pretty(v, indent + 2, len(inner) + 1) for v in value]
    return "[\n" + ",\n".join(items) + "\n" + " " * indent + "]"


# -- reading ------------------------------------------------------------------------------------
def load(path: str | os.PathLike[str]) -> Document:
    """Read a schematic file; DocumentError names the file and the field at fault."""
    name = os.fspath(path)
    try:
        with open(path, "rb") as f:
            raw = f.read(MAX_FILE_BYTES + 1)
    except OSError as e:
        raise DocumentError(f"cannot open {name}: {e.strerror or e}") from None
    if len(raw) > MAX_FILE_BYTES:
        raise DocumentError(f"{name}: larger than the {MAX_FILE_BYTES}-byte limit of a "
                            "schematic file")
    try:
        return loads(raw)
    except DocumentError as e:
        raise DocumentError(f"{name}: {e}") from None


def loads(text: str | bytes) -> Document:
    """Read schematic file text (``bytes`` are decoded as UTF-8) into a new Document."""
    if isinstance(text, bytes | bytearray):
        try:
            text = bytes(text).decode("utf-8-sig")
        except UnicodeDecodeError as e:
            raise DocumentError(f"not UTF-8 text (byte {e.object[e.start]:#04x} at offset "
                                f"{e.start}); this is not a Portcut schematic") from None
    try:
        data = json.loads(text, parse_constant=_refuse_constant, object_pairs_hook=_no_repeats)
    except DocumentError:
        raise
    except RecursionError:
        raise DocumentError("not a Portcut schematic: the JSON is nested too deeply") from None
    except json.JSONDecodeError as e:
        raise DocumentError(f"not valid JSON (line {e.lineno}, column {e.colno}: {e.msg}); "
                            "this is not a Portcut schematic") from None
    except ValueError:  # the one other refusal of the decoder: an integer of 4,300+ digits
        raise DocumentError("not a Portcut schematic: it holds a number too long to read") \
            from None
    return _read_document(data)


def _refuse_constant(name: str) -> None:
    raise DocumentError(f"not valid JSON: {name} is not a number a schematic can hold")


def _no_repeats(pairs: list[tuple[str, Any]]) -> Data:
    out: Data = {}
    for key, value in pairs:
        if key in out:
            raise DocumentError(f"the field {key!r} appears twice in one JSON object")
        out[key] = value
    return out


def _read_document(data: Any) -> Document:
    if not isinstance(data, dict):
        raise DocumentError(f"the file holds a JSON {json_type(data)}, not a Portcut schematic")
    for key in ("format", "version"):
        if key not in data:
            raise DocumentError(f"{key}: missing; this is not a Portcut schematic")
    if data["format"] != FORMAT:
        raise DocumentError(f"format: expected {FORMAT!r}, got {shown(data['format'])}; "
                            "this is not a Portcut schematic")
    version = data["version"]
    if type(version) is not int or version < 1:
        raise DocumentError(f"version: expected a whole number from 1 to {VERSION}, "
                            f"got {shown(version)}")
    if version > VERSION:
        raise DocumentError(f"written by a newer Portcut (version {version}); this program "
                            f"reads up to version {VERSION}")
    fields(data, "", required=("format", "version"),
            optional=("title", "analysis", "parts", "wires", "junctions", "labels", "blocks",
                      "regions"))
    if version < NAMES_VERSION:
        _migrate_names(data)
    scope = Scope(Document(text_field(data.get("title", "Untitled"), "title")), {})
    for path, element in elements(data, "", 0, scope.designators, version):
        scope.add(path, element)
    for path, region in each(data, "regions", lambda d, p: region_record(d, p, version)):
        scope.add(path, region)
    scope.doc.set_analysis(analysis_record(data.get("analysis", {}), "analysis"))
    return scope.doc


def _migrate_names(data: Data) -> None:
    """Rename, in place, what a version 1-2 file names the old way: the ground net ``"0"`` (in
    net labels and chosen ports) becomes :data:`GROUND`, and a coupling designated ``K<n>``
    becomes ``CP<n>`` where that designator is free. Anything malformed is left for the reader
    to refuse with its path."""
    levels = list(_levels(data))
    taken = {p.get("designator") for level in levels for p in _dicts(level.get("parts"))}
    for level in levels:
        for label in _dicts(level.get("labels")):
            if label.get("name") == _OLD_GROUND:
                label["name"] = GROUND
        for region in [*_dicts(level.get("regions")),
                       *(b["region"] for b in _dicts(level.get("blocks"))
                         if isinstance(b.get("region"), dict))]:
            port = region.get("port")
            if isinstance(port, dict):
                region["port"] = {k: GROUND if v == _OLD_GROUND else v for k, v in port.items()}
        for part in _dicts(level.get("parts")):
            old = part.get("designator")
            if part.get("kind") == "coupling" and isinstance(old, str) and \
                    re.fullmatch(r"K\d+", old) and f"CP{old[1:]}" not in taken:
                part["designator"] = f"CP{old[1:]}"
                taken.add(part["designator"])


def _levels(data: Data) -> Iterator[Data]:
    """The sheet and every collapsed block's contents, however deep."""
    yield data
    for block in _dicts(data.get("blocks")):
        if isinstance(block.get("contents"), dict):
            yield from _levels(block["contents"])


def _dicts(items: Any) -> list[Data]:
    return [i for i in items if isinstance(i, dict)] if isinstance(items, list) else []
