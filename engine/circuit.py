"""The netlist level: named parts on named nets. Net ``"0"`` is ground.

Sign conventions (kept by every module and stated in docs/method.md):

* the current of a two-terminal part flows from its first node to its second node, inside the part;
* a current-type source (independent, VCCS or CCCS) with nodes ``(n_from, n_to)`` drives its current
  from ``n_from`` through itself into ``n_to`` (the arrow of its symbol points at ``n_to``);
* a voltage-type source with nodes ``(p, n)`` sets ``V(p) - V(n)``;
* a coupling's dots sit at each inductor's first node; the mutual inductance is
  ``M = k * sqrt(L1 * L2)``;
* the ideal op-amp (nullor) holds ``V(inp) = V(inn)`` and drives its output from ground.
"""

from __future__ import annotations

import cmath
import math
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, replace

from .errors import CircuitError
from .units import parse_value

__all__ = ["GROUND", "KINDS", "Circuit", "Part"]

GROUND = "0"

#: Every part kind, with the roles of its nodes.
KINDS: dict[str, tuple[str, ...]] = {
    "resistor": ("a", "b"),
    "capacitor": ("a", "b"),
    "inductor": ("a", "b"),
    "impedance": ("a", "b"),
    "voltage_source": ("p", "n"),
    "current_source": ("from", "to"),
    "vcvs": ("p", "n", "cp", "cn"),
    "vccs": ("from", "to", "cp", "cn"),
    "ccvs": ("p", "n"),
    "cccs": ("from", "to"),
    "opamp": ("inp", "inn", "out"),
    "coupling": (),
}
_CURRENT_CONTROLLED = frozenset({"ccvs", "cccs"})
_SOURCES = frozenset({"voltage_source", "current_source"})


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


