"""A circuit's parts as arrays (net ids, kind codes, values), the form the solver reads, and
the growing store behind a Circuit that makes them."""

from __future__ import annotations

import functools
from array import array
from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np

from .kinds import KIND_CODE, KINDS, REFERRING
from .part import Part

__all__ = ["KIND_CODE", "NET_COLUMNS", "Columns", "References", "kind_mask"]

#: Columns of net ids per part: enough for the widest kind (an op-amp with its ground return).
NET_COLUMNS = 4
_PAD = [[-1] * (NET_COLUMNS - used) for used in range(NET_COLUMNS + 1)]


@dataclass(frozen=True, slots=True, eq=False, repr=False)
class Columns:
    """A circuit's parts as arrays, one row per part in circuit order (read-only).

    ``kinds[i]`` is the code of part i's kind (:data:`KIND_CODE`); ``nodes[i]`` the ids of the
    nets it touches (``Part.nets`` order, so an op-amp's ground return is its fourth), padded
    with -1; ``values[i]`` its value as a complex number and ``complex_valued[i]`` whether the
    value was given as one. A net id indexes ``nets`` (``net_id`` maps a name back), a register
    that circuits derived from one another share and only ever extend, so it may name nets no
    part of this circuit touches. ``row`` maps a part name to its row; it is the circuit's own
    and grows as parts are added, so :meth:`row_of` ignores rows added after these columns.
    """

    kinds: np.ndarray
    nodes: np.ndarray
    values: np.ndarray
    complex_valued: np.ndarray
    names: list[str]
    parts: list[Part]
    nets: list[str]
    net_id: dict[str, int]
    row: dict[str, int]
    _references: list[References] = field(default_factory=list)

    def __len__(self) -> int:
        return len(self.parts)

    def row_of(self, name: str) -> int | None:
        """The row of part ``name``, None where there is no such part."""
        row = self.row.get(name)
        return row if row is not None and row < len(self.parts) else None

    @classmethod
    def of(cls, parts: Iterable[Part]) -> Columns:
        """The columns of parts already checked (those of a Circuit, or made from them)."""
        listed = list(parts)
        store = _Store()
        for part in listed:
            store.append(part)
        return store.columns(listed)

    def rows_of(self, kinds: tuple[str, ...]) -> np.ndarray:
        """Rows of the parts of the given kinds, in circuit order."""
        return kind_mask(kinds)[self.kinds].nonzero()[0]

    def shares_references(self, other: Columns) -> bool:
        """True when ``other`` shares these columns' references: made by replacing parts
        that name none, its referring parts are the very same."""
        return other._references is self._references

    def references(self) -> References:
        """The rows of the parts that other parts name (made when first asked, then kept:
        the columns never change; columns made by replacing parts that name none share
        them)."""
        if not self._references:
            self._references.append(References(self))
        return self._references[0]


class References:
    """Which part each referring part (CCVS, CCCS, coupling) names, as rows of ``columns``.

    ``rows`` are the referring parts' rows (ascending), ``named[i]`` the rows of the parts the
    i-th names (its controlling part; a coupling's two inductors), -1 where the circuit has no
    part of that name (a controlling part not added yet) and, for a controlled source, in the
    unused second column.
    """

    __slots__ = ("columns", "named", "rows")

    def __init__(self, columns: Columns) -> None:
        self.columns = columns
        self.rows = columns.rows_of(REFERRING)
        parts, row_of = columns.parts, columns.row_of
        found = [[row_of(ref) for ref in parts[i].refs] for i in self.rows.tolist()]
        self.named = np.array([[-1 if r is None else r for r in refs] + [-1] * (2 - len(refs))
                               for refs in found], dtype=np.intp).reshape(-1, 2)

    def of(self, rows: np.ndarray) -> np.ndarray:
        """``named`` for the referring parts at ``rows`` (rows of the columns, ascending)."""
        return self.named[np.searchsorted(self.rows, rows)]

    def name(self, row: int, which: int) -> str:
        """The name the part at ``row`` gives as its ``which``-th reference (for messages)."""
        return self.columns.parts[row].refs[which]


@functools.cache
def kind_mask(kinds: tuple[str, ...]) -> np.ndarray:
    """A boolean per kind code, True for the given kinds (index it with an array of codes);
    made once per tuple of kinds, read-only."""
    mask = np.zeros(len(KINDS), dtype=bool)
    mask[[KIND_CODE[k] for k in kinds]] = True
    mask.flags.writeable = False
    return mask


