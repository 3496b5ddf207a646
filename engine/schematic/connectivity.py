"""From drawing to netlist: which pins, wires and labels form each net, and the Circuit they make.

Joining rules (grid points are exact integers, so every test is an equality):

* a pin joins every wire that passes through its point, at an end, a bend or mid-segment;
* a wire end joins every wire through its point (a T), and pins at the same point join each other;
* two wires that merely cross (neither ends there) stay apart unless a Junction sits on the point;
* a Junction joins everything through its point;
* net labels join by name anywhere on the sheet; a ground marker, or a label named ``"gnd"``, is
  the ground net ``"gnd"``.

Net names. A net with labels takes the label's name; ground wins over any other name, and between
two user names the one first in natural order (R2 before R10) wins, with a warning. An unlabelled
net is named after its lowest pin, ``"<designator>.<role>"`` in natural designator order and then
pin order (``"R1.b"``, ``"U1.out"``, ``"EQ1.plus"``); a net with no part pins is named after its
lowest wire or junction id, ``"<id>.net"``. Designators hold no ``.``, so automatic names never
collide with one another, and one that equals a user label gets ``'`` appended until it is free.
An automatic name changes only with its own net: when its lowest pin leaves, a lower one joins,
or a label comes to name it; edits elsewhere on the sheet leave it alone.

Cost: linear in the number of elements plus a sort of the joining points per grid row and
column; no pairwise comparison of elements. Re-extraction from the previous result (a move, a
value typed) redoes per element only what the replaced elements changed; the joining, naming and
warnings run whole, in array operations.
"""

from __future__ import annotations

import re
from collections import defaultdict
from collections.abc import Iterable, Iterator
from contextlib import contextmanager
from copy import copy
from dataclasses import dataclass, field, replace
from functools import cache, cached_property, lru_cache
from itertools import accumulate, chain, compress, count, pairwise
from operator import attrgetter, is_not

import numpy as np
from scipy.sparse import csr_array
from scipy.sparse.csgraph import connected_components

from ..errors import CircuitError
from ..solve.circuit import GROUND, KINDS, Circuit, Part
from ..solve.devices import DEVICE_KINDS
from ..solve.equivalent import Equivalent, collapse, equivalent
from ..solve.kinds import CONTROLLED_BY_CURRENT as _CONTROLLED_BY_CURRENT
from ..solve.kinds import REFERRING as _REFERENCING
from ..solve.kinds import SOURCES as _SOURCES
from ..solve.kinds import TRAITS, VALUED
from ..solve.names import unused_name as _fresh
from ..solve.units import VALUE_UNITS, parse_value
from .document import Document
from .model import Block, Contents, Element, Junction, NetLabel, PlacedPart, Wire
from .symbols import Point, pin_positions

__all__ = [
    "BLOCK_ROLES",
    "Connectivity",
    "ConnectivityWarning",
    "block_equivalent",
    "build_circuit",
    "contents_document",
    "extract",
    "joined_nets",
    "net_at",
]

#: Pin roles of a collapsed block, in pin order.
BLOCK_ROLES = ("plus", "minus")
#: A number for each kind of pin owner that a designator names, for comparing kinds in arrays.
_KIND_CODE = {kind: code for code, kind in enumerate([*KINDS, *DEVICE_KINDS, "block"])}
#: The node roles of every kind a placed part may have: primitive kinds and device kinds.
_ROLES: dict[str, tuple[str, ...]] = {**KINDS, **DEVICE_KINDS}
#: What each kind's value means, with an example, for the message when it is missing.
_QUANTITY = {name: (TRAITS[name].quantity, TRAITS[name].example) for name in VALUED}


@dataclass(frozen=True, slots=True)
class ConnectivityWarning:
    """Something drawn that will not connect or compute as the user probably meant.

    ``element_id`` is the element to select; ``at`` the grid point to show, where there is one;
    ``kind`` what sort of fault it is ("unconnected", "shorted", or "" for the rest).
    """

    message: str
    element_id: str
    at: Point | None = None
    kind: str = ""


