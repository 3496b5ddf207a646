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
"""

from __future__ import annotations

import cmath
import functools
import math
from array import array
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, field, replace

import numpy as np

from ..errors import CircuitError
from . import devices as _devices
from .kinds import CONTROLLED_BY_CURRENT as _CURRENT_CONTROLLED
from .kinds import KIND_CODE, KINDS, REFERRING
from .kinds import SOURCES as _SOURCES
from .units import VALUE_UNITS, parse_value

__all__ = ["GROUND", "KINDS", "REFERRING", "Circuit", "Columns", "Part", "References"]

GROUND = "gnd"

#: Columns of net ids per part: enough for the widest kind (an op-amp with its ground return).
NET_COLUMNS = 4
_PAD = [[-1] * (NET_COLUMNS - used) for used in range(NET_COLUMNS + 1)]


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
        return new

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


@dataclass(frozen=True, slots=True, eq=False, repr=False)
class Columns:
    """A circuit's parts as arrays, one row per part in circuit order (read-only).

    ``kinds[i]`` is the code of part i's kind (:data:`KIND_CODE`); ``nodes[i]`` the ids of the
    nets it touches (``Part.nets`` order, so an op-amp's ground return is its fourth), padded
    with -1; ``values[i]`` its value as a complex number and ``complex_valued[i]`` whether the
    value was given as one. A net id indexes ``nets`` (``net_id`` maps a name back), a register
    that circuits derived from one another share and only ever extend, so it may name nets no
    part of this circuit touches. ``row`` maps a part name to its row; it is the circuit's own
    and grows as parts are added, so :meth:`row_of` ignores rows added after these columns.
    """

    kinds: np.ndarray
    nodes: np.ndarray
    values: np.ndarray
    complex_valued: np.ndarray
    names: list[str]
    parts: list[Part]
    nets: list[str]
    net_id: dict[str, int]
    row: dict[str, int]
    _references: list[References] = field(default_factory=list)

    def __len__(self) -> int:
        return len(self.parts)

    def row_of(self, name: str) -> int | None:
        """The row of part ``name``, None where there is no such part."""
        row = self.row.get(name)
        return row if row is not None and row < len(self.parts) else None

    @classmethod
    def of(cls, parts: Iterable[Part]) -> Columns:
        """The columns of parts already checked (those of a Circuit, or made from them)."""
        listed = list(parts)
        store = _Store()
        for part in listed:
            store.append(part)
        return store.columns(listed)

    def rows_of(self, kinds: tuple[str, ...]) -> np.ndarray:
        """Rows of the parts of the given kinds, in circuit order."""
        return kind_mask(kinds)[self.kinds].nonzero()[0]

    def shares_references(self, other: Columns) -> bool:
        """True when ``other`` shares these columns' references: made by replacing parts
        that name none, its referring parts are the very same."""
        return other._references is self._references

    def references(self) -> References:
        """The rows of the parts that other parts name (made when first asked, then kept:
        the columns never change; columns made by replacing parts that name none share
        them)."""
        if not self._references:
            self._references.append(References(self))
        return self._references[0]


class References:
    """Which part each referring part (CCVS, CCCS, coupling) names, as rows of ``columns``.

    ``rows`` are the referring parts' rows (ascending), ``named[i]`` the rows of the parts the
    i-th names (its controlling part; a coupling's two inductors), -1 where the circuit has no
    part of that name (a controlling part not added yet) and, for a controlled source, in the
    unused second column.
    """

    __slots__ = ("columns", "named", "rows")

    def __init__(self, columns: Columns) -> None:
        self.columns = columns
        self.rows = columns.rows_of(REFERRING)
        parts, row_of = columns.parts, columns.row_of
        found = [[row_of(ref) for ref in parts[i].refs] for i in self.rows.tolist()]
        self.named = np.array([[-1 if r is None else r for r in refs] + [-1] * (2 - len(refs))
                               for refs in found], dtype=np.intp).reshape(-1, 2)

    def of(self, rows: np.ndarray) -> np.ndarray:
        """``named`` for the referring parts at ``rows`` (rows of the columns, ascending)."""
        return self.named[np.searchsorted(self.rows, rows)]

    def name(self, row: int, which: int) -> str:
        """The name the part at ``row`` gives as its ``which``-th reference (for messages)."""
        return self.columns.parts[row].refs[which]


@functools.cache
def kind_mask(kinds: tuple[str, ...]) -> np.ndarray:
    """A boolean per kind code, True for the given kinds (index it with an array of codes);
    made once per tuple of kinds, read-only."""
    mask = np.zeros(len(KINDS), dtype=bool)
    mask[[KIND_CODE[k] for k in kinds]] = True
    mask.flags.writeable = False
    return mask


class _Store:
    """The columns behind a Circuit: growing arrays appended to as parts are added, and the
    read-only :class:`Columns` made from them when first asked (kept until the next append).

    A store made by :meth:`replaced` starts from columns alone, sharing the unchanged arrays
    with the store it came from; it makes growing arrays only if parts are added to it. The net
    register (``net_id``, ``nets``) is shared with the stores made from this one: it only grows
    and a name keeps its id, so sharing cannot make an id wrong. ``row`` (part name to row) and
    ``named`` (the part names, as a set) are shared too, and copied by whichever store appends
    first.
    """

    __slots__ = ("_columns", "_growing", "_owns", "named", "net_id", "nets", "row")

    def __init__(self) -> None:
        self._growing: _Growing | None = _Growing()
        self._columns: Columns | None = None
        self.net_id: dict[str, int] = {}
        self.nets: list[str] = []
        self.row: dict[str, int] = {}
        self.named: set[str] = set()
        self._owns = True  # row and named are this store's alone

    def _derived(self, columns: Columns) -> _Store:
        new = _Store.__new__(_Store)
        new._growing, new._columns = None, columns
        new.net_id, new.nets, new.row, new.named = self.net_id, self.nets, self.row, self.named
        new._owns = self._owns = False
        return new

    def copy(self, parts: dict[str, Part]) -> _Store:
        return self._derived(self.columns(parts))

    def replaced(self, parts: dict[str, Part], new: list[Part]) -> _Store:
        """A store for ``parts`` with each of ``new`` in place of its same-named, same-kind
        part: the arrays that change are copied, the others shared."""
        base = self.columns(parts)
        rows = [self.row[part.name] for part in new]
        nodes = base.nodes
        ids = [[*self._ids(part.nets), *_PAD[len(part.nets)]] for part in new]
        if any(nodes[i].tolist() != row for i, row in zip(rows, ids, strict=True)):
            nodes = nodes.copy()
            nodes[rows] = ids
        values, flags = base.values.copy(), base.complex_valued.copy()
        values[rows] = [part.value for part in new]
        flags[rows] = [isinstance(part.value, complex) for part in new]
        listed = base.parts.copy()
        for i, part in zip(rows, new, strict=True):
            listed[i] = part
        for a in (nodes, values, flags):
            a.flags.writeable = False
        # what the referring parts name is unchanged unless one of them is replaced
        references = [] if any(part.kind in REFERRING for part in new) else base._references
        return self._derived(Columns(base.kinds, nodes, values, flags, base.names, listed,
                                     self.nets, self.net_id, self.row, references))

    def _ids(self, nets: tuple[str, ...]) -> list[int]:
        """Register ids of ``nets``; a new name takes the next."""
        ids = []
        for net in nets:
            found = self.net_id.get(net)
            if found is None:
                found = self.net_id[net] = len(self.nets)
                self.nets.append(net)
            ids.append(found)
        return ids

    def append(self, part: Part) -> None:
        # one call per added part, kept lean: it is most of what add() spends here
        if not self._owns:
            self.row, self.named, self._owns = dict(self.row), set(self.named), True
        growing = self._growing
        if growing is None:
            assert self._columns is not None
            growing = self._growing = _Growing.of(self._columns)
        self.row[part.name] = len(growing.kinds)
        self.named.add(part.name)
        growing.kinds.append(KIND_CODE[part.kind])
        ids = self._ids(part.nets)
        growing.nodes.fromlist(ids + _PAD[len(ids)])  # fromlist: the fastest way in
        value = part.value
        growing.values.fromlist([value.real, value.imag])
        growing.flags.append(isinstance(value, complex))
        self._columns = None

    def columns(self, parts: dict[str, Part] | list[Part]) -> Columns:
        """The columns, with ``parts`` (by name, or listed) in row order."""
        if self._columns is None:
            assert self._growing is not None
            listed = list(parts.values()) if isinstance(parts, dict) else parts
            names = list(parts) if isinstance(parts, dict) else [p.name for p in listed]
            self._columns = self._growing.columns(names, listed, self.nets, self.net_id, self.row)
        return self._columns


class _Growing:
    """Columns being appended to: compact arrays (amortised growth); the columns handed out
    are read-only copies."""

    __slots__ = ("flags", "kinds", "nodes", "values")

    def __init__(self) -> None:
        self.kinds = array("b")
        self.nodes = array("i")  # NET_COLUMNS per part (32-bit: SciPy's index type)
        self.values = array("d")  # real and imaginary parts, interleaved
        self.flags = array("b")  # 1 where the value was given as a complex number

    @classmethod
    def of(cls, columns: Columns) -> _Growing:
        new = cls()
        new.kinds.frombytes(columns.kinds.tobytes())
        new.nodes.frombytes(columns.nodes.astype(np.int32).tobytes())
        new.values.frombytes(columns.values.tobytes())
        new.flags.frombytes(columns.complex_valued.astype(np.int8).tobytes())
        return new

    def columns(self, names: list[str], parts: list[Part], nets: list[str],
                net_id: dict[str, int], row: dict[str, int]) -> Columns:
        """Read-only copies of the arrays, as a :class:`Columns`."""
        kinds = np.frombuffer(self.kinds, dtype=np.int8).copy()
        nodes = np.frombuffer(self.nodes, dtype=np.int32).copy()
        values = np.frombuffer(self.values, dtype=np.complex128).copy()
        flags = np.frombuffer(self.flags, dtype=np.int8).astype(bool)
        for a in (kinds, nodes, values, flags):
            a.flags.writeable = False
        return Columns(kinds, nodes.reshape(-1, NET_COLUMNS), values, flags, names, parts,
                       nets, net_id, row)


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
