"""Sensitivities of a region's port quantities to every part value, by the adjoint method.

With the port open the region's equations are ``A x = b``; ``voc`` is ``x[k]`` (k the port's
plus unknown, minus the reference) and ``z`` is ``x_e[k]`` with ``A x_e = e_k`` (1 A into plus,
sources zeroed). One transposed solve ``A^T lam = e_k`` on the factorization already made serves
both: for a part value p, ``d voc/dp = lam . (db/dp - dA/dp x)`` and ``dz/dp = -lam . dA/dp x_e``;
``isc = voc / z`` gives ``d isc/dp = (d voc/dp - isc dz/dp) / z``. ``dA/dp`` is each part's
own stamp differentiated in p (engine/solve/stamps.py, docs/method.md). The normalised sensitivity
``(p / X) dX/dp`` is the per-cent change of X per per-cent change of p. Units: dvoc V per unit
of p, disc A, dz Ω.
"""

from __future__ import annotations

import cmath
import math
from collections.abc import Collection, Iterable, Sequence
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from ..errors import CircuitError, SingularCircuitError
from . import mna, topology
from .circuit import Part
from .equivalent import Equivalent, _equivalent_of, _frequencies, _port_of
from .mna import describe_freq
from .stamps import PARAMETER_KINDS, ValueStamps, value_stamps
from .units import parse_frequency

__all__ = ["PortSolution", "Sensitivity", "influence", "port_solution", "port_stamps",
           "sensitivity", "sensitivity_sweep", "valued_parts"]

_NAN = complex(math.nan, math.nan)


class Sensitivity(NamedTuple):
    """Derivatives of the port quantities with respect to one part's value.

    ``value`` is the part's value p; ``dvoc``, ``disc``, ``dz`` are dX/dp (complex; nan where X
    does not exist); ``svoc``, ``sisc``, ``sz`` are (p / X) dX/dp (nan where X is 0). Over a
    sweep every figure is an array, one entry per frequency. (A named tuple: a region of many
    parts makes one per part, and a tuple is made several times faster than a frozen class.)
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

    The port and region are checked as by :func:`engine.solve.equivalent`. Raises CircuitError where
    the region has no Thevenin form (the open-port equations the method differentiates).
    """
    f = parse_frequency(freq)
    cut = topology.cut(circuit, region, port)
    parts, columns = _columns(cut, f)
    make = Sensitivity._make
    return {part.name: make((part.name, part.kind, *figures))
            for part, *figures in zip(parts, *(c.tolist() for c in columns), strict=True)}


def sensitivity_sweep(circuit, region: Collection[str], freqs: Iterable[float],
                      port: Sequence[str] | None = None) -> dict[str, Sensitivity]:
    """:func:`sensitivity` at every frequency of ``freqs``; each figure an array over them.

    The region is checked once and each formulation's value stamps are made once; each
    frequency costs one factorization and its solves."""
    f = _frequencies(freqs)
    cut = topology.cut(circuit, region, port)
    points = [_columns(cut, float(x)) for x in f]
    parts = points[0][0]
    stacked = np.stack([columns for _, columns in points], axis=-1)  # (figure, part, freq)
    return {part.name: Sensitivity(part.name, part.kind, *stacked[:, i])
            for i, part in enumerate(parts)}


@dataclass(frozen=True, slots=True, eq=False)
class PortSolution:
    """The open-port equations of a region solved at one frequency, in the formulation the
    equivalent takes there (nodal, or wide past ``mna.WIDE_SPAN``): ``eq`` its equivalent,
    ``x[:, 0]`` the solution with the sources, ``x[:, 1]`` with 1 A into plus, and ``lam``
    the adjoint (``A^T lam = e_k``): ``lam . r`` is the port voltage a right-hand side r makes."""

    eq: Equivalent
    system: mna.System
    x: np.ndarray
    lam: np.ndarray