@dataclass(frozen=True)
class Connectivity:
    """The nets of a document.

    ``net_of_pin[(element_id, pin_index)]`` for every pin of a part, block or net marker
    (pin order of engine.schematic.symbols.PINS); ``net_of_wire[wire_id]``; ``warnings`` in a
    stable order;
    ``nets[name]`` the grid points of each net (its pins, wire vertices and junctions),
    gathered on first use. Read-only: a later ``extract(doc, previous=...)`` starts from it.
    """

    net_of_pin: dict[tuple[str, int], str]
    net_of_wire: dict[str, str]
    warnings: tuple[ConnectivityWarning, ...]
    _sheet: _Sheet = field(repr=False, compare=False)
    _net: np.ndarray = field(repr=False, compare=False)  # the net index of every graph node
    _names: list[str] = field(repr=False, compare=False)  # the name of every net index
    _node_names: np.ndarray = field(repr=False, compare=False)  # the net name of every node

    @cached_property
    def nets(self) -> dict[str, frozenset[Point]]:
        # lazily: live re-extraction after each edit seldom needs the points
        sheet, net = self._sheet, self._net
        n_pins, n_wires = sheet.pin_count, len(sheet.wires)
        points_net = np.concatenate([net[:n_pins], net[n_pins + sheet.vertex_wire],
                                     net[n_pins + n_wires:]])
        points = [*zip(sheet.pin_x.tolist(), sheet.pin_y.tolist(), strict=True),
                  *(p for w in sheet.wires for p in w.points), *(j.at for j in sheet.junctions)]
        return _grouped(points, points_net, self._names)


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
    return _ROLES[e.kind] if type(e) is PlacedPart else BLOCK_ROLES


def _same_slot(old: Element, new: Element) -> bool:
    """Whether ``new`` replaces ``old`` without moving any graph node or automatic name: same
    type and id, and for a part or block the same designator (and kind, which fixes the pins)."""
    if type(old) is not type(new) or old.id != new.id:
        return False
    if type(new) is PlacedPart:
        return old.designator == new.designator and old.kind == new.kind
    return type(new) is not Block or old.designator == new.designator


#: A sheet is patched for a re-extraction only while at most one element in this many changed;
#: past that, building it afresh costs less.
_PATCH_SHARE = 8


def _int_array(points: Iterable[Point], size: int) -> np.ndarray:
    """An (n, 2) int64 array of ``points``, which hold ``size`` coordinates in all."""
    return np.fromiter(chain.from_iterable(points), dtype=np.int64, count=size).reshape(-1, 2)


class _Sheet:
    """One document flattened for extraction. Graph nodes are numbered pins first (those of parts
    and blocks in natural designator order, then those of net markers), then wires, then
    junctions.

    A sheet is never modified once made; :meth:`updated` gives the sheet of a later version of
    the document, reusing this one's arrays wherever the element is still the same object.
    """

    def __init__(self, elements: list[Element]) -> None:
        self.elements = elements  # in document order
        by_type: dict[type, list] = defaultdict(list)
        for e in elements:
            by_type[type(e)].append(e)
        self.parts: list[PlacedPart] = by_type[PlacedPart]
        self.blocks: list[Block] = by_type[Block]
        self.labels: list[NetLabel] = by_type[NetLabel]
        self.wires: list[Wire] = by_type[Wire]
        self.junctions: list[Junction] = by_type[Junction]
        self._place: list[int] | None = None
        self.referencing = [i for i, p in enumerate(self.parts) if p.kind in _REFERENCING]
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
        self.owners += self.labels
        offsets = [_pin_offsets(e) for e in self.owners]
        counts = [len(o) for o in offsets]
        self.first_pin: list[int] = [0, *accumulate(counts)]
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
        self.wire_ids = [w.id for w in self.wires]
        self.wire_points = np.fromiter(map(len, map(attrgetter("points"), self.wires)),
                                       dtype=np.int64, count=len(self.wires))
        self.vertices = _int_array(chain.from_iterable(map(attrgetter("points"), self.wires)),
                                   2 * int(self.wire_points.sum()))
        self._index_vertices()
        self.junction_xy = _int_array(map(attrgetter("at"), self.junctions),
                                      2 * len(self.junctions))

    def place(self) -> list[int]:
        """Each element's index in the list of its type (the same for every updated sheet)."""
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
        if len(elements) != len(old):
            return _Sheet(elements)
        changed = list(compress(count(), map(is_not, elements, old)))
        if not changed:
            return self
        if len(changed) * _PATCH_SHARE > len(elements) or not all(
                _same_slot(old[p], elements[p]) for p in changed):
            return _Sheet(elements)
        place = self.place()  # before the copy, which then shares it
        sheet = copy(self)
        sheet.elements = elements
        sheet._write([(elements[p], place[p]) for p in changed])
        return sheet

    def _write(self, replaced: list[tuple[Element, int]]) -> None:
        """Put each ``(element, index in the list of its type)`` in place of its old version."""
        for name in ("parts", "blocks", "labels", "wires", "junctions", "owners"):
            setattr(self, name, list(getattr(self, name)))
        self.at, self.pins, self.junction_xy = (
            self.at.copy(), self.pins.copy(), self.junction_xy.copy())
        points: dict[int, tuple[Point, ...]] = {}
        for e, i in replaced:
            t = type(e)
            if t is Wire:
                self.wires[i] = e
                points[i] = e.points
            elif t is Junction:
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
                    self.labels[i] = e
                    j = self.designated + i
                self.owners[j] = e
                self.at[j] = e.at
                offsets = _pin_offsets(e)
                if offsets:  # a coupling has none
                    self.pins[self.first_pin[j]:self.first_pin[j + 1]] = np.add(e.at, offsets)
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


