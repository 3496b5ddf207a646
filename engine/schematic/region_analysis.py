"""A drawn region's live answer: is it a true two-terminal cut, and if so its Thevenin and
Norton equivalents at the document's analysis frequency; where not, why in plain words, with the
nets and elements to highlight."""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, replace

from ..errors import CircuitError, CutError, DocumentError
from ..solve.circuit import Circuit
from ..solve.equivalent import (
    EquivalenceReport,
    Equivalent,
    check_equivalence,
    collapse,
    equivalent,
)
from ..solve.units import parse_frequency
from .connectivity import Connectivity, build_circuit, extract
from .document import Document
from .model import Block, PlacedPart, Region
from .ports import lost_port_nets, region_nets

__all__ = ["RegionAnalysis", "analyse_region", "equivalence", "region_part_names", "swapped"]


@dataclass(frozen=True)
class RegionAnalysis:
    """The outcome of analysing one region.

    ``ok`` is True when the cut is valid and the equivalent was computed (``equivalent`` is set,
    its ``port`` the (plus, minus) nets). Otherwise ``message`` says in plain words what is wrong
    and how to fix it, and ``bad_nets`` / ``bad_elements`` (element ids: parts, blocks, wires)
    are what a view should highlight.
    """

    region_id: str
    ok: bool
    message: str = ""
    equivalent: Equivalent | None = None
    freq: float = 0.0
    bad_nets: frozenset[str] = frozenset()
    bad_elements: frozenset[str] = frozenset()
    circuit: Circuit | None = None
    part_names: frozenset[str] = frozenset()


def region_part_names(doc: Document, region: Region, circuit: Circuit) -> frozenset[str]:
    """Circuit part names standing for the region's members: designators of parts (a device
    part by the primitive parts it expands into), and the ``<designator>.*`` parts that stand
    in for a member block."""
    members = [doc[m] for m in region.members if m in doc]
    names = circuit.expand_names(e.designator for e in members if isinstance(e, PlacedPart))
    for element in members:
        if isinstance(element, Block):
            prefix = f"{element.designator}."
            names.update(n for n in circuit.names if n.startswith(prefix))
    return frozenset(names)


def analyse_region(doc: Document, region_id: str, *, conn: Connectivity | None = None,
                   freq: float | None = None, circuit: Circuit | None = None,
                   part_names: frozenset[str] | None = None) -> RegionAnalysis:
    """Check the region's cut and compute its equivalent at ``freq`` hertz (default: the
    document's analysis frequency). ``conn`` and ``circuit``, when given, must be the
    document's current connectivity and circuit at that frequency (a live view keeps them
    up to date instead of rebuilding), and ``part_names``, when given with ``circuit``, the
    region's :func:`region_part_names` on it. Never raises for a bad circuit: the answer says
    what is wrong."""
    region = doc[region_id]
    if not isinstance(region, Region):
        raise DocumentError(f"{region_id} is a {type(region).__name__}, not a region")
    try:
        hz = parse_frequency(doc.analysis.freq) if freq is None else freq
        conn = conn or extract(doc)
        if circuit is None:
            circuit, part_names = build_circuit(doc, conn, hz), None
    except CircuitError as e:
        return RegionAnalysis(region_id, False, f"the circuit cannot be built: {e}")
    names = region_part_names(doc, region, circuit) if part_names is None else part_names
    if not names:
        return RegionAnalysis(region_id, False, "the region holds no parts: draw the boundary "
                              "around the parts to reduce", freq=hz, circuit=circuit)
    lost = () if region.port is None else lost_port_nets(region, region_nets(doc, region, conn))
    if lost:
        return RegionAnalysis(region_id, False, _lost_text(region, lost), freq=hz,
                              bad_nets=frozenset(lost),
                              bad_elements=_elements_of(doc, conn, lost, ()),
                              circuit=circuit, part_names=names)
    try:
        eq = equivalent(circuit, region=set(names), port=region.port, freq=hz)
    except CutError as e:
        return RegionAnalysis(region_id, False, str(e), freq=hz,
                              bad_nets=frozenset(e.nets),
                              bad_elements=_elements_of(doc, conn, e.nets, e.parts),
                              circuit=circuit, part_names=names)
    except CircuitError as e:
        return RegionAnalysis(region_id, False, str(e), freq=hz, circuit=circuit,
                              part_names=names)
    if region.swap and region.port is None:
        eq = swapped(eq)
    return RegionAnalysis(region_id, True, equivalent=eq, freq=hz, circuit=circuit,
                          part_names=names)


def _lost_text(region: Region, lost: tuple[str, ...]) -> str:
    """Which chosen port nets are gone, and the two ways on."""
    roles = [role for role, net in zip(("plus", "minus"), region.port, strict=True)
             if net in lost]
    which = " and ".join(f"{role} net {net}" for role, net in zip(roles, lost, strict=True))
    verb = "is" if len(lost) == 1 else "are"
    return (f"the chosen port's {which} {verb} no longer a net of the region (a label or part "
            "was renamed or removed, or an edit joined or split the net); choose the port "
            "again, or go back to the automatic port")


def equivalence(analysis: RegionAnalysis, form: str = "thevenin",
                loads: Iterable[object] = ()) -> EquivalenceReport:
    """How closely the circuit with the region replaced by its ``form`` equivalent reproduces
    the original from outside: every outside net voltage and the port current, for the outside
    as drawn and for each extra load across the port (see engine.check_equivalence)."""
    if not analysis.ok:
        raise CircuitError(f"no equivalent to check: {analysis.message}")
    eq = analysis.equivalent
    if (form == "thevenin" and not eq.has_thevenin) or (form == "norton" and not eq.has_norton):
        form = "norton" if form == "thevenin" else "thevenin"
    region = set(analysis.part_names)
    reduced = collapse(analysis.circuit, region, port=eq.port, freq=analysis.freq, form=form)
    return check_equivalence(analysis.circuit, reduced, region, port=eq.port,
                             freq=analysis.freq, loads=loads)


def swapped(eq: Equivalent) -> Equivalent:
    """The same equivalent seen with plus and minus exchanged: voc and isc change sign."""
    plus, minus = eq.port
    return replace(eq, port=(minus, plus), voc=-eq.voc, isc=-eq.isc)


def _elements_of(doc: Document, conn: Connectivity, nets: Iterable[str],
                 designators: Iterable[str]) -> frozenset[str]:
    nets, designators = set(nets), {d.split(".")[0] for d in designators}
    found = {wid for wid, net in conn.net_of_wire.items() if net in nets}
    found.update(e.id for e in doc if isinstance(e, PlacedPart | Block)
                 and e.designator in designators)
    return frozenset(found)
