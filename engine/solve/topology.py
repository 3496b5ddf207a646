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

Existence rules at the analysis frequency (:func:`islands`, :func:`check_voltage_loops`) live in
engine/solve/islands.py and are re-exported here; the branch tables both use, in
engine/solve/branches.py.
"""

from __future__ import annotations

import threading
from collections.abc import Collection, Iterable, Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass
from itertools import chain

import networkx as nx
import numpy as np

from ..errors import CircuitError, CutError
from . import memo_keys
from .branches import CARRYING_COLUMNS, CARRYING_EDGES, SENSED_COLUMNS, components, pairs
from .circuit import GROUND, KIND_CODE, KINDS, NET_COLUMNS, Circuit, Columns, Part, kind_mask
from .islands import SHORT, Islands, check_voltage_loops, islands
from .kinds import CONTROLLED_BY_CURRENT, SENSING
from .mna import Netlist
from .names import listing, plural

__all__ = ["NETLISTS", "SHORT", "Cut", "Islands", "NetlistCache", "check_cut",
           "check_voltage_loops", "circuit_graph", "cut", "forget_netlists", "islands",
           "netlist_of"]



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
                f"the region meets the rest of the circuit at {plural(len(extra), 'net', 'nets')}"
                f" {listing(extra)} besides its port ({plus}, {minus}); a two-terminal cut meets "
                "the rest only at its port — move the parts on "
                f"{plural(len(extra), 'that net', 'those nets')} into or out of the region",
                nets=extra)
    return Cut((plus, minus), netlist)


def _region_rows(circuit: Circuit, names: set[str]) -> np.ndarray | None:
    """Rows of the region's parts in the circuit's columns (None: all); refuses unknown names."""
    rows = circuit.rows_of(names)
    if len(names) != (len(circuit) if rows is None else rows.size):
        unknown = sorted(map(str, names.difference(circuit.names)))
        raise CutError(f"the region names {plural(len(unknown), 'a part', 'parts')} that "
                       f"{plural(len(unknown), 'is', 'are')} not in the circuit: "
                       f"{listing(unknown)}", parts=unknown)
    return rows


def _complement(rows: np.ndarray | None, size: int) -> np.ndarray:
    if rows is None:
        return np.zeros(0, dtype=np.intp)
    keep = np.zeros(size, dtype=bool)
    keep[rows] = True
    return (~keep).nonzero()[0]


class NetlistCache:
    """The netlists of the last ``keep`` regions, each tied to the columns it was built from,
    most recently used first. The one instance is :data:`NETLISTS`. The app analyses in a
    background thread while panels call the engine, so the list is shared under a lock."""

    def __init__(self, keep: int) -> None:
        self.keep = keep
        self._recent: list[Netlist] = []
        self._lock = threading.RLock()

    def of(self, columns: Columns, rows: np.ndarray | None = None) -> Netlist:
        """The :class:`Netlist` of the parts at ``rows`` of ``columns`` (None: all), reused
        while they are the same parts.

        A circuit's columns change only by adding parts, which makes new columns, so a netlist
        kept for the same columns cannot go stale. Where the parts differ from a kept netlist's
        only in value (a value edit through ``Circuit.replaced``), its nets and node arrays are
        reused and only the values read again (:meth:`Netlist.with_values`).
        """
        with self._lock:
            recent = self._recent
            for i, kept in enumerate(recent):
                found = kept.with_values(columns, rows)
                if found is kept:
                    recent.insert(0, recent.pop(i))
                    return kept
                if found is not None:
                    return self._kept(found)
        return self._kept(Netlist.of(columns, rows))

    def forget(self, keep: int = 0) -> None:
        """Drop all but the first ``keep`` kept netlists. What their memos hold (systems,
        matrices) refers back to them; clearing the memos frees that memory at once instead of
        at the next cyclic garbage collection, which a first analysis would otherwise pay for
        in fresh pages."""
        with self._lock:
            for netlist in self._recent[keep:]:
                netlist.memo.clear()
            del self._recent[keep:]

    @contextmanager
    def set_aside(self) -> Iterator[None]:
        """Within, no netlists are kept from before; afterwards those are kept again and the
        ones built within dropped (a benchmark times a first analysis without taking a live
        session's netlists from it)."""
        with self._lock:
            kept, self._recent = self._recent, []
        try:
            yield
        finally:
            with self._lock:
                self.forget()
                self._recent = kept

    def _kept(self, netlist: Netlist) -> Netlist:
        with self._lock:
            self._recent.insert(0, netlist)
            self.forget(self.keep)
        return netlist


#: The netlists every analysis shares (a live view analyses the same region again and again).
NETLISTS = NetlistCache(keep=3)


def netlist_of(columns: Columns, rows: np.ndarray | None = None) -> Netlist:
    """:meth:`NetlistCache.of` on :data:`NETLISTS`."""
    return NETLISTS.of(columns, rows)


def forget_netlists() -> None:
    """Drop the kept netlists (benchmarks use it to time a first analysis)."""
    NETLISTS.forget()


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
    controlled = _referring(columns, *CONTROLLED_BY_CURRENT)
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
        sensing = outside[kind_mask(SENSING)[kinds]]
        self._check_sensing_outside(carrying, [columns.parts[i] for i in sensing.tolist()])

    def _check_sensing_inside(self, carrying: np.ndarray) -> None:
        netlist = self.netlist
        table = netlist.table
        across = SENSED_COLUMNS.take(netlist.codes, axis=0) & ~carrying[table] & \
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
        a, b, _ = pairs(netlist, CARRYING_EDGES)
        labels = components(netlist.net_count, a, b)
        pieces: dict[int, set[str]] = {}
        for net in chain(self.boundary, port):
            pieces.setdefault(int(labels[netlist.index[net]]), set()).add(net)
        return {net for nets in pieces.values() if len(nets) > 1 or nets & set(port)
                for net in nets}


def _carrying(netlist: Netlist) -> np.ndarray:
    """Per net: a part of the netlist can carry current there (kept in its memo)."""
    found = netlist.memo.get(memo_keys.CARRYING)
    if found is None:
        found = netlist.memo[memo_keys.CARRYING] = netlist.marked(CARRYING_COLUMNS)
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
                           f"region's nets are {listing(sorted(netlist.nets))}")
    return plus, minus


def _port_from(terminals: set[str]) -> tuple[str, str]:
    if len(terminals) != 2:
        count = len(terminals)
        where = f": {listing(sorted(terminals))}" if terminals else ""
        hint = ("give the port, or move the parts on one of them into or out of the region"
                if count > 2 else "give the port (plus, minus) explicitly")
        raise CutError(f"the region meets the rest of the circuit at {count} "
                       f"{plural(count, 'net', 'nets')}{where} — a two-terminal cut needs "
                       f"exactly 2; {hint}", nets=sorted(terminals))
    if GROUND in terminals:
        (plus,) = terminals - {GROUND}
        return plus, GROUND
    plus, minus = sorted(terminals)
    return plus, minus


# -- connectivity on index arrays ---------------------------------------------------------------
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
