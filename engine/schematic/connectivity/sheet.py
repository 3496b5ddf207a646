"""One document flattened for extraction: every pin, wire vertex and junction as arrays, and
each net marker's name; a later version of the document patches it where few elements changed
(replaced, or wires and junctions added or removed)."""

from __future__ import annotations

import re
from collections import defaultdict
from collections.abc import Iterable
from copy import copy
from dataclasses import dataclass
from functools import cache, lru_cache
from itertools import accumulate, chain, compress, count, repeat
from operator import attrgetter, is_, is_not

import numpy as np

from ...solve.circuit import GROUND, KINDS
from ...solve.devices import DEVICE_KINDS
from ...solve.kinds import REFERRING
from ..model import Block, Element, Junction, NetLabel, PlacedPart, Wire
from ..symbols import Point, pin_positions

#: Pin roles of a collapsed block, in pin order.
BLOCK_ROLES = ("plus", "minus")
#: A number for each kind of pin owner that a designator names, for comparing kinds in arrays.
_KIND_CODE = {kind: code for code, kind in enumerate([*KINDS, *DEVICE_KINDS, "block"])}
#: The node roles of every kind a placed part may have: primitive kinds and device kinds.
ROLES: dict[str, tuple[str, ...]] = {**KINDS, **DEVICE_KINDS}


@lru_cache(maxsize=1 << 16)  # the same designators come back on every re-extraction
def _natural_key(text: str) -> tuple[object, ...]:
    """Sort key in which digit runs compare as numbers: R2 < R10 < RA."""
    return tuple(int(chunk) if i % 2 else chunk for i, chunk in enumerate(re.split(r"(\d+)", text)))


@cache
def _offsets(kind: str, rotation: int, mirror: bool) -> tuple[Point, ...]:
    return pin_positions(kind, (0, 0), rotation, mirror)


def _label_net(label: NetLabel) -> str:
    """The net name a marker gives: ``"gnd"`` for ground, else its name stripped ("" if none)."""
    return GROUND if label.style == "ground" else label.name.strip()


@dataclass(frozen=True, slots=True)
class _Pin:
    """One pin, for messages and naming."""

    element_id: str
    index: int
    at: Point
    designator: str  # "" for a net marker
    role: str


def _pin_offsets(e: PlacedPart | Block | NetLabel) -> tuple[Point, ...]:
    if type(e) is PlacedPart:
        return _offsets(e.kind, e.rotation, e.mirror)
    if type(e) is Block:
        return _offsets("block", e.rotation, e.mirror)
    return _offsets("ground" if e.style == "ground" else "label", e.rotation, False)


def _roles(e: PlacedPart | Block) -> tuple[str, ...]:
    return ROLES[e.kind] if type(e) is PlacedPart else BLOCK_ROLES


def _same_slot(old: Element, new: Element) -> bool:
    """Whether ``new`` replaces ``old`` without moving any graph node or automatic name: same
    type and id, and for a part or block the same designator (and kind, which fixes the pins)."""
    if type(old) is not type(new) or old.id != new.id:
        return False
    if type(new) is PlacedPart:
        return old.designator == new.designator and old.kind == new.kind
    return type(new) is not Block or old.designator == new.designator


def replaced_in_place(old: list[Element], new: list[Element]) -> list[int] | None:
    """The positions at which ``new`` holds other elements than ``old``, where each replaces
    the old one without moving any graph node or automatic name (:func:`_same_slot`): the
    sheets of both then number their nodes alike. None where the lists differ otherwise."""
    if len(new) != len(old):
        return None
    changed = list(compress(count(), map(is_not, new, old)))
    return changed if all(_same_slot(old[p], new[p]) for p in changed) else None


#: A sheet is patched for a re-extraction only while at most one element in this many changed;
#: past that, building it afresh costs less.
_PATCH_SHARE = 8
#: The element types that own no pins: adding or removing them keeps the pins' numbering.
_UNPINNED = (Wire, Junction)


@dataclass(frozen=True)
class Origin:
    """How the graph nodes of a sheet patched across added or removed wires and junctions map
    to those of the sheet it was patched from (whose ``numbering`` is ``numbering``):
    ``from_old[k]`` is the old node of new node ``k`` (-1: added), ``gone`` the old nodes
    removed (ascending). Pins keep their numbers."""

    numbering: object
    from_old: np.ndarray
    gone: np.ndarray