def extract(doc: Document | Iterable[Element],
            previous: Connectivity | None = None) -> Connectivity:
    """Derive the nets of ``doc`` (a document, or the elements of one planned but not yet
    applied; rules and naming in the module docstring); never raises on a drawing problem,
    which comes back in ``warnings`` instead.

    ``previous``, an earlier result (of any document), is a head start: what it worked out for
    each element that is still the same object is reused, since elements are immutable. A
    re-extraction after an edit that replaced a few elements (a move, a value typed) so
    costs less than a first one; the result is the same either way.

    Grid coordinates must fit in 64-bit integers.
    """
    elements = list(doc)
    if previous is None:
        sheet = _Sheet(elements)
    else:
        sheet = previous._sheet.updated(elements)
        if sheet is previous._sheet:
            return previous
    n_pins, n_wires = sheet.pin_count, len(sheet.wires)
    n_nodes = n_pins + n_wires + len(sheet.junctions)
    warnings: list[ConnectivityWarning] = []

    vertices, vertex_wire, ends = sheet.vertices, sheet.vertex_wire, sheet.ends
    junction_xy = sheet.junction_xy
    # everything that joins whatever passes through its point: pins, wire ends, junctions
    joints = _Joints(np.concatenate([sheet.pin_x, vertices[ends, 0], junction_xy[:, 0]]),
                     np.concatenate([sheet.pin_y, vertices[ends, 1], junction_xy[:, 1]]),
                     np.concatenate([np.arange(n_pins), n_pins + vertex_wire[ends],
                                     n_pins + n_wires + np.arange(len(sheet.junctions))]),
                     vertices)
    label_edges, label_names = _label_edges(sheet, warnings)
    pairs = np.concatenate([joints.edges, *joints.segment_edges(vertices, vertex_wire, n_pins),
                            label_edges], axis=1)
    # float weights: what the component search converts to anyway
    graph = csr_array((np.ones(pairs.shape[1]), (pairs[0], pairs[1])), shape=(n_nodes, n_nodes))
    n_nets, net = connected_components(graph, directed=False)

    names = _net_names(sheet, net, n_nets, label_names, warnings)
    node_names = np.array(names, dtype=object)[net]
    pin_names, wire_names = node_names[:n_pins], node_names[n_pins:n_pins + n_wires]
    if previous is not None and sheet.keys is previous._sheet.keys:  # same nodes, same order
        before = previous._node_names
        net_of_pin = _renamed(previous.net_of_pin, sheet.keys, before[:n_pins], pin_names)
        net_of_wire = _renamed(previous.net_of_wire, sheet.wire_ids,
                               before[n_pins:n_pins + n_wires], wire_names)
    else:
        net_of_pin = dict(zip(sheet.keys, pin_names.tolist(), strict=True))
        net_of_wire = dict(zip(sheet.wire_ids, wire_names.tolist(), strict=True))
    warnings += _pin_warnings(sheet, net, names)
    warnings += _wire_warnings(sheet, vertices, vertex_wire)
    warnings += _part_warnings(sheet)
    return Connectivity(net_of_pin, net_of_wire, tuple(warnings), sheet, net, names, node_names)


