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
from collections.abc import Callable, Iterator
from typing import Any

from ..errors import CircuitError, DocumentError, ValueParseError
from ..solve.circuit import GROUND
from ..solve.devices import DEVICE_KINDS, PARAMETERS
from ..solve.measured import parse_table
from ..solve.tolerance import parse_tolerance
from ..solve.units import parse_frequency, parse_value
from .atomic import write_atomically
from .document import Document
from .model import (
    ANALYSIS_FORMS,
    CAPTION_ROLES,
    PART_KINDS,
    ROTATIONS,
    Analysis,
    Block,
    Contents,
    Element,
    Junction,
    NetLabel,
    PlacedPart,
    Region,
    Wire,
    port_problem,
)
from .text import text_problem

__all__ = [
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
#: The first version whose regions may hold a chosen port.
PORT_VERSION = 2
#: The first version that names ground ``"gnd"`` and couplings ``CP<n>``; older files (ground
#: ``"0"``, couplings ``K<n>``) are migrated on load.
NAMES_VERSION = 3
#: The first version whose parts may hold dragged caption offsets.
CAPTION_VERSION = 3
#: Largest caption offset from its part, grid units.
CAPTION_REACH = 1000.0
#: The first version whose parts may carry a tolerance.
TOLERANCE_VERSION = 3
#: The first version whose parts may be device parts (transistors, finite op-amps) with their
#: ``params``.
DEVICE_VERSION = 3
#: Largest grid coordinate (in either direction) a file may hold.
COORD_LIMIT = 1_000_000
#: Deepest nesting of collapsed blocks inside collapsed blocks.
MAX_BLOCK_NESTING = 32
MAX_FILE_BYTES = 64 * 1024 * 1024
_LABEL_STYLES = ("label", "ground")
_OLD_GROUND = "0"  # the ground net's name before NAMES_VERSION
_BASES = ("peak", "rms")
_WIDTH = 120  # characters per line of the file: one element a line, mostly
# Optional fields and the values they take when absent; the writer leaves out defaults.
_PART_DEFAULTS = {"rotation": 0, "mirror": False, "value": "", "phase_deg": "", "control": "",
                  "couples": [], "captions": {}, "tolerance": "", "params": {}}
_LABEL_DEFAULTS = {"rotation": 0, "style": "label"}
_REGION_DEFAULTS = {"outline": [], "swap": False, "port": None}
_BLOCK_DEFAULTS = {"rotation": 0, "mirror": False, "stubs": []}
_ANALYSIS_DEFAULTS = {"frequency": "DC", "form": "thevenin", "basis": "peak"}

Data = dict[str, Any]


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
                           _PART_DEFAULTS) for p in parts],
        "wires": [{"id": w.id, "points": _points(w.points)} for w in wires],
        "junctions": [{"id": j.id, "at": list(j.at)} for j in junctions],
        "labels": [_trimmed({"id": n.id, "name": n.name, "at": list(n.at),
                             "rotation": n.rotation, "style": n.style}, _LABEL_DEFAULTS)
                   for n in labels],
        "blocks": [_block_data(b) for b in blocks],
    }


def _region_data(r: Region) -> Data:
    port = None if r.port is None else {"plus": r.port[0], "minus": r.port[1]}
    return _trimmed({"id": r.id, "name": r.name, "members": sorted(r.members),
                     "outline": _points(r.outline), "swap": r.swap, "port": port},
                    _REGION_DEFAULTS)


