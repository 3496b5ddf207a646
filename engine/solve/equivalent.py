"""Thevenin and Norton equivalents of a two-terminal region: one frequency, sweeps, collapse, and
the check that a collapsed circuit behaves as the original.

Conventions (docs/method.md, engine/solve/circuit.py): ``voc = V(plus) - V(minus)`` with the port
open; ``isc`` flows out of plus, through an outside short, into minus; ``z`` is the voltage across
the port for 1 A driven into plus with the independent sources zeroed (dependent sources kept),
so ``voc = z * isc`` whenever both forms exist. ``z`` is 0 where there is no Norton form and
infinite where there is no Thevenin form; a quantity that does not exist is ``nan`` (0/0) or
infinite. Source phasors are amplitudes (peak values) unless the caller means rms throughout;
:meth:`Equivalent.max_power` takes the basis. The method is in docs/method.md.
"""

from __future__ import annotations

import cmath
import math
from collections.abc import Collection, Iterable, Sequence
from dataclasses import dataclass, replace
from itertools import count

import numpy as np

from ..errors import CircuitError, SingularCircuitError
from . import mna, topology
from .circuit import GROUND, Circuit, Part
from .mna import describe_freq
from .names import unused_name as _unused
from .units import (
    UNDEFINED,
    denoised,
    format_complex,
    format_eng,
    format_phasor,
    parse_frequency,
    parse_value,
)

__all__ = [
    "DENSE_SWEEP_LIMIT",
    "EquivalenceReport",
    "Equivalent",
    "Forms",
    "PowerTransfer",
    "Realisation",
    "Sweep",
    "check_equivalence",
    "collapse",
    "equivalent",
    "sweep",
]

#: Systems of at most this many unknowns are swept as one dense stack solved batched by NumPy;
#: larger ones are factorized per frequency with SuperLU (crossover measured, docs/method.md).
DENSE_SWEEP_LIMIT = 90
#: Bytes of dense matrices per batched solve: small enough to stay in cache (docs/method.md).
_CHUNK_BYTES = 1 << 20
_INF = complex(math.inf, 0.0)
_NAN = complex(math.nan, math.nan)


# -- results ------------------------------------------------------------------------------------
@dataclass(frozen=True, slots=True)
class Forms:
    """Formatted text of the three port quantities."""

    voc: str
    isc: str
    z: str


@dataclass(frozen=True, slots=True)
class Realisation:
    """The series circuit with impedance z at ``freq``: ``resistance`` (Ω, may be negative) plus
    an ``"inductor"`` of ``value`` henries, a ``"capacitor"`` of ``value`` farads, or nothing
    (``kind`` None, ``value`` None)."""

    resistance: float
    kind: str | None
    value: float | None
    freq: float

    def parts_text(self) -> str:
        """The series parts as every output writes them: ``"100 Ω in series with 4.7 µF"``,
        ``"4.7 µF"`` (no resistance), ``"100 Ω"`` (no reactance)."""
        parts = [format_eng(self.resistance, "Ω", 4)] if self.resistance != 0 or \
            self.kind is None else []
        if self.kind is not None:
            parts.append(format_eng(self.value, "H" if self.kind == "inductor" else "F", 4))
        return " in series with ".join(parts)


@dataclass(frozen=True, slots=True)
class PowerTransfer:
    """Maximum power transfer into a load across the port.

    ``load``: the conjugate-matched load (Ω) and ``power`` the average power it takes (W);
    ``resistive_load`` = |z| is the best purely resistive load and ``resistive_power`` its power.
    All four are None where no finite maximum exists (Re z <= 0 or no Thevenin form), and
    ``reason`` says why. ``basis``: "peak" (source phasors are amplitudes) or "rms" above DC;
    "dc" at DC, where values are steady and peak and rms do not apply.
    """

    basis: str
    load: complex | None
    power: float | None
    resistive_load: float | None
    resistive_power: float | None
    reason: str | None

    def described(self) -> str:
        """The basis as reports name it: "DC", "peak phasors" or "rms phasors"."""
        return "DC" if self.basis == "dc" else f"{self.basis} phasors"


