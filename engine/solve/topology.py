"""Graph views of a circuit: the two-terminal cut check and the diagnosis of singular circuits.

Connectivity on the hot path is counted with SciPy's compiled graph routines on the netlist's
index arrays; networkx builds the readable views (:func:`circuit_graph`) and finds the loop to
name in an error message.

Cut rules (:func:`check_cut`), each refused with a :class:`~engine.errors.CutError` that names the
parts or nets at fault:

* every name in the region is a part of the circuit; a coupling follows its inductors, and one
  whose inductors lie on different sides is refused;
* a current-controlled source and its controlling part lie on the same side, and so do a
  voltage-controlled source (or op-amp) and the nets it senses;
* the region meets the rest at its port only. A piece of the region that no current path joins to
  the port and that meets the rest at a single net (a transformer's primary, grounded outside)
  exchanges no current there, so that net is not a terminal.

Existence rules at the analysis frequency (:func:`islands`, :func:`check_voltage_loops`): see
docs/method.md.
"""

from __future__ import annotations

import threading
from collections.abc import Collection, Iterable, Sequence
from dataclasses import dataclass
from itertools import chain

import networkx as nx
import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from ..errors import CircuitError, CutError, SingularCircuitError
from .circuit import GROUND, KIND_CODE, KINDS, NET_COLUMNS, Circuit, Columns, Part, kind_mask
from .mna import Netlist

__all__ = ["Cut", "Islands", "check_cut", "check_voltage_loops", "circuit_graph", "cut",
           "forget_netlists", "islands", "netlist_of"]

_SENSING = ("vcvs", "vccs", "opamp")
_CONTROLLED = ("ccvs", "cccs")
#: (kind, node columns) of the branches that can carry current, at any frequency.
_CARRYING = (("resistor", (0, 1)), ("capacitor", (0, 1)), ("inductor", (0, 1)),
             ("impedance", (0, 1)), ("voltage_source", (0, 1)), ("current_source", (0, 1)),
             ("ccvs", (0, 1)), ("cccs", (0, 1)), ("vcvs", (0, 1)), ("vccs", (0, 1)),
             ("opamp", (2, 3)))
_SENSES = (("vcvs", (2, 3)), ("vccs", (2, 3)), ("opamp", (0, 1)))
_CURRENT_TYPE = (("current_source", (0, 1)), ("vccs", (0, 1)), ("cccs", (0, 1)))


def _column_table(spec: Iterable[tuple[str, tuple[int, ...]]]) -> np.ndarray:
    """``spec`` as a boolean per kind code and node column (for ``Netlist.marked``)."""
    table = np.zeros((len(KINDS), NET_COLUMNS), dtype=bool)
    for kind, cols in spec:
        table[KIND_CODE[kind], list(cols)] = True
    return table


@dataclass(frozen=True, slots=True, eq=False)
class _Edges:
    """Branches as graph edges, per kind code: whether the kind has one (``used``) and the two
    node columns it joins (``first``, ``second``)."""

    used: np.ndarray
    first: np.ndarray
    second: np.ndarray

    @classmethod
    def of(cls, spec: Iterable[tuple[str, tuple[int, int]]]) -> _Edges:
        used = np.zeros(len(KINDS), dtype=bool)
        first, second = np.zeros(len(KINDS), dtype=np.intp), np.zeros(len(KINDS), dtype=np.intp)
        for kind, (i, j) in spec:
            code = KIND_CODE[kind]
            used[code], first[code], second[code] = True, i, j
        return cls(used, first, second)


_CARRYING_COLUMNS = _column_table(_CARRYING)
_SENSED_COLUMNS = _column_table(_SENSES)
_CARRYING_EDGES, _SENSE_EDGES = _Edges.of(_CARRYING), _Edges.of(_SENSES)
_CURRENT_EDGES = _Edges.of(_CURRENT_TYPE)
#: Conducting branches at any frequency but DC, and at DC (capacitors open).
_CONDUCTING = (("resistor", (0, 1)), ("inductor", (0, 1)), ("impedance", (0, 1)),
               ("voltage_source", (0, 1)), ("ccvs", (0, 1)), ("vcvs", (0, 1)), ("opamp", (2, 3)))