def _block_data(b: Block) -> Data:
    c = b.contents
    plus, minus = b.port
    return _trimmed({"id": b.id, "designator": b.designator, "form": b.form, "at": list(b.at),
                     "rotation": b.rotation, "mirror": b.mirror, "region": _region_data(b.region),
                     "contents": _contents_data(c.parts, c.wires, c.junctions, c.labels,
                                                c.blocks),
                     "port": {"plus": _points(plus), "minus": _points(minus)},
                     "stubs": list(b.stubs)}, _BLOCK_DEFAULTS)


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
        raise DocumentError(f"the file holds a JSON {_json_type(data)}, not a Portcut schematic")
    for key in ("format", "version"):
        if key not in data:
            raise DocumentError(f"{key}: missing; this is not a Portcut schematic")
    if data["format"] != FORMAT:
        raise DocumentError(f"format: expected {FORMAT!r}, got {_shown(data['format'])}; "
                            "this is not a Portcut schematic")
    version = data["version"]
    if type(version) is not int or version < 1:
        raise DocumentError(f"version: expected a whole number from 1 to {VERSION}, "
                            f"got {_shown(version)}")
    if version > VERSION:
        raise DocumentError(f"written by a newer Portcut (version {version}); this program "
                            f"reads up to version {VERSION}")
    _fields(data, "", required=("format", "version"),
            optional=("title", "analysis", "parts", "wires", "junctions", "labels", "blocks",
                      "regions"))
    if version < NAMES_VERSION:
        _migrate_names(data)
    scope = _Scope(Document(_text(data.get("title", "Untitled"), "title")), {})
    for path, element in _elements(data, "", 0, scope.designators, version):
        scope.add(path, element)
    for path, region in _each(data, "regions", lambda d, p: _region(d, p, version)):
        scope.add(path, region)
    scope.doc.set_analysis(_analysis(data.get("analysis", {}), "analysis"))
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


class _Scope:
    """The elements of one level (the sheet, or one block's contents). Ids are unique within a
    level; designators across the whole file, since expanding a block puts its parts back on the
    sheet (``designators`` is shared by every level). The level's Document checks the rest
    (designator form, wires, region members)."""

    def __init__(self, doc: Document, designators: dict[str, str]) -> None:
        self.doc = doc
        self.ids: dict[str, str] = {}
        self.designators = designators

    def add(self, path: str, element: Element) -> None:
        if element.id in self.ids:
            raise DocumentError(f"{path}.id: {element.id!r} is already the id of "
                                f"{self.ids[element.id]}")
        designator = getattr(element, "designator", None)
        if designator in self.designators:
            raise DocumentError(f"{path}.designator: {designator!r} is already the designator "
                                f"of {self.designators[designator]}")
        try:
            self.doc.add(element)
        except DocumentError as e:
            raise DocumentError(f"{path}: {e}") from None
        self.ids[element.id] = path
        if designator is not None:
            self.designators[designator] = path


def _elements(data: Data, base: str, depth: int, designators: dict[str, str],
              version: int) -> Iterator[tuple[str, Element]]:
    yield from _each(data, "parts", lambda d, p: _part(d, p, version), base)
    yield from _each(data, "wires", _wire, base)
    yield from _each(data, "junctions", _junction, base)
    yield from _each(data, "labels", _label, base)
    yield from _each(data, "blocks", lambda d, p: _block(d, p, depth + 1, designators, version),
                     base)


def _each(data: Data, key: str, read: Callable[[Any, str], Element],
          base: str = "") -> Iterator[tuple[str, Element]]:
    path = f"{base}{key}"
    items = data.get(key, [])
    if not isinstance(items, list):
        raise DocumentError(f"{path}: expected a list, got {_shown(items)}")
    for i, item in enumerate(items):
        yield f"{path}[{i}]", read(item, f"{path}[{i}]")


def _part(data: Any, path: str, version: int) -> PlacedPart:
    d = _fields(data, path, required=("id", "kind", "designator", "at"), defaults=_PART_DEFAULTS)
    kind = _choice(d["kind"], f"{path}.kind", PART_KINDS)
    if kind in DEVICE_KINDS and version < DEVICE_VERSION:
        raise DocumentError(f"{path}.kind: a {kind} part needs file version {DEVICE_VERSION} "
                            f"or later; this file says version {version}")
    designator = _text(d["designator"], f"{path}.designator")
    value = _text(d["value"], f"{path}.value")
    phase = _text(d["phase_deg"], f"{path}.phase_deg")
    _readable(value, f"{path}.value", f"{designator} value")
    _readable(phase, f"{path}.phase_deg", f"{designator} phase")
    couples = _list(d["couples"], f"{path}.couples")
    tolerance = _text(d["tolerance"], f"{path}.tolerance")
    if tolerance.strip():
        try:
            parse_tolerance(tolerance)
        except ValueParseError as e:
            raise DocumentError(f"{path}.tolerance: {designator}: {e}") from None
        if version < TOLERANCE_VERSION:
            raise DocumentError(f"{path}.tolerance: a part's tolerance needs file version "
                                f"{TOLERANCE_VERSION} or later; this file says version {version}")
    return PlacedPart(
        _id(d["id"], f"{path}.id"), kind, designator, _point(d["at"], f"{path}.at"),
        _choice(d["rotation"], f"{path}.rotation", ROTATIONS),
        _bool(d["mirror"], f"{path}.mirror"), value, phase, _text(d["control"], f"{path}.control"),
        tuple(_text(c, f"{path}.couples[{i}]") for i, c in enumerate(couples)),
        _captions(d["captions"], f"{path}.captions", version), tolerance,
        _params(d["params"], f"{path}.params", kind, designator))