def _renamed(before: dict, keys: list, names_before: np.ndarray, names: np.ndarray) -> dict:
    """``dict(zip(keys, names))``, made from ``before``, that dict for ``names_before``."""
    out = before.copy()
    for k in np.flatnonzero(names_before != names).tolist():
        out[keys[k]] = names[k]
    return out


class _Axis:
    """Maps coordinates on one axis to small indices that keep their order and equality."""

    def __init__(self, values: np.ndarray, rank: bool) -> None:
        self.table = np.unique(values) if rank else None
        self.low = int(values.min()) if values.size else 0
        if self.table is not None:
            self.size = len(self.table)
        else:
            self.size = int(values.max()) - self.low + 1 if values.size else 1

    def index(self, values: np.ndarray) -> np.ndarray:
        if self.table is None:
            return values - self.low
        return np.searchsorted(self.table, values)


class _Joints:
    """The points where things join, indexed for segment queries.

    Grid points are encoded as one int64 key, row by row and column by column, so that a
    horizontal or vertical segment covers one contiguous run of keys in the sorted tables.
    ``edges`` join every node to the first node at its point.
    """

    def __init__(self, xs: np.ndarray, ys: np.ndarray, nodes: np.ndarray,
                 vertices: np.ndarray) -> None:
        all_x, all_y = np.concatenate([xs, vertices[:, 0]]), np.concatenate([ys, vertices[:, 1]])
        span = [int(v.max()) - int(v.min()) + 1 if v.size else 1 for v in (all_x, all_y)]
        rank = span[0] * span[1] >= 2**62  # far-apart coordinates would overflow the key
        self.x, self.y = _Axis(all_x, rank), _Axis(all_y, rank)
        keys = self.row_key(xs, ys)
        order = np.argsort(keys, kind="stable")
        keys, nodes = keys[order], nodes[order]
        first = np.ones(keys.size, dtype=bool)
        first[1:] = keys[1:] != keys[:-1]
        self.row_keys, self.row_nodes = keys[first], nodes[first]
        self.edges = np.stack([nodes, self.row_nodes[np.cumsum(first) - 1]])
        col = self.col_key(xs[order][first], ys[order][first])
        by_col = np.argsort(col, kind="stable")
        self.col_keys, self.col_nodes = col[by_col], self.row_nodes[by_col]

    def row_key(self, xs: np.ndarray, ys: np.ndarray) -> np.ndarray:
        return self.y.index(ys) * self.x.size + self.x.index(xs)

    def col_key(self, xs: np.ndarray, ys: np.ndarray) -> np.ndarray:
        return self.x.index(xs) * self.y.size + self.y.index(ys)

    def segment_edges(self, vertices: np.ndarray, vertex_wire: np.ndarray,
                      base: int) -> list[np.ndarray]:
        """Edges joining each wire (node ``base + index``) to every joint point on its segments."""
        same = vertex_wire[1:] == vertex_wire[:-1]
        a, b = vertices[:-1][same], vertices[1:][same]
        wire = base + vertex_wire[:-1][same]
        horizontal = a[:, 1] == b[:, 1]
        vertical = (a[:, 0] == b[:, 0]) & ~horizontal
        out = []
        for mask, key, keys, nodes in ((horizontal, self.row_key, self.row_keys, self.row_nodes),
                                       (vertical, self.col_key, self.col_keys, self.col_nodes)):
            lo, hi = np.minimum(a[mask], b[mask]), np.maximum(a[mask], b[mask])
            start = np.searchsorted(keys, key(lo[:, 0], lo[:, 1]), side="left")
            stop = np.searchsorted(keys, key(hi[:, 0], hi[:, 1]), side="right")
            hits = stop - start
            offset = np.arange(int(hits.sum())) - np.repeat(np.cumsum(hits) - hits, hits)
            out.append(np.stack([np.repeat(wire[mask], hits),
                                 nodes[np.repeat(start, hits) + offset]]))
        return out


