"""Where each part value enters a region's assembled equations ``A x = b``, as functions of the
value: the base of the sensitivities (their derivatives) and of tolerance analysis (the same
equations re-evaluated at other values).

The entries follow engine/mna.py's conventions: a branch row reads V(first) - V(second) - ...;
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

__all__ = ["PARAMETER_KINDS", "ValueStamps", "value_stamps"]

#: Kinds with a value the port quantities depend on (an ideal op-amp has none).
PARAMETER_KINDS = ("resistor", "capacitor", "inductor", "impedance", "voltage_source",
                   "current_source", "vcvs", "vccs", "ccvs", "cccs", "coupling")
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
    netlist at s = j 2 pi f; ``parts`` must hold every inductor a coupling names."""
    return _Builder(system, parts, s).build()


class _Builder:
    def __init__(self, system: mna.System, parts: Sequence[Part], s: complex) -> None:
        self.system, self.s, self.parts = system, s, tuple(parts)
        self.position = {p.name: i for i, p in enumerate(self.parts)}
        self.a: list[tuple[int, int, int, complex, int]] = []
        self.m: list[tuple[int, int, int, int, int, complex]] = []
        self.b: list[tuple[int, int, complex]] = []
        netlist = system.netlist
        self.node = dict(zip(netlist.nets, system.unknown_of_net.tolist(), strict=True)).__getitem__

    def own(self, name: str) -> int:
        return self.system.branch_of.get(name, -1)

    def across(self, i: int, rows: tuple[int, int], cols: tuple[int, int], c: complex,
               form: int) -> None:
        """c (e_rows[0] - e_rows[1]) (e_cols[0] - e_cols[1])^T."""
        (ra, rb), (ca, cb) = rows, cols
        self.a += [(i, ra, ca, c, form), (i, ra, cb, -c, form), (i, rb, ca, -c, form),
                   (i, rb, cb, c, form)]

    def part(self, i: int, part: Part) -> None:
        kind, own, s = part.kind, self.own(part.name), self.s
        n = [self.node(net) for net in part.nodes]
        if kind in ("resistor", "impedance", "capacitor") and own < 0:
            if kind == "capacitor":
                self.across(i, (n[0], n[1]), (n[0], n[1]), s, _LINEAR)
            else:
                self.across(i, (n[0], n[1]), (n[0], n[1]), 1, _INVERSE)
        elif kind in ("resistor", "impedance"):
            self.a.append((i, own, own, -1, _LINEAR))
        elif kind == "capacitor":  # row: s C (V(a) - V(b)) - I = 0
            self.a += [(i, own, n[0], s, _LINEAR), (i, own, n[1], -s, _LINEAR)]
        elif kind == "inductor":
            self.a.append((i, own, own, -s, _LINEAR))
        elif kind == "coupling":
            l1, l2 = (self.position[r] for r in part.refs)
            k1, k2 = (self.own(r) for r in part.refs)
            self.m += [(i, l1, l2, k1, k2, -s), (i, l1, l2, k2, k1, -s)]
        elif kind == "voltage_source" or (kind == "current_source" and own >= 0):
            self.b.append((i, own, 1))
        elif kind == "current_source":  # drives its current out of n0 into n1
            self.b += [(i, n[0], -1), (i, n[1], 1)]
        elif kind in ("vcvs", "vccs") and own >= 0:
            self.a += [(i, own, n[2], -1, _LINEAR), (i, own, n[3], 1, _LINEAR)]
        elif kind == "vccs":
            self.across(i, (n[0], n[1]), (n[2], n[3]), 1, _LINEAR)
        elif kind in ("ccvs", "cccs"):
            control = self.own(part.refs[0])
            if own >= 0:
                self.a.append((i, own, control, -1, _LINEAR))
            else:
                self.a += [(i, n[0], control, 1, _LINEAR), (i, n[1], control, -1, _LINEAR)]

    def build(self) -> ValueStamps:
        for i, part in enumerate(self.parts):
            self.part(i, part)
        a = _columns(self.a, (int, int, int, complex, int))
        m = _columns(self.m, (int, int, int, int, int, complex))
        b = _columns(self.b, (int, int, complex))
        values = np.array([complex(p.value) for p in self.parts], dtype=complex)
        return ValueStamps(self.parts, values, *a, np.column_stack(m[:5]).astype(np.intp)
                           if self.m else np.zeros((0, 5), dtype=np.intp), m[5], *b)


def _columns(rows: list[tuple], types: tuple[type, ...]) -> list[np.ndarray]:
    if not rows:
        return [np.zeros(0, dtype=complex if t is complex else np.intp) for t in types]
    return [np.array(col, dtype=complex if t is complex else np.intp)
            for col, t in zip(zip(*rows, strict=True), types, strict=True)]


def _padded(v: np.ndarray) -> np.ndarray:
    """v with a trailing 0, so index -1 reads 0."""
    return np.append(v.astype(complex), 0j)


def _per_part(part: np.ndarray, terms: np.ndarray, count: int) -> np.ndarray:
    return np.bincount(part, terms.real, count) + 1j * np.bincount(part, terms.imag, count)