@dataclass(frozen=True, slots=True)
class Equivalent:
    """Thevenin and Norton equivalents of a region at one frequency.

    ``port`` (plus, minus); ``freq`` in Hz (0 = DC); ``voc`` V, ``isc`` A, ``z`` Ω (complex).
    ``z == 0`` without a Norton form, ``z`` infinite without a Thevenin form; ``voc``/``isc``
    are infinite or nan where their form does not exist. Phasors are peak values.
    ``voc_error`` (V) and ``z_error`` (Ω) bound the floating-point error of ``voc`` and ``z``
    (the residual of the solve carried to the port, plus a rounding of every matrix entry; see
    docs/method.md); nan where the quantity does not exist.
    """

    port: tuple[str, str]
    freq: float
    voc: complex
    isc: complex
    z: complex
    has_thevenin: bool
    has_norton: bool
    voc_error: float = math.nan
    z_error: float = math.nan

    def rectangular(self, digits: int = 4) -> Forms:
        """``voc``, ``isc``, ``z`` as ``a + j b`` with SI prefixes (``"1 kΩ + j 2 kΩ"``)."""
        return self._forms(format_complex, digits)

    def polar(self, digits: int = 4) -> Forms:
        """``voc``, ``isc``, ``z`` as magnitude ∠ degrees (``"3.33 V ∠ 0°"``)."""
        return self._forms(format_phasor, digits)

    def _forms(self, fmt, digits: int) -> Forms:
        def text(value: complex, unit: str, exists: bool = True) -> str:
            if not exists or cmath.isnan(value):
                return UNDEFINED
            return fmt(denoised(value), unit, digits)
        return Forms(text(self.voc, "V", self.has_thevenin), text(self.isc, "A", self.has_norton),
                     text(self.z, "Ω"))

    def summary(self) -> str:
        """A few lines for a report: port, frequency, both forms (or why one is missing)."""
        plus, minus = self.port
        rect, pol = self.rectangular(), self.polar()
        lines = [f"port {plus} (+) / {minus} (-) at {describe_freq(self.freq)}"]
        if self.has_thevenin:
            lines.append(f"Thevenin: voc = {pol.voc}, z = {rect.z}")
        else:
            lines.append("Thevenin: none (the impedance is infinite)")
        if self.has_norton:
            lines.append(f"Norton: isc = {pol.isc}, z = {rect.z}")
        else:
            lines.append("Norton: none (the impedance is zero)")
        return "\n".join(lines)

    def realisation(self) -> Realisation:
        """The series R + L or R + C (or pure R) whose impedance is ``z`` at ``freq``.

        Raises CircuitError where z is infinite, or reactive at DC (a fixed complex impedance
        part), which no R, L or C realises.
        """
        if not self.has_thevenin:
            raise CircuitError("the region has no Thevenin form (infinite impedance), so no "
                               "series R + L or R + C realises it")
        z = denoised(self.z)  # a noise-level R or X is no part
        r, x = z.real, z.imag
        if x == 0:
            return Realisation(r, None, None, self.freq)
        if self.freq == 0:
            raise CircuitError(f"Z = {format_complex(self.z, 'Ω')} is reactive at DC (a fixed "
                               "impedance part), which no inductor or capacitor realises")
        w = 2 * math.pi * self.freq
        kind, value = ("inductor", x / w) if x > 0 else ("capacitor", -(1 / w) / x)
        if not (math.isfinite(value) and value > 0):
            raise CircuitError(
                f"z = {self.z.real:.4g} {self.z.imag:+.4g}j Ω at {self.freq:.4g} Hz needs a series "
                f"{kind} outside the range of double precision; analyse at a frequency nearer "
                "the parts' own scale")
        return Realisation(r, kind, value, self.freq)

    def max_power(self, basis: str = "peak") -> PowerTransfer:
        """Power into a conjugate-matched load: |voc|^2 / (8 Re z) for peak phasors, / (4 Re z)
        for rms ones and at DC (whatever ``basis``); and into the best resistive load |z|."""
        if basis not in ("peak", "rms"):
            raise CircuitError(f"basis must be 'peak' or 'rms', not {basis!r}")
        if self.freq == 0:
            basis = "dc"
        reason = _no_maximum(self)
        if reason:
            return PowerTransfer(basis, None, None, None, None, reason)
        share = 0.5 if basis == "peak" else 1.0  # a peak phasor's average power is half
        v, r_best = abs(self.voc), abs(self.z)
        # as products of ratios, so that no intermediate square overflows or underflows
        matched = share * (v / 2) * (v / (2 * self.z.real))
        into_r = v / abs(self.z + r_best)
        resistive = share * into_r * (into_r * r_best)
        if not (math.isfinite(matched) and math.isfinite(resistive)):
            return PowerTransfer(basis, None, None, None, None,
                                 f"the available power with |voc| = {v:.4g} V and "
                                 f"Re z = {self.z.real:.4g} Ω exceeds the range of "
                                 "double precision")
        return PowerTransfer(basis, self.z.conjugate(), matched, r_best, resistive, None)


def _no_maximum(eq: Equivalent) -> str | None:
    if not eq.has_thevenin:
        return ("no finite maximum: the region has no Thevenin form (infinite impedance), so a "
                "larger load always takes more power")
    if eq.z == 0:
        return ("no finite maximum: the impedance is zero (an ideal voltage source), so a "
                "smaller load always takes more power")
    if eq.z.real < 0:
        return (f"no finite maximum: Re Z = {format_eng(eq.z.real, 'Ω')} is negative, the region "
                "is active and can deliver unbounded power")
    if eq.z.real == 0:
        return ("no finite maximum: Z is purely reactive, so the conjugate load cancels it and "
                "the current is unbounded")
    return None


