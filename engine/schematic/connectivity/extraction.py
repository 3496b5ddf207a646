"""Extraction: which pins, wires and labels form each net, and what each net is called.

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

from collections import defaultdict
from collections.abc import Iterable
from dataclasses import dataclass, field
from functools import cached_property
from itertools import pairwise

import numpy as np
from scipy.sparse import csr_array
from scipy.sparse.csgraph import connected_components

from ...solve.circuit import GROUND
from ..document import Document
from ..model import Element
from ..symbols import Point
from .faults import ConnectivityWarning, _fmt, _part_warnings, _pin_warnings, _wire_warnings
from .sheet import _label_net, _natural_key, _Sheet


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


def _fresh(name: str, taken: set[str]) -> str:
    while name in taken:
        name += "'"
    taken.add(name)
    return name



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

