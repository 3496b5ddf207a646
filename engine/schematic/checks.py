"""Wiring checks of a whole sheet, for the window's checks list and the marks on the canvas.

Two sources, one list: the drawing faults that extraction finds (a pin joined to nothing, a
two-pin part with both pins on one net, parts stacked, bad references; see
:mod:`engine.schematic.connectivity`), and the existence faults of the circuit they make at the
analysis frequency (:mod:`engine.topology`): an island of nets that nothing conducting joins to
the ground island, and a loop of ideal voltage-defined branches (two ideal sources in
parallel, a source shorted by a wire). A sheet whose values do not read yet gets the drawing
checks only; its value errors are the inspector's to show.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from .. import mna, topology
from ..circuit import GROUND, Circuit
from ..errors import CircuitError, SingularCircuitError
from ..symbols import Point
from .connectivity import Connectivity, build_circuit
from .document import Document
from .model import Block, PlacedPart

__all__ = ["SheetCheck", "sheet_checks"]


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
    out = [SheetCheck(w.kind or "drawing", w.message, w.element_id,
                      w.at if w.at is not None else _anchor(doc, w.element_id))
           for w in conn.warnings if w.element_id in doc]
    try:
        circuit = build_circuit(doc, conn, freq)
    except CircuitError:
        return out
    if not list(circuit):
        return out
    netlist = mna.Netlist(list(circuit))
    dc = freq == 0
    # a part joined to nothing is listed by its loose pins already
    loose = {c.element_id for c in out if c.kind == "unconnected"}
    out += [c for c in _floating(doc, circuit, netlist, dc) if c.element_id not in loose]
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


def _floating(doc: Document, circuit: Circuit, netlist: mna.Netlist,
              dc: bool) -> list[SheetCheck]:
    """Islands apart from the ground island: the ones the equations cannot solve (in the
    engine's words), and those joined to the rest by nothing at all; an island that a coupling
    or a controlled source ties to the rest is left alone."""
    found = topology.islands(netlist, dc, (GROUND,))
    labels = found.labels.tolist()
    if len(set(labels)) <= 1:
        return []
    coupled = {ref for part in circuit if part.kind == "coupling" for ref in part.refs}
    ties = {part.name for part in circuit if part.kind != "coupling" and len(part.nets) > 2}
    out = []
    for label in sorted(set(labels) - {found.reference}):
        nets = {netlist.nets[i] for i, lab in enumerate(labels) if lab == label}
        parts = sorted((p for p in circuit if set(p.nets) & nets), key=lambda p: p.name)
        owner = next((doc.by_designator(p.name) for p in parts
                      if doc.by_designator(p.name) is not None), None)
        if owner is None:
            continue
        message = found.problem(label)
        if message is None:
            if label in found.solved or any(p.name in coupled or p.name in ties
                                            for p in parts):
                continue
            listed = ", ".join(sorted(nets))
            message = (f"{'net' if len(nets) == 1 else 'nets'} {listed} "
                       f"{'floats' if len(nets) == 1 else 'float'}: nothing joins "
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
