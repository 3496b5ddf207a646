"""Wiring checks of a whole sheet, for the window's checks list and the marks on the canvas.

Two sources, one list: the drawing faults that extraction finds (a pin joined to nothing, a two-pin
part with both pins on one net, parts stacked, bad references; see
:mod:`engine.schematic.connectivity`), and the existence faults of the circuit they make at the
analysis frequency (:mod:`engine.solve.topology`): an island of nets that nothing conducting joins
to the ground island, and a loop of ideal voltage-defined branches (two ideal sources in parallel,
a source shorted by a wire). A sheet whose values do not read yet gets the drawing checks only; its
value errors are the inspector's to show.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from ..errors import CircuitError, SingularCircuitError
from ..solve import mna, topology
from ..solve.circuit import GROUND, Circuit, Part
from .connectivity import Connectivity, build_circuit
from .document import Document
from .model import Block, PlacedPart
from .symbols import Point

__all__ = ["SheetCheck", "circuit_checks", "drawing_checks", "sheet_checks"]


@dataclass(frozen=True, slots=True)
class SheetCheck:
    """One fault: ``kind`` is "unconnected", "shorted", "floating", "sources" or "drawing";
    ``element_id`` the element to select (never empty); ``at`` the grid point to mark."""

    kind: str
    message: str
    element_id: str
    at: Point


def sheet_checks(doc: Document, conn: Connectivity, freq: float = 0.0) -> list[SheetCheck]:
    """Every check that fails on ``doc`` (nets ``conn``) at ``freq`` hertz, drawing faults
    first, in a stable order."""
    drawn = drawing_checks(doc, conn)
    return drawn + circuit_checks(doc, conn, freq, drawn)


def drawing_checks(doc: Document, conn: Connectivity) -> list[SheetCheck]:
    """The faults extraction found: cheap, ready with the nets."""
    return [SheetCheck(w.kind or "drawing", w.message, w.element_id,
                       w.at if w.at is not None else _anchor(doc, w.element_id))
            for w in conn.warnings if w.element_id in doc]


def circuit_checks(doc: Document, conn: Connectivity, freq: float = 0.0,
                   drawn: list[SheetCheck] | None = None,
                   circuit: Circuit | None = None) -> list[SheetCheck]:
    """The existence faults of the circuit at ``freq`` hertz: ``circuit``, the one
    ``build_circuit(doc, conn, freq)`` makes, built here when not given (this costs about a
    circuit build). A part that ``drawn`` lists with loose pins is not listed again as a
    floating island. Nothing when the values do not read (the inspector says why)."""
    if circuit is None:
        try:
            circuit = build_circuit(doc, conn, freq)
        except CircuitError:
            return []
    parts = list(circuit)
    if not parts:
        return []
    netlist = mna.Netlist(parts)
    dc = freq == 0
    # a part joined to nothing is listed by its loose pins already
    loose = {c.element_id for c in drawn or () if c.kind == "unconnected"}
    out = [c for c in _floating(doc, parts, netlist, dc) if c.element_id not in loose]
    try:
        topology.check_voltage_loops(netlist, dc)
    except SingularCircuitError as exc:
        owner = _first_named(doc, str(exc))
        if owner is not None:
            out.append(SheetCheck("sources", str(exc), owner.id, owner.at))
    return out


def _anchor(doc: Document, element_id: str) -> Point:
    element = doc[element_id]
    at = getattr(element, "at", None)
    if at is not None:
        return at
    points = getattr(element, "points", None) or getattr(element, "outline", ((0, 0),))
    return (round(points[0][0]), round(points[0][1]))


def _floating(doc: Document, parts: list[Part], netlist: mna.Netlist,
              dc: bool) -> list[SheetCheck]:
    """Islands apart from the ground island: the ones the equations cannot solve (in the
    engine's words), and those joined to the rest by nothing at all; an island that a coupling
    or a controlled source ties to the rest is left alone."""
    found = topology.islands(netlist, dc, (GROUND,))
    labels = found.labels.tolist()
    if len(set(labels)) <= 1:
        return []
    island_of = dict(zip(netlist.nets, labels, strict=True))
    coupled = {ref for part in parts if part.kind == "coupling" for ref in part.refs}
    members: dict[int, list[Part]] = {}
    for part in parts:
        for label in {island_of[n] for n in part.nets if n in island_of}:
            members.setdefault(label, []).append(part)
    out = []
    for label in sorted(set(labels) - {found.reference}):
        nets = sorted(n for n, lab in island_of.items() if lab == label)
        on = sorted(members.get(label, ()), key=lambda p: p.name)
        owner = next((doc.by_designator(p.name) for p in on
                      if doc.by_designator(p.name) is not None), None)
        if owner is None:
            continue
        message = found.problem(label)
        if message is None:
            if label in found.solved or any(p.name in coupled or len(p.nets) > 2 for p in on):
                continue
            several = len(nets) > 1
            message = (f"{'nets' if several else 'net'} {', '.join(nets)} "
                       f"{'float' if several else 'floats'}: nothing joins "
                       f"{owner.designator} and its neighbours to ground or to the rest, so "
                       "their voltages to ground are undefined; wire the island to the rest")
        out.append(SheetCheck("floating", message, owner.id, owner.at))
    return out


def _first_named(doc: Document, message: str) -> PlacedPart | Block | None:
    """The first part or block of the sheet that ``message`` names."""
    for word in re.findall(r"[A-Za-z_][\w']*", message):
        found = doc.by_designator(word)
        if found is not None:
            return found
    return None
