"""Sensitivities of a region's port quantities to every part value, by the adjoint method.

With the port open the region's equations are ``A x = b``; ``voc`` is ``x[k]`` (k the port's
plus unknown, minus the reference) and ``z`` is ``x_e[k]`` with ``A x_e = e_k`` (1 A into plus,
sources zeroed). One transposed solve ``A^T lam = e_k`` on the factorization already made serves
both: for a part value p, ``d voc/dp = lam . (db/dp - dA/dp x)`` and ``dz/dp = -lam . dA/dp x_e``;
``isc = voc / z`` gives ``d isc/dp = (d voc/dp - isc dz/dp) / z``. ``dA/dp`` is each part's own
stamp differentiated in p (docs/method.md). The normalised sensitivity ``(p / X) dX/dp`` is the
per-cent change of X per per-cent change of p. Units: dvoc V per unit of p, disc A, dz Ω.
"""

from __future__ import annotations

import math
from collections.abc import Collection, Iterable, Sequence
from dataclasses import dataclass

import numpy as np

from . import mna, topology
from .circuit import Part
from .equivalent import Equivalent, _equivalent_of, _frequencies, _port_of
from .errors import CircuitError
from .mna import describe_freq
from .units import parse_frequency

__all__ = ["PARAMETER_KINDS", "PortSolution", "Sensitivity", "influence", "port_solution",
           "sensitivity", "sensitivity_sweep"]

#: Kinds with a value the port quantities depend on (an ideal op-amp has none).
PARAMETER_KINDS = ("resistor", "capacitor", "inductor", "impedance", "voltage_source",
                   "current_source", "vcvs", "vccs", "ccvs", "cccs", "coupling")
_NAN = complex(math.nan, math.nan)


@dataclass(frozen=True, slots=True)
class Sensitivity:
    """Derivatives of the port quantities with respect to one part's value.

    ``value`` is the part's value p; ``dvoc``, ``disc``, ``dz`` are dX/dp (complex; nan where X
    does not exist); ``svoc``, ``sisc``, ``sz`` are (p / X) dX/dp (nan where X is 0). Over a
    sweep every figure is an array, one entry per frequency.
    """

    name: str
    kind: str
    value: complex
    dvoc: complex
    disc: complex
    dz: complex
    svoc: complex
    sisc: complex
    sz: complex


def influence(s: Sensitivity) -> float:
    """The larger of |svoc| and |sz| (largest over a sweep), nan ignored: a ranking key."""
    figures = np.abs(np.concatenate([np.ravel(s.svoc), np.ravel(s.sz)]))
    figures = figures[np.isfinite(figures)]
    return float(figures.max()) if figures.size else 0.0


def sensitivity(circuit, region: Collection[str], port: Sequence[str] | None = None,
                freq: float | str = 0.0) -> dict[str, Sensitivity]:
    """{part name: :class:`Sensitivity`} for every valued part of ``region`` at ``freq`` Hz.

    The port and region are checked as by :func:`engine.equivalent`. Raises CircuitError where
    the region has no Thevenin form (the open-port equations the method differentiates).
    """
    f = parse_frequency(freq)
    return _at(topology.cut(circuit, region, port), f)


def sensitivity_sweep(circuit, region: Collection[str], freqs: Iterable[float],
                      port: Sequence[str] | None = None) -> dict[str, Sensitivity]:
    """:func:`sensitivity` at every frequency of ``freqs``; each figure an array over them."""
    f = _frequencies(freqs)
    cut = topology.cut(circuit, region, port)
    points = [_at(cut, float(x)) for x in f]
    fields = ("value", "dvoc", "disc", "dz", "svoc", "sisc", "sz")
    return {name: Sensitivity(name, first.kind,
                              *(np.array([getattr(p[name], k) for p in points]) for k in fields))
            for name, first in points[0].items()}


@dataclass(frozen=True, slots=True, eq=False)
class PortSolution:
    """The open-port equations of a region solved at one frequency: ``eq`` its equivalent,
    ``x[:, 0]`` the solution with the sources, ``x[:, 1]`` with 1 A into plus, and ``lam``
    the adjoint (``A^T lam = e_k``): ``lam . r`` is the port voltage a right-hand side r makes."""

    eq: Equivalent
    system: mna.System
    x: np.ndarray
    lam: np.ndarray


def port_solution(cut: topology.Cut, f: float, what: str) -> PortSolution:
    """Solve ``cut``'s open-port equations at ``f`` Hz; ``what`` names the figures for the
    message where the region has no Thevenin form (its open-port equations are singular)."""
    eq = _equivalent_of(cut, f)
    system = _port_of(cut, f == 0).open
    if system is None or not eq.has_thevenin:
        raise CircuitError(f"the region has no Thevenin form at {describe_freq(f)} (its "
                           f"impedance is infinite), so its {what} are not defined")
    unit = system.rhs(cut.port[0])
    factor = mna.Factor(system, f)
    x = factor.solve(np.column_stack((system.b, unit)).astype(complex))
    lam = x[:, 1] if system.symmetric else factor.solve(unit.astype(complex), transposed=True)
    return PortSolution(eq, system, x, lam)


def _at(cut: topology.Cut, f: float) -> dict[str, Sensitivity]:
    solved = port_solution(cut, f, "sensitivities")
    eq, system, x, lam = solved.eq, solved.system, solved.x, solved.lam
    parts = [p for p in cut.parts if p.kind in PARAMETER_KINDS]
    stamps = _Stamps(system, cut.parts, 2j * math.pi * f)
    for i, part in enumerate(parts):
        stamps.of(i, part)
    d_b = stamps.rhs_term(lam, len(parts))
    d_source, d_unit = (stamps.matrix_term(lam, x[:, j], len(parts)) for j in (0, 1))
    dvoc, dz = d_b - d_source, -d_unit
    voc, z, isc = eq.voc, eq.z, eq.isc
    out = {}
    for i, part in enumerate(parts):
        disc = (dvoc[i] - isc * dz[i]) / z if eq.has_norton and z != 0 else _NAN
        p = complex(part.value)
        out[part.name] = Sensitivity(part.name, part.kind, p, complex(dvoc[i]), complex(disc),
                                     complex(dz[i]), _normalised(p, voc, dvoc[i]),
                                     _normalised(p, isc, disc), _normalised(p, z, dz[i]))
    return out