def _label_edges(sheet: _Sheet,
                 warnings: list[ConnectivityWarning]) -> tuple[np.ndarray, dict[int, str]]:
    """Edges joining markers of equal name; returns them with each marker pin's net name."""
    first_of: dict[str, int] = {}
    names: dict[int, str] = {}
    a, b = [], []
    for i in range(sheet.designated, len(sheet.owners)):
        label = sheet.owners[i]
        k = sheet.first_pin[i]
        name = _label_net(label)
        if not name:
            warnings.append(ConnectivityWarning(
                f"net label at {_fmt(label.at)} has no name, so it joins only what touches it",
                label.id, label.at))
            continue
        names[k] = name
        a.append(k)
        b.append(first_of.setdefault(name, k))
    return np.array([a, b], dtype=np.int64).reshape(2, -1), names


def _net_names(sheet: _Sheet, net: np.ndarray, n_nets: int, label_names: dict[int, str],
               warnings: list[ConnectivityWarning]) -> list[str]:
    names: list[str | None] = [None] * n_nets
    on_net: dict[int, dict[str, int]] = defaultdict(dict)
    for k, name in label_names.items():
        on_net[int(net[k])].setdefault(name, k)
    for n, found in on_net.items():
        names[n] = _chosen_name(found, sheet, warnings)
    taken = set(label_names.values())
    # designated pins are numbered in natural designator order, so a net's lowest pin comes first
    nets_seen, first = np.unique(net[:sheet.designated_pins], return_index=True)
    auto = sheet.auto
    _name_fresh(names, [(n, auto[k]) for n, k in zip(nets_seen.tolist(), first.tolist(),
                                                      strict=True) if names[n] is None], taken)
    if None not in names:
        return names
    unnamed: dict[int, list[str]] = defaultdict(list)
    others = [*sheet.wires, *sheet.junctions, *sheet.labels]
    other_nodes = [*range(sheet.pin_count, sheet.pin_count + len(sheet.wires)
                          + len(sheet.junctions)),
                   *sheet.first_pin[sheet.designated:-1]]
    for element, n in zip(others, net[other_nodes].tolist(), strict=True):
        if names[n] is None:
            unnamed[n].append(element.id)
    _name_fresh(names, [(n, f"{min(ids, key=_natural_key)}.net") for n, ids in unnamed.items()],
                taken)
    return names


def _name_fresh(names: list[str | None], wanted: list[tuple[int, str]], taken: set[str]) -> None:
    """``names[n] = _fresh(name, taken)`` for each ``(n, name)`` of ``wanted`` in turn."""
    fresh = {name for _, name in wanted}
    if len(fresh) == len(wanted) and taken.isdisjoint(fresh):  # the usual case: none is taken
        for n, name in wanted:
            names[n] = name
        taken |= fresh
        return
    for n, name in wanted:
        names[n] = _fresh(name, taken)


def _grouped(points: list[Point], point_net: np.ndarray,
             names: list[str]) -> dict[str, frozenset[Point]]:
    if not points:
        return {}
    order = np.argsort(point_net, kind="stable")
    ordered = point_net[order]
    bounds = np.flatnonzero(np.diff(ordered)) + 1
    ordered_points = [points[i] for i in order.tolist()]
    starts = [0, *bounds.tolist()]
    stops = [*starts[1:], len(order)]
    return {names[n]: frozenset(ordered_points[a:b])
            for n, a, b in zip(ordered[starts].tolist(), starts, stops, strict=True)}


def _chosen_name(found: dict[str, int], sheet: _Sheet,
                 warnings: list[ConnectivityWarning]) -> str:
    """Ground first, then natural order; a warning for each name that loses."""
    ordered = sorted(found, key=lambda n: (n != GROUND, _natural_key(n)))
    chosen = ordered[0]
    shown = f"ground ({GROUND})" if chosen == GROUND else repr(chosen)
    for other in ordered[1:]:
        marker = sheet.pin(found[other])
        warnings.append(ConnectivityWarning(
            f"one net carries two names, {shown} and {other!r}; it is called {shown}. "
            "Remove one label or separate the nets", marker.element_id, marker.at))
    return chosen


def _fmt(at: Point) -> str:
    return f"({at[0]}, {at[1]})"