_CONDUCTING_EDGES = {False: _Edges.of((*_CONDUCTING, ("capacitor", (0, 1)))),
                     True: _Edges.of(_CONDUCTING)}
#: Branches that fix a voltage but not their current (inductors: at DC only).
_VOLTAGE_DEFINED = (("voltage_source", (0, 1)), ("vcvs", (0, 1)), ("ccvs", (0, 1)),
                    ("opamp", (2, 3)), ("resistor", (0, 1)))
_VOLTAGE_EDGES = {False: _Edges.of(_VOLTAGE_DEFINED),
                  True: _Edges.of((*_VOLTAGE_DEFINED, ("inductor", (0, 1))))}
#: Per kind code: its place in a loop's message (sources first).
_LOOP_RANK = {KIND_CODE[kind]: i for i, (kind, _) in
              enumerate((*_VOLTAGE_DEFINED, ("inductor", (0, 1))))}
SHORT = "the port short"


def _listing(items: Sequence[str], limit: int = 6) -> str:
    shown = ", ".join(items[:limit])
    return shown if len(items) <= limit else f"{shown} and {len(items) - limit} more"


def _plural(count: int, one: str, many: str) -> str:
    return one if count == 1 else many


# -- the cut ------------------------------------------------------------------------------------
@dataclass(frozen=True, slots=True, eq=False)
class Cut:
    """A validated two-terminal cut: ``port`` (plus, minus) and the region's ``netlist``.

    ``parts`` are the region's parts in circuit order, couplings following their inductors.
    """

    port: tuple[str, str]
    netlist: Netlist

    @property
    def parts(self) -> tuple[Part, ...]:
        return tuple(self.netlist.parts)


def check_cut(circuit: Circuit, region: Collection[str],
              port: Sequence[str] | None = None) -> tuple[str, str]:
    """Validate that ``region`` is a two-terminal cut of ``circuit``; return its port.

    Parameters
    ----------
    circuit : the whole circuit.
    region : names of the parts inside the boundary.
    port : (plus, minus), or None to take the two nets where the region meets the rest
        (ground is minus when it is one of them; otherwise plus is the name that sorts first).

    Returns
    -------
    (plus, minus)

    Raises
    ------
    CutError
        Unknown part names, a controlled source or coupling across the boundary, a port that
        is not two distinct nets of the region, or a region meeting the rest at other nets.
    CircuitError
        A current-controlled source names a controlling part that is not in the circuit.

    Examples
    --------
    >>> c = Circuit()
    >>> _ = c.voltage_source("V1", "in", "gnd", 5); _ = c.resistor("R1", "in", "a", 1e3)
    >>> _ = c.resistor("R2", "a", "gnd", 1e3)
    >>> check_cut(c, {"V1", "R1"})
    ('a', 'gnd')

    Notes
    -----
    Linear in the number of parts: one set look-up per part, then array operations on the
    circuit's columns and one connected-components pass.
    """
    return cut(circuit, region, port).port


def cut(circuit: Circuit, region: Collection[str], port: Sequence[str] | None = None) -> Cut:
    """:func:`check_cut`, returning the :class:`Cut` with the region's netlist."""
    names = _region_names(region)
    if circuit.has_devices:
        names = circuit.expand_names(names)
    columns = circuit.columns()
    rows = _region_rows(circuit, names)
    flipped = _coupling_sides(columns, names)
    if flipped:
        names = names.symmetric_difference(flipped)
        rows = _region_rows(circuit, names)
    netlist = netlist_of(columns, rows)
    outside = _complement(rows, len(columns))
    _check_controls(circuit, columns, names)
    side = _Sides(netlist, columns, outside)
    if port is not None:
        plus, minus = _given_port(port, netlist)
    terminals = side.boundary
    needs_groups = (len(terminals) != 2) if port is None else \
        not terminals.issubset((plus, minus))
    if needs_groups:
        terminals = side.terminals(() if port is None else (plus, minus))
    if port is None:
        plus, minus = _port_from(terminals if len(terminals) >= 2 else side.boundary)
    else:
        extra = sorted(terminals - {plus, minus})
        if extra:
            raise CutError(
                f"the region meets the rest of the circuit at {_plural(len(extra), 'net', 'nets')}"
                f" {_listing(extra)} besides its port ({plus}, {minus}); a two-terminal cut meets "
                "the rest only at its port — move the parts on "
                f"{_plural(len(extra), 'that net', 'those nets')} into or out of the region",
                nets=extra)
    return Cut((plus, minus), netlist)