@dataclass(frozen=True, slots=True, eq=False)
class Sweep:
    """Equivalents over frequency: read-only arrays, one entry per point of ``freqs`` (Hz);
    ``voc_error`` and ``z_error`` as in :class:`Equivalent`."""

    port: tuple[str, str]
    freqs: np.ndarray
    voc: np.ndarray
    isc: np.ndarray
    z: np.ndarray
    has_thevenin: np.ndarray
    has_norton: np.ndarray
    voc_error: np.ndarray
    z_error: np.ndarray

    def __len__(self) -> int:
        return len(self.freqs)

    def __getitem__(self, i: int) -> Equivalent:
        return Equivalent(self.port, float(self.freqs[i]), complex(self.voc[i]),
                          complex(self.isc[i]), complex(self.z[i]), bool(self.has_thevenin[i]),
                          bool(self.has_norton[i]), float(self.voc_error[i]),
                          float(self.z_error[i]))


@dataclass(frozen=True, slots=True)
class EquivalenceReport:
    """Largest deviation between an original and a reduced circuit, over the loads tried.

    ``voltage_abs`` (V): the largest |ΔV| of a net outside the region, ``worst_net`` that net;
    ``current_abs`` (A): the largest |ΔI| of the port current (into the region at plus).
    The relative figures divide by the largest magnitude of any net voltage (for
    ``voltage_rel``) or branch current (for ``current_rel``) in either whole solution over all
    cases (0 when everything is exactly 0). Voltages are measured from ground where the outside
    reaches it, else from the port's minus net. ``cases`` describes the loads tried,
    ``worst_case`` the one with the largest relative deviation.
    """

    port: tuple[str, str]
    freq: float
    cases: tuple[str, ...]
    voltage_abs: float
    voltage_rel: float
    current_abs: float
    current_rel: float
    worst_net: str | None
    worst_case: str

    def within(self, rtol: float) -> bool:
        """True when both relative deviations are at most ``rtol``."""
        return self.voltage_rel <= rtol and self.current_rel <= rtol


# -- the port problem ---------------------------------------------------------------------------
class _Values:
    """Port quantities at F frequencies, filled in as they are decided."""

    def __init__(self, size: int) -> None:
        self.voc = np.full(size, _NAN)
        self.isc = np.full(size, _NAN)
        self.z = np.full(size, _NAN)
        self.thevenin = np.zeros(size, dtype=bool)
        self.norton = np.zeros(size, dtype=bool)
        self.voc_error = np.full(size, math.nan)
        self.z_error = np.full(size, math.nan)

    def put(self, where: np.ndarray, voc: np.ndarray, isc: np.ndarray, z: np.ndarray,
            thevenin: bool, norton: bool, errors: tuple[np.ndarray, np.ndarray]) -> None:
        self.voc[where], self.isc[where], self.z[where] = voc, isc, z
        self.thevenin[where], self.norton[where] = thevenin, norton
        self.voc_error[where], self.z_error[where] = errors

    def take(self, where: np.ndarray, other: _Values) -> None:
        for name in ("voc", "isc", "z", "thevenin", "norton", "voc_error", "z_error"):
            getattr(self, name)[where] = getattr(other, name)


def _refuse_overflow(freqs: np.ndarray, out: _Values) -> None:
    """Raise where a form was found but its quantity is not a finite number: part impedances
    past double range at that frequency (e.g. 1 µF at 1e-310 Hz) leave only inf and nan."""
    bad = ((out.thevenin & ~np.isfinite(out.voc)) | (out.norton & ~np.isfinite(out.isc))
           | (out.thevenin & out.norton & ~np.isfinite(out.z)))
    if bad.any():
        f = float(freqs[bad][0])
        raise SingularCircuitError(
            f"at {f:.4g} Hz some part impedances overflow double precision, so the port "
            "quantities are not numbers; analyse at a frequency nearer the parts' own scale")


def _undefined_ratio(numerator: np.ndarray) -> np.ndarray:
    """What ``numerator / 0`` means for a port quantity: infinite, or nan where 0/0."""
    return np.where(numerator == 0, _NAN, _INF)


