"""A region's open-port equations solved with their adjoint, at one frequency or over a sweep:
the base of the sensitivities, the noise densities and the tolerance batches.

With the port open the region's equations are ``A x = b``; ``x[:, 0]`` solves them with the
sources and ``x[:, 1]`` with 1 A into plus (sources zeroed), and the adjoint ``lam`` solves
``A^T lam = e_k`` (k the port's plus unknown), so ``lam . r`` is the port voltage a right-hand
side r makes. One factorization serves all three (``lam = x[:, 1]`` where A is symmetric). The
formulation is the one the equivalent takes at each frequency (nodal, or wide past
``mna.WIDE_SPAN``: :meth:`engine.solve.mna.Netlist.wide`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import CircuitError, SingularCircuitError
from . import mna, topology
from .equivalent import Equivalent
from .equivalent.reduce import _equivalent_of, _port_of
from .equivalent.solvers import DENSE_SWEEP_LIMIT, _dense_solve
from .mna import describe_freq
from .stamps import ValueStamps, value_stamps

__all__ = ["PortSolution", "PortSweep", "port_solution", "port_stamps", "port_sweep"]

_CHUNK_BYTES = 1 << 22


@dataclass(frozen=True, slots=True, eq=False)
class PortSolution:
    """The open-port equations solved at one frequency: ``eq`` the region's equivalent,
    ``x`` (n, 2) and ``lam`` (n,) as the module says."""

    eq: Equivalent
    system: mna.System
    x: np.ndarray
    lam: np.ndarray


@dataclass(frozen=True, slots=True, eq=False)
class PortSweep:
    """The open-port equations of one formulation solved at F frequencies ``freqs``: ``x``
    (F, n, 2) and ``lam`` (F, n); ``voc``, ``isc``, ``z`` and ``norton`` the equivalent there
    (as :func:`engine.solve.sweep` decides it)."""

    freqs: np.ndarray
    system: mna.System
    x: np.ndarray
    lam: np.ndarray
    voc: np.ndarray
    isc: np.ndarray
    z: np.ndarray
    norton: np.ndarray


def port_solution(cut: topology.Cut, f: float, what: str) -> PortSolution:
    """Solve ``cut``'s open-port equations at ``f`` Hz; ``what`` names the figures for the
    message where the region has no Thevenin form (its open-port equations are singular).

    Where z stands clear of its error bound (the equivalent's own test,
    engine/solve/equivalent.py) the equivalent is read from this one factorization; otherwise
    :func:`engine.solve.equivalent` decides it."""
    system = _open_system(cut, f, bool(cut.netlist.wide(np.array([f]))[0]), what)
    unit = system.rhs(cut.port[0])
    try:
        factor = mna.Factor(system, f)
        x = factor.solve(np.column_stack((system.b, unit)).astype(complex))
        lam = x[:, 1] if system.symmetric else factor.solve(unit.astype(complex),
                                                            transposed=True)
    except SingularCircuitError:
        raise no_thevenin(f, what) from None
    k = _plus(cut, system)
    voc, z = complex(x[k, 0]), complex(x[k, 1])
    if abs(z) > factor.error_bound(x[:, 1], unit, lam):
        eq = Equivalent(cut.port, f, voc, voc / z, z, True, True)
    else:
        eq = _equivalent_of(cut, f)
        if not eq.has_thevenin:
            raise no_thevenin(f, what)
    return PortSolution(eq, system, x, lam)


def port_sweep(cut: topology.Cut, freqs: np.ndarray, what: str
               ) -> list[tuple[np.ndarray, PortSweep]]:
    """Solve ``cut``'s open-port equations at every frequency of ``freqs`` (Hz, each >= 0):
    one :class:`PortSweep` per formulation met (DC, nodal, wide), each with the positions in
    ``freqs`` it covers. Systems of up to ``DENSE_SWEEP_LIMIT`` unknowns are solved as dense
    stacks, batched by NumPy; larger ones with one sparse factorization per frequency."""
    wide = cut.netlist.wide(freqs)
    out = []
    for dc, form in ((True, False), (True, True), (False, False), (False, True)):
        where = np.flatnonzero(((freqs == 0) == dc) & (wide == form))
        if where.size:
            out.append((where, _sweep_of(cut, freqs[where], dc, form, what)))
    return out


def port_stamps(cut: topology.Cut, system: mna.System, dc: bool) -> ValueStamps:
    """The value stamps of ``cut``'s open-port ``system``, made once per formulation and kept
    with the region's netlist (dropped with it when a value changes)."""
    key = ("value stamps", cut.port, dc, system.branches.wide)
    found = cut.netlist.memo.get(key)
    if found is None:
        found = cut.netlist.memo[key] = value_stamps(system)
    return found