def _region_rows(circuit: Circuit, names: set[str]) -> np.ndarray | None:
    """Rows of the region's parts in the circuit's columns (None: all); refuses unknown names."""
    rows = circuit.rows_of(names)
    if len(names) != (len(circuit) if rows is None else rows.size):
        unknown = sorted(map(str, names.difference(circuit.names)))
        raise CutError(f"the region names {_plural(len(unknown), 'a part', 'parts')} that "
                       f"{_plural(len(unknown), 'is', 'are')} not in the circuit: "
                       f"{_listing(unknown)}", parts=unknown)
    return rows


def _complement(rows: np.ndarray | None, size: int) -> np.ndarray:
    if rows is None:
        return np.zeros(0, dtype=np.intp)
    keep = np.zeros(size, dtype=bool)
    keep[rows] = True
    return (~keep).nonzero()[0]


#: The netlists of the last few regions, each tied to the columns it was built from.
_RECENT: list[Netlist] = []
_KEEP = 3
#: The app analyses in a background thread while panels call the engine: the list is shared.
_RECENT_LOCK = threading.RLock()


def netlist_of(columns: Columns, rows: np.ndarray | None = None) -> Netlist:
    """The :class:`Netlist` of the parts at ``rows`` of ``columns`` (None: all), reused while
    they are the same parts.

    A circuit's columns change only by adding parts, which makes new columns, so a netlist
    kept for the same columns cannot go stale. Where the parts differ from a kept netlist's only
    in value (a value edit through ``Circuit.replaced``), its nets and node arrays are reused and
    only the values read again (:meth:`Netlist.with_values`).
    """
    with _RECENT_LOCK:
        for i, kept in enumerate(_RECENT):
            found = kept.with_values(columns, rows)
            if found is kept:
                _RECENT.insert(0, _RECENT.pop(i))
                return kept
            if found is not None:
                return _keep(found)
    return _keep(Netlist.of(columns, rows))


def _keep(netlist: Netlist) -> Netlist:
    with _RECENT_LOCK:
        _RECENT.insert(0, netlist)
        _drop(_KEEP)
    return netlist


def _drop(keep: int) -> None:
    """Drop all but the first ``keep`` kept netlists. What their memos hold (systems,
    matrices) refers back to them; clearing the memos frees that memory at once instead of at
    the next cyclic garbage collection, which a first analysis would otherwise pay for in
    fresh pages."""
    for netlist in _RECENT[keep:]:
        netlist.memo.clear()
    del _RECENT[keep:]


def forget_netlists() -> None:
    """Drop the kept netlists (benchmarks use it to time a first analysis)."""
    with _RECENT_LOCK:
        _drop(0)


def _region_names(region: Collection[str]) -> set[str]:
    if isinstance(region, str):
        raise CutError(f"the region must be a collection of part names, not the single text "
                       f"{region!r}; write {{{region!r}}}")
    try:
        names = region if isinstance(region, set | frozenset) else set(region)
    except TypeError:
        raise CutError(f"the region must be a collection of part names, not {region!r}") from None
    if not names:
        raise CutError("the region is empty; name the parts inside the boundary")
    return names


def _referring(columns: Columns, *kinds: str) -> list[Part]:
    """The parts of ``kinds`` (kinds that name other parts), in circuit order."""
    parts = columns.parts
    return [p for p in map(parts.__getitem__, columns.references().rows.tolist())
            if p.kind in kinds]


