"""Sparse complex Modified Nodal Analysis: ``A(s) x = b`` with ``s = j 2 pi f``.

The matrix is assembled once as ``A(s) = G + s M`` (SciPy sparse, COO triplets -> CSC), so one
assembly serves every frequency of a sweep, and factorized once per frequency (SuperLU) to solve
several right-hand sides.

Unknowns, in this order:

* the voltage of every net except the *pinned* ones (one reference net per galvanically separate
  island, chosen by the caller from :func:`engine.topology.islands`);
* one branch current per group-2 part: voltage sources, VCVS, CCVS, inductors, 0 Ω wires
  (a 0 V branch, so an ideal wire costs no conditioning), the output current of every op-amp
  (a nullor: its row holds V(inp) - V(inn) = 0, its current is free, injected at ``out`` and
  returned through ground), an optional port short, and any part whose current controls a CCVS or
  CCCS (so that I(control) is an unknown whatever the controlling part is).

Sign conventions (those of :mod:`engine.circuit`): a branch current flows from the part's first
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

from .circuit import KINDS, NET_COLUMNS, Columns, Part
from .errors import CircuitError, SingularCircuitError
from .units import format_eng

__all__ = [
    "EPS", "Branches", "Factor", "Group", "Netlist", "Singular", "System", "assemble", "bound",
    "describe_freq", "rounding",
]

EPS = float(np.finfo(float).eps)
#: Column ordering handed to SuperLU: minimum degree on the pattern of A + A^T suits MNA, whose
#: pattern is symmetric but for the few controlled-source entries (about half the fill of COLAMD
#: on an RC mesh; see docs/performance.md).
ORDERING = "MMD_AT_PLUS_A"

_CONTROLLED = ("ccvs", "cccs")
_ALWAYS_BRANCH = ("voltage_source", "vcvs", "ccvs", "inductor", "opamp")
#: Parts that become group-2 (branch current unknown) only when they control a CCVS or CCCS.
_BRANCH_IF_CONTROLLER = ("resistor", "capacitor", "impedance", "current_source", "vccs", "cccs")


def describe_freq(freq: float) -> str:
    """``"DC"`` or the frequency in engineering notation (``"1 kHz"``), for messages."""
    return "DC" if freq == 0 else format_eng(freq, "Hz")


class Group:
    """The parts of one kind: ``rows`` are their rows in the circuit's :class:`Columns`,
    ``nodes[i]`` part i's net ids (``Part.nets`` order), ``values[i]`` its value; ``names``
    and ``refs`` are read from the parts when first asked."""

    __slots__ = ("_names", "columns", "nodes", "rows", "values")

    def __init__(self, columns: Columns, rows: np.ndarray, nodes: np.ndarray,
                 values: np.ndarray) -> None:
        self.columns, self.rows, self.nodes, self.values = columns, rows, nodes, values
        self._names: list[str] | None = None

    def __len__(self) -> int:
        return self.rows.size

    @property
    def names(self) -> list[str]:
        if self._names is None:
            self._names = _picked(self.columns.names, self.rows)
        return self._names

    @property
    def refs(self) -> list[tuple[str, ...]]:
        parts = self.columns.parts
        return [parts[i].refs for i in self.rows.tolist()]


_NO_ROWS = np.zeros(0, dtype=np.intp)
_EMPTY = Group(Columns.of(()), _NO_ROWS, np.zeros((0, 4), dtype=np.int32), np.zeros(0))
#: Net ids per part of each kind (``Part.nets``: the op-amp's ground return included).
_WIDTH = [len(roles) + (kind == "opamp") for kind, roles in KINDS.items()]
#: Kinds whose parts name other parts (``refs``).
_REFERRING = ("ccvs", "cccs", "coupling")


def _group_values(columns: Columns, rows: np.ndarray) -> np.ndarray:
    """Values of the parts at ``rows``: real unless one of them was given as complex."""
    values = columns.values[rows]
    return values if columns.complex_valued[rows].any() else values.real.copy()


class Netlist:
    """A set of parts as index arrays, one :class:`Group` per kind.

    ``nets[i]`` is the name of net id ``i`` (numbered in order of first use, kind by kind);
    ``index`` maps a name back and ``net_ids[i]`` is net i's id in the circuit's register.
    ``rows`` are the parts' rows in ``columns`` (None: all of them). All parts kind by kind:
    ``table[i]`` the net ids of the i-th (``Part.nets`` order, -1 beyond them) and ``codes[i]``
    its kind code; the groups' node arrays are views of ``table``. Couplings are kept with
    their inductor names in ``refs``. A netlist never changes after construction, so results
    derived from it alone may be kept in ``memo``; those under a key tagged (the key, or its
    first item) with a name in ``STRUCTURAL`` depend on the parts' kinds, nets and references
    only, and outlive a value edit (:meth:`with_values`).
    """

    STRUCTURAL = frozenset({"carrying", "controlling", "islands"})

    __slots__ = ("_nets", "codes", "columns", "controllers", "groups", "index", "memo",
                 "net_ids", "rows", "table")

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
                                      (values if complex_kind else real)[start:end])
        self.columns, self.rows, self.net_ids = columns, rows, used
        self.table, self.codes = table, kinds.take(order)
        self.index: Mapping[str, int] = _NetIndex(columns, local, used)
        self._nets: list[str] | None = None
        self.controllers: set[str] = {r[0] for kind in _CONTROLLED for r in self[kind].refs}
        self.memo: dict[object, object] = {}

    def __getitem__(self, kind: str) -> Group:
        return self.groups.get(kind, _EMPTY)

    def marked(self, spec: np.ndarray) -> np.ndarray:
        """Per net: True where a part has a node column marked in ``spec`` (a boolean per kind
        code and node column) on it."""
        found = np.zeros(self.net_count, dtype=bool)
        found[self.table[spec.take(self.codes, axis=0)]] = True
        return found

    def controlling(self, kind: str) -> np.ndarray:
        """Per part of ``kind``: True where its current controls a CCVS or CCCS."""
        flags = self.memo.get("controlling")
        if flags is None:
            flags = self.memo["controlling"] = np.zeros(len(self.columns), dtype=bool)
            found = [self.columns.row_of(name) for name in self.controllers]
            flags[[row for row in found if row is not None]] = True
        return flags[self[kind].rows]

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
        referring = columns.rows_of(_REFERRING)
        if rows is not None:
            referring = np.intersect1d(referring, rows)
        if any(columns.parts[i].refs != mine.parts[i].refs for i in referring.tolist()):
            return None
        if same(columns.values, mine.values) and same(columns.complex_valued,
                                                      mine.complex_valued):
            return self
        netlist = Netlist.__new__(Netlist)
        netlist.columns, netlist.rows, netlist.net_ids = columns, rows, self.net_ids
        netlist.table, netlist.codes = self.table, self.codes
        netlist._nets, netlist.index, netlist.controllers = self._nets, self.index, self.controllers
        netlist.groups = {kind: Group(columns, g.rows, g.nodes, _group_values(columns, g.rows))
                          for kind, g in self.groups.items()}
        netlist.memo = {key: found for key, found in self.memo.items()
                        if (key[0] if isinstance(key, tuple) else key) in self.STRUCTURAL}
        return netlist

    @property
    def has_dependent(self) -> bool:
        """True when a controlled source or op-amp makes the system non-reciprocal."""
        return any(kind in self.groups for kind in ("vcvs", "vccs", "ccvs", "cccs", "opamp"))

    def branches(self) -> Branches:
        """The group-2 parts (kept in ``memo``: a pure function of the parts)."""
        found = self.memo.get("branches")
        if found is None:
            found = self.memo["branches"] = Branches(self)
        return found

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
    """Group-2 parts of a netlist: per kind, the positions in its group of the parts that carry
    a branch current (``where``) and the offset of the first among the branch unknowns
    (``first``); ``offset_of`` maps a part name to its offset."""

    __slots__ = ("_by_row", "_offsets", "count", "first", "netlist", "where")

    def __init__(self, netlist: Netlist) -> None:
        self.netlist = netlist
        self.where: dict[str, np.ndarray] = {}
        self.first: dict[str, int] = {}
        count = 0
        for kind in (*_ALWAYS_BRANCH, *_BRANCH_IF_CONTROLLER):
            group = netlist.groups.get(kind)
            if group is None:
                continue
            if kind in _ALWAYS_BRANCH:
                where = np.arange(len(group))
            else:
                mask = netlist.controlling(kind)
                if kind == "resistor":
                    mask = mask | (group.values == 0)
                where = mask.nonzero()[0]
            if where.size:
                self.where[kind], self.first[kind] = where, count
                count += where.size
        self.count = count
        self._offsets: dict[str, int] | None = None
        self._by_row: np.ndarray | None = None

    def offset(self, name: str) -> int | None:
        """The branch-current offset of part ``name``; None where it has none (or is not in the
        netlist)."""
        row = self.netlist.columns.row_of(name)
        if row is None:
            return None
        if self._by_row is None:  # per row of the columns: the branch offset there, or -1
            self._by_row = np.full(len(self.netlist.columns), -1, dtype=np.intp)
            for kind, where in self.where.items():
                self._by_row[self.netlist[kind].rows[where]] = np.arange(
                    self.first[kind], self.first[kind] + where.size)
        found = int(self._by_row[row])
        return found if found >= 0 else None

    def plain(self, kind: str) -> np.ndarray | slice:
        """Selector of the parts of ``kind`` without a branch current."""
        where = self.where.get(kind)
        if where is None:
            return slice(None)
        keep = _filled(len(self.netlist[kind]), True, bool)
        keep[where] = False
        return keep

    @property
    def offset_of(self) -> dict[str, int]:
        if self._offsets is None:
            self._offsets = {}
            for kind, where in self.where.items():
                names = self.netlist[kind].names
                self._offsets.update((names[i], self.first[kind] + j)
                                     for j, i in enumerate(where.tolist()))
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
    """COO entries collected stamp by stamp, concatenated once; a scalar value is repeated."""

    def __init__(self) -> None:
        self.rows: list[np.ndarray] = []
        self.cols: list[np.ndarray] = []
        self.vals: list[np.ndarray] = []
        self.keys: list[np.ndarray] = []
        self.weights: list[np.ndarray] = []

    def add(self, rows: Sequence[np.ndarray], cols: Sequence[np.ndarray],
            vals: Sequence[np.ndarray | float]) -> None:
        for r, c, v in zip(rows, cols, vals, strict=True):
            self.rows.append(r)
            self.cols.append(c)
            self.vals.append(v if isinstance(v, np.ndarray) else _filled(r.size, v, float))

    def admittance(self, a: np.ndarray, b: np.ndarray, y: np.ndarray) -> None:
        """``y`` between a and b: its diagonal terms summed per unknown, the off-diagonal ones
        only where both ends are unknowns (not pinned)."""
        self.keys += [a, b]
        self.weights += [y, y]
        both = (a >= 0) & (b >= 0)
        a, b, y = (a, b, -y) if both.all() else (a[both], b[both], -y[both])
        self.add((a, b), (b, a), (y, y))

    def incidence(self, k: np.ndarray, a: np.ndarray, b: np.ndarray) -> None:
        """Branch current k leaves net a and enters net b."""
        self.add((a, b), (k, k), (1.0, -1.0))

    def voltage_row(self, k: np.ndarray, a: np.ndarray, b: np.ndarray,
                    scale: np.ndarray | float = 1.0) -> None:
        """``scale * (V(a) - V(b))`` in row k."""
        self.add((k, k), (a, b), (scale, -scale))

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
                 short: int | None, g: _Entries, m: _Entries, b: np.ndarray) -> None:
        self.netlist = netlist
        self.unknown_of_net = unknown_of_net
        self.n_nodes = n_nodes
        self.short = short
        self.size = b.shape[0]
        self.b = b
        self._g, self._m = g, m
        self._layouts: dict[tuple[bool, ...], tuple[np.ndarray, ...]] = {}
        self.symmetric = not netlist.has_dependent
        self._branch_of: dict[str, int] | None = None
        self._last: tuple[float, sp.csc_matrix] | None = None

    @property
    def branch_of(self) -> dict[str, int]:
        """Branch-current unknown of each group-2 part, by name."""
        if self._branch_of is None:
            offsets = self.netlist.branches().offset_of
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

    def _compressed(self, entries: Sequence[_Entries], scales: Sequence[complex | None],
                    form: type[sp.spmatrix]) -> sp.spmatrix:
        """The sum of ``entries``, each times its scale (None: 1), in ``form``."""
        keys, touched, rows, cols = self._layout(*entries)
        weights, vals = [], []
        with np.errstate(over="ignore", invalid="ignore"):  # inf at absurd frequencies
            for e, scale in zip(entries, scales, strict=True):
                weights.append(e.weights if scale is None else scale * e.weights)
                vals.append(e.vals if scale is None else scale * e.vals)
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
             short: tuple[int, int] | None = None) -> System:
    """Assemble the MNA system of ``netlist`` with the net ids in ``pinned`` as references.

    ``short``: net ids (plus, minus) joined by an ideal 0 V branch (the shorted port), whose
    current (from plus through the short into minus) is the unknown ``System.short``.
    Raises :class:`~engine.errors.SingularCircuitError` where a CCVS/CCCS names a controller
    that is not among the parts, or a coupling an inductor that is not.
    """
    n_nets = netlist.net_count
    u = _filled(n_nets, -1, np.int32)  # unknown of each net id; -1 where pinned
    is_node = _filled(n_nets, True, bool)
    is_node[np.asarray(pinned, dtype=np.intp)] = False
    n_nodes = int(is_node.sum())
    u[is_node] = np.arange(n_nodes, dtype=np.int32)

    branches = netlist.branches()
    size = n_nodes + branches.count
    short_index = size if short is not None else None
    size += short is not None

    g, m = _Triplets(), _Triplets()
    b = np.zeros(size, dtype=complex if _sources_complex(netlist) else float)
    controls = _control_indices(netlist, n_nodes) if netlist.controllers else {}

    def plain(kind: str) -> tuple[np.ndarray, np.ndarray]:
        """Nodes (as unknowns) and values of the parts of ``kind`` without a branch current."""
        group, keep = netlist[kind], branches.plain(kind)
        return u[group.nodes[keep]], group.values[keep]

    # Parts without a branch current: admittances, transconductances, source injections.
    for kind, target in (("resistor", g), ("impedance", g), ("capacitor", m)):
        if kind in netlist.groups:
            nodes, values = plain(kind)
            if len(values):
                target.admittance(nodes[:, 0], nodes[:, 1],
                                  values if kind == "capacitor" else 1 / values)
    if "current_source" in netlist.groups:
        nodes, values = plain("current_source")
        for col, sign in ((0, -1.0), (1, 1.0)):
            k = nodes[:, col]
            np.add.at(b, k[k >= 0], sign * values[k >= 0])
    if "vccs" in netlist.groups:
        nodes, gm = plain("vccs")
        f, t, cp, cn = nodes.T
        g.add((f, f, t, t), (cp, cn, cp, cn), (gm, -gm, -gm, gm))
    if "cccs" in netlist.groups:
        nodes, beta = plain("cccs")
        kc = controls["cccs"][branches.plain("cccs")]
        g.add((nodes[:, 0], nodes[:, 1]), (kc, kc), (beta, -beta))

    # Group-2 parts: the incidence of their currents, then their branch rows.
    rows = {}
    for kind, where in branches.where.items():
        group = netlist[kind]
        start = n_nodes + branches.first[kind]
        rows[kind] = (np.arange(start, start + where.size), u[group.nodes[where]],
                      group.values[where], where)
    two_terminal = [r for kind, r in rows.items() if kind != "opamp"]
    if two_terminal:
        k = np.concatenate([r[0] for r in two_terminal])
        nodes = np.concatenate([r[1][:, :2] for r in two_terminal])
        g.incidence(k, nodes[:, 0], nodes[:, 1])
    voltage_rows = [rows[kind] for kind in ("voltage_source", "vcvs", "ccvs", "inductor",
                                            "resistor", "impedance") if kind in rows]
    if voltage_rows:
        k = np.concatenate([r[0] for r in voltage_rows])
        nodes = np.concatenate([r[1][:, :2] for r in voltage_rows])
        g.voltage_row(k, nodes[:, 0], nodes[:, 1])
    for kind, (k, nodes, values, where) in rows.items():
        if kind == "opamp":  # the output current enters ``out``; row V(inp) - V(inn) = 0
            g.add((nodes[:, 2], nodes[:, 3]), (k, k), (-1.0, 1.0))
            g.voltage_row(k, nodes[:, 0], nodes[:, 1])
        elif kind == "voltage_source":
            b[k] = values
        elif kind == "vcvs":
            g.add((k, k), (nodes[:, 2], nodes[:, 3]), (-values, values))
        elif kind == "ccvs":
            g.add((k,), (controls["ccvs"][where],), (-values,))
        elif kind == "inductor":
            m.add((k,), (k,), (-values,))
        elif kind in ("resistor", "impedance"):   # V(a) - V(b) - R I = 0 (R = 0: a wire)
            g.add((k,), (k,), (-values,))
        elif kind == "capacitor":                 # s C (V(a) - V(b)) - I = 0
            m.voltage_row(k, nodes[:, 0], nodes[:, 1], values)
            g.add((k,), (k,), (-1.0,))
        else:                                     # current-defined: I - value (...) = 0
            g.add((k,), (k,), (1.0,))
            if kind == "current_source":
                b[k] = values
            elif kind == "vccs":
                g.add((k, k), (nodes[:, 2], nodes[:, 3]), (-values, values))
            else:
                g.add((k,), (controls["cccs"][where],), (-values,))

    if "coupling" in netlist.groups:
        _stamp_couplings(netlist, n_nodes, m)
    if short is not None:
        k = np.array([short_index])
        a, bb = u[np.array([short[0]])], u[np.array([short[1]])]
        g.incidence(k, a, bb)
        g.voltage_row(k, a, bb)
    return System(netlist, u, n_nodes, short_index, g.entries(), m.entries(), b)


def _control_indices(netlist: Netlist, n_nodes: int) -> dict[str, np.ndarray]:
    """For the CCVS and the CCCS, the branch unknown of each one's controlling part."""
    branches = netlist.branches()
    result = {}
    for kind in _CONTROLLED:
        group = netlist[kind]
        ids = []
        for name, (control,) in zip(group.names, group.refs, strict=True):
            offset = branches.offset(control)
            if offset is None:
                raise SingularCircuitError(
                    f"{name} is controlled by the current in {control}, which is not among the "
                    "parts analysed; add it or change the controlling part")
            ids.append(n_nodes + offset)
        result[kind] = np.array(ids, dtype=np.intp)
    return result