class Circuit:
    """An ordered collection of uniquely named parts. Builder methods validate and return the Part.

    >>> c = Circuit()
    >>> c.voltage_source("V1", "in", "0", 5).nodes
    ('in', '0')
    >>> c.resistor("R1", "in", "out", "4k7").value
    4700.0
    """

    def __init__(self, parts: Iterable[Part] = ()) -> None:
        self._parts: dict[str, Part] = {}
        for part in parts:
            self.add(part)

    # -- container protocol -------------------------------------------------------------------
    def __iter__(self) -> Iterator[Part]:
        return iter(self._parts.values())

    def __len__(self) -> int:
        return len(self._parts)

    def __contains__(self, name: object) -> bool:
        return name in self._parts

    def __getitem__(self, name: str) -> Part:
        try:
            return self._parts[name]
        except KeyError:
            raise CircuitError(f"there is no part named {name!r} in the circuit") from None

    def __eq__(self, other: object) -> bool:
        return isinstance(other, Circuit) and list(self) == list(other)

    def __repr__(self) -> str:
        return f"Circuit({len(self)} parts, {len(self.nets())} nets)"

    @property
    def names(self) -> list[str]:
        return list(self._parts)

    def nets(self) -> set[str]:
        """Every net any part touches."""
        return {net for part in self for net in part.nets}

    def copy(self) -> Circuit:
        return Circuit(self)

    def without(self, names: Iterable[str]) -> Circuit:
        """A new circuit without the named parts (unknown names are refused)."""
        drop = set(names)
        for name in drop:
            self[name]
        return Circuit(p for p in self if p.name not in drop)

    def subcircuit(self, names: Iterable[str]) -> Circuit:
        """A new circuit of only the named parts, in this circuit's order."""
        keep = set(names)
        for name in keep:
            self[name]
        return Circuit(p for p in self if p.name in keep)

    def with_value(self, name: str, value: object) -> Circuit:
        """A new circuit in which part ``name`` has a new value (validated as on creation)."""
        return self.replaced([replace(self[name], value=value)])

    def replaced(self, parts: Iterable[Part]) -> Circuit:
        """A new circuit in which each of ``parts`` takes the place of the part of the same name
        and kind, validated as on creation; the other parts are shared unchecked (they were
        checked when added and a same-kind replacement cannot invalidate them), so an editor
        changing a few parts of a large circuit pays a dictionary copy, not a rebuild."""
        new = Circuit()
        new._parts = dict(self._parts)
        for part in parts:
            old = self[part.name]
            if part.kind != old.kind:
                raise CircuitError(f"{part.name}: a {old.kind} cannot be replaced by a "
                                   f"{part.kind}; build the circuit again")
            value = _read(part.kind, part.name, part.value)
            new._parts[part.name] = _validated(part, value, new, replacing=True)
        return new

    # -- building -----------------------------------------------------------------------------
    def add(self, part: Part) -> Part:
        """Add a part after checking its name, nodes, value and references."""
        if not isinstance(part.kind, str) or part.kind not in KINDS:
            raise CircuitError(f"{part.name}: unknown part kind {part.kind!r}; "
                               f"known kinds: {', '.join(KINDS)}")
        part = _validated(part, _read(part.kind, part.name, part.value), self)
        self._parts[part.name] = part
        return part

    def _two(self, kind: str, name: str, a: str, b: str, value: object) -> Part:
        return self.add(Part(name, kind, (a, b), value))

    def resistor(self, name: str, a: str, b: str, ohms: object) -> Part:
        """Resistance in ohms; 0 makes an ideal wire."""
        return self._two("resistor", name, a, b, ohms)

    def capacitor(self, name: str, a: str, b: str, farads: object) -> Part:
        return self._two("capacitor", name, a, b, farads)

    def inductor(self, name: str, a: str, b: str, henries: object) -> Part:
        return self._two("inductor", name, a, b, henries)

    def impedance(self, name: str, a: str, b: str, ohms: complex) -> Part:
        """A fixed complex impedance in ohms (the same at every frequency)."""
        return self._two("impedance", name, a, b, ohms)

    def voltage_source(self, name: str, p: str, n: str, volts: object = 0.0, *,
                       phase_deg: float | None = None) -> Part:
        """Sets V(p) - V(n) = volts; a magnitude with ``phase_deg`` gives a phasor."""
        return self._two("voltage_source", name, p, n, _phasor(name, volts, phase_deg))

    def current_source(self, name: str, n_from: str, n_to: str, amperes: object = 0.0, *,
                       phase_deg: float | None = None) -> Part:
        """Drives ``amperes`` from ``n_from`` through itself into ``n_to``."""
        return self._two("current_source", name, n_from, n_to, _phasor(name, amperes, phase_deg))

    def vcvs(self, name: str, p: str, n: str, cp: str, cn: str, gain: object) -> Part:
        """V(p) - V(n) = gain * (V(cp) - V(cn))."""
        return self.add(Part(name, "vcvs", (p, n, cp, cn), gain))

    def vccs(self, name: str, n_from: str, n_to: str, cp: str, cn: str, siemens: object) -> Part:
        """Drives siemens * (V(cp) - V(cn)) from ``n_from`` through itself into ``n_to``."""
        return self.add(Part(name, "vccs", (n_from, n_to, cp, cn), siemens))

    def ccvs(self, name: str, p: str, n: str, control: str, ohms: object) -> Part:
        """V(p) - V(n) = ohms * I(control)."""
        return self.add(Part(name, "ccvs", (p, n), ohms, (control,)))

    def cccs(self, name: str, n_from: str, n_to: str, control: str, gain: object) -> Part:
        """Drives gain * I(control) from ``n_from`` through itself into ``n_to``."""
        return self.add(Part(name, "cccs", (n_from, n_to), gain, (control,)))

    def opamp(self, name: str, inp: str, inn: str, out: str) -> Part:
        """Ideal op-amp (nullor): V(inp) = V(inn), output driven from ground, no input current."""
        return self.add(Part(name, "opamp", (inp, inn, out), 0.0))

    def coupling(self, name: str, l1: str, l2: str, k: object) -> Part:
        """Magnetic coupling of inductors l1 and l2, coefficient |k| <= 1."""
        return self.add(Part(name, "coupling", (), k, (l1, l2)))


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
    number = parse_value(value, what=f"{name} value")
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
        if control in circuit and circuit[control].kind in {"opamp", "coupling"}:
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