def _inside_first(parts: list[Part], names: set[str]) -> list[Part]:
    return [p for p in parts if p.name in names] + [p for p in parts if p.name not in names]


def _coupling_sides(columns: Columns, names: set[str]) -> set[str]:
    """Couplings that must change side to follow their inductors; refuse one spanning it."""
    flipped: set[str] = set()
    couplings = _referring(columns, "coupling")
    for k in _inside_first(couplings, names):
        l1, l2 = k.refs
        if (l1 in names) != (l2 in names):
            a, b = (l1, l2) if l1 in names else (l2, l1)
            raise CutError(f"{k.name} couples {a} inside the region with {b} outside it; a "
                           "magnetic coupling cannot cross the boundary — put both inductors "
                           "on one side", parts=(k.name, a, b))
        if (l1 in names) != (k.name in names):
            flipped.add(k.name)
    return flipped


def _check_controls(circuit: Circuit, columns: Columns, names: set[str]) -> None:
    """A CCVS/CCCS and its controlling part lie on the same side, and the part exists."""
    controlled = _referring(columns, *_CONTROLLED)
    for p in _inside_first(controlled, names):
        control, inside = p.refs[0], p.name in names
        if control not in circuit:
            raise CircuitError(f"{p.name} is controlled by the current in {control}, which is "
                               "not in the circuit; add it or change the controlling part")
        if (control in names) != inside:
            where = ("inside", "outside") if inside else ("outside", "inside")
            raise CutError(f"{p.name} {where[0]} the region is controlled by the current in "
                           f"{control} {where[1]} it; a controlled source and its controlling "
                           "part must lie on the same side of the boundary",
                           parts=(p.name, control))


def _outer_columns() -> np.ndarray:
    """Per kind code, the net columns at which a part outside the region carries current:
    all its nets but a VCVS/VCCS's sense inputs and an op-amp's inputs."""
    mask = np.zeros((len(KINDS), NET_COLUMNS), dtype=bool)
    for kind, roles in KINDS.items():
        mask[KIND_CODE[kind], :len(roles)] = True
    for kind in ("vcvs", "vccs"):
        mask[KIND_CODE[kind], 2:] = False
    mask[KIND_CODE["opamp"]] = (False, False, True, True)  # output and ground return
    return mask


_OUTER = _outer_columns()


