"""One part of a netlist: its kind, nodes, value and references, the tables of kinds, and the
checks a part passes on joining a circuit. Net ``"gnd"`` (:data:`GROUND`) is ground; the sign
conventions are those of :mod:`engine.solve.circuit`."""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

from ..errors import CircuitError
from .kinds import CONTROLLED_BY_CURRENT as _CURRENT_CONTROLLED
from .kinds import CURRENTLESS as _CURRENTLESS
from .kinds import KINDS, REFERRING
from .kinds import SOURCES as _SOURCES
from .units import VALUE_UNITS, parse_value

if TYPE_CHECKING:
    from .circuit import Circuit

__all__ = ["GROUND", "KINDS", "REFERRING", "Part"]

GROUND = "gnd"



@dataclass(frozen=True, slots=True)
class Part:
    """One part: ``kind`` from :data:`KINDS`, its ``nodes`` in the kind's order, and its value.

    ``value`` is ohms, farads, henries, a complex impedance in ohms, a source phasor in volts or
    amperes (peak unless the caller says otherwise), a dimensionless gain (VCVS, CCCS), siemens
    (VCCS), ohms (CCVS) or the coupling coefficient k. ``refs`` names the controlling part of a
    current-controlled source, or the two inductors of a coupling.
    """

    name: str
    kind: str
    nodes: tuple[str, ...]
    value: complex | float = 0.0
    refs: tuple[str, ...] = ()

    @property
    def nets(self) -> tuple[str, ...]:
        """Every net the part touches, sense nets and the op-amp's ground return included."""
        return (*self.nodes, GROUND) if self.kind == "opamp" else self.nodes

    @property
    def is_independent_source(self) -> bool:
        return self.kind in _SOURCES

    @property
    def is_wire(self) -> bool:
        """A 0 Ω resistor: an ideal wire, solved as a 0 V source so it costs no conditioning."""
        return self.kind == "resistor" and self.value == 0



def _phasor(name: str, value: object, phase_deg: float | None) -> complex | float:
    magnitude = parse_value(value, what=f"{name} value")
    if phase_deg is None:
        return magnitude
    if isinstance(magnitude, complex):
        raise CircuitError(f"{name}: give either a complex value or a magnitude with phase_deg")
    try:
        angle = math.radians(float(phase_deg))
    except (TypeError, ValueError):
        raise CircuitError(f"{name}: phase_deg {phase_deg!r} is not a number of degrees") from None
    if not math.isfinite(angle):
        raise CircuitError(f"{name}: phase_deg {phase_deg!r} is not finite")
    z = cmath.rect(magnitude, angle)
    return z.real if z.imag == 0 else z


def _read(kind: str, name: str, value: object) -> complex | float:
    number = parse_value(value, what=f"{name} value", unit=VALUE_UNITS.get(kind))
    if isinstance(number, complex) and kind not in {"impedance", "voltage_source",
                                                     "current_source", "vcvs", "vccs",
                                                     "ccvs", "cccs"}:
        raise CircuitError(f"{name}: a {kind} takes a real value, not {value!r}; "
                           "use an impedance part for a complex value")
    return number


def _validated(part: Part, value: complex | float, circuit: Circuit, *,
               replacing: bool = False) -> Part:
    """Check one part, with its value already read, against the circuit it joins; returns the
    part as stored (tuples normalised)."""
    name = part.name
    if not isinstance(name, str) or not name.strip():
        raise CircuitError(f"a part name must be non-empty text, not {name!r}")
    if name in circuit and not replacing:
        raise CircuitError(f"{name}: a part of that name is already in the circuit")
    roles = KINDS[part.kind]
    if not isinstance(part.nodes, tuple | list):
        raise CircuitError(f"{name}: nets must be a sequence of net names, not {part.nodes!r}")
    if not isinstance(part.refs, tuple | list):
        raise CircuitError(f"{name}: references must be a sequence of part names, "
                           f"not {part.refs!r}")
    nodes = tuple(part.nodes)
    if len(nodes) != len(roles):
        raise CircuitError(f"{name}: a {part.kind} takes {len(roles)} nets "
                           f"({', '.join(roles) or 'none'}), got {len(nodes)}")
    for role, net in zip(roles, nodes, strict=True):
        if not isinstance(net, str) or not net.strip():
            raise CircuitError(f"{name}: net {role!r} must be a non-empty name, not {net!r}")
    if part.kind == "impedance" and value == 0:
        raise CircuitError(f"{name}: an impedance part must be non-zero; use a 0 Ω resistor "
                           "for a wire")
    if part.kind in _CURRENT_CONTROLLED:
        if len(part.refs) != 1 or not isinstance(part.refs[0], str) or not part.refs[0]:
            raise CircuitError(f"{name}: a {part.kind} names the one part whose current "
                               f"controls it, got {tuple(part.refs)!r}")
        (control,) = part.refs
        if control == name:
            raise CircuitError(f"{name}: a source cannot be controlled by its own current")
        if control in circuit and circuit[control].kind in _CURRENTLESS:
            raise CircuitError(f"{name}: {control} has no single branch current to sense")
    if part.kind == "coupling":
        _validate_coupling(part, value, circuit)
    return Part(name, part.kind, nodes, value, tuple(part.refs))


def _validate_coupling(part: Part, k: float, circuit: Circuit) -> None:
    name = part.name
    if len(part.refs) != 2 or part.refs[0] == part.refs[1]:
        raise CircuitError(f"{name}: a coupling names two different inductors, got {part.refs!r}")
    if not -1 <= k <= 1:
        raise CircuitError(f"{name}: coupling coefficient {k!r} must lie in [-1, 1]")
    for ref in part.refs:
        if ref not in circuit:
            raise CircuitError(f"{name}: couples {ref!r}, which is not in the circuit; "
                               "add the inductors first")
        if circuit[ref].kind != "inductor":
            raise CircuitError(f"{name}: couples {ref}, which is a {circuit[ref].kind}, "
                               "not an inductor")