class _Port:
    """One region's port problem at one frequency class (DC, or any non-zero frequency).

    The open-port system (the region alone, port minus as reference) is assembled once per
    formulation (plain, or wide: see :class:`engine.solve.mna.Branches`); the shorted-port system
    only when the open one cannot decide.
    """

    def __init__(self, netlist: mna.Netlist, port: tuple[str, str], dc: bool) -> None:
        self.netlist, self.port, self.dc = netlist, port, dc
        plus, minus = port
        found = topology.islands(netlist, dc, (minus,))
        found.raise_problems(skip=found.island(plus))
        topology.check_voltage_loops(netlist, dc)
        self._pinned = found.pinned if found.joined(plus) else None
        self._open: dict[bool, mna.System | None] = {}
        self._shorted: dict[bool, mna.System] = {}
        self._short_pinned: np.ndarray | None = None

    def open(self, wide: bool) -> mna.System | None:
        if wide not in self._open:
            self._open[wide] = None if self._pinned is None else \
                mna.assemble(self.netlist, self._pinned, wide=wide)
        return self._open[wide]

    def shorted(self, wide: bool) -> mna.System:
        ids = (self.netlist.index[self.port[0]], self.netlist.index[self.port[1]])
        if self._short_pinned is None:
            found = topology.islands(self.netlist, self.dc, (self.port[1],), short=ids)
            found.raise_problems()
            topology.check_voltage_loops(self.netlist, self.dc, short=ids)
            self._short_pinned = found.pinned
        if wide not in self._shorted:
            self._shorted[wide] = mna.assemble(self.netlist, self._short_pinned, short=ids,
                                               wide=wide)
        return self._shorted[wide]

    def values(self, freqs: np.ndarray) -> _Values:
        """Decide voc, isc, z at every frequency (all zero or all non-zero); frequencies where
        the part impedances span more than ``mna.WIDE_SPAN`` are solved in the wide form."""
        wide = self.netlist.wide(freqs)
        if not wide.any():
            out = self._values(freqs, False)
        else:
            out = _Values(freqs.size)
            for form in (False, True):
                if (wide == form).any():
                    out.take(wide == form, self._values(freqs[wide == form], form))
        _refuse_overflow(freqs, out)
        return out

    def _values(self, freqs: np.ndarray, wide: bool) -> _Values:
        out = _Values(freqs.size)
        todo = np.ones(freqs.size, dtype=bool)
        failure: SingularCircuitError | None = None
        system = self.open(wide)
        if system is not None:
            k = int(system.unknown_of_net[self.netlist.index[self.port[0]]])
            rhs = system.rhs(self.port[0])
            solved = _solve(system, freqs, rhs, k)
            failure = solved.failure
            voc, z = solved.x[:, 0], solved.x[:, 1]
            resolved = solved.ok & (np.abs(z) > solved.bound[:, 1])
            with np.errstate(all="ignore"):
                out.put(resolved, voc[resolved], voc[resolved] / z[resolved], z[resolved],
                        True, True, (solved.bound[resolved, 0], solved.bound[resolved, 1]))
            todo = ~resolved
            if (solved.ok & todo).any():
                # z unresolved from 0 while the bound is within the parts' impedances: z = 0
                zero = solved.ok & todo & (solved.bound[:, 1]
                                           <= self.netlist.impedance_range(freqs)[1])
                out.put(zero, voc[zero], _undefined_ratio(voc[zero]), 0j, True, False,
                        (solved.bound[zero, 0], solved.bound[zero, 1]))
                todo &= ~zero
        if todo.any():
            self._from_short(freqs, todo, out, failure, wide)
        return out

    def _from_short(self, freqs: np.ndarray, todo: np.ndarray, out: _Values,
                    failure: SingularCircuitError | None, wide: bool) -> None:
        try:
            system = self.shorted(wide)
            solved = _solve(system, freqs[todo], system.rhs(None), system.short)
        except SingularCircuitError as exc:
            raise self._neither(failure, exc) from None
        if not solved.ok.all():
            raise self._neither(failure, solved.failure)
        isc, y = solved.x[:, 0], -solved.x[:, 1]
        with np.errstate(divide="ignore"):
            y_hi = 1 / self.netlist.impedance_range(freqs[todo])[0]
        resolved = np.abs(y) > solved.bound[:, 1]
        open_port = ~resolved & (solved.bound[:, 1] <= y_hi)
        if not (resolved | open_port).all():
            f = freqs[todo][~(resolved | open_port)][0]
            raise SingularCircuitError(
                f"the port impedance cannot be resolved at {describe_freq(f)}: both the "
                "open-port and the shorted-port equations are numerically singular (part values "
                "spanning more than the precision of double arithmetic)")
        index = np.flatnonzero(todo)
        with np.errstate(all="ignore"):
            z = 1 / y[resolved]
            # first order: z = 1 / y and voc = isc z carry the errors of isc and y along
            z_error = solved.bound[resolved, 1] * np.abs(z) ** 2
            voc_error = solved.bound[resolved, 0] * np.abs(z) + np.abs(isc[resolved]) * z_error
            out.put(index[resolved], isc[resolved] * z, isc[resolved], z, True, True,
                    (voc_error, z_error))
        out.put(index[open_port], _undefined_ratio(isc[open_port]), isc[open_port], _INF,
                False, True, (math.nan, math.nan))

    def _neither(self, failure: SingularCircuitError | None,
                 short_failure: SingularCircuitError | None) -> SingularCircuitError:
        plus, minus = self.port
        detail = failure or short_failure
        return SingularCircuitError(
            f"the region has neither a Thevenin nor a Norton form at port ({plus}, {minus}): "
            f"{detail}" if detail else "the region's equations are singular")