def _normalised(p: complex, x: complex, dx: complex) -> complex:
    if x == 0 or not np.isfinite(x) or not np.isfinite(dx):
        return _NAN
    return complex(p / x * dx)


class _Stamps:
    """dA/dp and db/dp of each part as (part, row, column, coefficient) entries; an index of
    -1 (a pinned net, or no branch) reads 0. The stamps mirror engine/mna.py's conventions:
    a branch row reads V(first) - V(second) - ..., an admittance part without a branch current
    is stamped as y between its nets, M is scaled by s = j 2 pi f."""

    def __init__(self, system: mna.System, parts: Sequence[Part], s: complex) -> None:
        self.system, self.s = system, s
        self.by_name = {p.name: p for p in parts}
        self.net = system.netlist.index
        self.branch = system.branch_of
        self.couplings = [p for p in parts if p.kind == "coupling"]
        self.a: list[tuple[int, int, int, complex]] = []
        self.b: list[tuple[int, int, complex]] = []

    def node(self, net: str) -> int:
        return int(self.system.unknown_of_net[self.net[net]])

    def own(self, part: Part) -> int:
        return self.branch.get(part.name, -1)

    def _across(self, i: int, row_a: int, row_b: int, col_a: int, col_b: int, c: complex) -> None:
        """c (e_row_a - e_row_b)(e_col_a - e_col_b)^T."""
        self.a += [(i, row_a, col_a, c), (i, row_a, col_b, -c), (i, row_b, col_a, -c),
                   (i, row_b, col_b, c)]

    def of(self, i: int, part: Part) -> None:
        kind, v = part.kind, complex(part.value)
        own = self.own(part)
        n = [self.node(net) for net in part.nodes]
        if kind in ("resistor", "impedance", "capacitor") and own < 0:
            # admittance y = 1/p (s p for a capacitor) between its nets
            dy = self.s if kind == "capacitor" else -1 / (v * v)
            self._across(i, n[0], n[1], n[0], n[1], dy)
        elif kind in ("resistor", "impedance"):
            self.a.append((i, own, own, -1))
        elif kind == "capacitor":  # row: s C (V(a) - V(b)) - I = 0
            self.a += [(i, own, n[0], self.s), (i, own, n[1], -self.s)]
        elif kind == "inductor":
            self.a.append((i, own, own, -self.s))
            self._mutual_terms(i, part)
        elif kind == "coupling":
            l1, l2 = (self.by_name[r] for r in part.refs)
            k1, k2 = self.own(l1), self.own(l2)
            dm = -self.s * np.sqrt(complex(l1.value) * complex(l2.value))
            self.a += [(i, k1, k2, dm), (i, k2, k1, dm)]
        elif kind == "voltage_source" or (kind == "current_source" and own >= 0):
            self.b.append((i, own, 1))
        elif kind == "current_source":  # drives its current out of n0 into n1
            self.b += [(i, n[0], -1), (i, n[1], 1)]
        elif kind in ("vcvs", "vccs") and own >= 0:
            self.a += [(i, own, n[2], -1), (i, own, n[3], 1)]
        elif kind == "vccs":
            self._across(i, n[0], n[1], n[2], n[3], 1)
        elif kind in ("ccvs", "cccs"):
            control = self.own(self.by_name[part.refs[0]])
            if own >= 0:
                self.a.append((i, own, control, -1))
            else:
                self.a += [(i, n[0], control, 1), (i, n[1], control, -1)]

    def _mutual_terms(self, i: int, inductor: Part) -> None:
        """d/dL of M = k sqrt(L L') is k L' / (2 sqrt(L L')), for each coupling naming L."""
        for cp in self.couplings:
            if inductor.name not in cp.refs:
                continue
            (other,) = [self.by_name[r] for r in cp.refs if r != inductor.name]
            l1, l2 = complex(inductor.value), complex(other.value)
            dm = -self.s * complex(cp.value) * l2 / (2 * np.sqrt(l1 * l2))
            k1, k2 = self.own(inductor), self.own(other)
            self.a += [(i, k1, k2, dm), (i, k2, k1, dm)]

    def rhs_term(self, lam: np.ndarray, count: int) -> np.ndarray:
        """Per part, lam . db/dp."""
        if not self.b:
            return np.zeros(count, dtype=complex)
        part, row, coef = (np.array(c) for c in zip(*self.b, strict=True))
        return _per_part(part, coef * _padded(lam)[row], count)

    def matrix_term(self, lam: np.ndarray, x: np.ndarray, count: int) -> np.ndarray:
        """Per part, lam . (dA/dp x)."""
        if not self.a:
            return np.zeros(count, dtype=complex)
        part, row, col, coef = (np.array(c) for c in zip(*self.a, strict=True))
        return _per_part(part, coef * _padded(lam)[row] * _padded(x)[col], count)


def _padded(v: np.ndarray) -> np.ndarray:
    """v with a trailing 0, so index -1 reads 0."""
    return np.append(v.astype(complex), 0j)


def _per_part(part: np.ndarray, terms: np.ndarray, count: int) -> np.ndarray:
    return (np.bincount(part, terms.real, count) + 1j * np.bincount(part, terms.imag, count))
