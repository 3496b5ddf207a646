"""The netlist level: named parts on named nets. Net ``"gnd"`` (:data:`GROUND`) is ground.

Sign conventions (kept by every module and stated in docs/method.md):

* the current of a two-terminal part flows from its first node to its second node, inside the part;
* a current-type source (independent, VCCS or CCCS) with nodes ``(n_from, n_to)`` drives its current
  from ``n_from`` through itself into ``n_to`` (the arrow of its symbol points at ``n_to``);
* a voltage-type source with nodes ``(p, n)`` sets ``V(p) - V(n)``;
* a coupling's dots sit at each inductor's first node; the mutual inductance is
  ``M = k * sqrt(L1 * L2)``;
* the ideal op-amp (nullor) holds ``V(inp) = V(inn)`` and drives its output from ground;
* a device part (bipolar transistor, MOSFET, finite op-amp: engine/solve/devices.py) is one name to
  the user and a few primitive parts ``<device>:<role>`` here; a region naming the device takes
  all of them.

A part and its checks live in :mod:`engine.solve.part`, the array form the solver reads in
:mod:`engine.solve.columns`; both are re-exported here.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator
from dataclasses import replace

import numpy as np

from ..errors import CircuitError
from . import devices as _devices
from .columns import KIND_CODE as KIND_CODE
from .columns import NET_COLUMNS as NET_COLUMNS
from .columns import Columns, References, _Store
from .columns import kind_mask as kind_mask
from .part import GROUND, KINDS, REFERRING, Part, _phasor, _read, _validated

__all__ = ["GROUND", "KINDS", "REFERRING", "Circuit", "Columns", "Part", "References"]


class Circuit:
    """An ordered collection of uniquely named parts. Builder methods validate and return the Part.

    >>> c = Circuit()
    >>> c.voltage_source("V1", "in", "gnd", 5).nodes
    ('in', 'gnd')
    >>> c.resistor("R1", "in", "out", "4k7").value
    4700.0
    """

    def __init__(self, parts: Iterable[Part] = ()) -> None:
        self._parts: dict[str, Part] = {}
        self._store = _Store()
        self._devices: dict[str, _devices.Device] = {}
        self._members: dict[str, tuple[str, ...]] = {}
        # shared by the circuits that hold parts of the same names (see same_names)
        self._roster: object | None = None
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
        new = Circuit()
        new._parts, new._store = dict(self._parts), self._store.copy(self._parts)
        new._devices, new._members = dict(self._devices), dict(self._members)
        new._roster = self._roster_key()
        return new

    def _roster_key(self) -> object:
        if self._roster is None:
            self._roster = object()
        return self._roster

    def same_names(self, other: Circuit) -> bool:
        """Whether ``other`` is known to hold parts of the same names, and the same device
        parts, as this circuit: one was made from the other by :meth:`replaced` or
        :meth:`copy` with no part added since. A cheap test, for keeping what depends on the
        names alone; False does not say that the names differ."""
        return self._roster_key() is other._roster_key()

    # -- device parts -------------------------------------------------------------------------
    @property
    def devices(self) -> dict[str, _devices.Device]:
        """The device parts (transistors, finite op-amps) by name, in the order added."""
        return dict(self._devices)

    @property
    def has_devices(self) -> bool:
        return bool(self._members)

    def members(self, name: str) -> tuple[str, ...]:
        """The primitive parts device ``name`` expands into, in expansion order."""
        try:
            return self._members[name]
        except KeyError:
            raise CircuitError(f"there is no device part named {name!r} in the circuit") \
                from None

    def expand_names(self, names: Iterable[str]) -> set[str]:
        """``names`` with each device name replaced by its primitive parts."""
        if not self._members:
            return set(names)
        out: set[str] = set()
        for name in names:
            found = self._members.get(name) if isinstance(name, str) else None
            if found is None:
                out.add(name)
            else:
                out.update(found)
        return out

    def add_device(self, name: str, kind: str, nodes: Iterable[str],
                   params: dict[str, object]) -> _devices.Device:
        """Add a device part of ``kind`` (a key of engine.solve.devices.DEVICE_KINDS) on ``nodes``
        in the kind's order, with ``params`` (numbers or value text) by parameter name."""
        if kind not in _devices.DEVICE_KINDS:
            raise CircuitError(f"{name}: unknown device kind {kind!r}; known kinds: "
                               f"{', '.join(_devices.DEVICE_KINDS)}")
        nodes = tuple(nodes)
        roles = _devices.DEVICE_KINDS[kind]
        if len(nodes) != len(roles):
            raise CircuitError(f"{name}: a {kind} takes {len(roles)} nets "
                               f"({', '.join(roles)}), got {len(nodes)}")
        return self._add_device(_devices.make(name, kind, nodes, params))

    def _add_device(self, device: _devices.Device) -> _devices.Device:
        if not isinstance(device.name, str) or not device.name.strip():
            raise CircuitError(f"a part name must be non-empty text, not {device.name!r}")
        if device.name in self._parts or device.name in self._devices:
            raise CircuitError(f"{device.name}: a part of that name is already in the circuit")
        for role, net in zip(_devices.DEVICE_KINDS[device.kind], device.nodes, strict=True):
            if not isinstance(net, str) or not net.strip():
                raise CircuitError(f"{device.name}: net {role!r} must be a non-empty name, "
                                   f"not {net!r}")
        members = _devices.expand(device, GROUND)
        for m in members:
            self.add(Part(m.name, m.kind, m.nodes, m.value))
        self._devices[device.name] = device
        self._members[device.name] = tuple(m.name for m in members)
        return device

    def rows_of(self, names: set[str] | frozenset[str]) -> np.ndarray | None:
        """Rows (circuit order) of the parts named in ``names``, None where it names every
        part; names of no part are passed over."""
        parts = self._parts
        # set against set compares stored hashes, without hashing each name again
        if len(names) == len(parts) and names == self._store.named:
            return None
        return np.fromiter(map(names.__contains__, parts), bool, len(parts)).nonzero()[0]

    def columns(self) -> Columns:
        """The parts as arrays (see :class:`Columns`); kept until the next :meth:`add`."""
        return self._store.columns(self._parts)

    def without(self, names: Iterable[str]) -> Circuit:
        """A new circuit without the named parts (unknown names are refused)."""
        drop = self.expand_names(names)
        for name in drop:
            self[name]
        return self._keeping(p for p in self if p.name not in drop)

    def subcircuit(self, names: Iterable[str]) -> Circuit:
        """A new circuit of only the named parts, in this circuit's order."""
        keep = self.expand_names(names)
        for name in keep:
            self[name]
        return self._keeping(p for p in self if p.name in keep)

    def _keeping(self, parts: Iterable[Part]) -> Circuit:
        """A new circuit of ``parts`` (of this one), keeping the devices all of whose
        members are among them."""
        new = Circuit(parts)
        for name, members in self._members.items():
            if all(m in new for m in members):
                new._devices[name], new._members[name] = self._devices[name], members
        return new

    def with_value(self, name: str, value: object) -> Circuit:
        """A new circuit in which part ``name`` has a new value (validated as on creation)."""
        return self.replaced([replace(self[name], value=value)])

    def replaced(self, parts: Iterable[Part]) -> Circuit:
        """A new circuit in which each of ``parts`` takes the place of the part of the same name
        and kind, validated as on creation; the other parts are shared unchecked (they were
        checked when added and a same-kind replacement cannot invalidate them), so an editor
        changing a few parts of a large circuit pays a dictionary and an array copy, not a
        rebuild."""
        new = Circuit()
        new._parts = dict(self._parts)
        stored: dict[str, Part] = {}
        for part in parts:
            old = self[part.name]
            if part.kind != old.kind:
                raise CircuitError(f"{part.name}: a {old.kind} cannot be replaced by a "
                                   f"{part.kind}; build the circuit again")
            value = _read(part.kind, part.name, part.value)
            new._parts[part.name] = stored[part.name] = _validated(part, value, new,
                                                                   replacing=True)
        new._store = self._store.replaced(self._parts, list(stored.values()))
        new._devices, new._members = self._devices, self._members
        new._roster = self._roster_key()
        return new

    # -- building -----------------------------------------------------------------------------
    def add(self, part: Part) -> Part:
        """Add a part after checking its name, nodes, value and references."""
        if not isinstance(part.kind, str) or part.kind not in KINDS:
            raise CircuitError(f"{part.name}: unknown part kind {part.kind!r}; "
                               f"known kinds: {', '.join(KINDS)}")
        part = _validated(part, _read(part.kind, part.name, part.value), self)
        self._parts[part.name] = part
        self._store.append(part)
        self._roster = None
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

    def opamp(self, name: str, inp: str, inn: str, out: str, *, a0: object = None,
              gbw: object = None, rin: object = None,
              rout: object = None) -> Part | _devices.Device:
        """Ideal op-amp (nullor): V(inp) = V(inn), output driven from ground, no input current.

        With ``a0`` (open-loop DC gain) it is a finite op-amp device instead: optional ``gbw``
        (Hz, one pole at gbw / a0), ``rin`` (Ω across the inputs) and ``rout`` (Ω in series
        with the output); see engine/solve/devices.py.
        """
        finite = {"a0": a0, "gbw": gbw, "rin": rin, "rout": rout}
        if any(v is not None for v in finite.values()):
            return self._add_device(_devices.make(name, "opamp_finite", (inp, inn, out),
                                                  finite))
        return self.add(Part(name, "opamp", (inp, inn, out), 0.0))

    def bjt(self, name: str, b: str, c: str, e: str, **params: object) -> _devices.Device:
        """Small-signal bipolar transistor (hybrid-π; NPN and PNP alike).

        Either the bias point ``ic`` (A), ``beta``, optional ``va`` (V) and ``temp_k`` (K,
        300 by default), or ``gm`` (S), ``rpi`` (Ω), optional ``ro`` (Ω); optional ``rx`` (Ω),
        ``cpi`` and ``cmu`` (F) with either.
        """
        return self._add_device(_devices.make(name, "bjt", (b, c, e), params))

    def measured_source(self, name: str, p: str, n: str, **params: object) -> _devices.Device:
        """A source known from measurements (engine/solve/measured.py), drawn as Voc in series with
        R between ``p`` (plus) and ``n``: either ``voc`` (V), ``rl`` (Ω) and ``vl`` (V, the
        voltage under rl), or ``table``: (load Ω, volts) pairs or their text, fitted by least
        squares."""
        return self._add_device(_devices.make(name, "measured_source", (p, n), params))

    def mosfet(self, name: str, g: str, d: str, s: str, **params: object) -> _devices.Device:
        """Small-signal MOSFET (n- and p-channel alike): either ``id`` (A), ``vov`` (V),
        optional ``lam`` (1/V), or ``gm`` (S), optional ``ro`` (Ω); optional ``cgs``, ``cgd``
        (F)."""
        return self._add_device(_devices.make(name, "mosfet", (g, d, s), params))

    def coupling(self, name: str, l1: str, l2: str, k: object) -> Part:
        """Magnetic coupling of inductors l1 and l2, coefficient |k| <= 1."""
        return self.add(Part(name, "coupling", (), k, (l1, l2)))

