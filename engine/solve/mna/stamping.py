"""The stamps: each part's entries in G, M and the right-hand side, collected as COO triplets.

A stamp entry reads its row and column from the part's operands: the unknowns of its nets (node
columns 0 to 3), its own branch current, its controlling part's branch current, or none (-1: the
entry drops out); its coefficient is 1, -1, the value or minus the value.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from ...errors import CircuitError, SingularCircuitError
from ..circuit import KIND_CODE, KINDS, kind_mask
from ..kinds import SOURCES as _SOURCES
from .netlist import _CONTROLLED, Branches, Netlist, _filled

__all__: list[str] = []


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