def _sources_complex(netlist: Netlist) -> bool:
    return any(np.iscomplexobj(netlist[kind].values)
               for kind in ("voltage_source", "current_source"))


def _stamp_couplings(netlist: Netlist, n_nodes: int, m: _Triplets) -> None:
    group, inductors = netlist["coupling"], netlist["inductor"]
    position = dict(zip(inductors.names, range(len(inductors)), strict=True))
    pairs = []
    for name, refs in zip(group.names, group.refs, strict=True):
        for ref in refs:
            if ref not in position:
                raise SingularCircuitError(f"{name} couples {ref}, which is not among the parts "
                                           "analysed")
        pairs.append([position[ref] for ref in refs])
    at = np.array(pairs, dtype=np.intp)
    henries = inductors.values[at]
    product = henries[:, 0] * henries[:, 1]
    if (product < 0).any():
        name = group.names[int(np.argmax(product < 0))]
        raise CircuitError(f"{name} couples inductors of opposite signs; M = k sqrt(L1 L2) needs "
                           "both inductances of one sign")
    mutual = -group.values * np.sqrt(product)
    # every inductor carries a branch current, in its group's order
    k1, k2 = (n_nodes + netlist.branches().first["inductor"] + at[:, i] for i in (0, 1))
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
        """``A^{-1} rhs`` (or ``A^{-T} rhs``); rhs of shape (n,) or (n, k)."""
        data = rhs.astype(self.matrix.dtype if not np.iscomplexobj(rhs) else complex)
        if np.iscomplexobj(data) and not np.iscomplexobj(self.matrix.data):
            # SuperLU solves in the factor's own dtype: real factor, complex rhs in two parts
            return self.solve(data.real, transposed) + 1j * self.solve(data.imag, transposed)
        try:
            with warnings.catch_warnings(), np.errstate(all="ignore"):
                warnings.simplefilter("error")
                x = self._lu.solve(data, trans="T" if transposed else "N")
        except (RuntimeError, ValueError, ArithmeticError, Warning):
            raise Singular(self.system, self.freq, self.matrix) from None
        if not np.all(np.isfinite(x)):
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