def no_thevenin(f: float, what: str) -> CircuitError:
    """The refusal where the region has no Thevenin form at ``f`` Hz."""
    return CircuitError(f"the region has no Thevenin form at {describe_freq(f)} (its impedance "
                        f"is infinite), so its {what} are not defined")


def _open_system(cut: topology.Cut, f: float, wide: bool, what: str) -> mna.System:
    system = _port_of(cut, f == 0).open(wide)
    if system is None:
        raise no_thevenin(f, what)
    return system


def _plus(cut: topology.Cut, system: mna.System) -> int:
    return int(system.unknown_of_net[cut.netlist.index[cut.port[0]]])


def _sweep_of(cut: topology.Cut, freqs: np.ndarray, dc: bool, wide: bool, what: str
              ) -> PortSweep:
    system = _open_system(cut, float(freqs[0]), wide, what)
    if system.size <= DENSE_SWEEP_LIMIT and not dc:
        values = _port_of(cut, dc).values(freqs)
        if not values.thevenin.all():
            raise no_thevenin(float(freqs[~values.thevenin][0]), what)
        solved = _dense_solutions(cut, system, freqs)
        if solved is not None:
            return PortSweep(freqs, system, *solved, values.voc, values.isc, values.z,
                             values.norton)
    points = [port_solution(cut, f, what) for f in freqs.tolist()]
    x, lam = np.stack([p.x for p in points]), np.stack([p.lam for p in points])
    voc, isc, z = (np.array([getattr(p.eq, k) for p in points]) for k in ("voc", "isc", "z"))
    return PortSweep(freqs, system, x, lam, voc, isc, z,
                     np.array([p.eq.has_norton for p in points]))


def _dense_solutions(cut: topology.Cut, system: mna.System, freqs: np.ndarray
                     ) -> tuple[np.ndarray, np.ndarray] | None:
    """``x`` (F, n, 2) and ``lam`` (F, n) at every frequency, a cache-sized chunk of dense
    matrices per NumPy call (refined by one step where the form asks it); None where a
    matrix is singular or a solution not finite (the caller then factorizes frequency by
    frequency, which names the fault)."""
    n = system.size
    g, m = (part.toarray() for part in system.parts())
    unit = system.rhs(cut.port[0]).astype(complex)
    both = np.column_stack((system.b, unit)).astype(complex)
    s = 2j * np.pi * freqs
    x = np.empty((freqs.size, n, 2), dtype=complex)
    lam = np.empty((freqs.size, n), dtype=complex)
    step = max(1, _CHUNK_BYTES // (16 * n * n))
    for start in range(0, freqs.size, step):
        part = slice(start, start + step)
        stack = g + s[part, None, None] * m
        try:
            with np.errstate(all="ignore"):
                x[part] = _dense_solve(stack, both, system.refined)
                lam[part] = x[part, :, 1] if system.symmetric else _dense_solve(
                    stack.transpose(0, 2, 1), unit[:, None], system.refined)[..., 0]
        except np.linalg.LinAlgError:
            return None
    if not (np.isfinite(x).all() and np.isfinite(lam).all()):
        return None
    return x, lam
