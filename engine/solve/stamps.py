"""Where each part value enters a region's assembled equations ``A x = b``, as functions of the
value: the base of the sensitivities (their derivatives) and of tolerance analysis (the same
equations re-evaluated at other values).

The entries follow the conventions of mna.py: a branch row reads V(first) - V(second) - ...;
a resistor, impedance or capacitor without a branch current is an admittance between its nets;
M is scaled by s = j 2 pi f. Each A entry is ``coef * v`` (LINEAR) or ``coef / v`` (INVERSE) in
its part's value v, or ``coef * k sqrt(L1 L2)`` for a coupling's mutual terms; b entries are
``coef * v``. An index of -1 (a pinned net, or no branch) reads 0 and writes nowhere.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from . import mna
from .circuit import Part, kind_mask
from .kinds import VALUED as PARAMETER_KINDS  # kinds with a value the port depends on

__all__ = ["PARAMETER_KINDS", "ValueStamps", "value_stamps"]

_LINEAR, _INVERSE = 0, 1


@dataclass(frozen=True, slots=True, eq=False)
class ValueStamps:
    """The value-dependent entries of A and b for ``parts`` (index i: ``parts[i]``) at
    ``values`` (complex, one per part): A entries ``part, row, col, coef, form, power`` (the
    entry is ``coef s^power v`` or ``coef s^power / v``); mutual entries ``k, l1, l2, row, col``
    (part indices of the coupling and its inductors; the entry is ``-s k sqrt(L1 L2)``); b
    entries ``rhs_part, rhs_row, rhs_coef``. The entries hold for every s; the methods take
    the s = j 2 pi f they are evaluated at."""

    parts: tuple[Part, ...]
    values: np.ndarray
    part: np.ndarray
    row: np.ndarray
    col: np.ndarray
    coef: np.ndarray
    form: np.ndarray
    power: np.ndarray
    mutual: np.ndarray  # (E, 5) int: k, l1, l2, row, col
    rhs_part: np.ndarray
    rhs_row: np.ndarray
    rhs_coef: np.ndarray

    def _coef(self, s: complex) -> np.ndarray:
        return np.where(self.power == 1, self.coef * s, self.coef)

    def derivative_terms(self, lam: np.ndarray, x: np.ndarray, s: np.ndarray
                         ) -> tuple[np.ndarray, np.ndarray]:
        """At F values of s (``s`` (F,)), with adjoints ``lam`` (F, n) and solutions ``x``
        (F, n, m): per s and part, ``lam . (dA/dp x[..., j])`` (F, parts, m) and
        ``lam . db/dp`` (F, parts). All parts and all s at once: the entries' slopes times
        the gathered ``lam[row] x[col]``, summed per part."""
        count, lp, xp = len(self.parts), _padded(lam, 1), _padded(x, 1)
        v = self.values
        slope = np.where(self.power == 1, self.coef * s[:, None], self.coef)  # (F, E)
        inverse = self.form == _INVERSE
        slope[:, inverse] *= -1 / v[self.part[inverse]] ** 2
        a_term = _per_part(self.part, (slope * lp[:, self.row])[:, :, None] * xp[:, self.col],
                           count)
        if self.mutual.size:
            k, l1, l2, row, col = self.mutual.T
            root = np.sqrt(v[l1] * v[l2])
            weight = (-s[:, None] * lp[:, row])[:, :, None] * xp[:, col]  # (F, E, m)
            for at, factor in ((k, root), (l1, v[k] * v[l2] / (2 * root)),
                               (l2, v[k] * v[l1] / (2 * root))):
                a_term += _per_part(at, weight * factor[None, :, None], count)
        b_term = _per_part(self.rhs_part, self.rhs_coef * lp[:, self.rhs_row], count)
        return a_term, b_term

    def changes(self, values: np.ndarray, size: int, s: complex
                ) -> tuple[np.ndarray, np.ndarray]:
        """For samples ``values`` (S, parts): the dense changes of A (S, n, n) and b (S, n)
        from the stamps' own values at ``s``, n = ``size``."""
        count = values.shape[0]
        da = np.zeros((count, size + 1, size + 1), dtype=complex)  # the spare row/column: -1
        db = np.zeros((count, size + 1), dtype=complex)
        v0 = self.values

        now, then = values[:, self.part], v0[self.part]
        inverse = self.form == _INVERSE
        now[:, inverse], then[inverse] = 1 / now[:, inverse], 1 / then[inverse]
        delta = self._coef(s) * (now - then)
        np.add.at(da, (slice(None), self.row, self.col), delta)
        if self.mutual.size:
            k, l1, l2, row, col = self.mutual.T
            now = values[:, k] * np.sqrt(values[:, l1] * values[:, l2])
            np.add.at(da, (slice(None), row, col), -s * (now - v0[k] * np.sqrt(v0[l1] * v0[l2])))
        np.add.at(db, (slice(None), self.rhs_row),
                  self.rhs_coef * (values[:, self.rhs_part] - v0[self.rhs_part]))
        return da[:, :size, :size], db[:, :size]


