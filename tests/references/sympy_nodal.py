"""Reference port equivalents by exact symbolic circuit analysis (sympy), independent of the engine.

The equations come straight from Kirchhoff's current law and the branch relation of each part kind,
written from the sign conventions stated in engine/solve/circuit.py (not from the engine's solver):

* every node voltage and every branch current is an unknown (a tableau, not nodal stamps);
* a branch (a, b) carries its current from a through the part into b; V = V(a) - V(b);
* KCL at each node: the currents of branches leaving it minus those entering it sum to zero;
* R: V = R I (R = 0 is the ideal wire); C: I = s C V; L: V = s L I + s M I' for each coupled
  partner, M = k sqrt(L L'), dots at each inductor's first node; Z: V = Z I;
  V source: V = value; I source: I = value; VCVS: V = g (V(cp) - V(cn)); VCCS: I = g (...);
  CCVS: V = r I(control); CCCS: I = g I(control);
  ideal op-amp (nullor): V(inp) = V(inn), with a branch from ground into ``out`` whose current
  is free and no current at the inputs.

Values become exact rationals (a float through its shortest decimal text, so ``4.7e-9`` is
47/10**10), and s = j 2 pi f stays exact: pass ``freq = w / (2 pi)`` as a sympy expression to
solve at an exact angular frequency w. Each galvanically separate piece of the region gets its
own reference node (the port's minus for the piece holding it), so a magnetically coupled but
isolated winding is solved as it physically is.

The port quantities follow docs/method.md (Sign conventions): voc = V(plus) - V(minus) with the
port open; isc the current out of plus, through an ideal short, into minus; z the voltage
across the port for 1 A driven into plus (out of minus) with independent sources zeroed (V
shorted, I opened) and dependent ones kept. No Thevenin form where the open port has no unique
solution (z infinite), no Norton form where the shorted port has none (z = 0).
"""

from __future__ import annotations

import cmath
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Protocol

import sympy
from sympy.polys.matrices import DomainMatrix

__all__ = ["GROUND", "PortReference", "ReferencePart", "exact", "port_reference"]

GROUND = "gnd"
_PORT = "port branch"


class ReferencePart(Protocol):
    """What the reference reads of a part: the netlist record documented in
    engine/solve/circuit.py."""

    name: str
    kind: str
    nodes: tuple[str, ...]
    value: object
    refs: tuple[str, ...]


@dataclass(frozen=True)
class PortReference:
    """Exact port quantities; ``voc``/``isc`` are None where that form does not exist.

    ``voltage_scale`` is the largest node voltage magnitude with the port open and
    ``current_scale`` the largest branch current magnitude with it shorted (0 where that form
    does not exist): the size of the solution a floating-point solver's error is relative to.
    """

    voc: sympy.Expr | None
    isc: sympy.Expr | None
    z: sympy.Expr  # sympy.oo where there is no Thevenin form, 0 where there is no Norton form
    voltage_scale: float = 0.0
    current_scale: float = 0.0

    @property
    def has_thevenin(self) -> bool:
        return self.voc is not None

    @property
    def has_norton(self) -> bool:
        return self.isc is not None

    def numeric(self) -> tuple[complex | None, complex | None, complex]:
        """(voc, isc, z) as Python complex numbers (z = inf where infinite)."""
        z = complex(cmath.inf) if self.z == sympy.oo else _complex(self.z)
        return (None if self.voc is None else _complex(self.voc),
                None if self.isc is None else _complex(self.isc), z)


def exact(value: object) -> sympy.Expr:
    """An exact sympy number for a part value (floats through their shortest decimal text)."""
    if isinstance(value, sympy.Basic):
        return value
    if isinstance(value, bool):
        raise TypeError(f"not a circuit value: {value!r}")
    if isinstance(value, int | Fraction):
        return sympy.Rational(value)
    if isinstance(value, float):
        return sympy.Rational(repr(value))
    if isinstance(value, complex):
        return exact(value.real) + sympy.I * exact(value.imag)
    raise TypeError(f"not a circuit value: {value!r}")


def _complex(expr: sympy.Expr) -> complex:
    return complex(sympy.N(expr, 40))


@dataclass(frozen=True)
class _Branch:
    name: str
    a: str
    b: str


