"""From nets to netlist: the engine Circuit a document makes, each part named by its
designator, and a collapsed block standing in by its contents' equivalent."""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import replace

import numpy as np

from ...errors import CircuitError
from ...solve.circuit import Circuit, Part
from ...solve.devices import DEVICE_KINDS
from ...solve.equivalent import Equivalent, collapse, equivalent
from ...solve.kinds import CONTROLLED_BY_CURRENT, REFERRING, SOURCES, TRAITS, VALUED
from ...solve.names import unused_name
from ...solve.units import VALUE_UNITS, parse_value
from ..document import Document
from ..model import Block, Contents, PlacedPart
from .extraction import Connectivity, extract, net_at
from .faults import _reference_problem
from .sheet import BLOCK_ROLES, ROLES, _natural_key, replaced_in_place

_QUANTITY = {name: (TRAITS[name].quantity, TRAITS[name].example) for name in VALUED}


def build_circuit(doc: Document, conn: Connectivity | None = None, freq: float = 0.0) -> Circuit:
    """The engine Circuit of ``doc``: each part named by its designator, on the nets of ``conn``
    (extracted when not given).

    A Block stands in for its contents by their equivalent at ``freq`` hertz (see
    :func:`block_equivalent`), so rebuild when the frequency changes. Raises CircuitError naming
    the designator and field of a missing or unreadable value or a broken reference.
    """
    return _build(doc, conn or extract(doc), freq, {})


def updated_circuit(circuit: Circuit, doc: Document, before: Connectivity,
                    after: Connectivity, freq: float = 0.0) -> Circuit:
    """The Circuit of ``doc`` on the nets of ``after``, from ``circuit``: the circuit that
    :func:`build_circuit` made at ``freq`` hertz for an earlier version of the document, whose
    connectivity was ``before`` (``after`` re-extracted from it).

    Where the edit replaced elements without adding, removing or renaming any (a move, a
    value typed), only the parts that changed or whose pins changed nets are rebuilt and swapped
    in (Circuit.replaced); where none of them came out different, ``circuit`` itself is the
    answer. Otherwise (parts added or removed, a device part, a referring part edited, or a
    block where nets changed) the circuit is built afresh. Equal to ``build_circuit(doc, after,
    freq)`` either way; raises as it does.
    """
    if after is before:
        return circuit
    old, new = before._sheet, after._sheet
    if new.keys is not old.keys and replaced_in_place(old.elements, new.elements) is None:
        if not new.blocks and _placed_anew(old.parts, new.parts, before, after):
            return circuit  # wires added or removed around parts that kept their nets
        return build_circuit(doc, after, freq)  # parts added, removed or renamed
    pins = new.designated_pins
    ids = {new.keys[k][0] for k in np.flatnonzero(
        before._node_names[:pins] != after._node_names[:pins]).tolist()}
    if new.blocks and (ids or any(a is not b for a, b in zip(new.blocks, old.blocks,
                                                                strict=True))):
        return build_circuit(doc, after, freq)  # a block's parts follow every net name
    parts = [p for p, q in zip(new.parts, old.parts, strict=True) if p is not q]
    if any(p.kind in REFERRING for p in parts):
        return build_circuit(doc, after, freq)
    if ids:
        ids -= {p.id for p in parts}
        parts += [p for p in new.parts if p.id in ids]
    if any(p.kind in DEVICE_KINDS for p in parts):
        return build_circuit(doc, after, freq)  # one name to the user, several parts here
    scratch = Circuit()
    for part in parts:
        _add_part(scratch, part, [after.net_of_pin[part.id, i]
                                  for i in range(len(ROLES[part.kind]))])
    changed = [p for p in scratch if p != circuit[p.name]]
    return circuit.replaced(changed) if changed else circuit


def _placed_anew(old: list[PlacedPart], new: list[PlacedPart], before: Connectivity,
                 after: Connectivity) -> bool:
    """Whether ``new`` are ``old`` changed at most in where they are drawn, each pin on a net
    of the same name as before: the circuit reads nothing else of them."""
    if len(old) != len(new):
        return False
    for p, q in zip(old, new, strict=True):
        if p is not q and replace(q, at=p.at, rotation=p.rotation, mirror=p.mirror,
                                  captions=p.captions) != p:
            return False
    # the same parts number their pins alike on both sheets: their nets compare as arrays
    n = after._sheet.designated_pins
    return before._sheet.keys[:n] == after._sheet.keys[:n] and bool(
        (before._node_names[:n] == after._node_names[:n]).all())


def _build(doc: Document, conn: Connectivity, freq: float, rename: dict[str, str]) -> Circuit:
    def nets(element_id: str, count: int) -> list[str]:
        return [rename.get(n, n) for n in (conn.net_of_pin[element_id, i] for i in range(count))]

    circuit = Circuit()
    parts = doc.parts()
    by_designator = {p.designator: p for p in parts}
    blocks = doc.blocks()
    # couplings last: the circuit checks that their inductors are already there
    for part in sorted(parts, key=lambda p: p.kind == "coupling"):
        problem = _reference_problem(part, by_designator, blocks)
        if problem:
            raise CircuitError(problem)
        _add_part(circuit, part, nets(part.id, len(ROLES[part.kind])))
    if blocks:  # the names a block's internal net must avoid
        taken = {*conn.net_of_pin.values(), *conn.net_of_wire.values(), *rename.values()}
        for block in blocks:
            for part in _block_parts(block, *nets(block.id, 2), freq, taken):
                circuit.add(part)
    return circuit