def value_stamps(system: mna.System) -> ValueStamps:
    """The value stamps of every valued part (kinds in PARAMETER_KINDS) of ``system``'s
    netlist, in circuit order. Built from the netlist's index arrays, kind by kind as array
    operations over all parts at once; the result holds for every s (see ValueStamps)."""
    net = system.netlist
    at_valued = kind_mask(PARAMETER_KINDS).take(net.codes).nonzero()[0]
    at_valued = at_valued.take(net.part_rows.take(at_valued).argsort(kind="stable"))
    rows = net.part_rows.take(at_valued)
    parts = tuple(map(net.columns.parts.__getitem__, rows.tolist()))
    codes = net.codes.take(at_valued)
    unknown = np.append(system.unknown_of_net, -1)  # the table pads with -1: reads -1
    n0, n1, n2, n3 = unknown.take(net.table.take(at_valued, axis=0)).T
    offset = system.branches.offset.take(at_valued)
    own = np.where(offset >= 0, offset + system.n_nodes, -1)
    control = _controls(system).take(at_valued)
    a = _Entries()

    def of(*kinds: str, branch_current: bool | None = None) -> np.ndarray:
        mask = kind_mask(kinds).take(codes)
        if branch_current is not None:
            mask &= (own >= 0) == branch_current
        return mask.nonzero()[0]

    def across(at: np.ndarray, rows: tuple, cols: tuple, coef: int, form: int,
               power: int) -> None:
        (ra, rb), (ca, cb) = rows, cols
        for r, c, sign in ((ra, ca, 1), (ra, cb, -1), (rb, ca, -1), (rb, cb, 1)):
            a.add(at, r[at], c[at], sign * coef, form, power)

    # resistors, impedances and capacitors without a branch current: admittances between nets
    at = of("resistor", "impedance", branch_current=False)
    across(at, (n0, n1), (n0, n1), 1, _INVERSE, 0)
    at = of("capacitor", branch_current=False)
    across(at, (n0, n1), (n0, n1), 1, _LINEAR, 1)
    at = of("resistor", "impedance", branch_current=True)
    a.add(at, own[at], own[at], -1, _LINEAR, 0)
    at = of("capacitor", branch_current=True)  # row: s C (V(a) - V(b)) - I = 0
    a.add(at, own[at], n0[at], 1, _LINEAR, 1)
    a.add(at, own[at], n1[at], -1, _LINEAR, 1)
    at = of("inductor")
    a.add(at, own[at], own[at], -1, _LINEAR, 1)
    at = of("vcvs", "vccs", branch_current=True)
    a.add(at, own[at], n2[at], -1, _LINEAR, 0)
    a.add(at, own[at], n3[at], 1, _LINEAR, 0)
    at = of("vccs", branch_current=False)
    across(at, (n0, n1), (n2, n3), 1, _LINEAR, 0)
    at = of("ccvs", "cccs", branch_current=True)
    a.add(at, own[at], control[at], -1, _LINEAR, 0)
    at = of("cccs", branch_current=False)
    a.add(at, n0[at], control[at], 1, _LINEAR, 0)
    a.add(at, n1[at], control[at], -1, _LINEAR, 0)
    b = _Entries()
    at = np.union1d(of("voltage_source"), of("current_source", branch_current=True))
    b.add(at, own[at], None, 1, _LINEAR, 0)
    at = of("current_source", branch_current=False)  # drives its current out of n0 into n1
    b.add(at, n0[at], None, -1, _LINEAR, 0)
    b.add(at, n1[at], None, 1, _LINEAR, 0)
    values = net.columns.values.take(rows).astype(complex)
    (part, row, col, coef, form, power) = a.arrays()
    rhs_part, rhs_row, _, rhs_coef, _, _ = b.arrays()
    return ValueStamps(parts, values, part, row, col, coef, form, power, _mutual(system, rows),
                       rhs_part, rhs_row, rhs_coef)


