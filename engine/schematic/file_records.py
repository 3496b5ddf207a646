"""The records of a schematic file (parts, wires, junctions, labels, regions, collapsed blocks,
the analysis settings) read and checked one by one, each refusal naming its JSON path; the file
versions in which fields first appear and the values optional fields take when absent."""

from __future__ import annotations

from collections.abc import Callable, Iterator
from typing import Any

from ..errors import CircuitError, DocumentError, ValueParseError
from ..solve.devices import DEVICE_KINDS, PARAMETERS
from ..solve.measured import parse_table
from ..solve.tolerance import parse_tolerance
from ..solve.units import parse_frequency, parse_value
from .document import Document
from .file_fields import (
    Data,
    bool_field,
    choice_field,
    fields,
    id_field,
    list_field,
    outline_point_field,
    point_field,
    shown,
    text_field,
)
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

__all__ = ["ANALYSIS_DEFAULTS", "BLOCK_DEFAULTS", "CAPTION_VERSION", "DEVICE_VERSION",
           "LABEL_DEFAULTS", "MAX_BLOCK_NESTING", "PART_DEFAULTS", "PORT_VERSION",
           "REGION_DEFAULTS", "TOLERANCE_VERSION", "Scope", "analysis_record", "each", "elements",
           "region_record"]

#: The first version whose regions may hold a chosen port.
PORT_VERSION = 2
#: The first version whose parts may hold dragged caption offsets.
CAPTION_VERSION = 3
#: Largest caption offset from its part, grid units.
CAPTION_REACH = 1000.0
#: The first version whose parts may carry a tolerance.
TOLERANCE_VERSION = 3
#: The first version whose parts may be device parts (transistors, finite op-amps) with their
#: ``params``.
DEVICE_VERSION = 3
#: Deepest nesting of collapsed blocks inside collapsed blocks.
MAX_BLOCK_NESTING = 32
LABEL_STYLES = ("label", "ground")
BASES = ("peak", "rms")
# Optional fields and the values they take when absent; the writer leaves out defaults.
PART_DEFAULTS = {"rotation": 0, "mirror": False, "value": "", "phase_deg": "", "control": "",
                 "couples": [], "captions": {}, "tolerance": "", "params": {}}
LABEL_DEFAULTS = {"rotation": 0, "style": "label"}
REGION_DEFAULTS = {"outline": [], "swap": False, "port": None}
BLOCK_DEFAULTS = {"rotation": 0, "mirror": False, "stubs": []}
ANALYSIS_DEFAULTS = {"frequency": "DC", "form": "thevenin", "basis": "peak"}


class Scope:
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


def elements(data: Data, base: str, depth: int, designators: dict[str, str],
             version: int) -> Iterator[tuple[str, Element]]:
    yield from each(data, "parts", lambda d, p: _part(d, p, version), base)
    yield from each(data, "wires", _wire, base)
    yield from each(data, "junctions", _junction, base)
    yield from each(data, "labels", _label, base)
    yield from each(data, "blocks", lambda d, p: _block(d, p, depth + 1, designators, version),
                     base)


def each(data: Data, key: str, read: Callable[[Any, str], Element],
         base: str = "") -> Iterator[tuple[str, Element]]:
    path = f"{base}{key}"
    items = data.get(key, [])
    if not isinstance(items, list):
        raise DocumentError(f"{path}: expected a list, got {shown(items)}")
    for i, item in enumerate(items):
        yield f"{path}[{i}]", read(item, f"{path}[{i}]")


