"""A region's chosen port on the drawn sheet: the nets it may be chosen from, which chosen nets
are no longer there, and a chosen port following its nets through a rename.

A chosen port (``Region.port``) names its nets as connectivity names them: a label's name, or an
automatic name after the net's lowest pin (``R1.b``). Renaming a label or a part changes such a
name while the net stays; :func:`follow_renames` finds the new names so that an editor can carry
the port along in the same undo step. Any other edit that makes a chosen net go (a wire
deleted, two nets joined) leaves the port naming it, and :func:`lost_port_nets` says which.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import replace

from ..solve.circuit import GROUND
from .connectivity import Connectivity, _natural_key, extract
from .document import Document
from .model import Element, Region

__all__ = ["follow_renames", "lost_port_nets", "region_nets"]


def region_nets(doc: Document, region: Region, conn: Connectivity) -> tuple[str, ...]:
    """The nets the region's parts and blocks have pins on, in natural order (ground, ``"gnd"``,
    first): the nets a port may be chosen from. ``conn`` is ``doc``'s connectivity, whose
    sheet knows each element's pins."""
    return tuple(sorted(conn.pin_nets(region.members),
                        key=lambda n: (n != GROUND, _natural_key(n))))


def lost_port_nets(region: Region, nets: Iterable[str]) -> tuple[str, ...]:
    """The nets of the region's chosen port that are not among ``nets`` (the region's nets,
    :func:`region_nets`), plus first; empty for the automatic port."""
    if region.port is None:
        return ()
    present = set(nets)
    return tuple(net for net in region.port if net not in present)


def follow_renames(doc: Document, elements: Iterable[Element]) -> list[Region]:
    """New versions of the regions whose chosen port names a net that putting ``elements``
    (new versions of elements in ``doc``) in the document would rename: each such net is
    named as it will be then. A net is followed when it goes from the sheet and the pins it
    had all land on one net; anything else is left for :func:`lost_port_nets` to report.

    Extracts connectivity twice, so only when some region has a chosen port.
    """
    chosen = [r for r in doc.regions() if r.port is not None]
    if not chosen:
        return []
    before = extract(doc)
    after = extract(_with(doc, elements), previous=before)
    names_after = {*after.net_of_pin.values(), *after.net_of_wire.values()}
    pins: dict[str, list[tuple[str, int]]] = {}
    for key, net in before.net_of_pin.items():
        pins.setdefault(net, []).append(key)

    def followed(net: str) -> str:
        if net in names_after:
            return net
        landed = {after.net_of_pin[k] for k in pins.get(net, ()) if k in after.net_of_pin}
        return landed.pop() if len(landed) == 1 else net

    out = []
    for region in chosen:
        port = (followed(region.port[0]), followed(region.port[1]))
        if port != region.port and port[0] != port[1]:
            out.append(replace(region, port=port))
    return out


def _with(doc: Document, elements: Iterable[Element]) -> Document:
    """A scratch copy of ``doc`` with ``elements`` in place of the versions it holds."""
    new = {e.id: e for e in elements}
    copy = Document(doc.title)
    for element in sorted(doc, key=lambda e: isinstance(e, Region)):  # members first
        copy.add(new.get(element.id, element))
    return copy