def _int_array(points: Iterable[Point], size: int) -> np.ndarray:
    """An (n, 2) int64 array of ``points``, which hold ``size`` coordinates in all."""
    return np.fromiter(chain.from_iterable(points), dtype=np.int64, count=size).reshape(-1, 2)


class _Sheet:
    """One document flattened for extraction. Graph nodes are numbered pins first (those of parts
    and blocks in natural designator order, then those of net markers), then wires, then
    junctions.

    A sheet is never modified once made; :meth:`updated` gives the sheet of a later version of
    the document, reusing this one's arrays wherever the element is still the same object.
    Sheets whose graph nodes are numbered alike share one ``numbering`` token; a sheet patched
    from another across added or removed wires and junctions holds in ``origin`` how its nodes
    map to those of the other (:class:`Origin`).
    """

    def __init__(self, elements: list[Element]) -> None:
        self.elements = elements  # in document order
        self.numbering = object()
        self.origin: Origin | None = None
        self._positions: dict[str, int] | None = None
        by_type: dict[type, list] = defaultdict(list)
        for e in elements:
            by_type[type(e)].append(e)
        self.parts: list[PlacedPart] = by_type[PlacedPart]
        self.blocks: list[Block] = by_type[Block]
        self.labels: list[NetLabel] = by_type[NetLabel]
        self.wires: list[Wire] = by_type[Wire]
        self.junctions: list[Junction] = by_type[Junction]
        self._place: list[int] | None = None
        #: on a patched sheet, the graph nodes whose points or marker name the patch changed
        self.moved: list[int] = []
        self.referencing = [i for i, p in enumerate(self.parts) if p.kind in REFERRING]
        # pin-bearing elements: designated ones first, in natural designator order
        designated = [*self.parts, *self.blocks]
        order = sorted(range(len(designated)), key=lambda i: _natural_key(designated[i].designator))
        self.owner_index = [0] * len(order)  # of parts, then blocks, in owners
        for j, i in enumerate(order):
            self.owner_index[i] = j
        self.owners: list[PlacedPart | Block | NetLabel] = [designated[i] for i in order]
        self.designated = len(self.owners)
        kinds = [*map(_KIND_CODE.__getitem__, map(attrgetter("kind"), self.parts)),
                 *[_KIND_CODE["block"]] * len(self.blocks)]
        self.owner_kind = np.array(kinds, dtype=np.int64)[order]
        #: the owner index of each part and block, by id
        self.owner_of = {e.id: j for j, e in enumerate(self.owners)}
        self.owners += self.labels
        offsets = [_pin_offsets(e) for e in self.owners]
        counts = [len(o) for o in offsets]
        self.first_pin: list[int] = [0, *accumulate(counts)]
        self.first_pins = np.array(self.first_pin, dtype=np.int64)
        self.pin_owner: list[int] = np.repeat(np.arange(len(counts)), counts).tolist()
        self.pin_count = self.first_pin[-1]
        self.designated_pins = self.first_pin[self.designated]
        self.at = _int_array(map(attrgetter("at"), self.owners), 2 * len(self.owners))
        self.pins = np.repeat(self.at, counts, axis=0) + _int_array(
            chain.from_iterable(offsets), 2 * self.pin_count)
        ids = [e.id for e in self.owners]
        index = np.arange(self.pin_count) - np.repeat(self.first_pin[:-1], counts)
        #: ``(element_id, pin_index)`` of every pin, in node order
        self.keys = list(zip(map(ids.__getitem__, self.pin_owner), index.tolist(), strict=True))
        #: the automatic net name of each designated pin, ``"<designator>.<role>"``
        self.auto = [f"{e.designator}.{role}" for e in self.owners[:self.designated]
                     for role in _roles(e)]
        self._flatten_wires()

    def _flatten_wires(self) -> None:
        """The arrays of the wires and junctions (they hold no pins)."""
        self.wire_ids = [w.id for w in self.wires]
        self.wire_points = np.fromiter(map(len, map(attrgetter("points"), self.wires)),
                                       dtype=np.int64, count=len(self.wires))
        self.vertices = _int_array(chain.from_iterable(map(attrgetter("points"), self.wires)),
                                   2 * int(self.wire_points.sum()))
        self._index_vertices()
        self.junction_xy = _int_array(map(attrgetter("at"), self.junctions),
                                      2 * len(self.junctions))

    @property
    def node_count(self) -> int:
        return self.pin_count + len(self.wires) + len(self.junctions)

    def positions(self) -> dict[str, int]:
        """Each element's position in :attr:`elements`, by id."""
        if self._positions is None:
            self._positions = {e.id: i for i, e in enumerate(self.elements)}
        return self._positions

    def place(self) -> list[int]:
        """Each element's index in the list of its type (shared with the sheets patched in
        place from this one)."""
        if self._place is None:
            seen: dict[type, int] = defaultdict(int)
            self._place = []
            for t in map(type, self.elements):
                self._place.append(seen[t])
                seen[t] += 1
        return self._place

    def _index_vertices(self) -> None:
        counts = self.wire_points
        self.vertex_wire = np.repeat(np.arange(len(counts)), counts)
        last = np.cumsum(counts) - 1
        self.first_vertex = last - counts + 1
        self.ends = np.concatenate([self.first_vertex, last])  # every wire's first, then last

    @property
    def pin_x(self) -> np.ndarray:
        return self.pins[:, 0]

    @property
    def pin_y(self) -> np.ndarray:
        return self.pins[:, 1]

    def updated(self, elements: list[Element]) -> _Sheet:
        """The sheet of ``elements``: this one where nothing changed; a copy with the replaced
        elements written in where every change is a replacement that keeps the node numbering
        (:func:`_same_slot`); else, or where much changed, a sheet built afresh."""
        old = self.elements
        changed = replaced_in_place(old, elements)
        if changed is None:
            return self._rewired(elements) or _Sheet(elements)
        if len(changed) * _PATCH_SHARE > len(elements):
            return _Sheet(elements)
        if not changed:
            return self
        place = self.place()  # before the copy, which then shares it
        positions = self.positions()
        sheet = copy(self)
        sheet.elements, sheet.origin, sheet._positions = elements, None, positions
        sheet._write([(elements[p], place[p]) for p in changed])
        return sheet

    def _rewired(self, elements: list[Element]) -> _Sheet | None:
        """The sheet of ``elements`` patched from this one where, besides replacements that keep
        the node numbering (:func:`_same_slot`), only wires and junctions were added or removed
        and the elements kept keep their order: the pins keep their numbers, the wires and
        junctions are numbered afresh (``origin`` says how). None where the change is other or
        large."""
        old, n = self.elements, len(elements)
        # each new element's old position (-1: added), in array passes over the elements
        before = np.fromiter(map(self.positions().get, map(attrgetter("id"), elements),
                                 repeat(-1)), dtype=np.int64, count=n)
        at = np.flatnonzero(before >= 0)  # the kept elements' new positions
        kept = before[at]
        alive = np.zeros(len(old), dtype=bool)
        alive[kept] = True
        gone, added = np.flatnonzero(~alive).tolist(), np.flatnonzero(before < 0).tolist()
        changes = len(gone) + len(added)
        if changes * _PATCH_SHARE > n or (np.diff(kept) <= 0).any() or not all(
                type(e) in _UNPINNED for e in (*map(old.__getitem__, gone),
                                               *map(elements.__getitem__, added))):
            return None
        at_list, kept_list = at.tolist(), kept.tolist()
        replaced = list(compress(zip(at_list, kept_list, strict=True), map(
            is_not, map(elements.__getitem__, at_list), map(old.__getitem__, kept_list))))
        if (len(replaced) + changes) * _PATCH_SHARE > n or not all(
                _same_slot(old[p], elements[i]) for i, p in replaced):
            return None
        place = self.place()
        sheet = copy(self)
        sheet.elements, sheet._positions = elements, None
        sheet.numbering = object()
        # the pins, in place; the wires and junctions, afresh
        sheet._write([(elements[i], place[p]) for i, p in replaced
                      if type(elements[i]) not in _UNPINNED])
        types = list(map(type, elements))
        old_place, new_place = np.array(place, dtype=np.int64), np.empty(n, dtype=np.int64)
        pinned = before >= 0  # every element but the wires and junctions is kept
        old_base = {Wire: self.pin_count, Junction: self.pin_count + len(self.wires)}
        new_base: dict[type, int] = {}
        from_old = np.arange(self.pin_count)
        for t in (Wire, Junction):
            mine = np.fromiter(map(is_, types, repeat(t)), dtype=bool, count=n)
            pinned &= ~mine
            setattr(sheet, "wires" if t is Wire else "junctions",
                    list(compress(elements, mine.tolist())))
            new_base[t] = len(from_old)
            new_place[mine] = np.arange(int(mine.sum()))
            was = before[mine]
            from_old = np.concatenate([from_old, np.where(was >= 0, old_base[t] + old_place[was],
                                                          -1)])
        new_place[pinned] = old_place[before[pinned]]
        sheet._place = new_place.tolist()
        sheet._flatten_wires()
        moved = sheet.moved
        for i, p in replaced:
            e, was = elements[i], old[p]
            if (was.points != e.points) if type(e) is Wire else (
                    type(e) is Junction and was.at != e.at):
                moved.append(new_base[type(e)] + sheet._place[i])
        moved += [new_base[types[i]] + sheet._place[i] for i in added]
        gone_nodes = np.array([old_base[type(old[p])] + place[p] for p in gone], dtype=np.int64)
        sheet.origin = Origin(self.numbering, from_old, np.sort(gone_nodes))
        return sheet

    def _write(self, replaced: list[tuple[Element, int]]) -> None:
        """Put each ``(element, index in the list of its type)`` in place of its old version,
        noting in ``moved`` the graph nodes whose points (or marker's net name) changed."""
        for name in ("parts", "blocks", "labels", "wires", "junctions", "owners"):
            setattr(self, name, list(getattr(self, name)))
        self.at, self.pins, self.junction_xy = (
            self.at.copy(), self.pins.copy(), self.junction_xy.copy())
        points: dict[int, tuple[Point, ...]] = {}
        self.moved = moved = []
        for e, i in replaced:
            t = type(e)
            if t is Wire:
                if self.wires[i].points != e.points:
                    moved.append(self.pin_count + i)
                self.wires[i] = e
                points[i] = e.points
            elif t is Junction:
                if self.junctions[i].at != e.at:
                    moved.append(self.pin_count + len(self.wires) + i)
                self.junctions[i] = e
                self.junction_xy[i] = e.at
            elif t is PlacedPart or t is Block or t is NetLabel:
                if t is PlacedPart:
                    self.parts[i] = e
                    j = self.owner_index[i]
                elif t is Block:
                    self.blocks[i] = e
                    j = self.owner_index[len(self.parts) + i]
                else:
                    j = self.designated + i
                    renamed = _label_net(self.labels[i]) != _label_net(e)
                    self.labels[i] = e
                self.owners[j] = e
                self.at[j] = e.at
                offsets = _pin_offsets(e)
                if offsets:  # a coupling has none
                    first, stop = self.first_pin[j], self.first_pin[j + 1]
                    pins = np.add(e.at, offsets)
                    if (t is NetLabel and renamed) or (self.pins[first:stop] != pins).any():
                        moved.extend(range(first, stop))
                    self.pins[first:stop] = pins
        if points:
            self._splice(points)

    def _splice(self, points: dict[int, tuple[Point, ...]]) -> None:
        """Replace the vertices of the wires ``points`` names (index -> new points)."""
        pieces, start = [], 0
        counts = self.wire_points.copy()
        for i in sorted(points):
            first = int(self.first_vertex[i])
            pieces += [self.vertices[start:first], np.array(points[i], dtype=np.int64)]
            start = first + int(counts[i])
            counts[i] = len(points[i])
        pieces.append(self.vertices[start:])
        self.vertices = np.concatenate(pieces)
        self.wire_points = counts
        self._index_vertices()

    def pin(self, k: int) -> _Pin:
        e = self.owners[self.pin_owner[k]]
        index = k - self.first_pin[self.pin_owner[k]]
        at = (int(self.pins[k, 0]), int(self.pins[k, 1]))
        if type(e) is NetLabel:
            return _Pin(e.id, index, at, "", "net")
        return _Pin(e.id, index, at, e.designator, _roles(e)[index])