def _part(data: Any, path: str, version: int) -> PlacedPart:
    d = fields(data, path, required=("id", "kind", "designator", "at"), defaults=PART_DEFAULTS)
    kind = choice_field(d["kind"], f"{path}.kind", PART_KINDS)
    if kind in DEVICE_KINDS and version < DEVICE_VERSION:
        raise DocumentError(f"{path}.kind: a {kind} part needs file version {DEVICE_VERSION} "
                            f"or later; this file says version {version}")
    designator = text_field(d["designator"], f"{path}.designator")
    value = text_field(d["value"], f"{path}.value")
    phase = text_field(d["phase_deg"], f"{path}.phase_deg")
    _readable(value, f"{path}.value", f"{designator} value")
    _readable(phase, f"{path}.phase_deg", f"{designator} phase")
    couples = list_field(d["couples"], f"{path}.couples")
    tolerance = text_field(d["tolerance"], f"{path}.tolerance")
    if tolerance.strip():
        try:
            parse_tolerance(tolerance)
        except ValueParseError as e:
            raise DocumentError(f"{path}.tolerance: {designator}: {e}") from None
        if version < TOLERANCE_VERSION:
            raise DocumentError(f"{path}.tolerance: a part's tolerance needs file version "
                                f"{TOLERANCE_VERSION} or later; this file says version {version}")
    return PlacedPart(
        id_field(d["id"], f"{path}.id"), kind, designator, point_field(d["at"], f"{path}.at"),
        choice_field(d["rotation"], f"{path}.rotation", ROTATIONS),
        bool_field(d["mirror"], f"{path}.mirror"), value, phase,
        text_field(d["control"], f"{path}.control"),
        tuple(text_field(c, f"{path}.couples[{i}]") for i, c in enumerate(couples)),
        _captions(d["captions"], f"{path}.captions", version), tolerance,
        _params(d["params"], f"{path}.params", kind, designator))


def _captions(value: Any, path: str, version: int) -> tuple[tuple[str, float, float], ...]:
    """Dragged caption offsets: ``{"designator": [dx, dy], "value": [dx, dy]}``."""
    if not isinstance(value, dict):
        raise DocumentError(f"{path}: expected an object of caption offsets, got "
                            f"{shown(value)}")
    if value and version < CAPTION_VERSION:
        raise DocumentError(f"{path}: caption offsets need file version {CAPTION_VERSION} or "
                            f"later; this file says version {version}")
    out = []
    for role, offset in value.items():
        choice_field(role, f"{path}", CAPTION_ROLES)
        pair = list_field(offset, f"{path}.{role}")
        if len(pair) != 2 or not all(type(c) in (int, float) and abs(c) <= CAPTION_REACH
                                     for c in pair):
            raise DocumentError(f"{path}.{role}: expected an offset [dx, dy] of numbers from "
                                f"-{CAPTION_REACH:g} to {CAPTION_REACH:g}, got {shown(offset)}")
        out.append((role, float(pair[0]), float(pair[1])))
    return tuple(sorted(out))



def _params(data: Any, path: str, kind: str, designator: str) -> tuple[tuple[str, str], ...]:
    """A device part's parameters, as (name, text) in engine.solve.devices.PARAMETERS order."""
    if not isinstance(data, dict):
        raise DocumentError(f"{path}: expected an object of parameter texts, got {shown(data)}")
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
            text = text_field(data[key], f"{path}.{key}", lines=key == "table")
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
    d = fields(data, path, required=("id", "points"))
    points = list_field(d["points"], f"{path}.points")
    if len(points) < 2:
        raise DocumentError(f"{path}.points: expected at least two points, got {len(points)}")
    return Wire(id_field(d["id"], f"{path}.id"),
                tuple(point_field(p, f"{path}.points[{i}]") for i, p in enumerate(points)))


def _junction(data: Any, path: str) -> Junction:
    d = fields(data, path, required=("id", "at"))
    return Junction(id_field(d["id"], f"{path}.id"), point_field(d["at"], f"{path}.at"))


def _label(data: Any, path: str) -> NetLabel:
    d = fields(data, path, required=("id", "name", "at"), defaults=LABEL_DEFAULTS)
    return NetLabel(id_field(d["id"], f"{path}.id"), text_field(d["name"], f"{path}.name"),
                    point_field(d["at"], f"{path}.at"),
                    choice_field(d["rotation"], f"{path}.rotation", ROTATIONS),
                    choice_field(d["style"], f"{path}.style", LABEL_STYLES))