@dataclass(frozen=True, slots=True, eq=False)
class _Solved:
    """Two solutions at F frequencies, read at one unknown: ``x[:, 0]`` for the sources,
    ``x[:, 1]`` for the unit excitation; ``bound[:, j]`` is the error bound on ``x[:, j]``."""

    x: np.ndarray
    bound: np.ndarray
    ok: np.ndarray
    failure: SingularCircuitError | None


def _solve(system: mna.System, freqs: np.ndarray, rhs: np.ndarray, k: int) -> _Solved:
    if freqs.size > 1 and system.size <= DENSE_SWEEP_LIMIT and freqs[0] != 0:
        return _solve_dense(system, freqs, rhs, k)
    return _solve_sparse(system, freqs, rhs, k)


def _solve_sparse(system: mna.System, freqs: np.ndarray, rhs: np.ndarray, k: int) -> _Solved:
    """One SuperLU factorization per frequency, solving both right-hand sides."""
    x = np.full((freqs.size, 2), _NAN)
    bound = np.full((freqs.size, 2), math.inf)
    ok = np.zeros(freqs.size, dtype=bool)
    failure = None
    both = np.column_stack((system.b, rhs))
    for i, f in enumerate(freqs.tolist()):
        try:
            factor = mna.Factor(system, f)
            sol = factor.solve(both)
            adjoint = sol[:, 1] if system.symmetric else factor.solve(rhs, transposed=True)
        except SingularCircuitError as exc:
            failure = exc
            continue
        x[i] = sol[k]
        bound[i] = [factor.error_bound(sol[:, j], both[:, j], adjoint) for j in (0, 1)]
        ok[i] = True
    return _Solved(x, bound, ok, failure)