def _pin_warnings(sheet: _Sheet, net: np.ndarray, names: list[str]) -> list[ConnectivityWarning]:
    """Pins alone on their net, and two-pin parts with both pins on one net."""
    out = []
    pin_net = net[:sheet.pin_count]
    alone = np.bincount(pin_net, minlength=len(names))[pin_net[:sheet.designated_pins]] == 1
    for k in np.flatnonzero(alone).tolist():
        pin = sheet.pin(k)
        out.append(ConnectivityWarning(
            f"{pin.designator} pin {pin.role} at {_fmt(pin.at)} is not connected",
            pin.element_id, pin.at, "unconnected"))
    first = np.array(sheet.first_pin[:sheet.designated + 1], dtype=np.int64)
    two = first[:-1][np.diff(first) == 2]
    for k in two[pin_net[two] == pin_net[two + 1]].tolist():
        pin = sheet.pin(k)
        out.append(ConnectivityWarning(
            f"{pin.designator} has both pins on net {names[pin_net[k]]}, so it is shorted out",
            pin.element_id, pin.at, "shorted"))
    return out


def _wire_warnings(sheet: _Sheet, vertices: np.ndarray,
                   vertex_wire: np.ndarray) -> list[ConnectivityWarning]:
    same = vertex_wire[1:] == vertex_wire[:-1]
    zero = same & (vertices[1:] == vertices[:-1]).all(axis=1)
    n = len(sheet.wires)
    all_zero = np.bincount(vertex_wire[:-1][zero], minlength=n) == np.bincount(
        vertex_wire[:-1][same], minlength=n)
    out = []
    for k in np.flatnonzero(zero).tolist():
        wire = sheet.wires[vertex_wire[k]]
        at = (int(vertices[k, 0]), int(vertices[k, 1]))
        if not all_zero[vertex_wire[k]]:
            out.append(ConnectivityWarning(
                f"wire {wire.id} has a zero-length segment at {_fmt(at)}", wire.id, at))
        elif k == 0 or vertex_wire[k - 1] != vertex_wire[k]:  # once per wire
            out.append(ConnectivityWarning(
                f"wire {wire.id} at {_fmt(at)} has zero length; delete it or drag an end",
                wire.id, at))
    return out


def _part_warnings(sheet: _Sheet) -> list[ConnectivityWarning]:
    """Parts stacked on one another, and couplings or controlled sources naming bad parts."""
    out = []
    placed = sheet.owners[:sheet.designated]
    if _stacked(sheet):
        seen: dict[tuple[str, Point], str] = {}
        for e in placed:
            key = (e.kind if type(e) is PlacedPart else "block", e.at)
            if key in seen:
                out.append(ConnectivityWarning(
                    f"{seen[key]} and {e.designator} lie on top of each other at "
                    f"{_fmt(e.at)}; move one of them", e.id, e.at))
            else:
                seen[key] = e.designator
    if sheet.referencing:
        by_designator = {p.designator: p for p in sheet.parts}
        for i in sheet.referencing:
            part = sheet.parts[i]
            message = _reference_problem(part, by_designator, sheet.blocks)
            if message:
                out.append(ConnectivityWarning(message, part.id, part.at))
    return out


def _stacked(sheet: _Sheet) -> bool:
    """Whether two parts or blocks of one kind sit at the same point."""
    kind, at = sheet.owner_kind, sheet.at[:sheet.designated]
    order = np.lexsort((at[:, 1], at[:, 0], kind))
    kind, at = kind[order], at[order]
    return bool(((kind[1:] == kind[:-1]) & (at[1:] == at[:-1]).all(axis=1)).any())


def _reference_problem(part: PlacedPart, parts: dict[str, PlacedPart],
                       blocks: list[Block]) -> str:
    """Why a coupling's inductors or a current-controlled source's controller is unusable."""
    if part.kind == "coupling":
        if len(part.couples) != 2 or part.couples[0] == part.couples[1]:
            return f"{part.designator} must name two different inductors to couple"
        for ref in part.couples:
            if ref not in parts:
                return f"{part.designator} couples {ref}, which {_missing(ref, blocks)}"
            if parts[ref].kind != "inductor":
                return (f"{part.designator} couples {ref}, which is a "
                        f"{parts[ref].kind.replace('_', ' ')}, not an inductor")
    if part.kind in _CONTROLLED_BY_CURRENT:
        if not part.control:
            return f"{part.designator} names no part whose current controls it"
        if part.control not in parts:
            return (f"{part.designator} is controlled by the current of {part.control}, "
                    f"which {_missing(part.control, blocks)}")
        if part.control == part.designator or parts[part.control].kind in {"opamp", "coupling"}:
            return (f"{part.designator} cannot be controlled by {part.control}, which has no "
                    "single branch current")
    return ""