def _controls(system: mna.System) -> np.ndarray:
    """Per netlist part: the branch unknown of the part whose current controls it (a CCVS or
    CCCS), -1 for every other part."""
    net = system.netlist
    control = np.full(net.codes.size, -1, dtype=np.intp)
    if net.has_controlled:
        by_row = system.branches.by_row()
        for kind in ("ccvs", "cccs"):
            control[net[kind].span] = by_row.take(net.referred(kind)[:, 0]) + system.n_nodes
    return control


def _mutual(system: mna.System, rows: np.ndarray) -> np.ndarray:
    """Each coupling's two mutual entries (k, l1, l2, row, col): the coupling's and its
    inductors' positions among the valued parts (circuit order: ``rows``), and the inductors'
    branch unknowns."""
    net = system.netlist
    couplings = net["coupling"]
    if not len(couplings):
        return np.zeros((0, 5), dtype=np.intp)
    position = np.full(len(net.columns), -1, dtype=np.intp)
    position[rows] = np.arange(rows.size)
    named = net.referred("coupling")
    k = position.take(couplings.rows)
    l1, l2 = position.take(named).T
    b1, b2 = (system.branches.by_row().take(named) + system.n_nodes).T
    return np.concatenate([np.column_stack((k, l1, l2, b1, b2)),
                           np.column_stack((k, l1, l2, b2, b1))])


class _Entries:
    """Stamp entries collected as arrays, kind by kind; each batch shares one coefficient,
    form and power."""

    def __init__(self) -> None:
        self.indices: list[list[np.ndarray]] = [[], [], []]
        self.shared: list[tuple[complex, int, int]] = []
        self.sizes: list[int] = []

    def add(self, part: np.ndarray, row: np.ndarray, col: np.ndarray | None, coef: complex,
            form: int, power: int) -> None:
        for column, values in zip(self.indices, (part, row, row if col is None else col),
                                  strict=True):
            column.append(values)
        self.shared.append((coef, form, power))
        self.sizes.append(part.size)

    def arrays(self) -> list[np.ndarray]:
        """part, row, col, coef, form and power of every entry."""
        if not self.sizes:
            return [np.zeros(0, dtype=np.intp)] * 3 + [np.zeros(0, dtype=complex)] + \
                [np.zeros(0, dtype=np.intp)] * 2
        coef, form, power = zip(*self.shared, strict=True)
        return [*(np.concatenate(c) for c in self.indices),
                np.repeat(np.array(coef, dtype=complex), self.sizes),
                *(np.repeat(np.array(c, dtype=np.intp), self.sizes) for c in (form, power))]


def _padded(v: np.ndarray, axis: int) -> np.ndarray:
    """v (complex) with a trailing 0 along ``axis``, so index -1 there reads 0."""
    shape = list(v.shape)
    shape[axis] = 1
    return np.concatenate((v.astype(complex), np.zeros(shape, dtype=complex)), axis=axis)


def _per_part(part: np.ndarray, terms: np.ndarray, count: int) -> np.ndarray:
    """Sums of ``terms`` (F, E, ...) over the entries of each part (``part`` (E,): the part
    index of each entry): (F, count, ...)."""
    f, e, rest = terms.shape[0], terms.shape[1], terms.shape[2:]
    width = f * math.prod(rest)
    flat = np.moveaxis(terms, 1, 0).reshape(e, width)
    # one bincount over (part, column) keys sums every column at once
    keys = (part[:, None] * width + np.arange(width)).ravel()
    size = count * width
    summed = (np.bincount(keys, flat.real.ravel(), size)
              + 1j * np.bincount(keys, flat.imag.ravel(), size)).reshape(count, f, *rest)
    return np.moveaxis(summed, 0, 1)