class _Sides:
    """Which nets carry current on each side of the boundary, and the nets the sides share."""

    def __init__(self, netlist: Netlist, columns: Columns, outside: np.ndarray) -> None:
        self.netlist, self.columns, self.outside = netlist, columns, outside
        #: per net of the region: an outside part conducts there
        self.outer = np.zeros(netlist.net_count, dtype=bool)
        self.boundary: set[str] = set()
        if not outside.size:  # the whole circuit: no boundary, nothing sensed across it
            return
        outer = np.zeros(len(columns.nets), dtype=bool)
        kinds = columns.kinds.take(outside)
        nodes = columns.nodes.take(outside, axis=0)
        outer[nodes[_OUTER.take(kinds, axis=0)]] = True
        self.outer = outer[netlist.net_ids]
        carrying = _carrying(netlist)
        self.boundary = {netlist.nets[i] for i in (carrying & self.outer).nonzero()[0]}
        self._check_sensing_inside(carrying)
        sensing = outside[kind_mask(_SENSING)[kinds]]
        self._check_sensing_outside(carrying, [columns.parts[i] for i in sensing.tolist()])

    def _check_sensing_inside(self, carrying: np.ndarray) -> None:
        netlist = self.netlist
        table = netlist.table
        across = _SENSED_COLUMNS.take(netlist.codes, axis=0) & ~carrying[table] & \
            self.outer[table]
        if across.any():  # the first in kind, part and column order
            i, col = np.unravel_index(int(np.argmax(across)), across.shape)
            kind = list(KINDS)[int(netlist.codes[i])]
            start = int(np.searchsorted(netlist.codes, netlist.codes[i]))
            name, net = netlist[kind].names[i - start], netlist.nets[table[i, col]]
            parts = self.columns.parts
            other = next(parts[r].name for r in self.outside.tolist() if net in parts[r].nets)
            raise CutError(f"{name} inside the region senses net {net}, which lies "
                           f"outside it ({other} is connected there); a controlled "
                           "source and the nets it senses must lie on the same side",
                           nets=(net,), parts=(name, other))

    def _check_sensing_outside(self, carrying: np.ndarray, sensors: list[Part]) -> None:
        index, netlist = self.netlist.index, self.netlist
        for p in sensors:
            sensed = p.nodes[:2] if p.kind == "opamp" else p.nodes[2:]
            for net in sensed:
                if net in index and carrying[index[net]] and not self.outer[index[net]]:
                    other = next(q.name for q in netlist.parts if net in q.nets)
                    raise CutError(f"{p.name} outside the region senses net {net}, which lies "
                                   f"inside it ({other} is connected there); a controlled "
                                   "source and the nets it senses must lie on the same side",
                                   nets=(net,), parts=(p.name, other))

    def terminals(self, port: Sequence[str]) -> set[str]:
        """Boundary nets through which current can enter or leave the region.

        A piece of the region joined by current paths to no other boundary net (nor to a port
        net) meets the rest at a single net; KCL for the piece forbids any current there.
        """
        netlist = self.netlist
        a, b, _ = _pairs(netlist, _CARRYING_EDGES)
        labels = _components(netlist.net_count, a, b)
        pieces: dict[int, set[str]] = {}
        for net in chain(self.boundary, port):
            pieces.setdefault(int(labels[netlist.index[net]]), set()).add(net)
        return {net for nets in pieces.values() if len(nets) > 1 or nets & set(port)
                for net in nets}


def _carrying(netlist: Netlist) -> np.ndarray:
    """Per net: a part of the netlist can carry current there (kept in its memo)."""
    found = netlist.memo.get("carrying")
    if found is None:
        found = netlist.memo["carrying"] = netlist.marked(_CARRYING_COLUMNS)
    return found


def _given_port(port: Sequence[str], netlist: Netlist) -> tuple[str, str]:
    if isinstance(port, str) or len(port) != 2:
        raise CutError(f"the port must be two net names (plus, minus), not {port!r}")
    plus, minus = port
    for net in (plus, minus):
        if not isinstance(net, str):
            raise CutError(f"the port must be two net names (plus, minus), not {port!r}")
    if plus == minus:
        raise CutError(f"the port's plus and minus are both net {plus!r}; give two different "
                       "nets")
    for net in (plus, minus):
        if net not in netlist.index:
            raise CutError(f"port net {net!r} is not a net of any part in the region; the "
                           f"region's nets are {_listing(sorted(netlist.nets))}")
    return plus, minus


def _port_from(terminals: set[str]) -> tuple[str, str]:
    if len(terminals) != 2:
        count = len(terminals)
        where = f": {_listing(sorted(terminals))}" if terminals else ""
        hint = ("give the port, or move the parts on one of them into or out of the region"
                if count > 2 else "give the port (plus, minus) explicitly")
        raise CutError(f"the region meets the rest of the circuit at {count} "
                       f"{_plural(count, 'net', 'nets')}{where} — a two-terminal cut needs "
                       f"exactly 2; {hint}", nets=sorted(terminals))
    if GROUND in terminals:
        (plus,) = terminals - {GROUND}
        return plus, GROUND
    plus, minus = sorted(terminals)
    return plus, minus