def _missing(designator: str, blocks: list[Block]) -> str:
    """Where a designator that is not a part on the sheet is, as the end of a sentence."""
    for block in blocks:
        if block.designator == designator:
            return "is a collapsed block; expand it and name a part inside"
        stack = [block.contents]
        while stack:
            contents = stack.pop()
            if any(p.designator == designator for p in contents.parts):
                return f"is inside the collapsed block {block.designator}; expand the block"
            stack.extend(b.contents for b in contents.blocks)
    return "is not on the sheet"


def joined_nets(before: Connectivity, after: Connectivity) -> dict[str, tuple[str, ...]]:
    """Nets of ``after`` that hold pins of two or more nets of ``before``: each such net's name
    mapped to the ``before`` names it joins (natural order). Pins in only one of the two are
    left out, so a part added or removed joins nothing by itself."""
    sources: dict[str, set[str]] = defaultdict(set)
    for key, net in after.net_of_pin.items():
        old = before.net_of_pin.get(key)
        if old is not None:
            sources[net].add(old)
    return {net: tuple(sorted(olds, key=_natural_key)) for net, olds in sources.items()
            if len(olds) > 1}


def net_at(doc: Document, conn: Connectivity, at: Point) -> str | None:
    """The net at grid point ``at``: a pin's net first, else a wire through the point."""
    sheet = conn._sheet.updated(list(doc))
    hits = np.flatnonzero((sheet.pin_x == at[0]) & (sheet.pin_y == at[1]))
    if hits.size:
        return conn.net_of_pin[sheet.keys[int(hits[0])]]
    for wire in sheet.wires:
        if any(_on_segment(at, a, b) for a, b in pairwise(wire.points)):
            return conn.net_of_wire[wire.id]
    return None


def _on_segment(p: Point, a: Point, b: Point) -> bool:
    return (min(a[0], b[0]) <= p[0] <= max(a[0], b[0])
            and min(a[1], b[1]) <= p[1] <= max(a[1], b[1]) and (a[0] == b[0] or a[1] == b[1]))


# -- building the Circuit ------------------------------------------------------------------------

def build_circuit(doc: Document, conn: Connectivity | None = None, freq: float = 0.0) -> Circuit:
    """The engine Circuit of ``doc``: each part named by its designator, on the nets of ``conn``
    (extracted when not given).

    A Block stands in for its contents by their equivalent at ``freq`` hertz (see
    :func:`block_equivalent`), so rebuild when the frequency changes. Raises CircuitError naming
    the designator and field of a missing or unreadable value or a broken reference.
    """
    return _build(doc, conn or extract(doc), freq, {})


def _build(doc: Document, conn: Connectivity, freq: float, rename: dict[str, str]) -> Circuit:
    def nets(element_id: str, count: int) -> list[str]:
        return [rename.get(n, n) for n in (conn.net_of_pin[element_id, i] for i in range(count))]

    circuit = Circuit()
    parts = doc.parts()
    by_designator = {p.designator: p for p in parts}
    blocks = doc.blocks()
    # couplings last: the circuit checks that their inductors are already there
    for part in sorted(parts, key=lambda p: p.kind == "coupling"):
        problem = _reference_problem(part, by_designator, blocks)
        if problem:
            raise CircuitError(problem)
        _add_part(circuit, part, nets(part.id, len(_ROLES[part.kind])))
    if blocks:  # the names a block's internal net must avoid
        taken = {*conn.net_of_pin.values(), *conn.net_of_wire.values(), *rename.values()}
        for block in blocks:
            for part in _block_parts(block, *nets(block.id, 2), freq, taken):
                circuit.add(part)
    return circuit


