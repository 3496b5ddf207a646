"""The elements of a schematic document: small frozen records, each with a document-unique ``id``.

Positions are integer grid units (x right, y down). Values are kept as the text the user typed
(``"4k7"``) so that a file round-trips exactly; they are parsed when a Circuit is built.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..solve.kinds import PART_KINDS
from .symbols import Point

__all__ = [
    "ANALYSIS_FORMS",
    "CAPTION_ROLES",
    "PART_KINDS",
    "Analysis",
    "Block",
    "Contents",
    "Element",
    "Junction",
    "NetLabel",
    "PlacedPart",
    "Region",
    "Wire",
    "port_problem",
]

# PART_KINDS: the kinds a PlacedPart may have (engine.solve.kinds); ground and net names are
# NetLabels.
ANALYSIS_FORMS = ("thevenin", "norton")
#: The captions of a part that are placed automatically and may be dragged.
CAPTION_ROLES = ("designator", "value")
ROTATIONS = (0, 90, 180, 270)


@dataclass(frozen=True, slots=True)
class PlacedPart:
    """A part on the sheet.

    ``value``: resistance, capacitance, inductance, impedance, source magnitude, or gain, as
    text. ``phase_deg``: source phase in degrees (text, "" for 0). ``control``: the designator
    whose current controls a CCVS/CCCS. ``couples``: the two inductor designators of a coupling.
    ``captions``: (role, dx, dy) for each caption the user dragged: its anchor point (text centred
    on it) relative to ``at``, grid units; the other captions are placed automatically
    (engine.schematic.placement).
    ``tolerance``: the value's tolerance as text, an IEC 60062 letter or a percentage ("" none).
    ``params``: a device part's parameters (engine.solve.devices.PARAMETERS) as (name, text) pairs
    in that table's order, only those given.
    """

    id: str
    kind: str
    designator: str
    at: Point
    rotation: int = 0
    mirror: bool = False
    value: str = ""
    phase_deg: str = ""
    control: str = ""
    couples: tuple[str, ...] = ()
    captions: tuple[tuple[str, float, float], ...] = ()
    tolerance: str = ""
    params: tuple[tuple[str, str], ...] = ()


@dataclass(frozen=True, slots=True)
class Wire:
    """An orthogonal polyline through ``points`` (at least two, each segment horizontal or
    vertical). A pin or wire end on any point of a segment joins it; crossings do not."""

    id: str
    points: tuple[Point, ...]


@dataclass(frozen=True, slots=True)
class Junction:
    """An explicit join: every wire passing through ``at`` is connected there (drawn as a dot)."""

    id: str
    at: Point


@dataclass(frozen=True, slots=True)
class NetLabel:
    """A named net marker with one pin at ``at``: equal names join anywhere on the sheet.

    ``style`` is ``"label"`` or ``"ground"``; a ground marker always names the ground net,
    ``"gnd"``.
    """

    id: str
    name: str
    at: Point
    rotation: int = 0
    style: str = "label"


@dataclass(frozen=True, slots=True)
class Region:
    """A named set of parts (by element id) and the outline the user drew around them.

    ``outline`` is a closed polygon in grid units (floats allowed, not snapped). ``port`` is the
    (plus, minus) pair of net names the user chose, as connectivity names the nets, or None for
    the automatic port: the two nets where the region meets the rest, as the cut check chose
    them. ``swap`` exchanges plus and minus of the automatic port; a chosen port gives its own
    order, so it goes with ``swap`` False (:func:`port_problem`).
    """

    id: str
    name: str
    members: frozenset[str]
    outline: tuple[tuple[float, float], ...] = ()
    swap: bool = False
    port: tuple[str, str] | None = None


@dataclass(frozen=True, slots=True)
class Contents:
    """Everything a collapse took off the sheet, kept to be put back exactly on expand."""

    parts: tuple[PlacedPart, ...] = ()
    wires: tuple[Wire, ...] = ()
    junctions: tuple[Junction, ...] = ()
    labels: tuple[NetLabel, ...] = ()
    blocks: tuple[Block, ...] = ()


@dataclass(frozen=True, slots=True)
class Block:
    """A collapsed region drawn as its equivalent (pins: plus, minus;
    engine.schematic.symbols.PINS).

    ``contents`` are the removed elements; ``port`` holds, for the plus and then the minus net,
    every pin position inside ``contents`` that lay on that net (the port nets' wires stay on the
    sheet, so these points are what joins the contents to the port); ``stubs`` the ids of the
    elements the collapse added to wire the block's pins to the sheet, removed again on expand.
    Its values are recomputed from ``contents`` at the document's analysis frequency, so they
    follow frequency changes.
    """

    id: str
    designator: str
    form: str
    at: Point
    region: Region
    contents: Contents
    port: tuple[tuple[Point, ...], tuple[Point, ...]]
    rotation: int = 0
    mirror: bool = False
    stubs: tuple[str, ...] = ()


@dataclass(frozen=True, slots=True)
class Analysis:
    """Document-wide analysis settings: frequency text ("DC" or SI value in Hz), the equivalent
    form drawn for collapses, and whether phasors are peak (amplitude) or rms."""

    freq: str = "DC"
    form: str = "thevenin"
    basis: str = "peak"


Element = PlacedPart | Wire | Junction | NetLabel | Region | Block


def port_problem(region: Region) -> str:
    """What is wrong with the region's chosen port as a record ("" when nothing): it must be
    two different, non-empty net names, and the automatic port's ``swap`` does not go with it.
    Whether the nets exist on the sheet is the analysis's question, not the record's."""
    port = region.port
    if port is None:
        return ""
    if not (isinstance(port, tuple) and len(port) == 2
            and all(isinstance(net, str) and net.strip() for net in port)):
        return f"port: expected two net names (plus, minus), got {port!r}"
    if port[0] == port[1]:
        return f"port: plus and minus are both net {port[0]!r}; choose two different nets"
    if region.swap:
        return ("swap: a chosen port gives plus and minus in order; swap is for the automatic "
                "port only")
    return ""