def _add_part(circuit: Circuit, part: PlacedPart, nodes: list[str]) -> None:
    name, kind = part.designator, part.kind
    if kind == "opamp":
        circuit.opamp(name, *nodes)
        return
    if kind in DEVICE_KINDS:
        circuit.add_device(name, kind, nodes, {k: v for k, v in part.params if v.strip()})
        return
    if not part.value.strip():
        quantity, example = _QUANTITY[kind]
        raise CircuitError(f"{name} value: none given; enter the {quantity}, e.g. {example}")
    value = parse_value(part.value, what=f"{name} value", unit=VALUE_UNITS[kind])
    phase = _phase(part)
    if kind == "coupling":
        circuit.coupling(name, *part.couples, value)
    elif kind in CONTROLLED_BY_CURRENT:
        getattr(circuit, kind)(name, *nodes, part.control, value)
    elif kind in SOURCES:
        getattr(circuit, kind)(name, *nodes, value, phase_deg=phase)
    else:
        getattr(circuit, kind)(name, *nodes, value)


def _phase(part: PlacedPart) -> float | None:
    if not part.phase_deg.strip():
        return None
    if part.kind not in SOURCES:
        raise CircuitError(f"{part.designator} phase: only independent sources take a phase; "
                           "clear the field")
    return float(parse_value(part.phase_deg, what=f"{part.designator} phase"))


def contents_document(contents: Contents) -> Document:
    """A scratch Document holding a block's contents (for extraction and building)."""
    doc = Document()
    for group in (contents.parts, contents.wires, contents.junctions, contents.labels,
                  contents.blocks):
        for element in group:
            doc.add(element)
    return doc


def block_equivalent(block: Block, freq: float = 0.0) -> Equivalent:
    """The equivalent of ``block``'s contents seen between its port nets at ``freq`` hertz.

    Every contents pin listed in ``block.port[0]`` is on the plus net and every one in
    ``block.port[1]`` on the minus net (the wires that joined them stayed on the sheet).
    Errors come back as the same CircuitError subclass, prefixed with the block's designator.
    """
    circuit, port = _contents_circuit(block, freq)
    with _blamed(block):
        return equivalent(circuit, region=set(circuit.names), port=port, freq=freq)


def _contents_circuit(block: Block, freq: float) -> tuple[Circuit, tuple[str, str]]:
    sub = contents_document(block.contents)
    conn = extract(sub)
    rename: dict[str, str] = {}
    ends = []
    for side, points in zip(BLOCK_ROLES, block.port, strict=True):
        found = {net_at(sub, conn, at) for at in points}
        if None in found or not found:
            raise CircuitError(f"{block.designator}: its {side} port point touches nothing in "
                               "its contents; expand and collapse the region again")
        target = min(found, key=_natural_key)
        for net in found:
            if net in rename:
                raise CircuitError(f"{block.designator}: its contents join the plus and minus "
                                   "port nets, so it has no equivalent")
            rename[net] = target
        ends.append(target)
    with _blamed(block):
        return _build(sub, conn, freq, rename), (ends[0], ends[1])


@contextmanager
def _blamed(block: Block) -> Iterator[None]:
    try:
        yield
    except CircuitError as e:
        raise type(e)(f"{block.designator} (collapsed region): {e}") from None


def _block_parts(block: Block, plus: str, minus: str, freq: float,
                 taken: set[str]) -> list[Part]:
    """What the engine's collapse puts in place of the contents, renamed for the sheet: the
    source ``<designator>.src`` and impedance ``<designator>.z`` on the block's nets, with
    ``<designator>.mid`` between them in the Thevenin form. The block's form is used where it
    exists, the other one otherwise."""
    circuit, port = _contents_circuit(block, freq)
    region = set(circuit.names)
    with _blamed(block):
        eq = equivalent(circuit, region=region, port=port, freq=freq)
        usable = eq.has_thevenin if block.form == "thevenin" else eq.has_norton
        other = "norton" if block.form == "thevenin" else "thevenin"
        reduced = collapse(circuit, region, port, freq, block.form if usable else other)
    nets = {port[0]: plus, port[1]: minus}
    mid = None
    parts = []
    for part in reduced:  # every part of the contents was in the region: only these remain
        inner = [n for n in part.nodes if n not in nets]
        if inner and mid is None:
            mid = unused_name(f"{block.designator}.mid", taken)
        role = "src" if part.is_independent_source else "z"
        parts.append(replace(part, name=f"{block.designator}.{role}",
                             nodes=tuple(nets.get(n, mid) for n in part.nodes)))
    return parts
