"""The port problem of one region: voc, isc and z decided from the open-port system, and from
the shorted-port one where the open port cannot decide."""

from __future__ import annotations

import math

import numpy as np

from ...errors import SingularCircuitError
from .. import mna, topology
from ..mna import describe_freq
from .solvers import _solve

__all__: list[str] = []

_INF = complex(math.inf, 0.0)
_NAN = complex(math.nan, math.nan)


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
