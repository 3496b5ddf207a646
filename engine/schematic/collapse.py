"""Collapsing a drawn region into its equivalent block, as an :class:`~engine.schematic.edits.Edit`.

Collapse keeps every wire of the two port nets on the sheet, takes off the region's parts and
everything on its internal nets, puts a Block where the parts were and wires its pins to the port
nets; the result is checked by re-extracting connectivity, so a stub never joins a net it should
not.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from functools import partial
from itertools import pairwise

from ..errors import CircuitError, CutError
from ..solve.circuit import GROUND
from .block_layout import (
    CLEAR,
    MARGIN,
    Obstacles,
    block_boxes,
    corners,
    grid_walk,
    grown,
    marker_body,
    place_block,
    place_marker,
    route,
    union,
)
from .captions import block_caption, drawn_form
from .connectivity import Connectivity, extract, net_at
from .document import Document
from .edits import Edit
from .model import Block, Contents, Element, Junction, NetLabel, PlacedPart, Region, Wire
from .outline import inside as in_outline
from .region_analysis import analyse_region
from .symbols import Bounds, Point, pin_positions, placed_bounds

__all__ = ["collapse_region"]


def _pins(element: PlacedPart | Block) -> tuple[Point, ...]:
    return pin_positions(_kind(element), element.at, element.rotation, element.mirror)


def _members(doc: Document, region: Region) -> list[PlacedPart | Block]:
    """The region's parts and blocks, plus every coupling both of whose inductors are inside."""
    chosen = [e for e in (doc[m] for m in sorted(region.members) if m in doc)
              if isinstance(e, PlacedPart | Block)]
    inside = {e.designator for e in chosen}
    chosen += [p for p in doc.parts() if p.kind == "coupling" and p.id not in region.members
               and p.couples and set(p.couples) <= inside]
    return chosen


def collapse_region(doc: Document, region_id: str, form: str | None = None) -> Edit:
    """The edit that replaces the region by its equivalent block (``form`` defaults to the
    document's analysis form). Raises CutError / CircuitError saying why when it cannot.

    Everything on the region's internal nets goes into the block. Of the two port nets, the
    wires, labels and junctions inside the drawn outline go too and wires that cross it are cut
    back to it, so the block sits in a clear space with stubs running out to the cut ends. Each
    layout is checked by re-extracting connectivity; where the tidy one would change any net, a
    plainer one is used (port-net wires kept whole, then all kept).
    """
    analysis = analyse_region(doc, region_id)
    if not analysis.ok:
        raise CutError(f"cannot collapse: {analysis.message}")
    eq = analysis.equivalent
    if not (eq.has_thevenin or eq.has_norton):
        raise CircuitError("cannot collapse: the region has neither a Thevenin nor a Norton form")
    used = {n for p in analysis.circuit if p.name not in analysis.part_names for n in p.nets}
    for role, net in zip(("plus", "minus"), eq.port, strict=True):
        if net not in used:
            # a chosen port may take a net only the region uses: its pin would join nothing
            raise CircuitError(f"cannot collapse: the port's {role} net {net} is used only "
                               f"inside the region, so the block's {role} pin would join "
                               "nothing; choose port nets that the rest of the circuit uses, "
                               "or keep the region as it is")
    region: Region = doc[region_id]
    conn = extract(doc)
    members = _members(doc, region)
    port = eq.port
    internal = {conn.net_of_pin[m.id, i] for m in members for i in range(len(_pins(m)))}
    internal -= set(port)
    drawn = [e for e in doc if isinstance(e, Wire | NetLabel | Junction)]
    net_of = {e.id: _net_of(doc, conn, e) for e in drawn}
    inner = [e for e in drawn if net_of[e.id] in internal]
    port_points = tuple(tuple(sorted({pt for m in members for i, pt in enumerate(_pins(m))
                                      if conn.net_of_pin[m.id, i] == net})) for net in port)
    inside = partial(in_outline, region.outline)
    on_port = [e for e in drawn if net_of[e.id] in port]
    within = [e for e in on_port if all(map(inside, _points_of(e)))]
    crossing = {w.id: _outside_runs(w, inside) for w in on_port
                if isinstance(w, Wire) and w not in within
                and any(map(inside, grid_walk(w.points)))}
    drawn_as = drawn_form(eq, form or doc.analysis.form)
    caption = block_caption(eq, drawn_as, analysis.freq)
    area = _outline_bounds(region.outline, members)
    layouts = [(within + [w for w in on_port if w.id in crossing], True), (within, False)]
    for extra, trim in [*(layouts if within or crossing else []), ([], False)]:
        taken = (*inner, *extra)
        pieces = [Wire(doc.new_id(Wire), run) for w in extra if trim and w.id in crossing
                  for run in crossing[w.id]]
        contents = Contents(
            parts=tuple(m for m in members if isinstance(m, PlacedPart)),
            wires=tuple(e for e in taken if isinstance(e, Wire)),
            junctions=tuple(e for e in taken if isinstance(e, Junction)),
            labels=tuple(e for e in taken if isinstance(e, NetLabel)),
            blocks=tuple(m for m in members if isinstance(m, Block)))
        removed: tuple[Element, ...] = (*members, *taken, region)
        block = Block(id=doc.new_id(Block), designator=doc.next_designator("block"),
                      form=form or doc.analysis.form, at=_centre(members), region=region,
                      contents=contents, port=port_points)
        after = _scratch(doc, drop={e.id for e in removed})
        for piece in pieces:
            after.add(piece)
        reach = [_Reach(points, [e for e in extra if net_of[e.id] == net])
                 for net, points in zip(port, port_points, strict=True)]
        laid = _connect(doc, conn, after, block, port, reach, caption, area, analysis.freq)
        if laid is not None:
            block, stubs = laid
            added = (*pieces, *stubs)
            block = replace(block, stubs=tuple(s.id for s in added))
            return Edit(removed=removed, added=(block, *added))
    raise CircuitError(f"cannot collapse: no clear path for the equivalent block's wires to "
                       f"the port nets {port[0]} and {port[1]}; move parts away from the "
                       "region and try again")


