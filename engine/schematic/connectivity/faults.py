"""The warnings of an extraction that concern the drawing rather than the joining: pins left
unconnected, parts shorted out or stacked, zero-length wires, and references (couplings,
current-controlled sources) to parts that are missing or unusable."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...solve.kinds import CONTROLLED_BY_CURRENT, CURRENTLESS
from ..model import Block, PlacedPart
from ..symbols import Point
from .sheet import _Sheet


@dataclass(frozen=True, slots=True)
class ConnectivityWarning:
    """Something drawn that will not connect or compute as the user probably meant.

    ``element_id`` is the element to select; ``at`` the grid point to show, where there is one;
    ``kind`` what sort of fault it is ("unconnected", "shorted", or "" for the rest).
    """

    message: str
    element_id: str
    at: Point | None = None
    kind: str = ""



def _fmt(at: Point) -> str:
    return f"({at[0]}, {at[1]})"


def _pin_warnings(sheet: _Sheet, net: np.ndarray, names: list[str]) -> list[ConnectivityWarning]:
    """Pins alone on their net, and two-pin parts with both pins on one net."""
    out = []
    pin_net = net[:sheet.pin_count]
    alone = np.bincount(pin_net, minlength=len(names))[pin_net[:sheet.designated_pins]] == 1
    for k in np.flatnonzero(alone).tolist():
        pin = sheet.pin(k)
        out.append(ConnectivityWarning(
            f"{pin.designator} pin {pin.role} at {_fmt(pin.at)} is not connected",
            pin.element_id, pin.at, "unconnected"))
    first = np.array(sheet.first_pin[:sheet.designated + 1], dtype=np.int64)
    two = first[:-1][np.diff(first) == 2]
    for k in two[pin_net[two] == pin_net[two + 1]].tolist():
        pin = sheet.pin(k)
        out.append(ConnectivityWarning(
            f"{pin.designator} has both pins on net {names[pin_net[k]]}, so it is shorted out",
            pin.element_id, pin.at, "shorted"))
    return out


def _wire_warnings(sheet: _Sheet, vertices: np.ndarray,
                   vertex_wire: np.ndarray) -> list[ConnectivityWarning]:
    same = vertex_wire[1:] == vertex_wire[:-1]
    zero = same & (vertices[1:] == vertices[:-1]).all(axis=1)
    n = len(sheet.wires)
    all_zero = np.bincount(vertex_wire[:-1][zero], minlength=n) == np.bincount(
        vertex_wire[:-1][same], minlength=n)
    out = []
    for k in np.flatnonzero(zero).tolist():
        wire = sheet.wires[vertex_wire[k]]
        at = (int(vertices[k, 0]), int(vertices[k, 1]))
        if not all_zero[vertex_wire[k]]:
            out.append(ConnectivityWarning(
                f"wire {wire.id} has a zero-length segment at {_fmt(at)}", wire.id, at))
        elif k == 0 or vertex_wire[k - 1] != vertex_wire[k]:  # once per wire
            out.append(ConnectivityWarning(
                f"wire {wire.id} at {_fmt(at)} has zero length; delete it or drag an end",
                wire.id, at))
    return out


def _part_warnings(sheet: _Sheet) -> list[ConnectivityWarning]:
    """Parts stacked on one another, and couplings or controlled sources naming bad parts."""
    out = []
    placed = sheet.owners[:sheet.designated]
    if _stacked(sheet):
        seen: dict[tuple[str, Point], str] = {}
        for e in placed:
            key = (e.kind if type(e) is PlacedPart else "block", e.at)
            if key in seen:
                out.append(ConnectivityWarning(
                    f"{seen[key]} and {e.designator} lie on top of each other at "
                    f"{_fmt(e.at)}; move one of them", e.id, e.at))
            else:
                seen[key] = e.designator
    if sheet.referencing:
        by_designator = {p.designator: p for p in sheet.parts}
        for i in sheet.referencing:
            part = sheet.parts[i]
            message = _reference_problem(part, by_designator, sheet.blocks)
            if message:
                out.append(ConnectivityWarning(message, part.id, part.at))
    return out


def _stacked(sheet: _Sheet) -> bool:
    """Whether two parts or blocks of one kind sit at the same point."""
    kind, at = sheet.owner_kind, sheet.at[:sheet.designated]
    order = np.lexsort((at[:, 1], at[:, 0], kind))
    kind, at = kind[order], at[order]
    return bool(((kind[1:] == kind[:-1]) & (at[1:] == at[:-1]).all(axis=1)).any())


def _reference_problem(part: PlacedPart, parts: dict[str, PlacedPart],
                       blocks: list[Block]) -> str:
    """Why a coupling's inductors or a current-controlled source's controller is unusable."""
    if part.kind == "coupling":
        if len(part.couples) != 2 or part.couples[0] == part.couples[1]:
            return f"{part.designator} must name two different inductors to couple"
        for ref in part.couples:
            if ref not in parts:
                return f"{part.designator} couples {ref}, which {_missing(ref, blocks)}"
            if parts[ref].kind != "inductor":
                return (f"{part.designator} couples {ref}, which is a "
                        f"{parts[ref].kind.replace('_', ' ')}, not an inductor")
    if part.kind in CONTROLLED_BY_CURRENT:
        if not part.control:
            return f"{part.designator} names no part whose current controls it"
        if part.control not in parts:
            return (f"{part.designator} is controlled by the current of {part.control}, "
                    f"which {_missing(part.control, blocks)}")
        if part.control == part.designator or parts[part.control].kind in CURRENTLESS:
            return (f"{part.designator} cannot be controlled by {part.control}, which has no "
                    "single branch current")
    return ""


def _missing(designator: str, blocks: list[Block]) -> str:
    """Where a designator that is not a part on the sheet is, as the end of a sentence."""
    for block in blocks:
        if block.designator == designator:
            return "is a collapsed block; expand it and name a part inside"
        stack = [block.contents]
        while stack:
            contents = stack.pop()
            if any(p.designator == designator for p in contents.parts):
                return f"is inside the collapsed block {block.designator}; expand the block"
            stack.extend(b.contents for b in contents.blocks)
    return "is not on the sheet"