def _solve_dense(system: mna.System, freqs: np.ndarray, rhs: np.ndarray, k: int) -> _Solved:
    """All frequencies as dense stacks solved batched by NumPy, a cache-sized chunk per call."""
    n = system.size
    g, m = system.parts()
    m = m.tocoo()
    dense_g = g.toarray()
    both = np.column_stack((system.b, rhs)).astype(complex)
    s = 2j * np.pi * freqs
    x = np.empty((freqs.size, n, 2), dtype=complex)
    adjoint = None if system.symmetric else np.empty((freqs.size, n), dtype=complex)
    ok = np.ones(freqs.size, dtype=bool)
    step = max(1, _CHUNK_BYTES // (16 * n * n))
    for start in range(0, freqs.size, step):
        part = slice(start, start + step)
        stack = np.empty((s[part].size, n, n), dtype=complex)
        stack[:] = dense_g
        stack[:, m.row, m.col] += s[part, None] * m.data
        try:
            with np.errstate(all="ignore"):
                x[part] = _dense_solve(stack, both, system.refined)
                if adjoint is not None:
                    adjoint[part] = _dense_solve(stack.transpose(0, 2, 1), rhs[:, None],
                                                 system.refined)[..., 0]
        except np.linalg.LinAlgError:
            ok[part] = False
    ok &= np.isfinite(x).all(axis=(1, 2))
    if adjoint is not None:
        ok &= np.isfinite(adjoint).all(axis=1)
    gamma = mna.rounding((g + m).tocsc())
    bound = np.empty((freqs.size, 2))
    for j, b in enumerate(both.T):
        col = x[:, :, j]
        with np.errstate(all="ignore"):
            residual = b - (g @ col.T).T - s[:, None] * (m @ col.T).T
            abs_ax = (abs(g) @ np.abs(col).T).T + np.abs(s)[:, None] * (abs(m) @ np.abs(col).T).T
        bound[:, j] = mna.bound(x[:, :, 1] if adjoint is None else adjoint, residual, abs_ax, b,
                                gamma)
    solved = _Solved(x[:, k, :], np.where(ok[:, None], bound, math.inf), ok, None)
    if ok.all():
        return solved
    # A chunk with a singular matrix: those frequencies again, one factorization each
    redo = _solve_sparse(system, freqs[~ok], rhs, k)
    solved.x[~ok], solved.bound[~ok], solved.ok[~ok] = redo.x, redo.bound, redo.ok
    return _Solved(solved.x, solved.bound, solved.ok, redo.failure)


def _dense_solve(stack: np.ndarray, rhs: np.ndarray, refined: bool) -> np.ndarray:
    """``stack^{-1} rhs`` for a stack of matrices and one (n, k) right-hand side; refined by
    one step with the residual as :meth:`engine.solve.mna.Factor.solve` does."""
    x = np.linalg.solve(stack, rhs)
    if refined:
        x = x + np.linalg.solve(stack, rhs - stack @ x)
    return x


# -- public functions ---------------------------------------------------------------------------
def equivalent(circuit: Circuit, region: Collection[str], port: Sequence[str] | None = None,
               freq: float | str = 0.0) -> Equivalent:
    """Thevenin and Norton equivalents of ``region`` seen at ``port`` (plus, minus) at ``freq`` Hz.

    ``region``: names of the parts inside the boundary; ``port`` may be omitted where the
    region meets the rest at exactly two nets (see :func:`engine.solve.topology.check_cut`).
    ``freq``: hertz, 0 for DC (capacitors open, inductors shorts); text such as "1k" is read.
    Source phasors are peak values. Raises CutError for an invalid cut, SingularCircuitError
    where the region has no unique solution, CircuitError for other bad input.

    Examples
    --------
    A 10 V source behind 1 kΩ, loaded by 1 kΩ to ground, seen across the load:

    >>> from portcut.engine import GROUND, Circuit
    >>> c = Circuit()
    >>> _ = c.voltage_source("V1", "in", GROUND, 10); _ = c.resistor("R1", "in", "a", "1k")
    >>> _ = c.resistor("R2", "a", GROUND, "1k")
    >>> eq = equivalent(c, {"V1", "R1", "R2"}, port=("a", GROUND))
    >>> round(eq.voc.real, 9), round(eq.z.real, 6), round(eq.isc.real, 9)
    (5.0, 500.0, 0.01)
    """
    f = parse_frequency(freq)
    cut = topology.cut(circuit, region, port)
    return _equivalent_of(cut, f)


def _port_of(cut: topology.Cut, dc: bool) -> _Port:
    """The region's port problem, kept with its (immutable) netlist for the next call."""
    key = ("port", cut.port, dc)
    port = cut.netlist.memo.get(key)
    if port is None:
        port = cut.netlist.memo[key] = _Port(cut.netlist, cut.port, dc)
    return port


def _equivalent_of(cut: topology.Cut, f: float) -> Equivalent:
    values = _port_of(cut, f == 0).values(np.array([f]))
    return Equivalent(cut.port, f, complex(values.voc[0]), complex(values.isc[0]),
                      complex(values.z[0]), bool(values.thevenin[0]), bool(values.norton[0]),
                      float(values.voc_error[0]), float(values.z_error[0]))


def sweep(circuit: Circuit, region: Collection[str], freqs: Iterable[float],
          port: Sequence[str] | None = None) -> Sweep:
    """Equivalents of ``region`` at every frequency of ``freqs`` (Hz, each >= 0).

    The region is checked and assembled once (DC points separately, since capacitors and
    inductors change role there). Small systems are solved as one batched dense stack, large
    ones with one sparse factorization per frequency; see docs/method.md.

    Examples
    --------
    1 V behind 1 kΩ with 159.15 nF to ground: at 1 kHz, ωRC = 1 and |Voc| = 1/√2.

    >>> from portcut.engine import GROUND, Circuit
    >>> c = Circuit()
    >>> _ = c.voltage_source("V1", "in", GROUND, 1); _ = c.resistor("R1", "in", "a", "1k")
    >>> _ = c.capacitor("C1", "a", GROUND, 1 / (2e6 * 3.141592653589793))
    >>> s = sweep(c, {"V1", "R1", "C1"}, [0, 1e3], port=("a", GROUND))
    >>> [round(abs(s[i].voc), 6) for i in range(2)]
    [1.0, 0.707107]
    """
    f = _frequencies(freqs)
    cut = topology.cut(circuit, region, port)
    out = _Values(f.size)
    for dc in (True, False):
        where = (f == 0) if dc else (f > 0)
        if where.any():
            out.take(where, _port_of(cut, dc).values(f[where]))
    arrays = (f, out.voc, out.isc, out.z, out.thevenin, out.norton, out.voc_error, out.z_error)
    for a in arrays:
        a.flags.writeable = False
    return Sweep(cut.port, *arrays)


def _frequencies(freqs: Iterable[float]) -> np.ndarray:
    try:
        raw = np.asarray(list(freqs) if not isinstance(freqs, np.ndarray) else freqs)
    except TypeError:
        raise CircuitError(f"freqs must be a sequence of frequencies in Hz, not {freqs!r}") \
            from None
    if raw.ndim != 1 or raw.size == 0:
        raise CircuitError("freqs must be a non-empty one-dimensional sequence of frequencies "
                           "in Hz")
    if raw.dtype.kind in "iuf":
        f = raw.astype(float)
        bad = ~np.isfinite(f) | (f < 0)
        if bad.any():
            raise CircuitError(f"frequency {float(f[bad][0])!r} Hz must be finite and 0 or more")
        return f.copy()
    return np.array([parse_frequency(v) for v in raw.tolist()], dtype=float)


def collapse(circuit: Circuit, region: Collection[str], port: Sequence[str] | None = None,
             freq: float | str = 0.0, form: str = "thevenin") -> Circuit:
    """A new circuit with the region replaced by its equivalent at ``freq``.

    ``form="thevenin"``: a voltage source ``<P>_V`` (plus to net ``<P>_n``, value voc) in series
    with the impedance ``<P>_Z`` (``<P>_n`` to minus), or the source alone where z = 0.
    ``form="norton"``: a current source ``<P>_I`` pushing isc into plus, with ``<P>_Z`` across
    the port (omitted where z is infinite). ``<P>_Z`` is a resistor where z is real, else an
    impedance part of complex value z (valid at ``freq`` only). ``<P>`` is ``EQ``, or ``EQ2``,
    ``EQ3``... : the first prefix with which no part or net name of the circuit begins.
    Raises CircuitError where the requested form does not exist, suggesting the other.
    """
    if form not in ("thevenin", "norton"):
        raise CircuitError(f"form must be 'thevenin' or 'norton', not {form!r}")
    f = parse_frequency(freq)
    cut = topology.cut(circuit, region, port)
    eq = _equivalent_of(cut, f)
    plus, minus = eq.port
    if form == "thevenin" and not eq.has_thevenin:
        raise CircuitError(f"the region has no Thevenin form at {describe_freq(f)}: its impedance "
                           "is infinite (e.g. an ideal current source at the port); use "
                           "form='norton'")
    if form == "norton" and not eq.has_norton:
        raise CircuitError(f"the region has no Norton form at {describe_freq(f)}: its impedance "
                           "is zero (e.g. an ideal voltage source across the port); use "
                           "form='thevenin'")
    inside = {p.name for p in cut.parts}
    reduced = circuit.without(inside)
    stem = _free_prefix(circuit)
    if form == "thevenin":
        if eq.z == 0:
            reduced.voltage_source(f"{stem}V", plus, minus, eq.voc)
        else:
            reduced.voltage_source(f"{stem}V", plus, f"{stem}n", eq.voc)
            _add_impedance(reduced, f"{stem}Z", f"{stem}n", minus, eq.z)
    else:
        reduced.current_source(f"{stem}I", minus, plus, eq.isc)
        if not cmath.isinf(eq.z):
            _add_impedance(reduced, f"{stem}Z", plus, minus, eq.z)
    return reduced


def _free_prefix(circuit: Circuit) -> str:
    taken = set(circuit.names) | circuit.nets()
    for i in count(1):
        stem = "EQ_" if i == 1 else f"EQ{i}_"
        if not any(name.startswith(stem) for name in taken):
            return stem
    raise AssertionError("unreachable")


def _add_impedance(c: Circuit, name: str, a: str, b: str, z: complex) -> None:
    if z.imag == 0:
        c.resistor(name, a, b, z.real)
    else:
        c.impedance(name, a, b, z)


def check_equivalence(original: Circuit, reduced: Circuit, region: Collection[str], *,
                      port: Sequence[str] | None = None, freq: float | str = 0.0,
                      loads: Iterable[object] = ()) -> EquivalenceReport:
    """Compare ``reduced`` (the region of ``original`` replaced) with ``original`` from outside.

    ``region`` and ``port`` are those of ``original``; the parts of ``reduced`` that are not
    unchanged outside parts of ``original`` are taken as the replacement. Both circuits are
    solved whole at ``freq`` for the outside as drawn and, for each of ``loads`` (ohms: a number,
    complex, or text such as "4k7"; 0 is a short), with that load added across the port. Every
    net voltage outside the region (against ground, or for an island without ground against
    its first port or outside net) and the port current are compared.
    Raises CircuitError where ``reduced`` lacks or alters an outside part.
    """
    f = parse_frequency(freq)
    cut = topology.cut(original, region, port)
    inside = {p.name for p in cut.parts}
    outside = [p for p in original if p.name not in inside]
    for p in outside:
        if p.name not in reduced or reduced[p.name] != p:
            raise CircuitError(f"the reduced circuit {'changes' if p.name in reduced else 'lacks'}"
                               f" {p.name}, which lies outside the region; keep the outside as "
                               "it is")
    kept = {p.name for p in outside}
    replacement = [p for p in reduced if p.name not in kept]
    plus, minus = cut.port
    nets = sorted({n for p in outside for n in p.nets} | {plus, minus})
    # Both circuits are measured from one reference that exists in both: ground where the
    # outside reaches it, else the port's minus net (a ground inside the region is gone once
    # the region is replaced, and potentials against it are no part of the equivalence).
    anchors = (GROUND, minus, plus, *nets) if GROUND in nets else (minus, plus, *nets)
    taken = original.nets() | reduced.nets() | set(original.names) | set(reduced.names)
    probe = _Probe(_unused("the port probe", taken), _unused("the port probe net", taken),
                   plus if plus != GROUND else minus, 1.0 if plus != GROUND else -1.0)
    cases: list[tuple[str, list[Part]]] = [("as drawn", [])]
    for load in loads:
        value = parse_value(load, what="load")
        text = format_complex(value, "Ω") if value != 0 else "a short"
        part = Part(_unused("the port load", taken), "impedance" if isinstance(value, complex)
                    else "resistor", (plus, minus), value)
        cases.append((f"{text} across the port", [part]))
    worst_v = worst_i = scale_v = scale_i = 0.0
    worst_net, worst_case, worst_rel = None, cases[0][0], -1.0
    for label, extra in cases:
        (v0, i0, sv0, si0), (v1, i1, sv1, si1) = (
            _outside_solution([*outside, *extra], inner, probe, f, anchors, nets, f"{which} "
                              f"circuit with {label if extra else 'the outside as drawn'}")
            for which, inner in (("the original", list(cut.parts)), ("the reduced", replacement)))
        dv, di = np.abs(v0 - v1), abs(i0 - i1)
        # Relative to the size of the whole solution, so outside values that cancel to
        # rounding level do not turn rounding noise into a large ratio.
        peak_v, peak_i = max(sv0, sv1), max(si0, si1)
        scale_v, scale_i = max(scale_v, peak_v), max(scale_i, peak_i)
        case_rel = max(_ratio(float(dv.max(initial=0)), peak_v), _ratio(di, peak_i))
        if case_rel > worst_rel:
            worst_rel, worst_case = case_rel, label
        if dv.size and dv.max() > worst_v:
            worst_v, worst_net = float(dv.max()), nets[int(dv.argmax())]
        worst_i = max(worst_i, di)
    return EquivalenceReport(cut.port, f, tuple(label for label, _ in cases), worst_v,
                             _ratio(worst_v, scale_v), worst_i, _ratio(worst_i, scale_i),
                             worst_net, worst_case)


def _ratio(deviation: float, scale: float) -> float:
    if deviation == 0:
        return 0.0
    return deviation / scale if scale > 0 else math.inf


@dataclass(frozen=True, slots=True)
class _Probe:
    """A 0 Ω wire from port net ``net`` (outside side) to ``side`` (the region's side), whose
    current times ``sign`` is the port current into the region at plus."""

    name: str
    side: str
    net: str
    sign: float


def _outside_solution(outside: list[Part], inner: list[Part], probe: _Probe, f: float,
                      anchors: Sequence[str], nets: list[str], what: str
                      ) -> tuple[np.ndarray, complex, float, float]:
    """Voltages of ``nets`` and the port current, with ``inner`` fed through the probe, and the
    scales of the whole solution: the largest net voltage (at least the largest current times
    the smallest part impedance) and the largest current (a branch's or a current source's, at
    least the largest voltage over the largest part impedance)."""
    moved = [replace(p, nodes=tuple(probe.side if n == probe.net else n for n in p.nodes))
             for p in inner]
    wire = Part(probe.name, "resistor", (probe.net, probe.side), 0.0)
    netlist = mna.Netlist([*outside, wire, *moved])
    dc = f == 0
    try:
        found = topology.islands(netlist, dc, anchors)
        found.raise_problems()
        topology.check_voltage_loops(netlist, dc)
        system = mna.assemble(netlist, found.pinned, wide=bool(netlist.wide(np.array([f]))[0]))
        x = mna.Factor(system, f).solve(system.b)
    except SingularCircuitError as exc:
        raise SingularCircuitError(f"{what} has no unique solution: {exc}") from None
    ids = system.unknown_of_net[[netlist.index[n] for n in nets]]
    volts = np.where(ids >= 0, x[np.maximum(ids, 0)], 0)
    current = probe.sign * complex(x[system.branch_of[probe.name]])
    node_part, branch_part = x[:system.n_nodes], x[system.n_nodes:]
    # a current source's current is part of the solution too (it has no branch unknown)
    sources = np.abs(netlist["current_source"].values)
    peak_i = max(float(np.abs(branch_part).max(initial=0)), abs(current),
                 float(sources.max(initial=0)))
    # a current circulating in wires leaves every voltage at rounding level: the voltages
    # such a current makes across the smallest part impedance are the scale of that noise;
    # and where every current is rounding noise (an open outside, say), the currents that the
    # voltages drive through the largest part impedance are the scale of that noise
    smallest, largest = (float(z[0]) for z in netlist.impedance_range(np.array([f])))
    peak_v = float(np.abs(node_part).max(initial=0))
    with np.errstate(all="ignore"):
        through_largest = peak_v / largest if math.isfinite(largest) else 0.0
    return volts, current, max(peak_v, peak_i * smallest), max(peak_i, through_largest)