def _captions(value: Any, path: str, version: int) -> tuple[tuple[str, float, float], ...]:
    """Dragged caption offsets: ``{"designator": [dx, dy], "value": [dx, dy]}``."""
    if not isinstance(value, dict):
        raise DocumentError(f"{path}: expected an object of caption offsets, got "
                            f"{_shown(value)}")
    if value and version < CAPTION_VERSION:
        raise DocumentError(f"{path}: caption offsets need file version {CAPTION_VERSION} or "
                            f"later; this file says version {version}")
    out = []
    for role, offset in value.items():
        _choice(role, f"{path}", CAPTION_ROLES)
        pair = _list(offset, f"{path}.{role}")
        if len(pair) != 2 or not all(type(c) in (int, float) and abs(c) <= CAPTION_REACH
                                     for c in pair):
            raise DocumentError(f"{path}.{role}: expected an offset [dx, dy] of numbers from "
                                f"-{CAPTION_REACH:g} to {CAPTION_REACH:g}, got {_shown(offset)}")
        out.append((role, float(pair[0]), float(pair[1])))
    return tuple(sorted(out))



def _params(data: Any, path: str, kind: str, designator: str) -> tuple[tuple[str, str], ...]:
    """A device part's parameters, as (name, text) in engine.solve.devices.PARAMETERS order."""
    if not isinstance(data, dict):
        raise DocumentError(f"{path}: expected an object of parameter texts, got {_shown(data)}")
    if data and kind not in DEVICE_KINDS:
        raise DocumentError(f"{path}: a {kind} part takes no parameters")
    known = [name for name, _, _ in PARAMETERS.get(kind, ())]
    for key in data:
        if key not in known:
            raise DocumentError(f"{path}.{key}: a {kind} has no such parameter; it takes "
                                f"{', '.join(known)}")
    out = []
    for key in known:
        if key in data:
            text = _text(data[key], f"{path}.{key}", lines=key == "table")
            if key == "table":
                try:
                    parse_table(text, name=f"{designator} readings")
                except CircuitError as e:
                    raise DocumentError(f"{path}.{key}: {e}") from None
            else:
                _readable(text, f"{path}.{key}", f"{designator} {key}")
            out.append((key, text))
    return tuple(out)


def _readable(text: str, path: str, what: str) -> None:
    """Refuse value text the engine cannot read ("" means not given yet, which is allowed)."""
    if text.strip():
        try:
            parse_value(text, what=what)
        except ValueParseError as e:
            raise DocumentError(f"{path}: {e}") from None


def _wire(data: Any, path: str) -> Wire:
    d = _fields(data, path, required=("id", "points"))
    points = _list(d["points"], f"{path}.points")
    if len(points) < 2:
        raise DocumentError(f"{path}.points: expected at least two points, got {len(points)}")
    return Wire(_id(d["id"], f"{path}.id"),
                tuple(_point(p, f"{path}.points[{i}]") for i, p in enumerate(points)))


def _junction(data: Any, path: str) -> Junction:
    d = _fields(data, path, required=("id", "at"))
    return Junction(_id(d["id"], f"{path}.id"), _point(d["at"], f"{path}.at"))


