"""The one table of part kinds and their traits; every set of kinds the engine and the app use
is read from it.

Each :class:`Kind` row says which nodes the kind has (its roles, in node order), the prefix of
its designators, the unit and meaning of its value, and what it does: an independent source, a
source controlled by the current in another part, one that senses a voltage, a kind that names
other parts, a device that expands into primitive parts. The sets below are tuples in table
order, so that a loop over one runs in the same order in every process.

>>> [kind for kind in REFERRING]
['ccvs', 'cccs', 'coupling']
>>> TRAITS["vccs"].prefix, TRAITS["vccs"].unit
('DS', 'S')
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = [
    "COMPLEX_VALUED",
    "CONTROLLED_BY_CURRENT",
    "CURRENTLESS",
    "CURRENT_CARRYING",
    "DEVICE_KINDS",
    "KINDS",
    "KIND_CODE",
    "PART_KINDS",
    "REFERRING",
    "SENSING",
    "SOURCES",
    "TABLE",
    "TRAITS",
    "VALUED",
    "VALUE_UNITS",
    "Kind",
]


@dataclass(frozen=True, slots=True)
class Kind:
    """One kind of part and its traits.

    ``quantity`` and ``example`` say what its value means and give a value to type ("" for a
    kind without a single value: the ideal op-amp and the devices, which take parameters);
    ``unit`` is the unit its value takes ("" for a plain ratio); ``complex_value``: the value
    may be complex (a phasor or an impedance); ``own_current``: a part of the kind carries a
    current of its own, which can control a current-controlled source (not an op-amp's inputs,
    not a coupling).
    """

    name: str
    roles: tuple[str, ...]
    prefix: str
    quantity: str = ""
    example: str = ""
    unit: str = ""
    source: bool = False
    controlled_by_current: bool = False
    senses: bool = False
    refers: bool = False
    device: bool = False
    complex_value: bool = False
    own_current: bool = True


TABLE: tuple[Kind, ...] = (
    Kind("resistor", ("a", "b"), "R", "resistance", "4k7", "Ω"),
    Kind("capacitor", ("a", "b"), "C", "capacitance", "100n", "F"),
    Kind("inductor", ("a", "b"), "L", "inductance", "10m", "H"),
    Kind("impedance", ("a", "b"), "Z", "impedance in ohms", "50", "Ω", complex_value=True),
    Kind("voltage_source", ("p", "n"), "V", "voltage", "5", "V", source=True,
         complex_value=True),
    Kind("current_source", ("from", "to"), "I", "current", "1m", "A", source=True,
         complex_value=True),
    Kind("vcvs", ("p", "n", "cp", "cn"), "DS", "voltage gain", "10", senses=True,
         complex_value=True),
    Kind("vccs", ("from", "to", "cp", "cn"), "DS", "transconductance in siemens", "40m", "S",
         senses=True, complex_value=True),
    Kind("ccvs", ("p", "n"), "DS", "transresistance in ohms", "100", "Ω",
         controlled_by_current=True, refers=True, complex_value=True),
    Kind("cccs", ("from", "to"), "DS", "current gain", "100", controlled_by_current=True,
         refers=True, complex_value=True),
    Kind("opamp", ("inp", "inn", "out"), "U", senses=True, own_current=False),
    Kind("coupling", (), "CP", "coupling coefficient", "0.9", refers=True, own_current=False),
    Kind("bjt", ("b", "c", "e"), "Q", device=True),
    Kind("mosfet", ("g", "d", "s"), "Q", device=True),
    Kind("opamp_finite", ("inp", "inn", "out"), "U", device=True),
    Kind("measured_source", ("p", "n"), "MS", device=True),
)

#: Each kind's row, by name.
TRAITS: dict[str, Kind] = {k.name: k for k in TABLE}
#: Every primitive kind (a part of a Circuit), with the roles of its nodes.
KINDS: dict[str, tuple[str, ...]] = {k.name: k.roles for k in TABLE if not k.device}
#: Each device kind (one name to the user, primitive parts in the Circuit) with its nets' roles.
DEVICE_KINDS: dict[str, tuple[str, ...]] = {k.name: k.roles for k in TABLE if k.device}
#: Every kind a placed part may have: the primitive kinds, then the device kinds.
PART_KINDS: tuple[str, ...] = tuple(TRAITS)
#: Each primitive kind's code in a Circuit's columns (its position in :data:`KINDS`).
KIND_CODE: dict[str, int] = {kind: code for code, kind in enumerate(KINDS)}
#: Kinds whose parts name other parts (``Part.refs``).
REFERRING: tuple[str, ...] = tuple(k.name for k in TABLE if k.refers)
#: Sources whose output is set by the current in another part (which they name).
CONTROLLED_BY_CURRENT: tuple[str, ...] = tuple(k.name for k in TABLE if k.controlled_by_current)
#: Kinds that sense a voltage between two nets (controlled sources' inputs, op-amp inputs).
SENSING: tuple[str, ...] = tuple(k.name for k in TABLE if k.senses)
#: The independent sources.
SOURCES: tuple[str, ...] = tuple(k.name for k in TABLE if k.source)
#: Primitive kinds with a value the port quantities depend on (an ideal op-amp has none).
VALUED: tuple[str, ...] = tuple(k.name for k in TABLE if not k.device and k.quantity)
#: The unit each valued kind's value takes ("" for a plain ratio: the gains, a coupling's k).
VALUE_UNITS: dict[str, str] = {name: TRAITS[name].unit for name in VALUED}
#: Kinds whose value may be complex.
COMPLEX_VALUED: tuple[str, ...] = tuple(k.name for k in TABLE if k.complex_value)
#: Primitive kinds whose current can control a current-controlled source.
CURRENT_CARRYING: tuple[str, ...] = tuple(k.name for k in TABLE if not k.device and k.own_current)
#: Primitive kinds with no single current of their own to control a source with.
CURRENTLESS: tuple[str, ...] = tuple(k.name for k in TABLE if not k.device and not k.own_current)