@dataclass(frozen=True)
class _Solution:
    volt: dict[str, sympy.Expr]  # by node
    amp: dict[str, sympy.Expr]  # by branch

    def across(self, port: tuple[str, str]) -> sympy.Expr:
        return self.volt[port[0]] - self.volt[port[1]]


def _largest(values: Iterable[sympy.Expr]) -> float:
    return max((abs(_complex(v)) for v in values), default=0.0)


def port_reference(parts: Iterable[ReferencePart], port: tuple[str, str],
                   freq: object = 0) -> PortReference:
    """voc, isc and z of the region made of ``parts`` at ``port`` (plus, minus), ``freq`` in Hz."""
    parts = list(parts)
    s = sympy.I * 2 * sympy.pi * exact(freq)  # sympy folds 2 pi (w / (2 pi)) into w exactly
    opened = _solve(parts, s, port, extra=None, sources=True)
    shorted = _solve(parts, s, port, extra="short", sources=True)
    voc = None if opened is None else opened.across(port)
    isc = None if shorted is None else shorted.amp[_PORT]
    if opened is None and shorted is None:
        raise ValueError("the region has no unique solution with the port open or shorted")
    if opened is None:
        z = sympy.oo
    elif shorted is None:
        z = sympy.Integer(0)
    else:
        driven = _solve(parts, s, port, extra="drive", sources=False)
        assert driven is not None  # same matrix as the open port plus one decoupled unknown
        z = driven.across(port)
    # A current circulating through wires leaves the node voltages at rounding level; what it
    # drives across the smallest part impedance is the scale of that rounding.
    currents = [*(opened.amp.values() if opened else ()), *(shorted.amp.values() if shorted
                                                            else ())]
    voltage_scale = max(0.0 if opened is None else _largest(opened.volt.values()),
                        _largest(currents) * _smallest_impedance(parts, s))
    return PortReference(voc, isc, z, voltage_scale=voltage_scale,
                         current_scale=0.0 if shorted is None else _largest(shorted.amp.values()))


def _smallest_impedance(parts: Sequence[ReferencePart], s: sympy.Expr) -> float:
    """The smallest non-zero impedance magnitude of the resistors, impedances, capacitors and
    inductors at ``s`` (0 where there is none); a part given as a symbol (to differentiate
    in it) has no magnitude and is passed over."""
    found = []
    for part in parts:
        held = exact(part.value)
        if getattr(held, "free_symbols", None):
            continue
        value = abs(_complex(held))
        w = abs(_complex(s))
        if part.kind in ("resistor", "impedance"):
            found.append(value)
        elif part.kind == "capacitor" and w and value:
            found.append(1 / (w * value))
        elif part.kind == "inductor" and w:
            found.append(w * value)
    return min((z for z in found if z > 0), default=0.0)


def _branches(parts: Sequence[ReferencePart], port: tuple[str, str],
              extra: str | None) -> list[_Branch]:
    branches = []
    for part in parts:
        if part.kind == "coupling":
            continue
        if part.kind == "opamp":  # output driven from ground
            branches.append(_Branch(part.name, GROUND, part.nodes[2]))
        else:  # the first two nodes carry the branch (sense nodes carry no current)
            branches.append(_Branch(part.name, part.nodes[0], part.nodes[1]))
    plus, minus = port
    if extra == "short":
        branches.append(_Branch(_PORT, plus, minus))
    elif extra == "drive":
        branches.append(_Branch(_PORT, minus, plus))
    return branches


def _references(nodes: list[str], branches: list[_Branch],
                port: tuple[str, str]) -> set[str] | None:
    """One reference node per galvanically separate piece; None if plus floats from minus."""
    root = {n: n for n in nodes}

    def find(n: str) -> str:
        while root[n] != n:
            root[n] = root[root[n]]
            n = root[n]
        return n

    for branch in branches:
        root[find(branch.a)] = find(branch.b)
    plus, minus = port
    if find(plus) != find(minus):
        return None
    pieces: dict[str, set[str]] = {}
    for n in nodes:
        pieces.setdefault(find(n), set()).add(n)
    refs = set()
    for piece in pieces.values():
        refs.add(minus if minus in piece else GROUND if GROUND in piece else min(piece))
    return refs