def _label(data: Any, path: str) -> NetLabel:
    d = _fields(data, path, required=("id", "name", "at"), defaults=_LABEL_DEFAULTS)
    return NetLabel(_id(d["id"], f"{path}.id"), _text(d["name"], f"{path}.name"),
                    _point(d["at"], f"{path}.at"),
                    _choice(d["rotation"], f"{path}.rotation", ROTATIONS),
                    _choice(d["style"], f"{path}.style", _LABEL_STYLES))


def _region(data: Any, path: str, version: int) -> Region:
    d = _fields(data, path, required=("id", "name", "members"), defaults=_REGION_DEFAULTS)
    members = _list(d["members"], f"{path}.members")
    outline = _list(d["outline"], f"{path}.outline")
    region = Region(_id(d["id"], f"{path}.id"), _text(d["name"], f"{path}.name"),
                    frozenset(_text(m, f"{path}.members[{i}]") for i, m in enumerate(members)),
                    tuple(_outline_point(p, f"{path}.outline[{i}]")
                          for i, p in enumerate(outline)),
                    _bool(d["swap"], f"{path}.swap"),
                    _region_port(d["port"], f"{path}.port", version))
    problem = port_problem(region)
    if problem:
        raise DocumentError(f"{path}.{problem}")
    return region


def _region_port(data: Any, path: str, version: int) -> tuple[str, str] | None:
    if data is None:
        return None  # absent: the automatic port
    if version < PORT_VERSION:
        raise DocumentError(f"{path}: a chosen port needs file version {PORT_VERSION} or later; "
                            f"this file says version {version}")
    d = _fields(data, path, required=("plus", "minus"))
    return (_text(d["plus"], f"{path}.plus"), _text(d["minus"], f"{path}.minus"))


def _block(data: Any, path: str, depth: int, designators: dict[str, str],
           version: int) -> Block:
    if depth > MAX_BLOCK_NESTING:
        raise DocumentError(f"{path}: collapsed blocks nest more than {MAX_BLOCK_NESTING} deep")
    d = _fields(data, path, required=("id", "designator", "form", "at", "region", "contents",
                                      "port"), defaults=_BLOCK_DEFAULTS)
    contents = _contents(d["contents"], f"{path}.contents.", depth, designators, version)
    region = _region(d["region"], f"{path}.region", version)
    inside = {e.id for group in (contents.parts, contents.wires, contents.junctions,
                                 contents.labels, contents.blocks) for e in group}
    missing = sorted(region.members - inside)
    if missing:
        raise DocumentError(f"{path}.region.members: {', '.join(map(repr, missing))} "
                            "not in the block's contents")
    port = _fields(d["port"], f"{path}.port", required=("plus", "minus"))
    sides = tuple(tuple(_point(p, f"{path}.port.{side}[{i}]")
                        for i, p in enumerate(_list(port[side], f"{path}.port.{side}")))
                  for side in ("plus", "minus"))
    stubs = _list(d["stubs"], f"{path}.stubs")
    return Block(_id(d["id"], f"{path}.id"), _text(d["designator"], f"{path}.designator"),
                 _choice(d["form"], f"{path}.form", ANALYSIS_FORMS), _point(d["at"], f"{path}.at"),
                 region, contents, sides,
                 _choice(d["rotation"], f"{path}.rotation", ROTATIONS),
                 _bool(d["mirror"], f"{path}.mirror"),
                 tuple(_text(s, f"{path}.stubs[{i}]") for i, s in enumerate(stubs)))


def _contents(data: Any, base: str, depth: int, designators: dict[str, str],
              version: int) -> Contents:
    _fields(data, base.rstrip("."), optional=("parts", "wires", "junctions", "labels", "blocks"))
    scope = _Scope(Document(), designators)
    groups: dict[type, list[Element]] = {PlacedPart: [], Wire: [], Junction: [], NetLabel: [],
                                         Block: []}
    for path, element in _elements(data, base, depth, designators, version):
        scope.add(path, element)
        groups[type(element)].append(element)
    return Contents(*(tuple(groups[t]) for t in (PlacedPart, Wire, Junction, NetLabel, Block)))