def _outside_runs(wire: Wire, inside) -> list[tuple[Point, ...]]:
    """The stretches of a wire that lie outside the outline, as polylines (of two points or
    more)."""
    runs: list[list[Point]] = [[]]
    for pt in grid_walk(wire.points):
        if inside(pt):
            if runs[-1]:
                runs.append([])
        else:
            runs[-1].append(pt)
    return [corners(run) for run in runs if len(set(run)) >= 2]


@dataclass(frozen=True)
class _Reach:
    """Where the sheet used to meet the region on one port net: the members' pins there and the
    port-net elements the collapse takes away."""

    pins: tuple[Point, ...]
    taken: list[Wire | NetLabel | Junction]

    def touches(self, pt: Point) -> bool:
        return pt in self.pins or any(
            pt in _points_of(e) if not isinstance(e, Wire)
            else any(_in_span(pt, a, b) for a, b in pairwise(e.points)) for e in self.taken)


def _in_span(p: Point, a: Point, b: Point) -> bool:
    """Whether ``p`` lies in the rectangle that ``a`` and ``b`` span (on a straight grid
    segment: on the segment; a taken wire's ends may lie off the grid's straight runs)."""
    return (min(a[0], b[0]) <= p[0] <= max(a[0], b[0])
            and min(a[1], b[1]) <= p[1] <= max(a[1], b[1]))


def _points_of(element: Wire | NetLabel | Junction) -> tuple[Point, ...]:
    return element.points if isinstance(element, Wire) else (element.at,)


def _net_of(doc: Document, conn: Connectivity, element: Wire | NetLabel | Junction) -> str | None:
    if isinstance(element, Wire):
        return conn.net_of_wire[element.id]
    if isinstance(element, NetLabel):
        return conn.net_of_pin[element.id, 0]
    return net_at(doc, conn, element.at)


def _outline_bounds(outline: tuple[tuple[float, float], ...],
                    members: list[PlacedPart | Block]) -> Bounds:
    """Where the region stood: its outline's bounds, or its members' where it has none."""
    if len(outline) >= 3:
        return union([(x, y, x, y) for x, y in outline])
    return union([placed_bounds(_kind(m), m.at, m.rotation, m.mirror) for m in members])


def _kind(element: PlacedPart | Block) -> str:
    return "block" if isinstance(element, Block) else element.kind


def _centre(members: list[PlacedPart | Block]) -> Point:
    placed = [m for m in members if not (isinstance(m, PlacedPart) and m.kind == "coupling")]
    xs = [m.at[0] for m in placed or members]
    ys = [m.at[1] for m in placed or members]
    return (round(sum(xs) / len(xs)), round(sum(ys) / len(ys)))


def _scratch(doc: Document, drop: set[str]) -> Document:
    copy = Document(doc.title)
    for element in doc:
        if element.id not in drop:
            copy.add(element)
    return copy