class _Store:
    """The columns behind a Circuit: growing arrays appended to as parts are added, and the
    read-only :class:`Columns` made from them when first asked (kept until the next append).

    A store made by :meth:`replaced` starts from columns alone, sharing the unchanged arrays
    with the store it came from; it makes growing arrays only if parts are added to it. The net
    register (``net_id``, ``nets``) is shared with the stores made from this one: it only grows
    and a name keeps its id, so sharing cannot make an id wrong. ``row`` (part name to row) and
    ``named`` (the part names, as a set) are shared too, and copied by whichever store appends
    first.
    """

    __slots__ = ("_columns", "_growing", "_owns", "named", "net_id", "nets", "row")

    def __init__(self) -> None:
        self._growing: _Growing | None = _Growing()
        self._columns: Columns | None = None
        self.net_id: dict[str, int] = {}
        self.nets: list[str] = []
        self.row: dict[str, int] = {}
        self.named: set[str] = set()
        self._owns = True  # row and named are this store's alone

    def _derived(self, columns: Columns) -> _Store:
        new = _Store.__new__(_Store)
        new._growing, new._columns = None, columns
        new.net_id, new.nets, new.row, new.named = self.net_id, self.nets, self.row, self.named
        new._owns = self._owns = False
        return new

    def copy(self, parts: dict[str, Part]) -> _Store:
        return self._derived(self.columns(parts))

    def replaced(self, parts: dict[str, Part], new: list[Part]) -> _Store:
        """A store for ``parts`` with each of ``new`` in place of its same-named, same-kind
        part: the arrays that change are copied, the others shared."""
        base = self.columns(parts)
        rows = [self.row[part.name] for part in new]
        nodes = base.nodes
        ids = [[*self._ids(part.nets), *_PAD[len(part.nets)]] for part in new]
        if any(nodes[i].tolist() != row for i, row in zip(rows, ids, strict=True)):
            nodes = nodes.copy()
            nodes[rows] = ids
        values, flags = base.values.copy(), base.complex_valued.copy()
        values[rows] = [part.value for part in new]
        flags[rows] = [isinstance(part.value, complex) for part in new]
        listed = base.parts.copy()
        for i, part in zip(rows, new, strict=True):
            listed[i] = part
        for a in (nodes, values, flags):
            a.flags.writeable = False
        # what the referring parts name is unchanged unless one of them is replaced
        references = [] if any(part.kind in REFERRING for part in new) else base._references
        return self._derived(Columns(base.kinds, nodes, values, flags, base.names, listed,
                                     self.nets, self.net_id, self.row, references))

    def _ids(self, nets: tuple[str, ...]) -> list[int]:
        """Register ids of ``nets``; a new name takes the next."""
        ids = []
        for net in nets:
            found = self.net_id.get(net)
            if found is None:
                found = self.net_id[net] = len(self.nets)
                self.nets.append(net)
            ids.append(found)
        return ids

    def append(self, part: Part) -> None:
        # one call per added part, kept lean: it is most of what add() spends here
        if not self._owns:
            self.row, self.named, self._owns = dict(self.row), set(self.named), True
        growing = self._growing
        if growing is None:
            assert self._columns is not None
            growing = self._growing = _Growing.of(self._columns)
        self.row[part.name] = len(growing.kinds)
        self.named.add(part.name)
        growing.kinds.append(KIND_CODE[part.kind])
        ids = self._ids(part.nets)
        growing.nodes.fromlist(ids + _PAD[len(ids)])  # fromlist: the fastest way in
        value = part.value
        growing.values.fromlist([value.real, value.imag])
        growing.flags.append(isinstance(value, complex))
        self._columns = None

    def columns(self, parts: dict[str, Part] | list[Part]) -> Columns:
        """The columns, with ``parts`` (by name, or listed) in row order."""
        if self._columns is None:
            assert self._growing is not None
            listed = list(parts.values()) if isinstance(parts, dict) else parts
            names = list(parts) if isinstance(parts, dict) else [p.name for p in listed]
            self._columns = self._growing.columns(names, listed, self.nets, self.net_id, self.row)
        return self._columns


class _Growing:
    """Columns being appended to: compact arrays (amortised growth); the columns handed out
    are read-only copies."""

    __slots__ = ("flags", "kinds", "nodes", "values")

    def __init__(self) -> None:
        self.kinds = array("b")
        self.nodes = array("i")  # NET_COLUMNS per part (32-bit: SciPy's index type)
        self.values = array("d")  # real and imaginary parts, interleaved
        self.flags = array("b")  # 1 where the value was given as a complex number

    @classmethod
    def of(cls, columns: Columns) -> _Growing:
        new = cls()
        new.kinds.frombytes(columns.kinds.tobytes())
        new.nodes.frombytes(columns.nodes.astype(np.int32).tobytes())
        new.values.frombytes(columns.values.tobytes())
        new.flags.frombytes(columns.complex_valued.astype(np.int8).tobytes())
        return new

    def columns(self, names: list[str], parts: list[Part], nets: list[str],
                net_id: dict[str, int], row: dict[str, int]) -> Columns:
        """Read-only copies of the arrays, as a :class:`Columns`."""
        kinds = np.frombuffer(self.kinds, dtype=np.int8).copy()
        nodes = np.frombuffer(self.nodes, dtype=np.int32).copy()
        values = np.frombuffer(self.values, dtype=np.complex128).copy()
        flags = np.frombuffer(self.flags, dtype=np.int8).astype(bool)
        for a in (kinds, nodes, values, flags):
            a.flags.writeable = False
        return Columns(kinds, nodes.reshape(-1, NET_COLUMNS), values, flags, names, parts,
                       nets, net_id, row)