def _analysis(data: Any, path: str) -> Analysis:
    d = _fields(data, path, defaults=_ANALYSIS_DEFAULTS)
    freq = _text(d["frequency"], f"{path}.frequency")
    try:
        parse_frequency(freq)
    except ValueParseError as e:
        raise DocumentError(f"{path}.frequency: {e}") from None
    return Analysis(freq, _choice(d["form"], f"{path}.form", ANALYSIS_FORMS),
                    _choice(d["basis"], f"{path}.basis", _BASES))


# -- field readers: each checks one JSON value and names its path -------------------------------
def _fields(data: Any, path: str, required: tuple[str, ...] = (),
            defaults: Data | None = None, optional: tuple[str, ...] = ()) -> Data:
    """The object ``data`` with its absent optional fields set to ``defaults``; refuses a
    missing required field and an unknown one."""
    where = path or "the file"
    if not isinstance(data, dict):
        raise DocumentError(f"{where}: expected an object, got {_shown(data)}")
    for key in required:
        if key not in data:
            raise DocumentError(f"{where}: the field {key!r} is missing")
    known = (*required, *(defaults or {}), *optional)
    for key in data:
        if key not in known:
            raise DocumentError(f"{where}: unknown field {key!r}; expected "
                                f"{', '.join(map(repr, known))}")
    return {**(defaults or {}), **data}


def _text(value: Any, path: str, lines: bool = False) -> str:
    if not isinstance(value, str):
        raise DocumentError(f"{path}: expected text, got {_shown(value)}")
    problem = text_problem(value, lines)
    if problem:
        raise DocumentError(f"{path}: {problem}")
    return value


def _id(value: Any, path: str) -> str:
    if not _text(value, path):
        raise DocumentError(f"{path}: expected a non-empty id, got \"\"")
    return value


def _bool(value: Any, path: str) -> bool:
    if not isinstance(value, bool):
        raise DocumentError(f"{path}: expected true or false, got {_shown(value)}")
    return value


def _list(value: Any, path: str) -> list[Any]:
    if not isinstance(value, list):
        raise DocumentError(f"{path}: expected a list, got {_shown(value)}")
    return value


def _choice(value: Any, path: str, options: tuple[Any, ...]) -> Any:
    # type-exact, so that true is not taken for 1 nor 90.0 for 90
    if not any(type(value) is type(o) and value == o for o in options):
        raise DocumentError(f"{path}: expected one of {', '.join(map(_shown, options))}, "
                            f"got {_shown(value)}")
    return value


def _point(value: Any, path: str) -> tuple[int, int]:
    pair = _list(value, path)
    if len(pair) != 2 or not all(type(c) is int and abs(c) <= COORD_LIMIT for c in pair):
        raise DocumentError(f"{path}: expected a grid point [x, y] of whole numbers from "
                            f"-{COORD_LIMIT} to {COORD_LIMIT}, got {_shown(value)}")
    return (pair[0], pair[1])


def _outline_point(value: Any, path: str) -> tuple[float, float]:
    pair = _list(value, path)
    # the bound also refuses nan and infinities; ints are compared exactly, however long
    if len(pair) != 2 or not all(type(c) in (int, float) and abs(c) <= COORD_LIMIT
                                 for c in pair):
        raise DocumentError(f"{path}: expected a point [x, y] of numbers from -{COORD_LIMIT} "
                            f"to {COORD_LIMIT}, got {_shown(value)}")
    return (pair[0], pair[1])


def _json_type(value: Any) -> str:
    return {dict: "object", list: "list", str: "text", bool: "boolean", int: "number",
            float: "number", type(None): "null"}.get(type(value), type(value).__name__)


def _shown(value: Any) -> str:
    """A short JSON rendering of a value for a message."""
    if isinstance(value, int) and not isinstance(value, bool) and abs(value) >= 10**15:
        return f"a {len(str(abs(value)))}-digit number"
    try:
        text = json.dumps(value, ensure_ascii=False)
    except RecursionError:  # nested almost as deep as the decoder allows
        return f"a deeply nested {_json_type(value)}"
    if text_problem(text):  # a message must be printable and storable itself
        text = json.dumps(value)
    return text if len(text) <= 40 else text[:37] + "..."