# -- connectivity on index arrays ---------------------------------------------------------------
def _pairs(netlist: Netlist, edges: _Edges, keep: np.ndarray | None = None
           ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The ends (net ids) of the netlist's branches of the kinds in ``edges`` (and, where given,
    ``keep`` per part), and which parts they are (positions in the netlist's part order)."""
    codes = netlist.codes
    chosen = edges.used.take(codes)
    if keep is not None:
        chosen &= keep
    parts = chosen.nonzero()[0]
    kinds = codes.take(parts)
    table = netlist.table
    return table[parts, edges.first.take(kinds)], table[parts, edges.second.take(kinds)], parts


#: Up to this many edges a union-find in Python beats building a SciPy sparse graph (whose
#: construction costs some 0.2 ms); measured, see docs/performance.md.
_SMALL_GRAPH = 800


def _components(n: int, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Connected-component label (0, 1, ...) of each of n vertices joined by edges (a[i], b[i])."""
    if n == 0:
        return np.zeros(0, dtype=np.intp)
    if a.size > _SMALL_GRAPH:
        # SciPy's own index and value types: connected_components copies anything else
        ends = (a.astype(np.int32, copy=False), b.astype(np.int32, copy=False))
        graph = sp.csr_matrix((np.ones(a.size), ends), shape=(n, n))
        return connected_components(graph, directed=False)[1]
    parent = list(range(n))
    for u, v in zip(a.tolist(), b.tolist(), strict=True):
        while parent[u] != u:  # find, halving the path
            parent[u] = u = parent[parent[u]]
        while parent[v] != v:
            parent[v] = v = parent[parent[v]]
        if u < v:
            parent[v] = u
        elif v < u:
            parent[u] = v
    # A parent is never above its child, so in increasing order each vertex's parent is
    # labelled before it; a root (its component's lowest vertex) opens the next label.
    labels = [0] * n
    count = 0
    for x, up in enumerate(parent):
        if up == x:
            labels[x], count = count, count + 1
        else:
            labels[x] = labels[up]
    return np.array(labels, dtype=np.intp)


class Islands:
    """The galvanically separate islands of a netlist at one frequency class (DC or not).

    ``labels[net_id]`` is the island of each net; the island holding the first of the given
    references is the reference island. Every other island is classified:

    * nothing but magnetic coupling links it (no current source crosses to it, nothing senses a
      voltage between it and another island): it gets its own reference net (``pinned``);
    * a controlled current source crosses to it and a controlled source senses its potential:
      the equations fix that potential, so it is solved without a reference (``solved``);
    * anything else makes the equations singular: :meth:`problem` words why.
    """

    def __init__(self, netlist: Netlist, dc: bool, references: Sequence[str],
                 short: tuple[int, int] | None = None) -> None:
        self.netlist, self.dc = netlist, dc
        n = netlist.net_count
        a, b, _ = _pairs(netlist, _CONDUCTING_EDGES[dc])
        if short is not None:
            a, b = np.append(a, short[0]), np.append(b, short[1])
        self.labels = labels = _components(n, a, b)
        ref_net = next((netlist.index[r] for r in references if r in netlist.index), 0)
        self.reference = int(labels[ref_net]) if n else 0
        count = int(labels.max()) + 1 if n else 0
        self.solved: set[int] = set()
        self._problems: dict[int, str] = {}
        if count <= 1:
            self.pinned = np.array([ref_net] if n else [], dtype=np.intp)
            return
        ca, cb, current = _pairs(netlist, _CURRENT_EDGES)
        controlled = netlist.codes.take(current) != KIND_CODE["current_source"]
        sa, sb, _ = _pairs(netlist, _SENSE_EDGES)
        self._crossing = labels[ca] != labels[cb]
        self._sensing = labels[sa] != labels[sb]
        crossed = self._touches(labels[ca], labels[cb], self._crossing, count)
        crossed_by_control = self._touches(labels[ca], labels[cb], self._crossing & controlled,
                                           count)
        sensed = self._touches(labels[sa], labels[sb], self._sensing, count)
        own = ~crossed & ~sensed
        solved = crossed_by_control & sensed
        own[self.reference] = solved[self.reference] = False
        self.solved = set(np.flatnonzero(solved).tolist())
        for label in np.flatnonzero(~own & ~solved).tolist():
            if label != self.reference:
                self._problems[label] = ""
        first_net = np.unique(labels, return_index=True)[1]
        chosen = {self.reference: ref_net}
        for r in references:
            net = netlist.index.get(r)
            if net is not None and own[labels[net]] and labels[net] not in chosen:
                chosen[int(labels[net])] = net
        for label in np.flatnonzero(own).tolist():
            chosen.setdefault(label, int(first_net[label]))
        self.pinned = np.array(sorted(chosen.values()), dtype=np.intp)

    @staticmethod
    def _touches(la: np.ndarray, lb: np.ndarray, mask: np.ndarray, count: int) -> np.ndarray:
        return (np.bincount(la[mask], minlength=count)
                + np.bincount(lb[mask], minlength=count)) > 0

    def island(self, net: str) -> int:
        return int(self.labels[self.netlist.index[net]])

    def joined(self, net: str) -> bool:
        """True when the equations fix ``net``'s potential relative to the reference."""
        label = self.island(net)
        return label == self.reference or label in self.solved

    def problem(self, label: int) -> str | None:
        """Why island ``label`` makes the equations singular, or None if it does not."""
        if label not in self._problems:
            return None
        if not self._problems[label]:
            self._problems[label] = self._word(label)
        return self._problems[label]

    def raise_problems(self, skip: int | None = None) -> None:
        """Raise SingularCircuitError for the islands with a problem (but ``skip``)."""
        found = [self.problem(label) for label in sorted(self._problems) if label != skip]
        if found:
            raise SingularCircuitError("; ".join(m for m in found[:3] if m))

    def _word(self, label: int) -> str:
        netlist, labels = self.netlist, self.labels
        members = np.flatnonzero(labels == label)
        nets = _listing([netlist.nets[i] for i in members], 5)
        ca, cb, current = _pairs(netlist, _CURRENT_EDGES)
        current_names = netlist.part_names(current)
        on_edge = self._crossing & ((labels[ca] == label) | (labels[cb] == label))
        sources = [current_names[i] for i in np.flatnonzero(on_edge)]
        dc_note = ""
        if self.dc:
            caps = netlist["capacitor"]
            here = np.isin(caps.nodes, members).any(axis=1) if len(caps) else np.zeros(0, bool)
            if here.any():
                dc_note = (" (capacitors are open at DC: "
                           f"{_listing([caps.names[i] for i in np.flatnonzero(here)], 4)})")
        if sources:
            return (f"{_plural(len(members), 'net', 'nets')} {nets} "
                    f"{_plural(len(members), 'connects', 'connect')} to the rest only through "
                    f"the current {_plural(len(sources), 'source', 'sources')} "
                    f"{_listing(sources, 4)}{dc_note}: that current has no return path, so the "
                    "circuit has no solution; add a conducting path (e.g. a resistor) from there "
                    "to the rest")
        sa, sb, sensing = _pairs(netlist, _SENSE_EDGES)
        sense_names = netlist.part_names(sensing)
        on_edge = self._sensing & ((labels[sa] == label) | (labels[sb] == label))
        i = int(np.flatnonzero(on_edge)[0])
        return (f"{sense_names[i]} senses the voltage between nets {netlist.nets[sa[i]]} and "
                f"{netlist.nets[sb[i]]}, which no conducting path joins{dc_note}, so that "
                "voltage is undefined; join the two sides (e.g. through a resistor) or sense "
                "within one side")


def islands(netlist: Netlist, dc: bool, references: Sequence[str],
            short: tuple[int, int] | None = None) -> Islands:
    """The :class:`Islands` of ``netlist`` (``short``: net ids of a port short to include),
    kept in its memo: they depend on which parts conduct where, not on their values."""
    key = ("islands", dc, tuple(references), short)
    found = netlist.memo.get(key)
    if found is None:
        found = netlist.memo[key] = Islands(netlist, dc, references, short)
    return found


# -- loops of voltage-defined branches ----------------------------------------------------------
def check_voltage_loops(netlist: Netlist, dc: bool, short: tuple[int, int] | None = None
                        ) -> None:
    """Refuse a loop of branches that fix a voltage but not their current.

    Voltage sources, VCVS and CCVS outputs, 0 Ω wires, op-amp outputs and (at DC) inductors:
    around such a loop the current is undetermined and the voltages may contradict. Branches
    whose current controls a CCVS/CCCS are left out (their current enters another equation).
    Raises SingularCircuitError naming the loop's parts.
    """
    a, b, parts = _pairs(netlist, _VOLTAGE_EDGES[dc], _free_current(netlist))
    if short is not None:
        a, b = np.append(a, short[0]), np.append(b, short[1])
    if not _has_loop(a, b):
        return
    names = netlist.part_names(parts)
    if short is not None:
        names.append(SHORT)
    # sources before wires and inductors, so that the message names the loop's sources first
    rank = [_LOOP_RANK[code] for code in netlist.codes.take(parts).tolist()] + [len(_LOOP_RANK)]
    ends = list(zip(a.tolist(), b.tolist(), strict=True))
    graph = nx.MultiGraph()
    graph.add_edges_from((*ends[i], names[i]) for i in sorted(range(len(names)),
                                                              key=rank.__getitem__))
    loop = [key for _u, _v, key in nx.find_cycle(graph)]
    notes = " (inductors are shorts at DC)" if dc and any(
        n in netlist["inductor"].names for n in loop) else ""
    raise SingularCircuitError(
        f"{_listing(loop)} form a loop of voltage-defined branches{notes}: the current around "
        "it is undetermined and its voltages may contradict; break the loop (e.g. add a series "
        "resistance)")


def _has_loop(a: np.ndarray, b: np.ndarray) -> bool:
    """Whether the edges (a[i], b[i]) close a loop (a self-loop or a parallel pair counts)."""
    if a.size > _SMALL_GRAPH:  # a forest has as many edges as vertices less components
        used, local = np.unique(np.concatenate((a, b)), return_inverse=True)
        n_components = int(_components(used.size, local[:a.size], local[a.size:]).max()) + 1
        return a.size > used.size - n_components
    parent: dict[int, int] = {}  # union-find on the edges' own vertices: the first edge whose
    for u, v in zip(a.tolist(), b.tolist(), strict=True):  # ends are joined already closes one
        u, v = _root(parent, u), _root(parent, v)
        if u == v:
            return True
        parent[u] = v
    return False


def _root(parent: dict[int, int], x: int) -> int:
    """The root of x, halving the path on the way (a vertex absent from ``parent`` is one)."""
    while x in parent:
        up = parent[x]
        if up in parent:
            parent[x] = parent[up]
        x = up
    return x


def _free_current(netlist: Netlist) -> np.ndarray:
    """Per part: its current enters no other equation (it controls no CCVS/CCCS) and, for a
    resistor, it is a 0 Ω wire."""
    keep = ~netlist.controlling()
    resistors = netlist["resistor"]
    keep[resistors.span] &= resistors.values == 0
    return keep


# -- a readable graph ---------------------------------------------------------------------------
def circuit_graph(circuit: Circuit | Iterable[Part], freq: float = 0.0) -> nx.MultiGraph:
    """The circuit as a networkx MultiGraph: nets are nodes, each current path an edge.

    Edge keys are part names, with attributes ``kind`` and ``conducting`` (False for current
    sources, controlled current sources and, at DC, capacitors). A VCVS/VCCS adds its output
    branch only; an op-amp its output to ground. Couplings add no edge.

    >>> c = Circuit(); _ = c.resistor("R1", "a", "gnd", 1); _ = c.capacitor("C1", "a", "b", 1)
    >>> sorted(circuit_graph(c).edges(keys=True, data="conducting"))
    [('a', 'b', 'C1', False), ('a', 'gnd', 'R1', True)]
    """
    graph = nx.MultiGraph()
    for part in circuit:
        if part.kind == "coupling":
            continue
        a, b = (part.nodes[2], GROUND) if part.kind == "opamp" else part.nodes[:2]
        conducting = part.kind not in {"current_source", "vccs", "cccs"} and not (
            part.kind == "capacitor" and freq == 0)
        graph.add_edge(a, b, key=part.name, kind=part.kind, conducting=conducting)
    return graph
