"""Where each part value enters a region's assembled equations ``A x = b``, as functions of the
value: the base of the sensitivities (their derivatives) and of tolerance analysis (the same
equations re-evaluated at other values).

The entries follow engine/solve/mna.py's conventions: a branch row reads V(first) - V(second) - ...;
a resistor, impedance or capacitor without a branch current is an admittance between its nets;
M is scaled by s = j 2 pi f. Each A entry is ``coef * v`` (LINEAR) or ``coef / v`` (INVERSE) in
its part's value v, or ``coef * k sqrt(L1 L2)`` for a coupling's mutual terms; b entries are
``coef * v``. An index of -1 (a pinned net, or no branch) reads 0 and writes nowhere.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from . import mna
from .circuit import Part
from .kinds import VALUED as PARAMETER_KINDS  # kinds with a value the port depends on

__all__ = ["PARAMETER_KINDS", "ValueStamps", "value_stamps"]

_LINEAR, _INVERSE = 0, 1


@dataclass(frozen=True, slots=True, eq=False)
class ValueStamps:
    """The value-dependent entries of A and b for ``parts`` (index i: ``parts[i]``) at
    ``values`` (complex, one per part): A entries ``part, row, col, coef, form``; mutual
    entries ``k, l1, l2, row, col, coef`` (part indices of the coupling and its inductors);
    b entries ``rhs_part, rhs_row, rhs_coef``."""

    parts: tuple[Part, ...]
    values: np.ndarray
    part: np.ndarray
    row: np.ndarray
    col: np.ndarray
    coef: np.ndarray
    form: np.ndarray
    mutual: np.ndarray  # (E, 5) int: k, l1, l2, row, col
    mutual_coef: np.ndarray
    rhs_part: np.ndarray
    rhs_row: np.ndarray
    rhs_coef: np.ndarray

    def derivative_terms(self, lam: np.ndarray, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Per part: ``lam . (dA/dp x)`` and ``lam . db/dp``."""
        count, lp, xp = len(self.parts), _padded(lam), _padded(x)
        v = self.values
        slope = self.coef.copy()
        inverse = self.form == _INVERSE
        slope[inverse] = -self.coef[inverse] / v[self.part[inverse]] ** 2
        a_term = _per_part(self.part, slope * lp[self.row] * xp[self.col], count)
        if self.mutual.size:
            k, l1, l2, row, col = self.mutual.T
            root = np.sqrt(v[l1] * v[l2])
            weight = self.mutual_coef * lp[row] * xp[col]
            a_term += _per_part(k, weight * root, count)
            a_term += _per_part(l1, weight * v[k] * v[l2] / (2 * root), count)
            a_term += _per_part(l2, weight * v[k] * v[l1] / (2 * root), count)
        b_term = _per_part(self.rhs_part, self.rhs_coef * lp[self.rhs_row], count)
        return a_term, b_term

    def changes(self, values: np.ndarray, size: int) -> tuple[np.ndarray, np.ndarray]:
        """For samples ``values`` (S, parts): the dense changes of A (S, n, n) and b (S, n)
        from the stamps' own values, n = ``size``."""
        s = values.shape[0]
        da = np.zeros((s, size + 1, size + 1), dtype=complex)  # the spare row/column: -1
        db = np.zeros((s, size + 1), dtype=complex)
        v0 = self.values

        now, then = values[:, self.part], v0[self.part]
        inverse = self.form == _INVERSE
        now[:, inverse], then[inverse] = 1 / now[:, inverse], 1 / then[inverse]
        delta = self.coef * (now - then)
        np.add.at(da, (slice(None), self.row, self.col), delta)
        if self.mutual.size:
            k, l1, l2, row, col = self.mutual.T
            now = values[:, k] * np.sqrt(values[:, l1] * values[:, l2])
            np.add.at(da, (slice(None), row, col),
                      self.mutual_coef * (now - v0[k] * np.sqrt(v0[l1] * v0[l2])))
        np.add.at(db, (slice(None), self.rhs_row),
                  self.rhs_coef * (values[:, self.rhs_part] - v0[self.rhs_part]))
        return da[:, :size, :size], db[:, :size]


