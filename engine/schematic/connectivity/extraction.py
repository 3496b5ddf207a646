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
value typed, wires added or removed) redoes per element only what the changed elements changed,
and joins and names again only the nets they touch (engine.schematic.connectivity.incremental);
the warnings run whole, in array operations.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Iterable
from dataclasses import dataclass, field
from functools import cached_property
from itertools import pairwise
from typing import NamedTuple

import numpy as np

from ..document import Document
from ..model import Element
from ..symbols import Point
from .faults import ConnectivityWarning, _part_warnings, _pin_warnings, _wire_warnings
from .incremental import patched
from .joining import components
from .naming import label_edges, net_names
from .sheet import _natural_key, _Sheet


@dataclass(frozen=True)
class Connectivity:
    """The nets of a document.

    ``net_of_pin[(element_id, pin_index)]`` for every pin of a part, block or net marker
    (pin order of engine.schematic.symbols.PINS); ``net_of_wire[wire_id]``; ``warnings`` in a
    stable order; ``nets[name]`` the grid points of each net (its pins, wire vertices and
    junctions), gathered on first use. Read-only: a later ``extract(doc, previous=...)``
    starts from it.
    """

    net_of_pin: dict[tuple[str, int], str]
    net_of_wire: dict[str, str]
    warnings: tuple[ConnectivityWarning, ...]
    _sheet: _Sheet = field(repr=False, compare=False)
    _net: np.ndarray = field(repr=False, compare=False)  # the net index of every graph node
    _names: list[str] = field(repr=False, compare=False)  # the name of every net index
    _node_names: np.ndarray = field(repr=False, compare=False)  # the net name of every node
    _plain: bool = field(repr=False, compare=False)  # no automatic name made fresh with "'"

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

    def pin_nets(self, element_ids: Iterable[str]) -> set[str]:
        """The nets that the pins of the parts and blocks among ``element_ids`` are on (other
        ids are passed over)."""
        sheet = self._sheet
        owners = np.array([j for j in map(sheet.owner_of.get, element_ids) if j is not None],
                          dtype=np.int64)
        starts = sheet.first_pins[owners]
        counts = sheet.first_pins[owners + 1] - starts
        ends = np.cumsum(counts)
        pins = np.arange(int(ends[-1]) if ends.size else 0) + np.repeat(starts - ends + counts,
                                                                        counts)
        return set(self._node_names[pins].tolist())

    def pins_on(self, net: str) -> list[tuple[tuple[str, int], Point]]:
        """Every pin on ``net``: its (element id, pin index) and where it is on the sheet, in
        the sheet's pin order (a net of hundreds of pins is read without a pass over all)."""
        sheet = self._sheet
        at = np.flatnonzero(self._node_names[:sheet.pin_count] == net)
        return [(sheet.keys[i], (x, y)) for i, x, y in zip(
            at.tolist(), sheet.pin_x[at].tolist(), sheet.pin_y[at].tolist(), strict=True)]


def extract(doc: Document | Iterable[Element],
            previous: Connectivity | None = None) -> Connectivity:
    """Derive the nets of ``doc`` (a document, or the elements of one planned but not yet
    applied; rules and naming in the module docstring); never raises on a drawing problem,
    which comes back in ``warnings`` instead.

    ``previous``, an earlier result (of any document), is a head start: what it worked out for
    each element that is still the same object is reused, since elements are immutable. Where
    the edit since replaced a few elements without renaming any and added or removed at most a
    few wires and junctions (a move, its link wires, a value typed), only the nets those
    elements touched before or touch now are joined and named again
    (engine.schematic.connectivity.incremental); the result is the same either way.

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
    warnings: list[ConnectivityWarning] = []
    label_pairs, label_names = label_edges(sheet, warnings)
    before = _nodes_before(sheet, previous)
    found = None
    if before is not None and previous._plain:
        found = patched(sheet, before.net, previous._names, label_pairs, label_names, warnings,
                        before.gone)
    if found is None:
        n_nets, net = components(sheet, label_pairs)
        names, plain = net_names(sheet, net, n_nets, label_names, warnings)
        node_names = np.array(names, dtype=object)[net]
        renamed = None
    else:
        net, names, renamed = found
        plain = True
        node_names = before.names.copy()
        node_names[renamed] = np.array(names, dtype=object)[net[renamed]]
    if before is not None:  # the pins numbered alike: only what changed is written
        pins = np.arange(n_pins) if renamed is None else renamed[renamed < n_pins]
        net_of_pin = _renamed(previous.net_of_pin, sheet.keys, pins, before.names, node_names)
    else:
        net_of_pin = dict(zip(sheet.keys, node_names[:n_pins].tolist(), strict=True))
    if before is not None and sheet.numbering is previous._sheet.numbering:
        wires = np.arange(n_pins, n_pins + n_wires) if renamed is None else \
            renamed[(renamed >= n_pins) & (renamed < n_pins + n_wires)]
        net_of_wire = _renamed(previous.net_of_wire, sheet.wire_ids, wires - n_pins,
                               before.names[n_pins:], node_names[n_pins:])
    else:  # wires added or removed: in the sheet's order, as a whole extraction gives them
        net_of_wire = dict(zip(sheet.wire_ids, node_names[n_pins:n_pins + n_wires].tolist(),
                               strict=True))
    warnings += _pin_warnings(sheet, net, names)
    warnings += _wire_warnings(sheet, sheet.vertices, sheet.vertex_wire)
    warnings += _part_warnings(sheet)
    return Connectivity(net_of_pin, net_of_wire, tuple(warnings), sheet, net, names, node_names,
                        plain)


class _Before(NamedTuple):
    """An earlier result read on a later sheet's graph nodes: each node's net number and net
    name (an added node: net number ``len(names)``, which no net has, and no name), and the
    net numbers of the earlier sheet's nodes removed since."""

    net: np.ndarray
    names: np.ndarray
    gone: np.ndarray


def _nodes_before(sheet: _Sheet, previous: Connectivity | None) -> _Before | None:
    """``previous`` read on ``sheet``'s nodes, where ``sheet`` numbers them as ``previous``'s
    sheet does or was patched from it across added or removed wires and junctions (its
    ``origin``); else None."""
    if previous is None:
        return None
    if sheet.numbering is previous._sheet.numbering:
        return _Before(previous._net, previous._node_names, np.empty(0, dtype=np.int64))
    origin = sheet.origin
    if origin is None or origin.numbering is not previous._sheet.numbering:
        return None
    added = origin.from_old < 0
    net = previous._net[origin.from_old]
    net[added] = len(previous._names)
    names = previous._node_names[origin.from_old]
    names[added] = None
    return _Before(net, names, previous._net[origin.gone])


def _renamed(before: dict, keys: list, at: np.ndarray, names_before: np.ndarray,
             names: np.ndarray) -> dict:
    """``before`` with ``keys[k]`` taking ``names[k]`` for each ``k`` of ``at`` whose name
    differs from ``names_before[k]``."""
    out = before.copy()
    for k in at[names_before[at] != names[at]].tolist():
        out[keys[k]] = names[k]
    return out


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


