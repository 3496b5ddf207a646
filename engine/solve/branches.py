"""A netlist's branches as graph edges on its index arrays: which node columns each kind joins
for each question (carrying current, conducting, fixing a voltage, sensing), the ends of those
branches, connected components and loop detection. The cut check (engine/solve/topology.py) and
the existence rules (engine/solve/islands.py) both count on these."""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from .circuit import KIND_CODE, KINDS, NET_COLUMNS
from .mna import Netlist

__all__ = ["CARRYING_COLUMNS", "CARRYING_EDGES", "CONDUCTING_EDGES", "CURRENT_EDGES", "LOOP_RANK",
           "SENSED_COLUMNS", "SENSE_EDGES", "VOLTAGE_EDGES", "Edges", "column_table",
           "components", "has_loop", "pairs"]

#: (kind, node columns) of the branches that can carry current, at any frequency.
_CARRYING = (("resistor", (0, 1)), ("capacitor", (0, 1)), ("inductor", (0, 1)),
             ("impedance", (0, 1)), ("voltage_source", (0, 1)), ("current_source", (0, 1)),
             ("ccvs", (0, 1)), ("cccs", (0, 1)), ("vcvs", (0, 1)), ("vccs", (0, 1)),
             ("opamp", (2, 3)))
_SENSES = (("vcvs", (2, 3)), ("vccs", (2, 3)), ("opamp", (0, 1)))
_CURRENT_TYPE = (("current_source", (0, 1)), ("vccs", (0, 1)), ("cccs", (0, 1)))


def column_table(spec: Iterable[tuple[str, tuple[int, ...]]]) -> np.ndarray:
    """``spec`` as a boolean per kind code and node column (for ``Netlist.marked``)."""
    table = np.zeros((len(KINDS), NET_COLUMNS), dtype=bool)
    for kind, cols in spec:
        table[KIND_CODE[kind], list(cols)] = True
    return table


@dataclass(frozen=True, slots=True, eq=False)
class Edges:
    """Branches as graph edges, per kind code: whether the kind has one (``used``) and the two
    node columns it joins (``first``, ``second``)."""

    used: np.ndarray
    first: np.ndarray
    second: np.ndarray

    @classmethod
    def of(cls, spec: Iterable[tuple[str, tuple[int, int]]]) -> Edges:
        used = np.zeros(len(KINDS), dtype=bool)
        first, second = np.zeros(len(KINDS), dtype=np.intp), np.zeros(len(KINDS), dtype=np.intp)
        for kind, (i, j) in spec:
            code = KIND_CODE[kind]
            used[code], first[code], second[code] = True, i, j
        return cls(used, first, second)


CARRYING_COLUMNS = column_table(_CARRYING)
SENSED_COLUMNS = column_table(_SENSES)
CARRYING_EDGES, SENSE_EDGES = Edges.of(_CARRYING), Edges.of(_SENSES)
CURRENT_EDGES = Edges.of(_CURRENT_TYPE)
#: Conducting branches at any frequency but DC, and at DC (capacitors open).
_CONDUCTING = (("resistor", (0, 1)), ("inductor", (0, 1)), ("impedance", (0, 1)),
               ("voltage_source", (0, 1)), ("ccvs", (0, 1)), ("vcvs", (0, 1)), ("opamp", (2, 3)))
CONDUCTING_EDGES = {False: Edges.of((*_CONDUCTING, ("capacitor", (0, 1)))),
                    True: Edges.of(_CONDUCTING)}
#: Branches that fix a voltage but not their current (inductors: at DC only).
_VOLTAGE_DEFINED = (("voltage_source", (0, 1)), ("vcvs", (0, 1)), ("ccvs", (0, 1)),
                    ("opamp", (2, 3)), ("resistor", (0, 1)))
VOLTAGE_EDGES = {False: Edges.of(_VOLTAGE_DEFINED),
                 True: Edges.of((*_VOLTAGE_DEFINED, ("inductor", (0, 1))))}
#: Per kind code: its place in a loop's message (sources first).
LOOP_RANK = {KIND_CODE[kind]: i for i, (kind, _) in
             enumerate((*_VOLTAGE_DEFINED, ("inductor", (0, 1))))}


def pairs(netlist: Netlist, edges: Edges, keep: np.ndarray | None = None
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
SMALL_GRAPH = 800


def components(n: int, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Connected-component label (0, 1, ...) of each of n vertices joined by edges (a[i], b[i])."""
    if n == 0:
        return np.zeros(0, dtype=np.intp)
    if a.size > SMALL_GRAPH:
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



def has_loop(a: np.ndarray, b: np.ndarray) -> bool:
    """Whether the edges (a[i], b[i]) close a loop (a self-loop or a parallel pair counts)."""
    if a.size > SMALL_GRAPH:  # a forest has as many edges as vertices less components
        used, local = np.unique(np.concatenate((a, b)), return_inverse=True)
        n_components = int(components(used.size, local[:a.size], local[a.size:]).max()) + 1
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