def port_solution(cut: topology.Cut, f: float, what: str) -> PortSolution:
    """Solve ``cut``'s open-port equations at ``f`` Hz; ``what`` names the figures for the
    message where the region has no Thevenin form (its open-port equations are singular).

    The formulation is the one the equivalent chooses at ``f`` (:meth:`mna.Netlist.wide`);
    where z stands clear of its error bound (the equivalent's own test,
    engine/solve/equivalent.py) the equivalent is read from this one factorization; otherwise
    :func:`engine.solve.equivalent` decides it."""
    wide = bool(cut.netlist.wide(np.array([f]))[0])
    system = _port_of(cut, f == 0).open(wide)
    if system is None:
        raise _no_thevenin(f, what)
    unit = system.rhs(cut.port[0])
    try:
        factor = mna.Factor(system, f)
        x = factor.solve(np.column_stack((system.b, unit)).astype(complex))
        lam = x[:, 1] if system.symmetric else factor.solve(unit.astype(complex),
                                                            transposed=True)
    except SingularCircuitError:
        raise _no_thevenin(f, what) from None
    k = int(system.unknown_of_net[cut.netlist.index[cut.port[0]]])
    voc, z = complex(x[k, 0]), complex(x[k, 1])
    if abs(z) > factor.error_bound(x[:, 1], unit, lam):
        eq = Equivalent(cut.port, f, voc, voc / z, z, True, True)
    else:
        eq = _equivalent_of(cut, f)
        if not eq.has_thevenin:
            raise _no_thevenin(f, what)
    return PortSolution(eq, system, x, lam)


def port_stamps(cut: topology.Cut, solved: PortSolution) -> ValueStamps:
    """The value stamps of ``solved``'s system, made once per formulation and kept with the
    region's netlist (dropped with it when a value changes)."""
    key = ("value stamps", cut.port, solved.eq.freq == 0, solved.system.branches.wide)
    found = cut.netlist.memo.get(key)
    if found is None:
        found = cut.netlist.memo[key] = value_stamps(solved.system)
    return found


def _no_thevenin(f: float, what: str) -> CircuitError:
    return CircuitError(f"the region has no Thevenin form at {describe_freq(f)} (its impedance "
                        f"is infinite), so its {what} are not defined")


def _columns(cut: topology.Cut, f: float) -> tuple[tuple[Part, ...], np.ndarray]:
    """The valued parts and, per part, ``value, dvoc, disc, dz, svoc, sisc, sz`` at ``f`` Hz
    (a (7, parts) complex array): one solve of the open port, one adjoint, and the stamps'
    derivatives gathered for all parts at once."""
    solved = port_solution(cut, f, "sensitivities")
    stamps = port_stamps(cut, solved)
    d_a, d_b = stamps.derivative_terms(solved.lam, solved.x, 2j * math.pi * f)
    dvoc, dz = d_b - d_a[:, 0], -d_a[:, 1]
    eq, p = solved.eq, stamps.values
    voc, z, isc = eq.voc, eq.z, eq.isc
    disc = (dvoc - isc * dz) / z if eq.has_norton and z != 0 else np.full(p.size, _NAN)
    return stamps.parts, np.array([p, dvoc, disc, dz, _normalised(p, voc, dvoc),
                                   _normalised(p, isc, disc), _normalised(p, z, dz)])


def valued_parts(cut: topology.Cut) -> list[Part]:
    """The region's parts with a value the port quantities depend on, in circuit order."""
    return [p for p in cut.parts if p.kind in PARAMETER_KINDS]


def _normalised(p: np.ndarray, x: complex, dx: np.ndarray) -> np.ndarray:
    """(p / x) dx, nan where x is 0 or not finite, or dx not finite."""
    if x == 0 or not cmath.isfinite(x):
        return np.full(p.shape, _NAN)
    with np.errstate(invalid="ignore"):
        return np.where(np.isfinite(dx), p / x * dx, _NAN)