def _connect(doc: Document, conn: Connectivity, after: Document, block: Block,
             port: tuple[str, str], reach: list[_Reach], caption: tuple[str, ...],
             area: Bounds, freq: float) -> tuple[Block, list[Wire | NetLabel]] | None:
    """The block moved to the free spot nearest where the region stood (inside ``area``, the
    outline's bounds, where it fits) with the leads (wires, grounds, labels) joining each pin
    to every piece of its port net left on the sheet, clear of every body, caption and other
    net (engine.schematic.block_layout); None where no layout keeps every net exactly as it
    was. Checked by re-extraction, so a lead never joins a foreign net."""
    after_conn = extract(after)
    expected = {frozenset(k for k, n in conn.net_of_pin.items() if n == net and k[0] in after)
                for net in set(conn.net_of_pin.values())} - {frozenset()}
    staying = [frozenset(k for k, n in conn.net_of_pin.items() if n == net and k[0] in after)
               for net in port]
    obstacles = Obstacles.of(after, after_conn, freq=freq)
    form = block.form

    def boxes_at(at: Point) -> list[Bounds]:
        return block_boxes(at, form, caption, block.designator)

    spot = place_block(obstacles, block.at, boxes_at, area)
    block = replace(block, at=spot)
    boxes = boxes_at(spot)
    keep_out = grown(union(boxes), CLEAR)
    obstacles.boxes += boxes
    pins = _pins(block)
    for pin, net in zip(pins, port, strict=True):
        obstacles.occupy([pin], net)
    extent = union([grown(obstacles.extent(), MARGIN), grown(keep_out, MARGIN)])
    labels = {lab.name for lab in after.labels()}
    named = {lab.name for lab in doc.labels()}
    stubs: list[Wire | NetLabel] = []
    for pin, net, points, keys in zip(pins, port, reach, staying, strict=True):
        leads: list[Point] = [pin]
        joined_by_name = False
        for piece in sorted({after_conn.net_of_pin[k] for k in keys}):
            near = sorted(after_conn.nets[piece], key=lambda pt: (math.dist(pt, pin), pt))
            targets = [pt for pt in near if points.touches(pt)]
            if pin in targets:
                continue
            by_name = piece == net and (net == GROUND or net in labels)
            if by_name and (net == GROUND or not targets):
                joined_by_name = True  # the piece carries the net's name: a marker joins it
                continue
            lead = _lead(obstacles, leads, targets or near[:4], extent, keep_out)
            if lead is None:
                return None
            stubs.append(Wire(doc.new_id(Wire), lead))
            obstacles.occupy(grid_walk(stubs[-1].points), net)
            leads += grid_walk(stubs[-1].points)
        wants_marker = joined_by_name or (net in named and not _named_on_sheet(after, net))
        if wants_marker:
            style = "ground" if net == GROUND else "label"
            placed = place_marker(obstacles, style, net, pin, leads, keep_out)
            if placed is None:
                return None
            marker, stub = placed
            if stub:
                stubs.append(Wire(doc.new_id(Wire), stub))
                obstacles.occupy(grid_walk(stubs[-1].points), net)
            stubs.append(replace(marker, id=doc.new_id(NetLabel)))
            obstacles.boxes.append(marker_body(style, marker.at, marker.rotation, net))
            obstacles.occupy([marker.at], net)
    trial = _scratch(after, drop=set())
    for stub in (block, *stubs):
        trial.add(stub)
    if not _keeps_nets(extract(trial), block.id, {s.id for s in stubs}, expected, staying):
        return None
    return block, stubs


def _named_on_sheet(after: Document, net: str) -> bool:
    return any(lab.name == net for lab in after.labels())


def _lead(obstacles: Obstacles, sources: list[Point], targets: list[Point],
          extent: Bounds, keep_out: Bounds) -> tuple[Point, ...] | None:
    """The lead from the block's pin (or a lead of the same net already drawn) to the nearest
    target: clear of every box where it can be, otherwise clear of the block (``keep_out``)
    and of every point taken."""
    goals = frozenset(targets)
    x0, y0, x1, y1 = keep_out

    def in_block(p: Point) -> bool:
        return x0 <= p[0] <= x1 and y0 <= p[1] <= y1 and p not in goals

    for boxes in (True, False):
        path = route(sources, goals,
                     lambda p, b=boxes: obstacles.blocked(p, goals, b) or in_block(p), extent)
        if path is not None and len(path) >= 2:
            return path
    return None


def _keeps_nets(conn: Connectivity, block_id: str, added: set[str],
                expected: set[frozenset[tuple[str, int]]],
                staying: list[frozenset[tuple[str, int]]]) -> bool:
    plus, minus = conn.net_of_pin[block_id, 0], conn.net_of_pin[block_id, 1]
    groups: dict[str, set[tuple[str, int]]] = {}
    for key, net in conn.net_of_pin.items():
        if key[0] != block_id and key[0] not in added:
            groups.setdefault(net, set()).add(key)
    if plus == minus or {frozenset(g) for g in groups.values()} != expected:
        return False
    return all(conn.net_of_pin[k] == net for net, keys in zip((plus, minus), staying, strict=True)
               for k in keys)