def _solve(parts: Sequence[ReferencePart], s: sympy.Expr, port: tuple[str, str],
           extra: str | None, sources: bool) -> _Solution | None:
    """Node voltages and branch currents by name, or None where there is no unique solution."""
    branches = _branches(parts, port, extra)
    nodes = sorted({n for p in parts for n in p.nodes} | {GROUND} | set(port))
    refs = _references(nodes, branches, port)
    if refs is None:
        return None
    volt = {n: sympy.Integer(0) if n in refs else sympy.Symbol(f"V[{n}]") for n in nodes}
    amp = {b.name: sympy.Symbol(f"I[{b.name}]") for b in branches}
    equations = [_kcl(n, branches, amp) for n in nodes if n not in refs]
    by_name = {p.name: p for p in parts}
    for branch in branches:
        if branch.name == _PORT:
            across = volt[branch.a] - volt[branch.b]
            equations.append(across if extra == "short" else amp[_PORT] - 1)
        else:
            equations.append(_relation(by_name[branch.name], by_name, volt, amp, s, sources))
    unknowns = [x for x in [*volt.values(), *amp.values()] if isinstance(x, sympy.Symbol)]
    matrix, rhs = sympy.linear_eq_to_matrix(equations, unknowns)
    # Exact arithmetic in the smallest field holding the entries (Gaussian rationals, or an
    # extension by sqrt(L1 L2) or pi): a zero determinant is exactly singular, no tolerance.
    a, b = DomainMatrix.from_Matrix(matrix).unify(DomainMatrix.from_Matrix(rhs))
    a, b = a.to_field(), b.to_field()
    if a.domain.is_zero(a.det()):
        return None
    solution = dict(zip(unknowns, a.lu_solve(b).to_Matrix(), strict=True))
    return _Solution({n: solution.get(v, v) for n, v in volt.items()},
                     {name: solution[i] for name, i in amp.items()})


def _kcl(node: str, branches: list[_Branch], amp: dict[str, sympy.Symbol]) -> sympy.Expr:
    leaving = sum((amp[b.name] for b in branches if b.a == node), sympy.Integer(0))
    entering = sum((amp[b.name] for b in branches if b.b == node), sympy.Integer(0))
    return leaving - entering


def _relation(part: ReferencePart, by_name: dict[str, ReferencePart],
              volt: dict[str, sympy.Expr], amp: dict[str, sympy.Symbol], s: sympy.Expr,
              sources: bool) -> sympy.Expr:
    """The branch law of ``part`` as an expression that must vanish."""
    kind, value = part.kind, exact(part.value)
    i = amp[part.name]
    across = volt[part.nodes[0]] - volt[part.nodes[1]]
    if kind == "resistor":
        return across - value * i
    if kind == "capacitor":
        return i - s * value * across
    if kind == "inductor":
        return across - s * value * i - sum(
            (s * m * amp[other] for other, m in _mutuals(part, by_name)), sympy.Integer(0))
    if kind == "impedance":
        return across - value * i
    if kind == "voltage_source":
        return across - (value if sources else 0)
    if kind == "current_source":
        return i - (value if sources else 0)
    if kind in ("vcvs", "vccs"):
        sensed = volt[part.nodes[2]] - volt[part.nodes[3]]
        return (across if kind == "vcvs" else i) - value * sensed
    if kind in ("ccvs", "cccs"):
        sensed = amp[part.refs[0]]
        return (across if kind == "ccvs" else i) - value * sensed
    if kind == "opamp":  # nullator at the inputs; the output branch current stays free
        return volt[part.nodes[0]] - volt[part.nodes[1]]
    raise ValueError(f"{part.name}: the reference does not know the kind {kind!r}")


def _mutuals(inductor: ReferencePart,
             by_name: dict[str, ReferencePart]) -> list[tuple[str, sympy.Expr]]:
    """(partner, M) for every coupling naming ``inductor``; M = k sqrt(L1 L2)."""
    found = []
    for part in by_name.values():
        if part.kind == "coupling" and inductor.name in part.refs:
            (other,) = [r for r in part.refs if r != inductor.name]
            l1, l2 = exact(inductor.value), exact(by_name[other].value)
            found.append((other, exact(part.value) * sympy.sqrt(l1 * l2)))
    return found
