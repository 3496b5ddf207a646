"""The check that a collapsed circuit behaves as the original, seen from outside the region."""

from __future__ import annotations

import math
from collections.abc import Collection, Iterable, Sequence
from dataclasses import dataclass, replace

import numpy as np

from ...errors import CircuitError, SingularCircuitError
from .. import mna, topology
from ..circuit import GROUND, Circuit, Part
from ..names import unused_name as _unused
from ..units import format_complex, parse_frequency, parse_value
from .results import EquivalenceReport

__all__ = ["check_equivalence"]


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