def value_stamps(system: mna.System, parts: Sequence[Part], s: complex) -> ValueStamps:
    """The value stamps of the valued ``parts`` (kinds in PARAMETER_KINDS) of ``system``'s
    netlist at s = j 2 pi f; ``parts`` must hold every inductor a coupling names. Built kind by
    kind as array operations over the parts."""
    parts = tuple(parts)
    unknown = dict(zip(system.netlist.nets, system.unknown_of_net.tolist(), strict=True))
    branch = system.branch_of
    kind = np.array([p.kind for p in parts], dtype=object)
    nodes = np.array([[unknown[n] for n in p.nodes] + [-1] * (4 - len(p.nodes)) for p in parts],
                     dtype=np.intp).reshape(-1, 4)
    own = np.array([branch.get(p.name, -1) for p in parts], dtype=np.intp)
    control = np.array([branch[p.refs[0]] if p.kind in ("ccvs", "cccs") else -1
                        for p in parts], dtype=np.intp)
    n0, n1, n2, n3 = nodes.T
    a = _Entries()

    def of(*kinds: str, branch_current: bool | None = None) -> np.ndarray:
        mask = np.isin(kind, kinds)
        if branch_current is not None:
            mask &= (own >= 0) == branch_current
        return np.flatnonzero(mask)

    def across(at: np.ndarray, rows: tuple, cols: tuple, coef: complex, form: int) -> None:
        (ra, rb), (ca, cb) = rows, cols
        for r, c, sign in ((ra, ca, 1), (ra, cb, -1), (rb, ca, -1), (rb, cb, 1)):
            a.add(at, r[at], c[at], sign * coef, form)

    # resistors, impedances and capacitors without a branch current: admittances between nets
    at = of("resistor", "impedance", branch_current=False)
    across(at, (n0, n1), (n0, n1), 1, _INVERSE)
    at = of("capacitor", branch_current=False)
    across(at, (n0, n1), (n0, n1), s, _LINEAR)
    at = of("resistor", "impedance", branch_current=True)
    a.add(at, own[at], own[at], -1, _LINEAR)
    at = of("capacitor", branch_current=True)  # row: s C (V(a) - V(b)) - I = 0
    a.add(at, own[at], n0[at], s, _LINEAR)
    a.add(at, own[at], n1[at], -s, _LINEAR)
    at = of("inductor")
    a.add(at, own[at], own[at], -s, _LINEAR)
    at = of("vcvs", "vccs", branch_current=True)
    a.add(at, own[at], n2[at], -1, _LINEAR)
    a.add(at, own[at], n3[at], 1, _LINEAR)
    at = of("vccs", branch_current=False)
    across(at, (n0, n1), (n2, n3), 1, _LINEAR)
    at = of("ccvs", "cccs", branch_current=True)
    a.add(at, own[at], control[at], -1, _LINEAR)
    at = of("cccs", branch_current=False)
    a.add(at, n0[at], control[at], 1, _LINEAR)
    a.add(at, n1[at], control[at], -1, _LINEAR)
    b = _Entries()
    at = np.union1d(of("voltage_source"), of("current_source", branch_current=True))
    b.add(at, own[at], None, 1, _LINEAR)
    at = of("current_source", branch_current=False)  # drives its current out of n0 into n1
    b.add(at, n0[at], None, -1, _LINEAR)
    b.add(at, n1[at], None, 1, _LINEAR)
    mutual, mutual_coef = _mutual(parts, branch, s)
    values = np.array([complex(p.value) for p in parts], dtype=complex)
    (part, row, col, coef, form), (rhs_part, rhs_row, _, rhs_coef, _) = a.arrays(), b.arrays()
    return ValueStamps(parts, values, part, row, col, coef, form, mutual, mutual_coef,
                       rhs_part, rhs_row, rhs_coef)


class _Entries:
    """Stamp entries collected as arrays, kind by kind."""

    def __init__(self) -> None:
        self.columns: list[list[np.ndarray]] = [[], [], [], [], []]

    def add(self, part: np.ndarray, row: np.ndarray, col: np.ndarray | None, coef: complex,
            form: int) -> None:
        for column, values in zip(self.columns, (part, row, row if col is None else col,
                                                 np.full(part.size, coef, dtype=complex),
                                                 np.full(part.size, form, dtype=np.intp)),
                                  strict=True):
            column.append(values)

    def arrays(self) -> list[np.ndarray]:
        return [np.concatenate(c) if c else np.zeros(0, dtype=np.intp) for c in self.columns]


def _mutual(parts: Sequence[Part], branch: dict[str, int], s: complex
            ) -> tuple[np.ndarray, np.ndarray]:
    """Each coupling's two mutual entries: (k, l1, l2, row, col) part indices and unknowns."""
    couplings = [i for i, p in enumerate(parts) if p.kind == "coupling"]
    position = {p.name: i for i, p in enumerate(parts)} if couplings else {}
    rows = []
    for i in couplings:
        refs = parts[i].refs
        l1, l2 = (position[r] for r in refs)
        k1, k2 = (branch[r] for r in refs)
        rows += [(i, l1, l2, k1, k2), (i, l1, l2, k2, k1)]
    mutual = np.array(rows, dtype=np.intp).reshape(-1, 5)
    return mutual, np.full(len(rows), -s, dtype=complex)


def _padded(v: np.ndarray) -> np.ndarray:
    """v with a trailing 0, so index -1 reads 0."""
    return np.append(v.astype(complex), 0j)


def _per_part(part: np.ndarray, terms: np.ndarray, count: int) -> np.ndarray:
    return np.bincount(part, terms.real, count) + 1j * np.bincount(part, terms.imag, count)
