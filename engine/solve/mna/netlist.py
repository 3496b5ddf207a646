"""The parts of a circuit as index arrays, kind by kind (:class:`Netlist`), and which of them
carry a branch-current unknown (:class:`Branches`)."""

from __future__ import annotations

import math
from collections.abc import Iterator, Mapping, Sequence

import numpy as np

from .. import memo_keys
from ..circuit import KINDS, NET_COLUMNS, REFERRING, Columns, Part, kind_mask
from ..kinds import CONTROLLED_BY_CURRENT as _CONTROLLED

__all__ = ["WIDE_SPAN", "Branches", "Group", "Netlist"]

#: Group-2 parts (a branch-current unknown) always; any other part whose current controls a
#: CCVS or CCCS, and a 0 Ω resistor, is one too.
_ALWAYS_BRANCH = ("voltage_source", "vcvs", "ccvs", "inductor", "opamp")
#: ... and in a system assembled for wide impedance spans (:class:`Branches`).
_WIDE_BRANCH = (*_ALWAYS_BRANCH, "resistor", "impedance", "capacitor")
#: Impedance spans (largest / smallest part impedance at one frequency) beyond this are solved
#: with the wide branches: past it, a node sum of admittances keeps fewer than 11 of its 16
#: digits, and the error bound of a nodal solve can no longer be held below 1e-9
#: (docs/method.md).
WIDE_SPAN = 1e5


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
