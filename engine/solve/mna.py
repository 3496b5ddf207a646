"""Sparse complex Modified Nodal Analysis: ``A(s) x = b`` with ``s = j 2 pi f``.

The matrix is assembled once as ``A(s) = G + s M`` (SciPy sparse, COO triplets -> CSC), so one
assembly serves every frequency of a sweep, and factorized once per frequency (SuperLU) to solve
several right-hand sides.

Unknowns, in this order:

* the voltage of every net except the *pinned* ones (one reference net per galvanically separate
  island, chosen by the caller from :func:`engine.solve.topology.islands`);
* one branch current per group-2 part: voltage sources, VCVS, CCVS, inductors, 0 Ω wires
  (a 0 V branch, so an ideal wire costs no conditioning), the output current of every op-amp
  (a nullor: its row holds V(inp) - V(inn) = 0, its current is free, injected at ``out`` and
  returned through ground), an optional port short, and any part whose current controls a CCVS or
  CCCS (so that I(control) is an unknown whatever the controlling part is).

Sign conventions (those of :mod:`engine.solve.circuit`): a branch current flows from the part's
first
node to its second node inside the part; row *i* of a net states that the currents leaving the net
through its parts sum to the current injected into it (the right-hand side); a current source
``(n_from, n_to)`` carries its value from ``n_from`` through itself into ``n_to``. Inductor rows
read ``V(a) - V(b) - s L I - s M I' = 0`` with ``M = k sqrt(L1 L2)`` for a coupled partner, so at
DC an inductor is a short; a capacitor stamps ``s C`` and is open at DC.

A matrix that cannot be factorized, or a solution that is not finite, raises :class:`Singular`
(a :class:`~engine.errors.SingularCircuitError`) naming the likely culprits; no NumPy or SciPy
exception or warning leaves this module.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Iterator, Mapping, Sequence
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import maximum_bipartite_matching
from scipy.sparse.linalg import splu

from ..errors import CircuitError, SingularCircuitError
from . import memo_keys
from .circuit import KIND_CODE, KINDS, NET_COLUMNS, REFERRING, Columns, Part, kind_mask
from .kinds import CONTROLLED_BY_CURRENT as _CONTROLLED
from .kinds import SOURCES as _SOURCES
from .units import format_eng

__all__ = [
    "EPS", "WIDE_SPAN", "Branches", "Factor", "Group", "Netlist", "Singular", "System", "assemble",
    "bound", "describe_freq", "rounding",
]

EPS = float(np.finfo(float).eps)
#: Column ordering handed to SuperLU: minimum degree on the pattern of A + A^T suits MNA, whose
#: pattern is symmetric but for the few controlled-source entries (about half the fill of COLAMD
#: on an RC mesh; see docs/performance.md).
ORDERING = "MMD_AT_PLUS_A"

#: Group-2 parts (a branch-current unknown) always; any other part whose current controls a
#: CCVS or CCCS, and a 0 Ω resistor, is one too.
_ALWAYS_BRANCH = ("voltage_source", "vcvs", "ccvs", "inductor", "opamp")
#: ... and in a system assembled for wide impedance spans (:class:`Branches`).
_WIDE_BRANCH = (*_ALWAYS_BRANCH, "resistor", "impedance", "capacitor")
#: Impedance spans (largest / smallest part impedance at one frequency) beyond this are solved
#: with the wide branches: past it, a node sum of admittances keeps fewer than 10 of its 16
#: digits (docs/method.md).
WIDE_SPAN = 1e6


def describe_freq(freq: float) -> str:
    """``"DC"`` or the frequency in engineering notation (``"1 kHz"``), for messages."""
    return "DC" if freq == 0 else format_eng(freq, "Hz")


class Group:
    """The parts of one kind: ``rows`` are their rows in the circuit's :class:`Columns`,
    ``nodes[i]`` part i's net ids (``Part.nets`` order), ``values[i]`` its value, ``span``
    their place among the netlist's parts; ``names`` are read from the parts when first
    asked."""

    __slots__ = ("_names", "columns", "nodes", "rows", "span", "values")

    def __init__(self, columns: Columns, rows: np.ndarray, nodes: np.ndarray,
                 values: np.ndarray, span: slice) -> None:
        self.columns, self.rows, self.nodes, self.values = columns, rows, nodes, values
        self.span = span
        self._names: list[str] | None = None

    def __len__(self) -> int:
        return self.rows.size

    @property
    def names(self) -> list[str]:
        if self._names is None:
            self._names = _picked(self.columns.names, self.rows)
        return self._names


_NO_ROWS = np.zeros(0, dtype=np.intp)
_NO_REFERENCES = np.zeros((0, 2), dtype=np.intp)
_EMPTY = Group(Columns.of(()), _NO_ROWS, np.zeros((0, 4), dtype=np.int32), np.zeros(0),
               slice(0, 0))
#: Net ids per part of each kind (``Part.nets``: the op-amp's ground return included).
_WIDTH = [len(roles) + (kind == "opamp") for kind, roles in KINDS.items()]


def _group_values(columns: Columns, rows: np.ndarray) -> np.ndarray:
    """Values of the parts at ``rows``: real unless one of them was given as complex."""
    values = columns.values[rows]
    return values if columns.complex_valued[rows].any() else values.real.copy()


class Netlist:
    """A set of parts as index arrays, one :class:`Group` per kind.

    ``nets[i]`` is the name of net id ``i`` (numbered in order of first use, kind by kind);
    ``index`` maps a name back and ``net_ids[i]`` is net i's id in the circuit's register.
    ``rows`` are the parts' rows in ``columns`` (None: all of them). All parts kind by kind (the
    netlist's part order): ``part_rows[i]`` the row of the i-th in ``columns``, ``table[i]`` its
    net ids (``Part.nets`` order, -1 beyond them) and ``codes[i]`` its kind code; the groups'
    node arrays are views of ``table``. The parts that CCVS, CCCS and couplings name are read
    with :meth:`referred`. A netlist never changes after construction, so results
    derived from it alone may be kept in ``memo``; those under a key tagged (the key, or its
    first item) with a name in ``STRUCTURAL`` depend on the parts' kinds, nets and references
    only, and outlive a value edit (:meth:`with_values`).
    """

    STRUCTURAL = memo_keys.STRUCTURAL

    __slots__ = ("_nets", "codes", "columns", "groups", "index", "memo", "net_ids",
                 "part_rows", "rows", "table")

    def __init__(self, parts: Sequence[Part]) -> None:
        self._build(Columns.of(parts), None)

    @classmethod
    def of(cls, columns: Columns, rows: np.ndarray | None = None) -> Netlist:
        """The netlist of the parts at ``rows`` (ascending) of ``columns``; None: all."""
        netlist = cls.__new__(cls)
        netlist._build(columns, rows)
        return netlist

    def _build(self, columns: Columns, rows: np.ndarray | None) -> None:
        # (np.take: row gathers several times faster than fancy indexing)
        # (array methods, not the numpy functions: a Python-level wrapper costs microseconds)
        kinds = columns.kinds if rows is None else columns.kinds.take(rows)
        order = kinds.argsort(kind="stable")
        grouped = order if rows is None else rows.take(order)  # by kind, in circuit order
        ends = np.bincount(kinds, minlength=len(KINDS)).cumsum().tolist()
        # Every part's net ids, kind by kind, part by part (-1 pads a row) is the order of first
        # use. A net's first position in that listing, then the nets by first position (a
        # counting sort: positions are distinct); the padding falls on a spare last slot.
        listed = columns.nodes.take(grouped, axis=0).ravel()
        spare = len(columns.nets)
        first = _filled(spare + 1, listed.size, np.int32)
        np.minimum.at(first, listed, np.arange(listed.size, dtype=np.int32))
        by_position = _filled(listed.size + 1, -1, np.int32)
        by_position[first[:spare]] = np.arange(spare, dtype=np.int32)
        used = by_position[:-1][by_position[:-1] >= 0]
        local = _filled(spare + 1, -1, np.int32)
        local[used] = np.arange(used.size)
        table = local.take(listed).reshape(-1, NET_COLUMNS)
        values = columns.values.take(grouped)
        spans = [(kind, start, end, width) for kind, start, end, width
                 in zip(KINDS, [0, *ends[:-1]], ends, _WIDTH, strict=True) if end > start]
        # per kind: real values unless one was given as complex
        complex_kinds = np.logical_or.reduceat(columns.complex_valued.take(grouped),
                                               [start for _, start, _, _ in spans]) \
            if spans else []
        real = values.real.copy()
        self.groups: dict[str, Group] = {}
        for (kind, start, end, width), complex_kind in zip(spans, complex_kinds, strict=True):
            self.groups[kind] = Group(columns, grouped[start:end], table[start:end, :width],
                                      (values if complex_kind else real)[start:end],
                                      slice(start, end))
        self.columns, self.rows, self.net_ids, self.part_rows = columns, rows, used, grouped
        self.table, self.codes = table, kinds.take(order)
        self.index: Mapping[str, int] = _NetIndex(columns, local, used)
        self._nets: list[str] | None = None
        self.memo: dict[object, object] = {}

    def __getitem__(self, kind: str) -> Group:
        return self.groups.get(kind, _EMPTY)

    def marked(self, spec: np.ndarray) -> np.ndarray:
        """Per net: True where a part has a node column marked in ``spec`` (a boolean per kind
        code and node column) on it."""
        found = np.zeros(self.net_count, dtype=bool)
        found[self.table[spec.take(self.codes, axis=0)]] = True
        return found

    def controlling(self, kind: str | None = None) -> np.ndarray:
        """Per part of ``kind`` (None: every part, in the netlist's order): True where its
        current controls a CCVS or CCCS."""
        flags = self.memo.get(memo_keys.CONTROLLING)
        if flags is None:
            flags = self.memo[memo_keys.CONTROLLING] = np.zeros(len(self.columns), dtype=bool)
            for controlled in _CONTROLLED:
                named = self.referred(controlled)[:, 0]
                flags[named[named >= 0]] = True
        return flags.take(self.part_rows if kind is None else self[kind].rows)

    def referred(self, kind: str) -> np.ndarray:
        """Per part of ``kind`` (CCVS, CCCS or coupling): the rows in ``columns`` of the parts
        it names (:attr:`engine.solve.circuit.References.named`)."""
        rows = self[kind].rows
        return self.columns.references().of(rows) if rows.size else _NO_REFERENCES

    def part_names(self, parts: np.ndarray) -> list[str]:
        """Names of the parts at ``parts`` (positions in the netlist's part order)."""
        return _picked(self.columns.names, self.part_rows.take(parts))

    @property
    def has_controlled(self) -> bool:
        """True when a CCVS or CCCS is among the parts."""
        return any(kind in self.groups for kind in _CONTROLLED)

    @property
    def net_count(self) -> int:
        return self.net_ids.size

    @property
    def nets(self) -> list[str]:
        """Name of each net id."""
        if self._nets is None:
            self._nets = list(map(self.columns.nets.__getitem__, self.net_ids.tolist()))
        return self._nets

    @property
    def parts(self) -> list[Part]:
        """The parts, in circuit order."""
        rows = self.rows
        return self.columns.parts if rows is None else [self.columns.parts[i]
                                                        for i in rows.tolist()]

    def with_values(self, columns: Columns, rows: np.ndarray | None) -> Netlist | None:
        """This netlist for the parts at ``rows`` of ``columns``, where they differ from its
        own parts at most in value; None where they differ otherwise (a part renamed, moved to
        other nets, of another kind or referring to another part).

        Nets and node arrays are shared; where a value changed, of what was derived from the
        old parts (``memo``) only the ``STRUCTURAL`` results are carried over. Costs a few array
        comparisons, no part by part work.
        """
        mine = self.columns
        if not _same_rows(rows, len(columns), self.rows, len(mine)):
            return None
        if columns is mine:
            return self
        if columns.nets is not mine.nets:  # ids from another register: not comparable
            return None
        def same(a: np.ndarray, b: np.ndarray) -> bool:
            return _same_at(a, b, rows)

        if not (same(columns.kinds, mine.kinds) and same(columns.nodes, mine.nodes)
                and (columns.names is mine.names
                     or _picked(columns.names, rows) == _picked(mine.names, rows))):
            return None
        if not columns.shares_references(mine):
            referring = columns.rows_of(REFERRING)
            if rows is not None:
                referring = np.intersect1d(referring, rows)
            if any(columns.parts[i].refs != mine.parts[i].refs for i in referring.tolist()):
                return None
        if same(columns.values, mine.values) and same(columns.complex_valued,
                                                      mine.complex_valued):
            return self
        netlist = Netlist.__new__(Netlist)
        netlist.columns, netlist.rows, netlist.net_ids = columns, rows, self.net_ids
        netlist.table, netlist.codes, netlist.part_rows = self.table, self.codes, self.part_rows
        netlist._nets, netlist.index = self._nets, self.index
        netlist.groups = {kind: Group(columns, g.rows, g.nodes, _group_values(columns, g.rows),
                                      g.span)
                          for kind, g in self.groups.items()}
        netlist.memo = {key: found for key, found in dict(self.memo).items()  # may grow meanwhile
                        if (key[0] if isinstance(key, tuple) else key) in self.STRUCTURAL}
        return netlist

    @property
    def has_dependent(self) -> bool:
        """True when a controlled source or op-amp makes the system non-reciprocal."""
        return any(kind in self.groups for kind in ("vcvs", "vccs", "ccvs", "cccs", "opamp"))

    def branches(self, wide: bool = False) -> Branches:
        """The group-2 parts (kept in ``memo``: a pure function of the parts); ``wide``: every
        resistor, impedance and capacitor too (see :class:`Branches`)."""
        key = ("branches", wide)
        found = self.memo.get(key)
        if found is None:
            found = self.memo[key] = Branches(self, wide)
        return found

    def wide(self, freqs: np.ndarray) -> np.ndarray:
        """Per frequency: True where the part impedances span more than ``WIDE_SPAN``, so the
        system is to be assembled with the wide branches (:class:`Branches`)."""
        lo, hi = self.impedance_range(freqs)
        with np.errstate(invalid="ignore", over="ignore"):
            return (lo > 0) & np.isfinite(hi) & (hi > WIDE_SPAN * lo)

    def impedance_range(self, freqs: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Smallest and largest non-zero impedance magnitude (ohms) of the parts at each freq.

        Counted: resistors, fixed impedances, capacitors and inductors (not at DC), CCVS
        transresistances and the inverse of VCCS transconductances; (0, inf) where none.
        """
        w = 2 * np.pi * np.asarray(freqs, dtype=float)
        spans = self.memo.get("spans")
        if spans is None:
            with np.errstate(divide="ignore"):
                spans = self.memo["spans"] = (
                    _span(np.abs(self["resistor"].values), np.abs(self["impedance"].values),
                          np.abs(self["ccvs"].values), 1 / np.abs(self["vccs"].values)),
                    _span(1 / np.abs(self["capacitor"].values)),    # times 1/w
                    _span(np.abs(self["inductor"].values)))         # times w
        fixed, per_farad, per_henry = spans
        with np.errstate(divide="ignore", over="ignore"):  # absurd frequencies: inf, not noise
            ac = w > 0
            lo, hi = _filled(w.size, fixed[0], float), _filled(w.size, fixed[1], float)
            for (a, b), scale in ((per_farad, 1 / w[ac]), (per_henry, w[ac])):
                if a <= b:
                    lo[ac] = np.minimum(lo[ac], a * scale)
                    hi[ac] = np.maximum(hi[ac], b * scale)
        lo[~np.isfinite(lo)] = 0.0
        hi[hi <= 0] = np.inf
        return lo, hi


class _NetIndex(Mapping[str, int]):
    """Net name to net id of a netlist, looked up in the circuit's net register: ``local`` maps
    a register id to the netlist's net id (-1 where the netlist has no such net), ``used`` back.
    """

    __slots__ = ("_local", "_names", "_register", "_used")

    def __init__(self, columns: Columns, local: np.ndarray, used: np.ndarray) -> None:
        self._register, self._names = columns.net_id, columns.nets
        self._local, self._used = local, used

    def __getitem__(self, net: str) -> int:
        found = self._register.get(net)
        if found is not None and found < self._local.size:  # the register may have grown
            i = int(self._local[found])
            if i >= 0:
                return i
        raise KeyError(net)

    def __contains__(self, net: object) -> bool:
        try:
            self[net]  # type: ignore[index]
        except (KeyError, TypeError):
            return False
        return True

    def __iter__(self) -> Iterator[str]:
        return map(self._names.__getitem__, self._used.tolist())

    def __len__(self) -> int:
        return self._used.size


def _filled(size: int, value: object, dtype: type | np.dtype) -> np.ndarray:
    """``np.full`` without its Python-level overhead (called for every stamp)."""
    out = np.empty(size, dtype=dtype)
    out.fill(value)
    return out


def _span(*arrays: np.ndarray) -> tuple[float, float]:
    """(min, max) of the finite non-zero values, or (inf, 0) where there are none."""
    values = np.concatenate(arrays)
    values = values[(values > 0) & np.isfinite(values)]
    if values.size == 0:
        return math.inf, 0.0
    return float(values.min()), float(values.max())


def _same_rows(a: np.ndarray | None, size_a: int, b: np.ndarray | None, size_b: int) -> bool:
    """Whether two selections of rows (None: all ``size`` rows) pick the same rows."""
    if a is None or b is None:
        return a is None and b is None and size_a == size_b
    return np.array_equal(a, b)


def _same_at(a: np.ndarray, b: np.ndarray, rows: np.ndarray | None) -> bool:
    """Whether two arrays agree at ``rows`` (None: everywhere); an array that Circuit.replaced
    shared between two circuits is not compared element by element."""
    return a is b or np.array_equal(a if rows is None else a[rows], b if rows is None else b[rows])


def _picked(items: list[str], rows: np.ndarray | None) -> list[str]:
    return items if rows is None else [items[i] for i in rows.tolist()]




class Branches:
    """Group-2 parts of a netlist (those with a branch-current unknown), numbered in the
    netlist's part order: ``offset[i]`` is the i-th part's offset among the branch unknowns,
    -1 where it has none; ``count`` how many there are.

    ``wide``: every resistor, impedance and capacitor has a branch current too. Where part
    impedances span many decades, a tiny impedance stamped as an admittance is summed at a node
    with tiny admittances whose digits the sum loses, and its current is the difference of two
    nearly equal node voltages; as a branch its current is an unknown of its own and its row
    ``V(a) - V(b) - Z I = 0`` (a capacitor's ``s C (V(a) - V(b)) - I = 0``) keeps every digit.
    """

    __slots__ = ("_offsets", "count", "netlist", "offset", "wide")

    def __init__(self, netlist: Netlist, wide: bool = False) -> None:
        self.netlist, self.wide = netlist, wide
        flags = kind_mask(_WIDE_BRANCH if wide else _ALWAYS_BRANCH).take(netlist.codes)
        if netlist.has_controlled:
            flags |= netlist.controlling()
        wires = netlist["resistor"]
        flags[wires.span] |= wires.values == 0
        self.offset = np.where(flags, flags.cumsum() - 1, -1)
        self.count = int(np.count_nonzero(flags))
        self._offsets: dict[str, int] | None = None

    def of(self, kind: str) -> np.ndarray:
        """The offsets of the parts of ``kind`` (-1 where a part has no branch current)."""
        return self.offset[self.netlist[kind].span]

    def by_row(self) -> np.ndarray:
        """Per row of the netlist's columns, and one more: the branch-current offset of the
        part there, -1 where it has none or is not in the netlist. The spare last entry is -1
        too, so a row of -1 (no such part) reads -1."""
        by_row = _filled(len(self.netlist.columns) + 1, -1, np.intp)
        by_row[self.netlist.part_rows] = self.offset
        return by_row

    @property
    def offset_of(self) -> dict[str, int]:
        """The offset of each group-2 part, by name."""
        if self._offsets is None:
            found = (self.offset >= 0).nonzero()[0]
            self._offsets = dict(zip(self.netlist.part_names(found), self.offset[found].tolist(),
                                     strict=True))
        return self._offsets


@dataclass(frozen=True, slots=True, eq=False)
class _Entries:
    """Entries of one matrix (G or M): COO triplets (32-bit indices, as SciPy's sparse formats
    keep them), and the diagonal terms of admittances, summed per unknown when the matrix is
    made (``keys``, ``weights``): most entries of a large circuit, kept out of the conversion."""

    rows: np.ndarray
    cols: np.ndarray
    vals: np.ndarray
    keys: np.ndarray
    weights: np.ndarray


#: Up to this many entries (diagonal weights and triplets) a matrix is compressed here.
_SMALL_MATRIX = 4096


def _summed(keys: np.ndarray, weights: np.ndarray, size: int) -> np.ndarray:
    """Per unknown, the sum of its weights, added in the order given (as SciPy adds duplicate
    entries); complex sums part by part, which is exact."""
    if not np.iscomplexobj(weights):
        return np.bincount(keys, weights, size)
    out = np.empty(size, dtype=complex)
    out.real, out.imag = np.bincount(keys, weights.real, size), np.bincount(keys, weights.imag,
                                                                           size)
    return out


class _Triplets:
    """COO entries collected stamp by stamp, concatenated once."""

    def __init__(self) -> None:
        self.rows: list[np.ndarray] = []
        self.cols: list[np.ndarray] = []
        self.vals: list[np.ndarray] = []
        self.keys: list[np.ndarray] = []
        self.weights: list[np.ndarray] = []

    def add(self, rows: Sequence[np.ndarray], cols: Sequence[np.ndarray],
            vals: Sequence[np.ndarray]) -> None:
        self.rows += rows
        self.cols += cols
        self.vals += vals

    def admittance(self, a: np.ndarray, b: np.ndarray, y: np.ndarray) -> None:
        """``y`` between a and b: its diagonal terms summed per unknown (those of pinned nets,
        -1, drop out like every entry that names one)."""
        self.keys += [a, b]
        self.weights += [y, y]
        minus = -y
        self.add((a, b), (b, a), (minus, minus))


    def entries(self) -> _Entries:
        empty = np.zeros(0, dtype=np.int32)
        if self.rows:
            rows = np.concatenate(self.rows, dtype=np.int32)
            cols = np.concatenate(self.cols, dtype=np.int32)
            vals = np.concatenate(self.vals)
            keep = (rows >= 0) & (cols >= 0)  # entries of pinned nets drop out
            rows, cols, vals = rows[keep], cols[keep], vals[keep]
        else:
            rows, cols, vals = empty, empty, np.zeros(0)
        if self.keys:
            keys, weights = np.concatenate(self.keys), np.concatenate(self.weights)
            keep = keys >= 0
            keys, weights = keys[keep], weights[keep]
        else:
            keys, weights = empty, np.zeros(0)
        return _Entries(rows, cols, vals, keys, weights)


class System:
    """The assembled equations of a netlist: ``A(s) = G + s M`` and the sources' ``b``.

    ``unknown_of_net[i]`` is the unknown index of net id i (-1 when pinned); ``branch_of`` maps a
    group-2 part name to its branch unknown; ``short`` is the port short's branch, if any.
    ``symmetric`` is True when A is complex symmetric (no controlled source, no op-amp), so
    transposed solves equal plain ones.
    """

    def __init__(self, netlist: Netlist, unknown_of_net: np.ndarray, n_nodes: int,
                 short: int | None, g: _Entries, m: _Entries, b: np.ndarray,
                 branches: Branches) -> None:
        self.netlist, self.branches = netlist, branches
        self.unknown_of_net = unknown_of_net
        self.n_nodes = n_nodes
        self.short = short
        self.size = b.shape[0]
        self.b = b
        self._g, self._m = g, m
        self._layouts: dict[tuple[bool, ...], tuple[np.ndarray, ...]] = {}
        # a capacitor's branch row holds s C where its incidence column holds 1
        self.symmetric = not netlist.has_dependent and not (branches.of("capacitor") >= 0).any()
        #: Solves are refined by one step with the residual (see :meth:`Factor.solve`).
        self.refined = branches.wide
        self._branch_of: dict[str, int] | None = None
        self._last: tuple[float, sp.csc_matrix] | None = None

    @property
    def branch_of(self) -> dict[str, int]:
        """Branch-current unknown of each group-2 part, by name."""
        if self._branch_of is None:
            offsets = self.branches.offset_of
            self._branch_of = {name: self.n_nodes + k for name, k in offsets.items()}
        return self._branch_of

    def matrix(self, freq: float) -> sp.csc_matrix:
        """A(j 2 pi freq) in CSC form (real when every entry is real, e.g. at DC); the last one
        is kept for the next analysis at the same frequency (read it, never write it)."""
        if self._last is None or self._last[0] != freq:
            self._last = (freq, self._matrix(freq))
        return self._last[1]

    def _layout(self, *entries: _Entries) -> tuple[np.ndarray, ...]:
        """For a sum of ``entries``: every diagonal key, the unknowns they touch, and the rows
        and columns of the matrix (those diagonal entries first, then the triplets')."""
        key = tuple(e is self._m for e in entries)
        found = self._layouts.get(key)
        if found is None:
            keys = np.concatenate([e.keys for e in entries])
            touched = np.bincount(keys, minlength=self.size).nonzero()[0].astype(np.int32)
            rows = np.concatenate([touched, *(e.rows for e in entries)])
            cols = np.concatenate([touched, *(e.cols for e in entries)])
            found = self._layouts[key] = (keys, touched, rows, cols)
        return found

    def _slots(self, entries: Sequence[_Entries], form: type[sp.spmatrix]
               ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """For a small sum of ``entries`` in ``form``: the slot of each of their diagonal
        weights and then of each triplet among the matrix's non-zeros, and the matrix's
        ``indices`` and ``indptr`` (canonical: sorted, no duplicates)."""
        key = (form, *(e is self._m for e in entries))
        found = self._layouts.get(key)
        if found is None:
            rows = np.concatenate([e.keys for e in entries] + [e.rows for e in entries])
            cols = np.concatenate([e.keys for e in entries] + [e.cols for e in entries])
            major, minor = (cols, rows) if form is sp.csc_matrix else (rows, cols)
            code = major.astype(np.int64) * self.size + minor
            order = code.argsort(kind="stable")
            code = code.take(order)
            new = np.empty(code.size, dtype=bool)
            new[:1] = True
            np.not_equal(code[1:], code[:-1], out=new[1:])
            slots = np.empty(code.size, dtype=np.intp)
            slots[order] = new.cumsum() - 1
            unique = code[new]
            indptr = np.zeros(self.size + 1, dtype=np.int32)
            np.bincount(unique // self.size, minlength=self.size).cumsum(out=indptr[1:])
            found = self._layouts[key] = (slots, (unique % self.size).astype(np.int32), indptr)
        return found

    def _compressed(self, entries: Sequence[_Entries], scales: Sequence[complex | None],
                    form: type[sp.spmatrix]) -> sp.spmatrix:
        """The sum of ``entries``, each times its scale (None: 1), in ``form``.

        Duplicates are summed in the order given, as SciPy's conversion sums them. Up to
        ``_SMALL_MATRIX`` entries the compressed structure is worked out here once per form and
        kept (SciPy's conversion costs more in fixed overhead than a small matrix's sort);
        beyond, SciPy's counting sort converts each matrix.
        """
        weights, vals = [], []
        with np.errstate(over="ignore", invalid="ignore"):  # inf at absurd frequencies
            for e, scale in zip(entries, scales, strict=True):
                weights.append(e.weights if scale is None else scale * e.weights)
                vals.append(e.vals if scale is None else scale * e.vals)
        if sum(e.keys.size + e.rows.size for e in entries) <= _SMALL_MATRIX:
            slots, indices, indptr = self._slots(entries, form)
            data = _summed(slots, np.concatenate(weights + vals), indices.size)
            if np.iscomplexobj(self.b):
                data = data.astype(complex, copy=False)
            return form((data, indices, indptr), shape=(self.size, self.size))
        keys, touched, rows, cols = self._layout(*entries)
        with np.errstate(over="ignore", invalid="ignore"):
            diagonal = _summed(keys, np.concatenate(weights), self.size)[touched]
        data = np.concatenate([diagonal, *vals])
        if np.iscomplexobj(data) or np.iscomplexobj(self.b):
            data = data.astype(complex, copy=False)
        return form((data, (rows, cols)), shape=(self.size, self.size))

    def _matrix(self, freq: float) -> sp.csc_matrix:
        if freq == 0 or not (self._m.vals.size or self._m.keys.size):
            return self._compressed((self._g,), (None,), sp.csc_matrix)
        return self._compressed((self._g, self._m), (None, 2j * math.pi * freq), sp.csc_matrix)

    def parts(self) -> tuple[sp.csr_matrix, sp.csr_matrix]:
        """G and M separately (CSR, complex, duplicates summed), for batched sweeps."""
        g, m = (self._compressed((e,), (None,), sp.csr_matrix) for e in (self._g, self._m))
        return g.astype(complex), m.astype(complex)

    def rhs(self, net: str | None = None) -> np.ndarray:
        """A unit current into ``net`` (sources zeroed); ``None``: the port short at 1 V."""
        e = np.zeros(self.size)
        if net is None:
            e[self.short] = 1.0
        else:
            k = self.unknown_of_net[self.netlist.index[net]]
            if k >= 0:
                e[k] = 1.0
        return e

    def unknown_names(self) -> list[str]:
        """Readable names of the unknowns, for messages: ``V(net)`` and ``I(part)``."""
        names = [""] * self.size
        for net_id, k in enumerate(self.unknown_of_net):
            if k >= 0:
                names[k] = f"V({self.netlist.nets[net_id]})"
        opamps = set(self.netlist["opamp"].names)
        for part, k in self.branch_of.items():
            names[k] = f"the output current of {part}" if part in opamps else f"I({part})"
        if self.short is not None:
            names[self.short] = "the port short's current"
        return names


def assemble(netlist: Netlist, pinned: Sequence[int] | np.ndarray,
             short: tuple[int, int] | None = None, wide: bool = False) -> System:
    """Assemble the MNA system of ``netlist`` with the net ids in ``pinned`` as references.

    ``short``: net ids (plus, minus) joined by an ideal 0 V branch (the shorted port), whose
    current (from plus through the short into minus) is the unknown ``System.short``.
    ``wide``: every resistor, impedance and capacitor with a branch current (:class:`Branches`).
    Raises :class:`~engine.errors.SingularCircuitError` where a CCVS/CCCS names a controller
    that is not among the parts analysed, or a coupling an inductor that is not.
    """
    n_nets = netlist.net_count
    # unknown of each net id, -1 where pinned; the spare last -1 answers the table's padding
    u = _filled(n_nets + 1, -1, np.int32)
    is_node = _filled(n_nets, True, bool)
    is_node[np.asarray(pinned, dtype=np.intp)] = False
    n_nodes = int(np.count_nonzero(is_node))
    u[:n_nets][is_node] = np.arange(n_nodes, dtype=np.int32)

    branches = netlist.branches(wide)
    size = n_nodes + branches.count
    short_index = size if short is not None else None
    size += short is not None

    g, m = _Triplets(), _Triplets()
    b = np.zeros(size, dtype=complex if _sources_complex(netlist) else float)
    # Admittances (most entries of a large circuit); every other stamp by the table.
    plain = branches.offset < 0
    for kinds, target in ((("resistor", "impedance"), g), (("capacitor",), m)):
        parts = (kind_mask(kinds).take(netlist.codes) & plain).nonzero()[0]
        if parts.size:
            nodes = u.take(netlist.table.take(parts, axis=0)[:, :2])
            values = _group_values(netlist.columns, netlist.part_rows.take(parts))
            target.admittance(nodes[:, 0], nodes[:, 1], values if target is m else 1 / values)
    _stamp_by_table(netlist, branches, u, n_nodes, g, m, b)
    if "coupling" in netlist.groups:
        _stamp_couplings(netlist, branches, n_nodes, m)
    if short is not None:  # a 0 V branch from plus to minus, stamped as a voltage source's
        operands = [int(u[short[0]]), int(u[short[1]]), -1, -1, short_index, -1, -1]
        for _, row, col, (one, _) in _SERIES:
            g.add((np.array([operands[row]]),), (np.array([operands[col]]),),
                  (np.array([float(one)]),))
    return System(netlist, u[:n_nets], n_nodes, short_index, g.entries(), m.entries(), b,
                  branches)


# -- the stamp table ----------------------------------------------------------------------------
# A stamp entry reads its row and column from the part's operands: the unknowns of its nets
# (node columns 0 to 3), its own branch current, its controlling part's branch current, or
# none (-1: the entry drops out); its coefficient is 1, -1, the value or minus the value.
_N0, _N1, _N2, _N3, _OWN, _CONTROL, _NONE = range(7)
_OPERANDS = 7
#: Coefficients as (multiple of 1, multiple of the value).
_ONE, _MINUS_ONE, _VALUE, _MINUS_VALUE = (1, 0), (-1, 0), (0, 1), (0, -1)
_G, _M = "G", "M"
#: The branch current leaves the part's first net and enters its second.
_INCIDENCE = ((_G, _N0, _OWN, _ONE), (_G, _N1, _OWN, _MINUS_ONE))
#: Its row reads V(first) - V(second) - ... = ...
_VOLTAGE_ROW = ((_G, _OWN, _N0, _ONE), (_G, _OWN, _N1, _MINUS_ONE))
_SERIES = (*_INCIDENCE, *_VOLTAGE_ROW)
#: A current-defined branch row: I - value (...) = ...
_CURRENT_ROW = ((_G, _OWN, _OWN, _ONE),)
#: (kind, has a branch current): matrix entries (matrix, row, column, coefficient), and the
#: right-hand side's (row, coefficient). A VCVS/VCCS senses its node columns 2 and 3; an op-amp
#: holds V(inp) = V(inn) in its row and drives its output (column 2) from ground (column 3).
#: Resistors, impedances and capacitors without a branch current are admittances (assemble).
_STAMPS: dict[tuple[str, bool], tuple[tuple[tuple, ...], tuple[tuple, ...]]] = {
    ("resistor", True): ((*_SERIES, (_G, _OWN, _OWN, _MINUS_VALUE)), ()),
    ("impedance", True): ((*_SERIES, (_G, _OWN, _OWN, _MINUS_VALUE)), ()),
    ("capacitor", True): ((*_INCIDENCE, (_M, _OWN, _N0, _VALUE), (_M, _OWN, _N1, _MINUS_VALUE),
                           (_G, _OWN, _OWN, _MINUS_ONE)), ()),
    ("inductor", True): ((*_SERIES, (_M, _OWN, _OWN, _MINUS_VALUE)), ()),
    ("voltage_source", True): (_SERIES, ((_OWN, _VALUE),)),
    ("current_source", False): ((), ((_N0, _MINUS_VALUE), (_N1, _VALUE))),
    ("current_source", True): ((*_INCIDENCE, *_CURRENT_ROW), ((_OWN, _VALUE),)),
    ("vcvs", True): ((*_SERIES, (_G, _OWN, _N2, _MINUS_VALUE), (_G, _OWN, _N3, _VALUE)), ()),
    ("vccs", False): (((_G, _N0, _N2, _VALUE), (_G, _N0, _N3, _MINUS_VALUE),
                       (_G, _N1, _N2, _MINUS_VALUE), (_G, _N1, _N3, _VALUE)), ()),
    ("vccs", True): ((*_INCIDENCE, *_CURRENT_ROW, (_G, _OWN, _N2, _MINUS_VALUE),
                      (_G, _OWN, _N3, _VALUE)), ()),
    ("ccvs", True): ((*_SERIES, (_G, _OWN, _CONTROL, _MINUS_VALUE)), ()),
    ("cccs", False): (((_G, _N0, _CONTROL, _VALUE), (_G, _N1, _CONTROL, _MINUS_VALUE)), ()),
    ("cccs", True): ((*_INCIDENCE, *_CURRENT_ROW, (_G, _OWN, _CONTROL, _MINUS_VALUE)), ()),
    ("opamp", True): (((_G, _N2, _OWN, _MINUS_ONE), (_G, _N3, _OWN, _ONE), *_VOLTAGE_ROW), ()),
}


@dataclass(frozen=True, slots=True, eq=False)
class _Layer:
    """One destination of the stamps (G, M or the right-hand side), per variant (kind code *
    2 + has a branch current) and entry, padded with entries that read no operand: the
    operands of the row and column, and the coefficient as ``one + value * (the part's value)``.
    """

    rows: np.ndarray
    cols: np.ndarray
    one: np.ndarray
    value: np.ndarray

    @classmethod
    def of(cls, entries: dict[int, list[tuple[int, int, tuple[int, int]]]]) -> _Layer:
        width = max(1, max(map(len, entries.values()), default=0))
        variants = 2 * len(KINDS)
        rows, cols = np.full((variants, width), _NONE), np.full((variants, width), _NONE)
        one, value = np.zeros((variants, width)), np.zeros((variants, width))
        for v, listed in entries.items():
            for j, (row, col, (a, k)) in enumerate(listed):
                rows[v, j], cols[v, j], one[v, j], value[v, j] = row, col, a, k
        return cls(rows, cols, one, value)

    def gather(self, flat: np.ndarray, base: np.ndarray, variant: np.ndarray,
               values: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Rows, columns and weights of every stamped part's entries (-1: none), flattened;
        ``flat`` holds the parts' operands row by row, ``base`` each part's offset in it."""
        rows = flat.take(base + self.rows.take(variant, axis=0)).ravel()
        cols = flat.take(base + self.cols.take(variant, axis=0)).ravel()
        weights = (self.one.take(variant, axis=0)
                   + self.value.take(variant, axis=0) * values[:, None]).ravel()
        return rows, cols, weights


def _stamp_layers() -> tuple[np.ndarray, _Layer, _Layer, _Layer]:
    """Whether each variant is stamped by the table, and its G, M and right-hand side layers."""
    stamped = np.zeros(2 * len(KINDS), dtype=bool)
    layers: dict[str, dict[int, list]] = {_G: {}, _M: {}, "b": {}}
    for (kind, branch), (stamps, rhs) in _STAMPS.items():
        v = 2 * KIND_CODE[kind] + branch
        stamped[v] = True
        for which, row, col, coef in stamps:
            layers[which].setdefault(v, []).append((row, col, coef))
        layers["b"][v] = [(row, _NONE, coef) for row, coef in rhs]
    return stamped, _Layer.of(layers[_G]), _Layer.of(layers[_M]), _Layer.of(layers["b"])


_STAMPED, _G_LAYER, _M_LAYER, _B_LAYER = _stamp_layers()


def _stamp_by_table(netlist: Netlist, branches: Branches, u: np.ndarray, n_nodes: int,
                    g: _Triplets, m: _Triplets, b: np.ndarray) -> None:
    """Stamp every part the table covers, all kinds at once: a few gathers, however many
    kinds there are. Entries that read no operand or a pinned net keep a -1 and drop out
    when the triplets are collected."""
    variant = netlist.codes.astype(np.intp) * 2 + (branches.offset >= 0)
    sel = _STAMPED.take(variant).nonzero()[0]
    if not sel.size:
        return
    variant = variant.take(sel)
    operands = np.empty((sel.size, _OPERANDS), dtype=np.int32)
    operands[:, :4] = u.take(netlist.table.take(sel, axis=0))
    own = branches.offset.take(sel)
    operands[:, _OWN] = np.where(own >= 0, own + n_nodes, -1)
    operands[:, _CONTROL:] = -1
    if netlist.has_controlled:
        controls = _control_indices(netlist, branches, n_nodes)
        for kind in _CONTROLLED:
            span = netlist[kind].span
            start = int(np.searchsorted(sel, span.start))
            operands[start:start + span.stop - span.start, _CONTROL] = controls[kind]
    part_rows = netlist.part_rows.take(sel)
    values = netlist.columns.values.take(part_rows)
    given_complex = netlist.columns.complex_valued.take(part_rows)
    flat, base = operands.ravel(), np.arange(0, operands.size, _OPERANDS)[:, None]
    sources = kind_mask(_SOURCES).take(netlist.codes.take(sel))
    if sources.any():
        targets, _, weights = _B_LAYER.gather(flat, base, variant, values)
        spare = np.zeros(b.size + 1, dtype=b.dtype)  # where the -1 targets land
        np.add.at(spare, targets, weights if np.iscomplexobj(b) else weights.real)
        b += spare[:-1]
    # a complex source phasor leaves the matrix real
    matrix_values = values if (given_complex & ~sources).any() else values.real
    for layer, target in ((_G_LAYER, g), (_M_LAYER, m)):
        rows, cols, weights = layer.gather(flat, base, variant, matrix_values)
        target.add((rows,), (cols,), (weights,))


def _control_indices(netlist: Netlist, branches: Branches, n_nodes: int
                     ) -> dict[str, np.ndarray]:
    """For the CCVS and the CCCS, the branch unknown of each one's controlling part."""
    by_row = branches.by_row()
    result = {}
    for kind in _CONTROLLED:
        offsets = by_row[netlist.referred(kind)[:, 0]]
        if (offsets < 0).any():
            group = netlist[kind]
            i = int(np.argmax(offsets < 0))
            control = netlist.columns.references().name(int(group.rows[i]), 0)
            raise SingularCircuitError(
                f"{group.names[i]} is controlled by the current in {control}, which is not "
                "among the parts analysed; add it or change the controlling part")
        result[kind] = n_nodes + offsets
    return result


def _sources_complex(netlist: Netlist) -> bool:
    return any(np.iscomplexobj(netlist[kind].values)
               for kind in ("voltage_source", "current_source"))


def _stamp_couplings(netlist: Netlist, branches: Branches, n_nodes: int, m: _Triplets
                     ) -> None:
    group, inductors = netlist["coupling"], netlist["inductor"]
    # per row of the columns (and a spare -1 for a missing part): position among the inductors
    position = _filled(len(netlist.columns) + 1, -1, np.intp)
    position[inductors.rows] = np.arange(len(inductors))
    at = position[netlist.referred("coupling")]
    if (at < 0).any():
        i, j = np.argwhere(at < 0)[0].tolist()
        ref = netlist.columns.references().name(int(group.rows[i]), j)
        raise SingularCircuitError(f"{group.names[i]} couples {ref}, which is not among the "
                                   "parts analysed")
    henries = inductors.values[at]
    product = henries[:, 0] * henries[:, 1]
    if (product < 0).any():
        name = group.names[int(np.argmax(product < 0))]
        raise CircuitError(f"{name} couples inductors of opposite signs; M = k sqrt(L1 L2) needs "
                           "both inductances of one sign")
    mutual = -group.values * np.sqrt(product)
    k1, k2 = (n_nodes + branches.of("inductor").take(at[:, i]) for i in (0, 1))
    m.add((k1, k2), (k2, k1), (mutual, mutual))


class Singular(SingularCircuitError):
    """The system has no unique solution; the message names the likely culprits."""

    def __init__(self, system: System, freq: float, matrix: sp.spmatrix | None = None) -> None:
        self.system, self.freq = system, freq
        super().__init__(f"the circuit equations have no unique solution at {describe_freq(freq)}"
                         f"{_culprits(system, matrix)}")


def _culprits(system: System, matrix: sp.spmatrix | None) -> str:
    """Undetermined unknowns (from a structural matching) and the parts that usually cause it."""
    hints = []
    if matrix is not None and not np.isfinite(matrix.data).all():
        return (": some part impedances overflow double precision at this frequency; "
                "analyse at a frequency nearer the parts' own scale")
    if matrix is not None and matrix.shape[0]:
        rows, cols = matrix.nonzero()
        pattern = sp.csr_matrix((np.ones(rows.size), (rows, cols)), shape=matrix.shape)
        matched = maximum_bipartite_matching(pattern, perm_type="row")
        loose = np.flatnonzero(matched < 0)
        if loose.size:
            names = system.unknown_names()
            listed = ", ".join(names[i] for i in loose[:5])
            more = f" and {loose.size - 5} more" if loose.size > 5 else ""
            hints.append(f"no equation determines {listed}{more}")
    netlist = system.netlist
    opamps = netlist["opamp"].names
    if opamps:
        hints.append(f"check that op-amp{'s' if len(opamps) > 1 else ''} "
                     f"{', '.join(opamps[:5])} {'have' if len(opamps) > 1 else 'has'} negative "
                     "feedback from output to input")
    controlled = [n for kind in ("vcvs", "vccs", "ccvs", "cccs") for n in netlist[kind].names]
    if controlled:
        hints.append(f"check the gains of the controlled sources {', '.join(controlled[:5])} "
                     "(a loop gain that cancels a part exactly makes the equations singular)")
    if not hints:
        hints.append("a part value cancels another exactly (e.g. a resonance or a negative "
                     "value), so two equations coincide")
    return ": " + "; ".join(hints)


class Factor:
    """One sparse LU factorization of ``A(j 2 pi freq)``, solving many right-hand sides.

    Raises :class:`Singular` where SuperLU finds the matrix singular (however SciPy signals it)
    and where a solution is not finite.
    """

    def __init__(self, system: System, freq: float) -> None:
        self.system, self.freq = system, freq
        self.matrix = system.matrix(freq)
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("error")
                self._lu = splu(self.matrix, permc_spec=ORDERING)
        except (RuntimeError, ValueError, ArithmeticError, np.linalg.LinAlgError, Warning):
            raise Singular(system, freq, self.matrix) from None

    def solve(self, rhs: np.ndarray, transposed: bool = False) -> np.ndarray:
        """``A^{-1} rhs`` (or ``A^{-T} rhs``); rhs of shape (n,) or (n, k); refined by one step
        where the system is in the wide form."""
        data = rhs.astype(self.matrix.dtype if not np.iscomplexobj(rhs) else complex)
        if np.iscomplexobj(data) and not np.iscomplexobj(self.matrix.data):
            # SuperLU solves in the factor's own dtype: real factor, complex rhs in two parts
            return self.solve(data.real, transposed) + 1j * self.solve(data.imag, transposed)
        trans = "T" if transposed else "N"
        try:  # (SuperLU's solve raises; it neither warns nor heeds NumPy's error state)
            x = self._lu.solve(data, trans=trans)
            if self.system.refined:
                # One step of refinement with the residual: the wide form's rows mix scales,
                # where the pivots SuperLU picks can leave an error well above the rounding
                # of the data; one step brings it back (docs/method.md).
                a = self.matrix.T if transposed else self.matrix
                with np.errstate(all="ignore"):
                    x = x + self._lu.solve(data - a @ x, trans=trans)
        except (RuntimeError, ValueError, ArithmeticError):
            raise Singular(self.system, self.freq, self.matrix) from None
        if not np.isfinite(x).all():
            raise Singular(self.system, self.freq, self.matrix)
        return x

    def error_bound(self, x: np.ndarray, rhs: np.ndarray, adjoint: np.ndarray) -> float:
        """Bound on ``|c.x_true - c.x|`` for the linear functional c with ``A^T adjoint = c``.

        ``x`` solves ``A x = rhs`` in floating point. The exact solution differs by
        ``A^{-1} r`` with the residual ``r = rhs - A x``, so ``c.x`` is off by ``adjoint . r``;
        ``r`` is itself computed with an error below ``gamma (|A||x| + |rhs|)``, with
        ``gamma = (nz + 1) eps`` and nz the most non-zeros in one row (the same rounding that a
        perturbation of the part values by one unit in the last place would cause).
        """
        a = self.matrix
        with np.errstate(all="ignore"):
            residual = rhs - a @ x
            per_entry = np.abs(a.data) * np.repeat(np.abs(x), np.diff(a.indptr))
            abs_ax = np.bincount(a.indices, per_entry, a.shape[0])
        return float(bound(adjoint, residual, abs_ax, rhs, rounding(a)))


def rounding(matrix: sp.spmatrix) -> float:
    """``gamma = (nz + 1) eps``, nz the most non-zeros in one row of ``matrix``."""
    nz = np.bincount(matrix.indices).max(initial=0) if matrix.nnz else 0
    return float(nz + 1) * EPS


def bound(adjoint: np.ndarray, residual: np.ndarray, abs_ax: np.ndarray, rhs: np.ndarray,
          gamma: float) -> np.ndarray:
    """``sum |adjoint| (|residual| + gamma (|A||x| + |rhs|))`` over the last axis."""
    with np.errstate(all="ignore"):
        weight = np.abs(residual) + gamma * (abs_ax + np.abs(rhs))
        return np.sum(np.abs(adjoint) * weight, axis=-1)
