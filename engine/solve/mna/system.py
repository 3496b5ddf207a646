"""The assembled equations ``A(s) = G + s M`` and ``b`` of a netlist (:func:`assemble`)."""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
import scipy.sparse as sp

from ..circuit import kind_mask
from .netlist import Branches, Netlist, _filled, _group_values
from .stamping import (
    _SERIES,
    _Entries,
    _stamp_by_table,
    _stamp_couplings,
    _Triplets,
)

__all__ = ["System", "assemble"]

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


def _sources_complex(netlist: Netlist) -> bool:
    return any(np.iscomplexobj(netlist[kind].values)
               for kind in ("voltage_source", "current_source"))