def region_record(data: Any, path: str, version: int) -> Region:
    d = fields(data, path, required=("id", "name", "members"), defaults=REGION_DEFAULTS)
    members = list_field(d["members"], f"{path}.members")
    outline = list_field(d["outline"], f"{path}.outline")
    region = Region(id_field(d["id"], f"{path}.id"), text_field(d["name"], f"{path}.name"),
                    frozenset(text_field(m, f"{path}.members[{i}]") for i, m in enumerate(members)),
                    tuple(outline_point_field(p, f"{path}.outline[{i}]")
                          for i, p in enumerate(outline)),
                    bool_field(d["swap"], f"{path}.swap"),
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
    d = fields(data, path, required=("plus", "minus"))
    return (text_field(d["plus"], f"{path}.plus"), text_field(d["minus"], f"{path}.minus"))


def _block(data: Any, path: str, depth: int, designators: dict[str, str],
           version: int) -> Block:
    if depth > MAX_BLOCK_NESTING:
        raise DocumentError(f"{path}: collapsed blocks nest more than {MAX_BLOCK_NESTING} deep")
    d = fields(data, path, required=("id", "designator", "form", "at", "region", "contents",
                                      "port"), defaults=BLOCK_DEFAULTS)
    contents = _contents(d["contents"], f"{path}.contents.", depth, designators, version)
    region = region_record(d["region"], f"{path}.region", version)
    inside = {e.id for group in (contents.parts, contents.wires, contents.junctions,
                                 contents.labels, contents.blocks) for e in group}
    missing = sorted(region.members - inside)
    if missing:
        raise DocumentError(f"{path}.region.members: {', '.join(map(repr, missing))} "
                            "not in the block's contents")
    port = fields(d["port"], f"{path}.port", required=("plus", "minus"))
    sides = tuple(tuple(point_field(p, f"{path}.port.{side}[{i}]")
                        for i, p in enumerate(list_field(port[side], f"{path}.port.{side}")))
                  for side in ("plus", "minus"))
    stubs = list_field(d["stubs"], f"{path}.stubs")
    return Block(id_field(d["id"], f"{path}.id"),
                 text_field(d["designator"], f"{path}.designator"),
                 choice_field(d["form"], f"{path}.form", ANALYSIS_FORMS),
                 point_field(d["at"], f"{path}.at"),
                 region, contents, sides,
                 choice_field(d["rotation"], f"{path}.rotation", ROTATIONS),
                 bool_field(d["mirror"], f"{path}.mirror"),
                 tuple(text_field(s, f"{path}.stubs[{i}]") for i, s in enumerate(stubs)))


def _contents(data: Any, base: str, depth: int, designators: dict[str, str],
              version: int) -> Contents:
    fields(data, base.rstrip("."), optional=("parts", "wires", "junctions", "labels", "blocks"))
    scope = Scope(Document(), designators)
    groups: dict[type, list[Element]] = {PlacedPart: [], Wire: [], Junction: [], NetLabel: [],
                                         Block: []}
    for path, element in elements(data, base, depth, designators, version):
        scope.add(path, element)
        groups[type(element)].append(element)
    return Contents(*(tuple(groups[t]) for t in (PlacedPart, Wire, Junction, NetLabel, Block)))


def analysis_record(data: Any, path: str) -> Analysis:
    d = fields(data, path, defaults=ANALYSIS_DEFAULTS)
    freq = text_field(d["frequency"], f"{path}.frequency")
    try:
        parse_frequency(freq)
    except ValueParseError as e:
        raise DocumentError(f"{path}.frequency: {e}") from None
    return Analysis(freq, choice_field(d["form"], f"{path}.form", ANALYSIS_FORMS),
                    choice_field(d["basis"], f"{path}.basis", BASES))