def _add_part(circuit: Circuit, part: PlacedPart, nodes: list[str]) -> None:
    name, kind = part.designator, part.kind
    if kind == "opamp":
        circuit.opamp(name, *nodes)
        return
    if kind in DEVICE_KINDS:
        circuit.add_device(name, kind, nodes, {k: v for k, v in part.params if v.strip()})
        return
    if not part.value.strip():
        quantity, example = _QUANTITY[kind]
        raise CircuitError(f"{name} value: none given; enter the {quantity}, e.g. {example}")
    value = parse_value(part.value, what=f"{name} value", unit=VALUE_UNITS[kind])
    phase = _phase(part)
    if kind == "coupling":
        circuit.coupling(name, *part.couples, value)
    elif kind in _CONTROLLED_BY_CURRENT:
        getattr(circuit, kind)(name, *nodes, part.control, value)
    elif kind in _SOURCES:
        getattr(circuit, kind)(name, *nodes, value, phase_deg=phase)
    else:
        getattr(circuit, kind)(name, *nodes, value)


def _phase(part: PlacedPart) -> float | None:
    if not part.phase_deg.strip():
        return None
    if part.kind not in _SOURCES:
        raise CircuitError(f"{part.designator} phase: only independent sources take a phase; "
                           "clear the field")
    return float(parse_value(part.phase_deg, what=f"{part.designator} phase"))


def contents_document(contents: Contents) -> Document:
    """A scratch Document holding a block's contents (for extraction and building)."""
    doc = Document()
    for group in (contents.parts, contents.wires, contents.junctions, contents.labels,
                  contents.blocks):
        for element in group:
            doc.add(element)
    return doc


def block_equivalent(block: Block, freq: float = 0.0) -> Equivalent:
    """The equivalent of ``block``'s contents seen between its port nets at ``freq`` hertz.

    Every contents pin listed in ``block.port[0]`` is on the plus net and every one in
    ``block.port[1]`` on the minus net (the wires that joined them stayed on the sheet).
    Errors come back as the same CircuitError subclass, prefixed with the block's designator.
    """
    circuit, port = _contents_circuit(block, freq)
    with _blamed(block):
        return equivalent(circuit, region=set(circuit.names), port=port, freq=freq)


def _contents_circuit(block: Block, freq: float) -> tuple[Circuit, tuple[str, str]]:
    sub = contents_document(block.contents)
    conn = extract(sub)
    rename: dict[str, str] = {}
    ends = []
    for side, points in zip(BLOCK_ROLES, block.port, strict=True):
        found = {net_at(sub, conn, at) for at in points}
        if None in found or not found:
            raise CircuitError(f"{block.designator}: its {side} port point touches nothing in "
                               "its contents; expand and collapse the region again")
        target = min(found, key=_natural_key)
        for net in found:
            if net in rename:
                raise CircuitError(f"{block.designator}: its contents join the plus and minus "
                                   "port nets, so it has no equivalent")
            rename[net] = target
        ends.append(target)
    with _blamed(block):
        return _build(sub, conn, freq, rename), (ends[0], ends[1])


@contextmanager
def _blamed(block: Block) -> Iterator[None]:
    try:
        yield
    except CircuitError as e:
        raise type(e)(f"{block.designator} (collapsed region): {e}") from None


def _block_parts(block: Block, plus: str, minus: str, freq: float,
                 taken: set[str]) -> list[Part]:
    """What the engine's collapse puts in place of the contents, renamed for the sheet: the
    source ``<designator>.src`` and impedance ``<designator>.z`` on the block's nets, with
    ``<designator>.mid`` between them in the Thevenin form. The block's form is used where it
    exists, the other one otherwise."""
    circuit, port = _contents_circuit(block, freq)
    region = set(circuit.names)
    with _blamed(block):
        eq = equivalent(circuit, region=region, port=port, freq=freq)
        usable = eq.has_thevenin if block.form == "thevenin" else eq.has_norton
        other = "norton" if block.form == "thevenin" else "thevenin"
        reduced = collapse(circuit, region, port, freq, block.form if usable else other)
    nets = {port[0]: plus, port[1]: minus}
    mid = None
    parts = []
    for part in reduced:  # every part of the contents was in the region: only these remain
        inner = [n for n in part.nodes if n not in nets]
        if inner and mid is None:
            mid = _fresh(f"{block.designator}.mid", taken)
        role = "src" if part.is_independent_source else "z"
        parts.append(replace(part, name=f"{block.designator}.{role}",
                             nodes=tuple(nets.get(n, mid) for n in part.nodes)))
    return parts
